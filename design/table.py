"""The result table of an evaluation: one row per design, as ``fluxfront evaluate`` and pareto.csv write it.

Column names are part of the interface (scripts depend on them): the design columns, the
objectives ``volume_cm3``, ``total_loss_w`` (the inductor's own), ``system_loss_w`` (with the
semiconductors' switching loss), ``cost``, ``feasible``, then the key figures in snake
case with their unit as suffix.  Loss columns are the weighted mean over the operating points
(the loss objective); peak, flux, ripple and temperature columns are the worst operating point.
"""
from __future__ import annotations

import pandas as pd

from fluxfront.catalog import Catalog

from .evaluator import CONSTRAINTS, Evaluation

OBJECTIVE_COLUMNS = ("volume_cm3", "total_loss_w", "system_loss_w", "cost")
KEY_FIGURES = (
    "inductance_uh", "inductance_at_peak_uh", "i_peak_a", "i_rms_a", "ripple_pp_max_a", "b_peak_t", "b_sat_t",
    "current_limit_a", "b_at_current_limit_t", "b_ripple_pp_max_t", "core_loss_w", "core_gap_loss_w",
    "core_bias_factor", "winding_dc_loss_w", "winding_ac_loss_w", "winding_fringing_loss_w", "switching_loss_w",
    "temperature_c", "winding_temperature_c", "core_temperature_c", "fill", "height_mm", "mass_g",
)
TOLERANCE_COLUMNS = ("robust", "worst_margin", "worst_limit", "worst_corner")   # present in robust runs
RAW_LIMIT_VALUES = ("saturation_ratio", "ripple_ratio", "inductance_kept_fraction", "winding_fit",
                    "dcm_fraction", "thermal_runaway", "steinmetz_in_band", "steinmetz_in_range",
                    "b_ripple_amplitude_t")


def evaluation_frame(ev: Evaluation, catalog: Catalog) -> pd.DataFrame:
    """One row per design: inputs, objectives, feasible, key figures, raw limit values, normalized constraints."""
    df = ev.designs.to_frame(catalog)
    for k in OBJECTIVE_COLUMNS:
        df[k] = ev.figures[k]
    df["feasible"] = ev.feasible
    for k in KEY_FIGURES + RAW_LIMIT_VALUES:
        df[k] = ev.figures[k]
    for k in TOLERANCE_COLUMNS:
        if k in ev.figures:
            df[k] = ev.figures[k]
    for i, name in enumerate(CONSTRAINTS):
        df[f"g_{name}"] = ev.constraints[:, i]      # in a robust run: at the constraint's worst corner
        if f"nominal_g_{name}" in ev.figures:
            df[f"nominal_g_{name}"] = ev.figures[f"nominal_g_{name}"]
    return df


def result_columns() -> set[str]:
    """Every column ``evaluation_frame`` can write besides the design columns."""
    names = set(OBJECTIVE_COLUMNS) | set(KEY_FIGURES) | set(RAW_LIMIT_VALUES) | set(TOLERANCE_COLUMNS) | {"feasible"}
    return names | {f"g_{c}" for c in CONSTRAINTS} | {f"nominal_g_{c}" for c in CONSTRAINTS}
