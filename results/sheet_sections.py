"""The build sheet's sections, one function each, from one design evaluated with its tolerance corners.

A section is ``(title, blocks)`` (see render.py); every number comes from the same evaluation as
``fluxfront evaluate`` of the design.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from fluxfront.catalog import Catalog
from fluxfront.design.designs import resolve_designs
from fluxfront.design.evaluator import CONSTRAINTS, Context, evaluate
from fluxfront.design.table import evaluation_frame
from fluxfront.design.tolerance import YieldEstimate, evaluate_corners, monte_carlo_yield, tolerant_context
from fluxfront.models import magnetics

from . import plots
from .render import figure_png
from .report import SAFETY_NOTE


def _fmt(x, digits=4):
    if isinstance(x, (bool, np.bool_)):
        return "yes" if x else "no"
    if isinstance(x, (int, np.integer)):
        return str(int(x))
    if isinstance(x, (float, np.floating)):
        return f"{float(x):.{digits}g}"
    return str(x)


def _corner_rows(evs, corners) -> list[list[str]]:
    """One row per tolerance corner: inductance, peak flux, ripple, hot spot and the limits it breaks."""
    base = evs[0]
    rows = []
    for c, ev in zip(corners, evs):
        row = [c.name]
        for key in ("inductance_uh", "b_peak_t", "ripple_pp_max_a"):
            v, v0 = ev.figures[key][0], base.figures[key][0]
            row.append(f"{_fmt(v, 3)} ({100 * (v / v0 - 1):+.1f} %)")
        row.append(_fmt(ev.figures["temperature_c"][0], 3))
        row.append("yes" if ev.feasible[0] else "NO: " + ", ".join(
            n.replace("_", " ") for n, g in zip(CONSTRAINTS, ev.constraints[0], strict=True) if g > 0))
        rows.append(row)
    return rows


@dataclass(frozen=True)
class Sheet:
    """One design evaluated for its sheet, with the catalog entries it names."""

    ctx: Context
    design_row: pd.DataFrame
    ev: object          # Evaluation with line-cycle samples
    table: pd.Series    # its row of the result table
    f: dict             # key figures of the design
    d: pd.Series        # its design columns
    mat: object
    shape: object
    fam: object
    geo: object
    distributed: bool
    corners: tuple          # tolerance corners, nominal first
    corner_evaluations: list
    yield_estimate: YieldEstimate


def evaluated(ctx: Context, design_row: pd.DataFrame) -> Sheet:
    cat: Catalog = ctx.catalog
    designs = resolve_designs(design_row, cat)
    ev = evaluate(ctx, designs, keep_samples=True)
    d = design_row.iloc[0]
    mat = cat.materials[d["material"]]
    shape = cat.shapes[d["shape"]]
    tc = tolerant_context(ctx, always=True)
    return Sheet(ctx, design_row, ev, evaluation_frame(ev, cat).iloc[0], {k: v[0] for k, v in ev.figures.items()}, d,
                  mat, shape, cat.families[shape.family], cat.core_geometry(designs.shape, designs.stack),
                  mat.gap_kind == "distributed", tc.corners, evaluate_corners(tc, designs),
                  monte_carlo_yield(ctx, designs))


def _specification(s: Sheet) -> list:
    """The spec and the results per operating point."""
    ctx, ev = s.ctx, s.ev
    spec = s.ctx.spec
    sections = []
    sections.append(("Specification", [
        ("p", f"Boost PFC inductor for {spec.converter.power_w:g} W output, {spec.converter.bus_v:g} V bus, "
              f"{spec.converter.line_hz:g} Hz mains, efficiency estimate {spec.converter.efficiency:g}; air at "
              f"{spec.limits.ambient_c:g} C, hot spot at most {spec.limits.hot_spot_max_c:g} C, "
              f"thermal model '{spec.thermal.model}'."),
        ("table", ["operating point", "input [Vrms]", "load", "weight", "loss [W]", "hot spot [C]", "peak current [A]",
                   "peak flux [T]"],
         [[op.name, _fmt(op.v_rms), _fmt(op.power_w / spec.converter.power_w), _fmt(op.weight),
           _fmt(ev.per_op["total_loss_w"][0, j]), _fmt(ev.per_op["temperature_c"][0, j], 3),
           _fmt(ev.per_op["i_peak_a"][0, j]), _fmt(ev.per_op["b_peak_t"][0, j])] for j, op in enumerate(ctx.ops)]),
    ]))

    return sections


def _core_and_gap(s: Sheet) -> list:
    """Core set, material and how to make the gap."""
    f, d, mat, shape, fam, geo, distributed = s.f, s.d, s.mat, s.shape, s.fam, s.geo, s.distributed
    sections = []
    gap, gaps = float(d["gap_mm"]), int(d.get("gaps", 1))
    each = gap / max(fam.gap_legs, 1) / gaps
    keepout = s.ctx.spec.construction.gap_keepout_mm
    if distributed:
        gap_text = "No discrete gap: the powder material carries its gap distributed in the core."
    elif fam.gap_legs == 2 and gaps == 1:
        gap_text = (f"Total gap {gap:g} mm as two spacers of {gap / 2:g} mm, one in each joint of the cut core "
                    "(non-magnetic, non-conductive spacer material; band the core after gapping).")
    elif fam.gap_legs == 2:
        gap_text = (f"Total gap {gap:g} mm split into {gaps} gaps of {_fmt(each, 3)} mm on each leg, evenly spaced "
                    "along it: a leg made of cut segments with spacers between them (a custom core).")
    elif gaps == 1:
        gap_text = (f"Total gap {gap:g} mm ground into the centre leg ({gap / 2:g} mm off each half's centre leg), "
                    f"or, as an alternative, a spacer of about {gap / 2:g} mm under all legs (the outer legs then "
                    "add their own gap; re-measure the inductance).")
    else:
        gap_text = (f"Total gap {gap:g} mm split into {gaps} gaps of {_fmt(each, 3)} mm evenly spaced along the "
                    "centre leg (a stack of centre-leg pieces with spacers between them, inside the E or PQ outer "
                    "legs): split gaps keep the fringing field, and the eddy loss it drives in the winding, small.")
    if not distributed and keepout > 0:
        gap_text += f" Keep the first layer {keepout:g} mm clear of the gapped leg beyond the bobbin wall."
    sections.append(("Core and gap", [
        ("table", ["item", "value"], [
            ["shape and size", f"{d['shape']} ({shape.family} family)"],
            ["cores stacked", str(int(d["stack"]))],
            ["material class", f"{mat.class_} ({mat.id}: {mat.description})"],
            ["effective length le", f"{_fmt(geo.le[0] * 1e3)} mm"],
            ["effective area Ae (magnetic)", f"{_fmt(geo.ae[0] * mat.stacking_factor * 1e6)} mm²"],
            ["effective volume Ve", f"{_fmt(geo.ve[0] * 1e6)} cm³"],
            ["core mass", f"{_fmt(f['core_mass_g'])} g"],
        ]),
        ("p", gap_text),
    ]))

    return sections


def _winding(s: Sheet) -> list:
    """Wire, turns and layers."""
    f, d, fam = s.f, s.d, s.fam
    cat = s.ctx.catalog
    sections = []
    wire = cat.wires[d["wire"]]
    sections.append(("Winding", [
        ("table", ["item", "value"], [
            ["wire", f"{d['wire']} ({'litz, ' + str(wire.strands) + ' strands' if wire.kind == 'litz' else 'round magnet wire'}, "
                     f"{_fmt(wire.outer_diameter * 1e3)} mm over insulation)"],
            ["wires in parallel", str(int(d["parallel"]))],
            ["turns", str(int(d["turns"]))],
            ["coils", "one on each leg, in series, half the turns each" if fam.winding_legs == 2 else "one"],
            ["turns per layer", _fmt(f["turns_per_layer"])],
            ["layers", _fmt(f["layers"])],
            ["wire length (all parallel wires, without leads)", f"{_fmt(f['wire_length_m'])} m"],
            ["copper fill of the window", _fmt(f["fill"], 3)],
            ["DC resistance at 20 C", f"{_fmt(f['r_dc_mohm_20c'])} mΩ"],
            ["copper mass", f"{_fmt(f['copper_mass_g'])} g"],
        ]),
        ("p", "Add lead length for the terminations; wind the layers evenly across the full breadth (the AC-loss "
              "model assumes full layers) and insulate layer to layer as the safety standard requires."),
    ]))

    return sections


def _inductance(s: Sheet) -> list:
    """Inductance against current and what to expect on the bench."""
    f, d, mat, geo, distributed = s.f, s.d, s.mat, s.geo, s.distributed
    sections = []
    n, le = float(d["turns"]), geo.le[0]
    i_axis = np.linspace(0, 1.3 * f["i_peak_a"], 120)
    frac = magnetics.powder_permeability_fraction(n * i_axis / le, mat.rolloff_a or 1.0, mat.rolloff_b or 0.0,
                                                  mat.rolloff_c or 1.0)
    fig_l = figure_png(plots.inductance_curve(i_axis, f["inductance_uh"] * frac, f["i_peak_a"]), "inductance_curve",
                    "Incremental inductance against DC current" + (
                        "" if distributed else " (gapped core: flat until the core nears saturation, which this "
                                               "linear model does not show; the limit is the peak-flux check)"))
    lcr = ("On an LCR meter at small signal (for example 10 kHz, 0.1-1 V, no DC bias) expect about "
           f"{_fmt(f['inductance_uh'], 3)} µH")
    lcr += (". Powder cores are specified to about ±8 % in permeability; the drop under bias needs a DC-bias "
            f"supply: at the peak current of {_fmt(f['i_peak_a'], 3)} A expect about "
            f"{_fmt(f['inductance_at_peak_uh'], 3)} µH." if distributed else
            "; the fringing factor of the gap is included "
            f"({_fmt(f['fringing_factor'], 3)}). A reading 10-20 % off usually means the gap is off: adjust it "
            "rather than the turns.")
    sections.append(("Inductance and bench measurement", [
        ("table", ["quantity", "value"], [
            ["inductance at zero bias", f"{_fmt(f['inductance_uh'])} µH"],
            ["inductance at peak current", f"{_fmt(f['inductance_at_peak_uh'])} µH"],
            ["peak current (worst point)", f"{_fmt(f['i_peak_a'])} A"],
            ["RMS current (worst point)", f"{_fmt(f['i_rms_a'])} A"],
            ["largest ripple, peak to peak", f"{_fmt(f['ripple_pp_max_a'])} A"],
        ]),
        ("p", lcr),
        ("img", fig_l),
    ]))

    return sections


def _tolerances(s: Sheet) -> list:
    """Every tolerance corner of the design, and its Monte Carlo yield."""
    tol = s.ctx.spec.tolerance
    y = s.yield_estimate
    failing = ", ".join(f"{k.replace('_', ' ')} {v:.1%}" for k, v in sorted(s.yield_estimate.failing.items(),
                                                                        key=lambda kv: -kv[1]) if v > 0)
    return [("Tolerances", [
        ("p", f"Each corner re-evaluates the design with the gap off by max({tol.gap_mm:g} mm, {tol.gap_percent:g} %) "
              f"per ground gap, the permeability by ±{tol.permeability_percent:g} %, the Steinmetz k up to "
              f"+{tol.steinmetz_k_percent:g} %, the ambient up to +{tol.ambient_k:g} K and the line down to "
              f"{tol.line_sag:g} of each operating point (spec [tolerance]); the corners are where each limit is "
              "at its worst (design/tolerance.py)."),
        ("table", ["corner", "inductance [µH]", "peak flux [T]", "largest ripple [A]", "hot spot [C]", "meets every limit"],
         _corner_rows(s.corner_evaluations, s.corners)),
        ("p", f"Yield: {y.share:.1%} of {y.samples} parts drawn from {tol.distribution} tolerance distributions (seed "
              f"{y.seed}) meet every limit" + (f"; failing: {failing}." if failing else ".")),
    ])]


def _line_cycle(s: Sheet) -> list:
    """Line-cycle figures per operating point."""
    ctx, ev = s.ctx, s.ev
    spec = s.ctx.spec
    sections = []
    figs = []
    for j, op in enumerate(ctx.ops):
        samples = {k: v[0] for k, v in ev.samples[j].items()}
        limit = spec.limits.saturation_margin * ev.per_op["b_sat_t"][0, j]
        figs.append(("img", figure_png(plots.line_cycle(samples, op.name, limit), f"line_cycle_{j + 1}",
                                    f"Over the half line cycle at '{op.name}'")))
    sections.append(("Over the line cycle", figs))

    return sections


def _results(s: Sheet) -> list:
    """Losses, cost, temperature, mass and volume."""
    f = s.f
    sections = []
    sections.append(("Losses", [
        ("p", "Weighted over the operating points (the loss objective); per point in the specification table."),
        ("table", ["part", "loss [W]"], [
            ["core, switching-frequency ripple (DC bias included)", _fmt(f["core_loss_w"] - f["core_line_loss_w"])],
            ["core, line-frequency loop", _fmt(f["core_line_loss_w"])],
            ["core, gap faces of a cut ribbon core", _fmt(f["core_gap_loss_w"])],
            ["winding, DC (line-frequency current)", _fmt(f["winding_dc_loss_w"])],
            ["winding, AC (ripple harmonics, one-dimensional field)", _fmt(f["winding_ac_loss_w"])],
            ["winding, eddy loss in the gaps' fringing field", _fmt(f["winding_fringing_loss_w"])],
            ["total, the inductor's own", _fmt(f["total_loss_w"])],
        ]),
        ("p", f"Semiconductor switching loss (not in the inductor, from the spec's fit if given): "
              f"{_fmt(f['switching_loss_w'])} W."),
    ]))
    sections.append(("Cost", [
        ("table", ["part", "cost"], [["core", _fmt(f["cost_core"])], ["core work (gaps, cutting)",
                                                                       _fmt(f["cost_core_work"])],
                                     ["copper", _fmt(f["cost_copper"])], ["winding labour", _fmt(f["cost_labour"])],
                                     ["parts and assembly", _fmt(f["cost_parts"])], ["total", _fmt(f["cost"])]]),
        ("p", "Representative prices from the catalog's costs.toml and materials.toml, not quotes."),
    ]))
    sections.append(("Temperature, mass, volume", [
        ("table", ["quantity", "value"], [
            ["hot spot, worst point", f"{_fmt(f['temperature_c'], 3)} C"],
            ["winding hot spot, worst point", f"{_fmt(f['winding_temperature_c'], 3)} C"],
            ["core hot spot, worst point", f"{_fmt(f['core_temperature_c'], 3)} C"],
            ["surface, worst point", f"{_fmt(f['surface_temperature_c'], 3)} C"],
            ["thermal runaway", _fmt(bool(f["thermal_runaway"]))],
            ["mass (core + copper)", f"{_fmt(f['mass_g'])} g"],
            ["boxed volume with winding", f"{_fmt(f['volume_cm3'])} cm³"],
            ["outer surface", f"{_fmt(f['surface_cm2'])} cm²"],
        ]),
    ]))
    return sections


def _about(s: Sheet) -> list:
    """Key figures, models, assumptions and the cautions."""
    f = s.f
    spec = s.ctx.spec
    sections = []
    sections.append(("Key figures", [("keytable", [[k, s.table[k]] for k in s.table.index])]))
    sections.append(("Models and sources", [("ul", [
        "Line-cycle waveforms of an ideal CCM boost PFC: Fundamentals of Power Electronics, 3rd ed., Springer 2020.",
        "Effective core parameters: IEC 60205; shape sizes after IEC 62317 naming.",
        f"Inductance: reluctance model; gap fringing '{spec.model.fringing}': Transformer and Inductor Design Handbook, 4th ed.",
        "Core loss: iGSE per switching period (IEEE COMPEL 2002), Steinmetz parameters of the catalog; DC-bias factor "
        "1 + k (B_dc/B_sat)^2 by material class (trend of IEEE Trans. Power Electronics 27(2), 2012); line-frequency "
        "loop as a separate Steinmetz term; loss-temperature factor of the material; cut ribbon cores: a cut factor "
        "and the handbook gap loss K_i E l_g f B^2 (Transformer and Inductor Design Handbook).",
        "Winding loss: Dowell's factor over the ripple harmonics (Proc. IEE 113(8), 1966); litz at strand level with the "
        "exact round-wire skin effect (IEEE Trans. Power Electronics 9(1), 1994); eddy loss in the gaps' fringing "
        "field from the two-dimensional gap field and the exact round-conductor transverse-field loss (IEEE Trans. "
        "Magnetics 43(8), 2007); copper after IEC 60028; AWG after ASTM B258.",
        f"Temperature: '{spec.thermal.model}' model, mounting '{spec.thermal.mounting}' (natural: Churchill-Chu on the "
        "vertical sides, Int. J. Heat Mass Transfer 18, 1975, upper-surface correlation on top, plus radiation); "
        "winding and core hot spots from a two-node conduction network; losses re-evaluated at temperature until "
        "the heat balance converges.",
    ])]))
    sections.append(("Assumptions", [("ul", [
        "Catalog values are representative of the material class, not the data of the part you will buy: check the "
        "data sheet and re-evaluate with its numbers.",
        "Continuous conduction is assumed; near the zero crossings the converter may run discontinuous "
        f"({_fmt(f['dcm_fraction'], 2)} of the cycle here).",
        "The DC-bias factor is a class trend from memory, not a fit to this material's premagnetization data.",
        "The fringing model is two-dimensional with ideal core faces; it is excess over an evenly spread gap and "
        "ignores the window's own boundaries (within a few gap lengths of the gap it is the dominant term).",
        ("Hot spots from a two-node winding-core network with conductivities from memory."
         if spec.thermal.internal_rise_k is None else
         f"Hot spot = surface temperature + {spec.thermal.internal_rise_k:g} K (fixed in the spec)."),
        "Geometry from principal dimensions (no chamfers or rounded edges).",
    ])]))
    sections.append(("Safety", [("p", SAFETY_NOTE), ("ul", [
        "The PFC stage works at mains potential and its bus capacitor holds around 400 V after switch-off: "
        "discharge and measure before touching.",
        "The inductor and its neighbours run hot: mind hot surfaces during and after tests.",
        "Insulation system, creepage and clearance between winding, core and chassis follow the applicable safety "
        "standard of the product; defer to local codes and licensed practice.",
    ])]))
    return sections


SECTIONS = (_specification, _core_and_gap, _winding, _inductance, _tolerances, _line_cycle, _results, _about)


def status(s: Sheet) -> list:
    """A banner above everything when the design fails a limit, nominally or at a tolerance corner."""
    failed = [(c.name, n) for c, ev in zip(s.corners, s.corner_evaluations)
              for n, g in zip(CONSTRAINTS, ev.constraints[0], strict=True) if g > 0]
    if not failed:
        return []
    nominal = [n for c, n in failed if c == s.corners[0].name]
    text = ("NOT FEASIBLE at nominal values: " + ", ".join(n.replace("_", " ") for n in nominal) if nominal else
            f"Meets every limit at nominal values but FAILS at {len({c for c, _ in failed})} tolerance corner(s) "
            f"({', '.join(sorted({n.replace('_', ' ') for _, n in failed}))}); yield {s.yield_estimate.share:.1%}. "
            "A prototype built from this sheet may not meet its limits.")
    return [("Status", [("banner", text)])]
