"""The end-of-run summary: representative designs, or why no design was feasible."""
from __future__ import annotations

import numpy as np
import pandas as pd

from fluxfront.design.evaluator import CONSTRAINTS, objective_columns
from fluxfront.design.spec import Spec

from .front import knee_index
from .state import State


def representatives(front: pd.DataFrame, objectives) -> dict[str, int]:
    """Row numbers of the smallest, lightest, lowest-loss, cheapest and balanced (knee) designs."""
    F = front[list(objectives)].to_numpy()
    return {"smallest": int(np.argmin(F[:, 0])), "lightest": int(np.argmin(front["mass_g"].to_numpy())),
            "lowest loss": int(np.argmin(F[:, 1])),
            "cheapest": int(np.argmin(F[:, 2])), "balanced (knee)": knee_index(F)}


ADVICE = {
    "saturation": "allow more turns or a larger gap/core (search.turns_max, search.gap_mm_max, larger shapes), "
                  "or a lower limits.saturation_margin only if the material data allow",
    "ripple": "raise limits.ripple_pp_max_fraction, or allow higher search.f_sw_khz_max or more turns",
    "inductance_kept": "lower limits.inductance_kept_min_fraction or allow lower-permeability powders",
    "fill": "raise limits.fill_max, allow larger shapes or thinner wires",
    "hot_spot": "raise limits.hot_spot_max_c, lower limits.ambient_c, or use thermal.model = \"forced\"",
    "material_temperature": "allow materials with a higher t_max_c or improve cooling",
    "dcm": "raise limits.dcm_max_fraction or allow more inductance (turns, smaller gaps)",
    "saturation_at_limit": "allow more turns or a larger gap or core, or a lower limits.current_limit_factor if "
                           "your controller's current limit is tighter",
    "loss_data": "allow more turns or higher frequencies (smaller ripple flux), or give loss data for larger swings",
}


def no_feasible_text(state: State) -> str:
    ranked = sorted(CONSTRAINTS, key=lambda c: -state.violation.get(c, 0.0))
    lines = ["No feasible design was found.", "Violations over the last generations (share of designs, mean excess "
             "as a fraction of the limit):"]
    for c in ranked:
        if state.violated_share.get(c, 0) > 0:
            lines.append(f"  {c}: {state.violated_share[c]:.0%} of designs, mean excess {state.violation[c]:.2f}")
    lines.append(f"Most binding: {ranked[0]}. Suggestion: {ADVICE[ranked[0]]}.")
    return "\n".join(lines)


def summary_text(front: pd.DataFrame, state: State, spec: Spec, currency: str = "currency units") -> str:
    """The end-of-run summary: the representative designs, each once, with the figures that matter."""
    if len(front) == 0:
        return no_feasible_text(state)
    lines = [f"Pareto front: {len(front)} feasible designs after {state.evaluations + state.sweep_evaluations:,} "
             f"evaluations ({state.generation} generations, the reference sample and the final sweep counted)."]
    if "robust" in front:
        lines.append(f"Every limit checked at its worst tolerance corner: {int(front['robust'].sum())} of "
                     f"{len(front)} designs robust.")
    rows: dict[int, list[str]] = {}
    for label, i in representatives(front, objective_columns(spec)).items():
        rows.setdefault(i, []).append(label)
    for i, labels in rows.items():
        r = front.iloc[i]
        gap = f"gap {r.gap_mm:g} mm" + (f" in {int(r.gaps)}" if r.get("gaps", 1) > 1 else "") if r.gap_mm > 0 \
            else "no gap"
        lines.append(f"  {' / '.join(labels)} (row {i}): {r.material} {r.stack}x{r['shape']} N={r.turns} {gap} "
                     f"{r.parallel}x{r.wire} {r.f_sw_khz:g} kHz")
        margin = f", worst-corner margin {-r.worst_margin:.0%} ({r.worst_limit})" if "worst_margin" in r else ""
        lines.append(f"      {r.volume_cm3:.1f} cm3, inductor loss {r.total_loss_w:.2f} W, cost {r.cost:.2f} {currency}, "
                     f"{r.inductance_uh:.0f} uH, B peak {r.b_peak_t:.3f} of {r.b_sat_t:.3f} T, "
                     f"hot spot {r.temperature_c:.0f} C{margin}")
    return "\n".join(lines)
