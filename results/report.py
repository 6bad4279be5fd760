"""Evaluation results for people: a one-design summary and the JSON detail (the table is design.table)."""
from __future__ import annotations

import numpy as np

from fluxfront.design.evaluator import CONSTRAINTS, Context, Evaluation

SAFETY_NOTE = (
    "Hardware cautions: a PFC stage works from the mains and holds a charged bus capacitor (400 V class, "
    "lethal); the inductor runs hot; winding insulation, creepage and clearance must follow the applicable "
    "safety standard. These figures come from models with representative catalog data: verify on the bench, "
    "and follow local codes and licensed practice.")


def summary_text(ctx: Context, ev: Evaluation, row: int = 0) -> str:
    """A readable summary of one design."""
    f = {k: v[row] for k, v in ev.figures.items()}
    d = ev.designs.to_frame(ctx.catalog).iloc[row]
    gap = f"{d.gap_mm:g} mm total gap" if d.gap_mm > 0 else "distributed gap"
    lines = [
        f"design: {d.material} on {d.stack} x {d['shape']}, {d.turns} turns, {gap}, "
        f"{d.parallel} x {d.wire}, {d.f_sw_khz:g} kHz",
        f"  {'FEASIBLE' if ev.feasible[row] else 'NOT FEASIBLE'}"
        + ("" if ev.feasible[row] else ": violates " + ", ".join(
            n for n, g in zip(CONSTRAINTS, ev.constraints[row]) if g > 0)),
        f"  volume {ev.objectives[row, 0]:.1f} cm3, weighted loss {ev.objectives[row, 1]:.2f} W, cost {ev.objectives[row, 2]:.2f}",
        f"  inductance {f['inductance_uh']:.1f} uH at zero bias, {f['inductance_at_peak_uh']:.1f} uH at peak current",
        f"  peak current {f['i_peak_a']:.2f} A, RMS {f['i_rms_a']:.2f} A, largest ripple {f['ripple_pp_max_a']:.2f} A pp "
        f"({f['ripple_ratio']:.0%} of the line peak)",
        f"  peak flux {f['b_peak_t']:.3f} T against {f['b_sat_t']:.3f} T saturation at temperature "
        f"(ratio to the margin {f['saturation_ratio']:.2f}); ripple flux up to {f['b_ripple_pp_max_t'] * 1e3:.0f} mT pp",
        f"  inductor losses (weighted): core {f['core_loss_w']:.2f} W (DC-bias factor up to {f['core_bias_factor']:.2f}), "
        f"cut-core gap {f['core_gap_loss_w']:.2f} W, winding DC {f['winding_dc_loss_w']:.2f} W, "
        f"AC {f['winding_ac_loss_w']:.2f} W, gap fringing {f['winding_fringing_loss_w']:.2f} W",
        f"  semiconductor switching loss (not the inductor's): {f['switching_loss_w']:.2f} W",
        f"  at the current limit of {f['current_limit_a']:.1f} A: {f['b_at_current_limit_t']:.3f} T at the narrowest "
        "section",
        f"  hot spot {f['temperature_c']:.0f} C (worst point; winding {f['winding_temperature_c']:.0f} C, core "
        f"{f['core_temperature_c']:.0f} C){', THERMAL RUNAWAY' if f['thermal_runaway'] else ''}; "
        f"fill {f['fill']:.2f}; {int(f['turns_per_layer'])} turns per layer, {int(f['layers'])} layers",
        f"  mass {f['mass_g']:.0f} g" + ("" if f["steinmetz_in_band"] else
                                         "; core loss from a Steinmetz fit extrapolated beyond its frequency range")
        + ("" if f["steinmetz_in_range"] else "; ripple flux outside the Steinmetz fit's flux range"),
        "  per operating point:",
    ]
    for j, op in enumerate(ctx.ops):
        p = {k: v[row, j] for k, v in ev.per_op.items()}
        winding_loss = p["winding_dc_loss_w"] + p["winding_ac_loss_w"] + p["winding_fringing_loss_w"]
        lines.append(f"    {op.name}: inductor loss {p['total_loss_w']:.2f} W (core "
                     f"{p['core_loss_w'] + p['core_gap_loss_w']:.2f}, winding {winding_loss:.2f}), "
                     f"{p['temperature_c']:.0f} C, B peak {p['b_peak_t']:.3f} T, I peak {p['i_peak_a']:.2f} A")
    lines.append(SAFETY_NOTE)
    return "\n".join(lines)


def _plain(value):
    if isinstance(value, np.ndarray):
        return value.tolist()
    if isinstance(value, (np.floating, np.integer, np.bool_)):
        return value.item()
    return value


def detail(ctx: Context, ev: Evaluation, row: int = 0) -> dict:
    """Every intermediate quantity of one design, enough to recompute its results by hand."""
    cat = ctx.catalog
    d = ev.designs.take(slice(row, row + 1))
    geo = cat.core_geometry(d.shape, d.stack)
    mat = list(cat.materials.values())[int(d.material[0])]
    wire = list(cat.wires.values())[int(d.wire[0])]
    sf = mat.stacking_factor
    spec = ctx.spec
    shape = list(cat.shapes.values())[int(d.shape[0])]
    family = cat.families[shape.family]
    out = {
        "design": ev.designs.to_frame(cat).iloc[row].to_dict(),
        "objectives": dict(zip(ctx.objectives, ev.objectives[row].tolist())),
        "feasible": bool(ev.feasible[row]),
        "constraints_normalized": dict(zip(CONSTRAINTS, ev.constraints[row].tolist())),
        "figures": {k: _plain(v[row]) for k, v in ev.figures.items()},
        "inputs": {
            "converter": spec.converter.model_dump(), "limits": spec.limits.model_dump(),
            "thermal": spec.thermal.model_dump(), "construction": spec.construction.model_dump(),
            "switching": spec.switching.model_dump(), "loss_objective": spec.search.loss_objective,
        },
        "shape": {"id": shape.id, "family": shape.family, "dims_mm": dict(shape.dims), "stack": int(d.stack[0]),
                  **family.model_dump()},
        "core": {
            "le_mm": float(geo.le[0] * 1e3), "ae_mm2": float(geo.ae[0] * 1e6), "ve_cm3": float(geo.ve[0] * 1e6),
            "a_min_mm2": float(geo.a_min[0] * 1e6), "core_box_mm": (geo.core_box[0] * 1e3).tolist(),
            "stacking_factor": sf, "magnetic_ae_mm2": float(geo.ae[0] * sf * 1e6),
            "gap_area_mm2": float(geo.gap_area[0] * 1e6), "window_area_mm2": float(geo.window_area[0] * 1e6),
            "window_breadth_mm": float(geo.window_breadth[0] * 1e3),
            "window_height_mm": float(geo.window_height[0] * 1e3),
            "gap_window_height_mm": float(geo.gap_window_height[0] * 1e3),
            "leg_perimeter_mm": float(geo.leg_perimeter[0] * 1e3), "bobbin_wall_mm": float(geo.bobbin_wall[0] * 1e3),
        },
        "material": mat.model_dump(by_alias=True),
        "wire": {k: _plain(v) for k, v in wire.__dict__.items()},
        "copper": cat.copper.model_dump(),
        "models": {"fringing": ctx.spec.model.fringing, "thermal": ctx.spec.thermal.model,
                   "mounting": ctx.spec.thermal.mounting,
                   "samples_per_half_cycle": ctx.spec.model.samples_per_half_cycle,
                   "harmonics": ctx.spec.model.harmonics, "line_cycle_sampling": "quarter cycle, midpoints"},
        "operating_points": [],
    }
    for j, op in enumerate(ctx.ops):
        entry = {"name": op.name, "v_rms": op.v_rms, "power_w": op.power_w, "line_peak_current_a": op.i_pk,
                 "line_rms_current_a": op.i_rms, "weight": op.weight, "ripple_checked": op.ripple_checked}
        entry.update({k: _plain(v[row, j]) for k, v in ev.per_op.items()})
        if ev.samples:
            entry["samples"] = {k: _plain(np.asarray(v[row])) for k, v in ev.samples[j].items()}
        out["operating_points"].append(entry)
    out["safety"] = SAFETY_NOTE
    return out
