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


def _rows(pairs) -> list[list[str]]:
    return [[k, v] for k, v in pairs]


def _al_band(s: Sheet) -> tuple[float, float, float]:
    """AL [nH/turn^2] nominal and its range over the tolerance corners (how a gapped set is ordered)."""
    n2 = float(s.d["turns"]) ** 2
    values = [ev.figures["inductance_uh"][0] * 1e3 / n2 for ev in s.corner_evaluations]
    return values[0], min(values), max(values)


def _order(s: Sheet) -> list:
    """1. What to order: the core set and the properties the part must meet, the wire, the bobbin."""
    f, d, mat, shape, fam = s.f, s.d, s.mat, s.shape, s.fam
    wire = s.ctx.catalog.wires[d["wire"]]
    al, al_lo, al_hi = _al_band(s)
    band = next(b for b in mat.steinmetz if b.f_min_hz <= float(d["f_sw_khz"]) * 1e3 <= b.f_max_hz) \
        if any(b.f_min_hz <= float(d["f_sw_khz"]) * 1e3 <= b.f_max_hz for b in mat.steinmetz) else mat.steinmetz[-1]
    amp = f["b_ripple_amplitude_t"]
    pv = band.k * (float(d["f_sw_khz"]) * 1e3) ** band.alpha * amp**band.beta
    stack = int(d["stack"])
    if fam.winding_legs == 2:
        former = "two coil formers, one per leg (coils in series)"
    elif shape.family == "T":
        former = "none: wind on the coated ring (check the coating's voltage rating)"
    else:
        former = f"a bobbin for the {shape.family} family" + (
            f"; {stack} stacked cores need a custom bobbin for the longer leg" if stack > 1 else "")
    gap_order = ("distributed in the material: order the powder core itself" if s.distributed else
                 f"order the set gapped to AL = {al:.0f} nH/turn² (tolerance corners {al_lo:.0f}-{al_hi:.0f}), "
                 "or ungapped and gap it yourself (section 2)")
    return [("1. What to order", [
        ("table", ["item", "value"], _rows([
            ("core set", f"{stack} x {d['shape']} ({shape.family} family), {mat.class_}"),
            ("outer size of the finished part L x W x H",
             f"{f['length_mm']:.0f} x {f['width_mm']:.0f} x {f['height_mm']:.0f} mm (standing on its largest face)"),
            ("gap / AL", gap_order),
            ("material: saturation at the core's worst temperature", f"at least {f['b_sat_t']:.2f} T "
                                                                     f"({f['core_temperature_c']:.0f} C)"),
            ("material: initial permeability", f"about {mat.mu_initial:g}"),
            ("material: loss density at this design's ripple",
             f"at most about {pv / 1e3:.0f} kW/m³ at {float(d['f_sw_khz']):g} kHz, {amp * 1e3:.0f} mT peak, "
             f"{mat.loss_temp_ref_c:g} C"),
            ("wire", f"{int(d['parallel'])} x {d['wire']} in hand ("
                     + (f"litz of {wire.strands} strands" if wire.kind == "litz" else "round magnet wire")
                     + f", {wire.outer_diameter * 1e3:.2f} mm over insulation)"),
            ("coil former", former),
        ])),
        ("p", f"The catalog's {mat.class_} entry is representative of its class ({mat.provenance}): ask for the "
              "properties above, or fit your supplier's data (fluxfront catalog fit-loss) and search again."),
    ])]


def _winding_plan(s: Sheet) -> list[list[str]]:
    """Turns in each layer, layer by layer, per coil."""
    per_coil = int(np.ceil(float(s.d["turns"]) / s.fam.winding_legs))
    tpl = max(int(s.f["turns_per_layer"]), 1)
    rows, left, k = [], per_coil, 1
    while left > 0 and k <= 40:
        rows.append([str(k), str(min(tpl, left))])
        left -= tpl
        k += 1
    return rows


def _build(s: Sheet) -> list:
    """2. How to build it: the gap, the winding plan, the wire per strand."""
    f, d, fam, distributed = s.f, s.d, s.fam, s.distributed
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
    per_strand = f["wire_length_m"] / float(d["parallel"])
    return [("2. How to build it", [
        ("p", gap_text),
        ("table", ["layer (each coil)", "turns"], _winding_plan(s)),
        ("table", ["item", "value"], _rows([
            ("turns", f"{int(d['turns'])}" + (", half on each leg, coils in series" if fam.winding_legs == 2 else "")),
            ("wire length per wire in hand", f"{per_strand:.2f} m plus leads ({int(d['parallel'])} wire(s) in hand)"),
            ("copper fill of the window", f"{f['fill']:.2f}"),
        ])),
        ("p", "Wind each layer evenly across the full breadth (the AC-loss model assumes full layers) and insulate "
              "layer to layer and winding to core as the safety standard of the product requires."),
    ])]


def _check(s: Sheet) -> list:
    """3. How to check it on the bench: inductance with a pass band, at bias, resistance, the current limit."""
    f, d, mat, geo = s.f, s.d, s.mat, s.geo
    band = [ev.figures["inductance_uh"][0] for ev in s.corner_evaluations]
    n, le = float(d["turns"]), geo.le[0]
    i_axis = np.linspace(0, max(f["current_limit_a"], f["i_peak_a"]), 120)
    frac = magnetics.powder_permeability_fraction(n * i_axis / le, mat.rolloff_a or 1.0, mat.rolloff_b or 0.0,
                                                  mat.rolloff_c or 1.0)
    fig_l = figure_png(plots.inductance_curve(i_axis, f["inductance_uh"] * frac, f["i_peak_a"]), "inductance_curve",
                       "Incremental inductance against DC current" + (
                           "" if s.distributed else " (gapped core: flat until the core nears saturation, which "
                                                    "this model does not show; the limit is the peak-flux check)"))
    hot = int(np.argmax(s.ev.per_op["temperature_c"][0]))
    loss = s.ev.per_op["total_loss_w"][0, hot]
    rise = s.ev.per_op["surface_temperature_c"][0, hot] - s.ctx.spec.limits.ambient_c
    return [("3. How to check it on the bench", [
        ("table", ["check", "expect"], _rows([
            ("small-signal inductance (LCR meter, e.g. 10 kHz, 0.1-1 V, no bias)",
             f"{f['inductance_uh']:.0f} µH; pass band {min(band):.0f}-{max(band):.0f} µH (tolerance corners)"),
            (f"inductance at the peak current {f['i_peak_a']:.1f} A (DC-bias supply)", f"{f['inductance_at_peak_uh']:.0f} µH"),
            ("DC resistance at 20 C", f"{f['r_dc_mohm_20c']:.1f} mΩ"),
            (f"current-limit pulse {f['current_limit_a']:.1f} A (short, the part stays cold)",
             f"{f['b_at_current_limit_t']:.2f} T at the narrowest section against {f['b_sat_t']:.2f} T saturation"
             + (": the current rises linearly through the pulse, no sudden steepening"
                if f["b_at_current_limit_t"] < f["b_sat_t"] else ": ABOVE saturation, expect the current to run away")),
            (f"heat run: {loss:.1f} W dissipated in the part (the worst point's loss)",
             f"surface {rise:.0f} K above the air, hot spot {s.ev.per_op['temperature_c'][0, hot]:.0f} C "
             f"at {s.ctx.spec.limits.ambient_c:g} C air"),
        ])),
        ("p", "A reading 10-20 % off the small-signal value usually means the gap is off: adjust the gap rather "
              "than the turns. Measured values feed fluxfront calibrate for the next search."),
        ("img", fig_l),
    ])]


def _why(s: Sheet) -> list:
    """4. Why this design: operating points, margins at the worst corners, yield, losses and cost."""
    ctx, ev, f, spec = s.ctx, s.ev, s.f, s.ctx.spec
    g = np.stack([e.constraints[0] for e in s.corner_evaluations])
    margins = [[n.replace("_", " "), f"{-g[0, i]:+.0%}", f"{-g[:, i].max():+.0%}", s.corners[int(g[:, i].argmax())].name]
               for i, n in enumerate(CONSTRAINTS)]
    tol, y = spec.tolerance, s.yield_estimate
    failing = ", ".join(f"{k.replace('_', ' ')} {v:.1%}" for k, v in sorted(y.failing.items(), key=lambda kv: -kv[1])
                        if v > 0)
    figs = []
    for j, op in enumerate(ctx.ops):
        samples = {k: v[0] for k, v in ev.samples[j].items()}
        limit = spec.limits.saturation_margin * ev.per_op["b_sat_t"][0, j]
        figs.append(("img", figure_png(plots.line_cycle(samples, op.name, limit), f"line_cycle_{j + 1}",
                                       f"Over the half line cycle at '{op.name}'")))
    return [("4. Why this design", [
        ("p", f"Volume {f['volume_cm3']:.0f} cm³, inductor loss {f['total_loss_w']:.2f} W (weighted over the "
              f"operating points), cost {f['cost']:.2f}. Spec: {spec.converter.power_w:g} W, {spec.converter.bus_v:g} V "
              f"bus, {spec.converter.line_hz:g} Hz, air at {spec.limits.ambient_c:g} C."),
        ("table", ["operating point", "input [Vrms]", "load", "weight", "inductor loss [W]", "hot spot [C]",
                   "peak current [A]", "peak flux [T]"],
         [[op.name, _fmt(op.v_rms), _fmt(op.power_w / spec.converter.power_w), _fmt(op.weight),
           _fmt(ev.per_op["total_loss_w"][0, j], 3), _fmt(ev.per_op["temperature_c"][0, j], 3),
           _fmt(ev.per_op["i_peak_a"][0, j], 3), _fmt(ev.per_op["b_peak_t"][0, j], 3)] for j, op in enumerate(ctx.ops)]),
        ("table", ["limit", "margin at nominal", "margin at its worst corner", "worst corner"], margins),
        ("table", ["corner", "inductance [µH]", "peak flux [T]", "largest ripple [A]", "hot spot [C]", "meets every limit"],
         _corner_rows(s.corner_evaluations, s.corners)),
        ("p", f"Corners: gap off by max({tol.gap_mm:g} mm, {tol.gap_percent:g} %) per ground gap, permeability "
              f"±{tol.permeability_percent:g} %, Steinmetz k up to +{tol.steinmetz_k_percent:g} %, ambient up to "
              f"+{tol.ambient_k:g} K, the line down to {tol.line_sag:g} (spec [tolerance]). Yield: {y.share:.1%} of "
              f"{y.samples} parts ({tol.distribution} draws, seed {y.seed}) meet every limit"
              + (f"; failing: {failing}." if failing else ".")),
        ("table", ["loss part (weighted)", "W"], [
            ["core, switching ripple (DC bias included)", _fmt(f["core_loss_w"] - f["core_line_loss_w"], 3)],
            ["core, line-frequency loop", _fmt(f["core_line_loss_w"], 3)],
            ["core, gap faces of a cut ribbon core", _fmt(f["core_gap_loss_w"], 3)],
            ["winding, DC", _fmt(f["winding_dc_loss_w"], 3)],
            ["winding, AC (ripple harmonics)", _fmt(f["winding_ac_loss_w"], 3)],
            ["winding, eddy loss in the gaps' fringing field", _fmt(f["winding_fringing_loss_w"], 3)],
            ["total, the inductor's own", _fmt(f["total_loss_w"], 3)],
            ["(semiconductor switching, not the inductor's)", _fmt(f["switching_loss_w"], 3)]]),
        ("table", ["cost part", "cost"], [["core", _fmt(f["cost_core"], 3)], ["core work (gaps, cutting)",
                                          _fmt(f["cost_core_work"], 3)], ["copper", _fmt(f["cost_copper"], 3)],
                                          ["winding labour", _fmt(f["cost_labour"], 3)],
                                          ["parts and assembly", _fmt(f["cost_parts"], 3)], ["total", _fmt(f["cost"], 3)]]),
        ("grid", figs),
    ])]


def _models(s: Sheet) -> list:
    """5. Models, assumptions and the cautions."""
    f, spec = s.f, s.ctx.spec
    return [("5. Models, assumptions and cautions", [("ul", [
        "Line-cycle waveforms of an ideal CCM boost PFC: Fundamentals of Power Electronics, 3rd ed., Springer 2020.",
        "Effective core parameters: IEC 60205; shape sizes after IEC 62317 naming.",
        f"Inductance: reluctance model; gap fringing '{spec.model.fringing}': Transformer and Inductor Design Handbook, "
        "4th ed.",
        "Core loss: iGSE per switching period (IEEE COMPEL 2002) with the catalog's Steinmetz parameters; DC-bias "
        "factor 1 + k (B_dc/B_sat)^2 by material class (trend of IEEE Trans. Power Electronics 27(2), 2012); "
        "line-frequency loop as a separate term; cut ribbon cores: a cut factor and the handbook gap loss.",
        "Winding loss: Dowell's factor over the ripple harmonics (Proc. IEE 113(8), 1966); litz at strand level "
        "(IEEE Trans. Power Electronics 9(1), 1994); eddy loss in the gaps' fringing field (two-dimensional gap "
        "field, IEEE Trans. Magnetics 43(8), 2007); copper after IEC 60028; AWG after ASTM B258.",
        f"Temperature: '{spec.thermal.model}' model, mounting '{spec.thermal.mounting}' (Churchill-Chu on the sides, "
        "Int. J. Heat Mass Transfer 18, 1975; upper-surface correlation on top; radiation); hot spots from a "
        "two-node winding-core network.",
    ])]), ("Assumptions", [("ul", [
        "Catalog values are representative of the material class, not the data of the part you will buy.",
        "Continuous conduction is assumed; near the zero crossings the converter may run discontinuous "
        f"({_fmt(f['dcm_fraction'], 2)} of the cycle here).",
        "The DC-bias factor is a class trend from memory, not a fit to this material's measurements.",
        "The fringing model is two-dimensional with ideal core faces, as excess over an evenly spread gap.",
        ("Hot spots from a two-node winding-core network with conductivities from memory."
         if spec.thermal.internal_rise_k is None else
         f"Hot spot = surface temperature + {spec.thermal.internal_rise_k:g} K (fixed in the spec)."),
        "Geometry from principal dimensions (no chamfers or rounded edges).",
    ])]), ("Safety", [("ul", [
        "The PFC stage works at mains potential and its bus capacitor holds around 400 V after switch-off: "
        "discharge and measure before touching.",
        "The inductor and its neighbours run hot: mind hot surfaces during and after tests.",
        "Insulation system, creepage and clearance between winding, core and chassis follow the applicable safety "
        "standard of the product; defer to local codes and licensed practice.",
    ])]), ("Key figures", [("keytable", [[k, s.table[k]] for k in s.table.index if not str(k).startswith(("g_",
                                                                                                      "nominal_g_"))])])]


SECTIONS = (_order, _build, _check, _why, _models)


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
