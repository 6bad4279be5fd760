"""The evaluator: a chain of named stages over a whole population of designs.

``prepare(spec, catalog)`` (``context.py``) computes once what does not depend on the design;
``evaluate(context, designs)`` then runs, chunk by chunk, on arrays:

    build -> circuit -> line_cycle -> ac_factors -> heat_balance -> limits -> price -> figures

Each stage is a function in a module of its own that takes the records of the stages before it
and returns a small frozen record (``Build``, ``Circuit``, ``LineCycle``, ``AcFactors``,
``HeatBalance``, ``Limits``, ``Price``).  A new loss term goes into the stage of its domain and its
column into ``_figures``.  Results of a design never depend on the batch it is evaluated in.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .build import Build, build
from .circuit import Circuit, circuit
from .context import INDUCTOR_OBJECTIVES, Context, objective_columns, prepare
from .designs import Designs
from .heat import HeatBalance, ac_factors, heat_balance
from .limits import CONSTRAINTS, Limits, limits
from .line_cycle import LineCycle
from .line_cycle import line_cycle as line_cycle_stage
from .pricing import Price, price

__all__ = ["CONSTRAINTS", "INDUCTOR_OBJECTIVES", "Context", "Evaluation", "prepare", "evaluate",
           "concat_evaluations", "objective_columns"]


@dataclass
class Evaluation:
    """Results for a population (arrays of length n; per-operating-point arrays are (n, n_ops))."""

    designs: Designs
    objectives: np.ndarray            # (n, 3): volume [cm3], weighted loss [W] (Context.objectives), cost
    constraints: np.ndarray           # (n, 9): normalized, <= 0 when met (order: CONSTRAINTS)
    figures: dict[str, np.ndarray]    # key figures, engineering units, named with their unit
    per_op: dict[str, np.ndarray]     # (n, n_ops), SI units
    samples: list[dict[str, np.ndarray]] = field(default_factory=list)  # per op, (n, S) arrays if kept

    @property
    def feasible(self) -> np.ndarray:
        return np.all(self.constraints <= 0, axis=1)


def _weighted(per_op, weights):
    """Weighted sum over operating points, per design, in a fixed order."""
    return (per_op * weights).sum(axis=1)


def _figures(ctx: Context, d: Designs, b: Build, cc: Circuit, lc: LineCycle, hb: HeatBalance, lim: Limits,
             pr: Price) -> dict:
    """Key figures per design, in engineering units, each named with its unit.

    Losses are weighted over the operating points; ``total_loss_w`` is the inductor's own loss and
    equals the sum of its parts (core, core gap, winding DC, AC and fringing).  Switching loss is
    the semiconductors', reported beside it and added only in ``system_loss_w``.
    """
    wts, per = ctx.weights, lc.per_op
    i_l_rms = np.sqrt(per["i_line_rms"] ** 2 + per["ripple_ms"])
    total = _weighted(hb.total, wts)
    switching = _weighted(hb.switching, wts)
    return {
        "inductance_uh": cc.l0 * 1e6,
        "inductance_at_peak_uh": per["inductance_at_peak"].min(axis=1) * 1e6,
        "i_peak_a": per["i_peak"].max(axis=1),
        "i_rms_a": i_l_rms.max(axis=1),
        "ripple_pp_max_a": per["ripple_max"].max(axis=1),
        "ripple_ratio": lim.ripple_worst,
        "b_peak_t": per["b_peak"].max(axis=1),
        "b_sat_t": lim.b_sat.min(axis=1),
        "saturation_ratio": lim.sat_ratio.max(axis=1),
        "current_limit_a": lim.current_limit,
        "b_at_current_limit_t": lim.b_at_limit,
        "b_ripple_pp_max_t": per["db_max"].max(axis=1),
        "core_loss_w": _weighted(hb.core, wts),
        "core_line_loss_w": _weighted(hb.core_line, wts),
        "core_gap_loss_w": _weighted(hb.core_gap, wts),
        "core_bias_factor": per["core_bias_factor"].max(axis=1),
        "winding_dc_loss_w": _weighted(hb.winding_dc, wts),
        "winding_ac_loss_w": _weighted(hb.winding_ac, wts),
        "winding_fringing_loss_w": _weighted(hb.winding_fringing, wts),
        "total_loss_w": total,
        "switching_loss_w": switching,
        "system_loss_w": total + switching,
        "temperature_c": hb.t_hot.max(axis=1),          # where thermal_runaway: the last iterate, not a state
        "winding_temperature_c": hb.t_winding.max(axis=1),
        "core_temperature_c": hb.t_core.max(axis=1),
        "surface_temperature_c": hb.t_surface.max(axis=1),
        "thermal_runaway": hb.runaway.any(axis=1),
        "inductance_kept_fraction": lim.kept,
        "dcm_fraction": per["dcm_fraction"].max(axis=1),
        "fill": b.fill,
        "winding_fit": lim.winding_fit,
        "turns_per_layer": b.turns_per_layer,
        "layers": b.layers,
        "wire_length_m": b.wire_length * d.parallel.astype(float),
        "r_dc_mohm_20c": b.r_dc20 * 1e3,
        "fringing_factor": cc.fringe,
        "gap_each_mm": cc.gap_total / (np.maximum(ctx.catalog.shape_arrays["gap_legs"][d.shape], 1) * d.gaps) * 1e3,
        "steinmetz_in_band": cc.in_band,
        "steinmetz_in_range": lim.in_range,
        "b_ripple_amplitude_t": lim.ripple_amplitude,
        "volume_cm3": b.volume * 1e6,
        "surface_cm2": b.surface * 1e4,
        # outline as it stands on its largest face: length >= width >= height
        "length_mm": b.size.max(axis=1) * 1e3,
        "width_mm": np.median(b.size, axis=1) * 1e3,
        "height_mm": b.size.min(axis=1) * 1e3,
        "core_mass_g": pr.core_mass * 1e3,
        "copper_mass_g": b.copper_mass * 1e3,
        "mass_g": (pr.core_mass + b.copper_mass) * 1e3,
        "cost": pr.total,
        **pr.parts,
    }


def _per_op(lc: LineCycle, hb: HeatBalance, lim: Limits) -> dict:
    """Results per operating point (n, n_ops), SI units but for the named exceptions."""
    per = lc.per_op
    return {"temperature_c": hb.t_hot, "surface_temperature_c": hb.t_surface, "core_loss_w": hb.core, "core_line_loss_w": hb.core_line,
            "core_gap_loss_w": hb.core_gap, "core_bias_factor": per["core_bias_factor"],
            "winding_dc_loss_w": hb.winding_dc, "winding_ac_loss_w": hb.winding_ac,
            "winding_fringing_loss_w": hb.winding_fringing, "switching_loss_w": hb.switching,
            "total_loss_w": hb.total, "b_peak_t": per["b_peak"], "b_sat_t": lim.b_sat, "i_peak_a": per["i_peak"],
            "ripple_pp_max_a": per["ripple_max"], "dcm_fraction": per["dcm_fraction"],
            "inductance_at_peak_uh": per["inductance_at_peak"] * 1e6}


def evaluate_chunk(ctx: Context, d: Designs, keep_samples: bool = False) -> Evaluation:
    """The chain of stages over one chunk of designs."""
    b = build(ctx, d)
    cc = circuit(ctx, d, b)
    lc = line_cycle_stage(ctx, d, b, cc, keep_samples)
    hb = heat_balance(ctx, d, b, lc, ac_factors(ctx, d, b, cc, lc))
    lim = limits(ctx, d, b, cc, lc, hb)
    pr = price(ctx, d, b)
    figures = _figures(ctx, d, b, cc, lc, hb, lim, pr)
    objectives = np.column_stack([figures[name] for name in ctx.objectives])
    return Evaluation(d, objectives, lim.g, figures, _per_op(lc, hb, lim), lc.samples)


def concat_evaluations(parts: list[Evaluation]) -> Evaluation:
    """Join evaluations of consecutive parts of a population into one."""
    if len(parts) == 1:
        return parts[0]
    cat = lambda xs: np.concatenate(xs, axis=0)  # noqa: E731
    designs = Designs.concat([p.designs for p in parts])
    samples = []
    if parts[0].samples:
        samples = [{k: cat([p.samples[j][k] for p in parts]) for k in parts[0].samples[j]}
                   for j in range(len(parts[0].samples))]
    return Evaluation(designs, cat([p.objectives for p in parts]), cat([p.constraints for p in parts]),
                      {k: cat([p.figures[k] for p in parts]) for k in parts[0].figures},
                      {k: cat([p.per_op[k] for p in parts]) for k in parts[0].per_op}, samples)


def evaluate(ctx: Context, designs: Designs, chunk: int = 4096, keep_samples: bool = False) -> Evaluation:
    """Evaluate a population in chunks of ``chunk`` designs (memory stays bounded for any size).

    The result does not depend on ``chunk``: every design is computed independently.
    """
    parts = [evaluate_chunk(ctx, designs.take(slice(i, i + chunk)), keep_samples)
             for i in range(0, len(designs), chunk)]
    return concat_evaluations(parts)
