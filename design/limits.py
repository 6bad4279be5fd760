"""Stage 6, the limits: each as a normalized constraint ``g <= 0`` (met) with its raw value beside it.

Normalization: ``value / limit - 1`` for upper limits, so that 0.1 means 10 % over; temperatures
relative to the allowed rise above ambient.

* saturation: peak flux at the narrowest section, against the margin times saturation at the core's
  temperature, at every operating point;
* saturation_at_limit: the flux at the controller's current limit against saturation itself (a
  transient: no margin, no temperature limit of its own, saturation at the hottest operating point);
* loss_data: the largest ripple flux amplitude against the top of the Steinmetz band's flux range,
  so that the search stays within the loss data (as the islands keep it within their frequencies).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from fluxfront.models import magnetics

from .build import Build
from .circuit import Circuit
from .context import Context
from .designs import Designs
from .heat import HeatBalance
from .line_cycle import LineCycle

CONSTRAINTS = ("saturation", "saturation_at_limit", "ripple", "inductance_kept", "fill", "hot_spot",
               "material_temperature", "dcm", "loss_data")
RUNAWAY_PENALTY = 10.0     # normalized violation given to a design whose heat balance diverges
DOES_NOT_FIT = 1e3         # normalized violation of a winding that cannot be laid out at all


@dataclass(frozen=True)
class Limits:
    """Normalized constraints (n, len(CONSTRAINTS)) in ``CONSTRAINTS`` order and the raw values they come from."""

    g: np.ndarray
    b_sat: np.ndarray          # (n, n_ops) saturation flux density at the core temperature [T]
    current_limit: np.ndarray  # (n,) the controller's current limit [A]
    b_at_limit: np.ndarray     # (n,) flux density at the narrowest section at that current [T]
    ripple_amplitude: np.ndarray  # (n,) largest ripple flux amplitude (half the swing) [T]
    in_range: np.ndarray       # (n,) that amplitude lies within the band's flux range (bool)
    sat_ratio: np.ndarray      # (n, n_ops) peak flux over the allowed flux
    ripple_worst: np.ndarray   # (n,) largest ripple over the line peak, ripple-checked points only
    kept: np.ndarray           # (n,) smallest permeability fraction kept at peak current
    winding_fit: np.ndarray    # (n,) build over room; DOES_NOT_FIT where it cannot be laid


def limits(ctx: Context, d: Designs, b: Build, c: Circuit, lc: LineCycle, hb: HeatBalance) -> Limits:
    """Every limit of ``CONSTRAINTS`` as a normalized constraint, with the raw values."""
    lim, M = ctx.spec.limits, ctx.catalog.material_arrays
    m, n = d.material, len(d)
    per = lc.per_op
    b_sat = magnetics.saturation_flux_density(M.b_sat_25c[m, None], M.b_sat_tempco[m, None], hb.t_core)
    i_limit = (np.full(n, lim.current_limit_a) if lim.current_limit_a is not None
               else lim.current_limit_factor * per["i_peak"].max(axis=1))
    b_at_limit = c.flux_density(i_limit) * c.section_ratio
    amplitude = per["db_max"].max(axis=1) / 2
    b_lo, b_hi = M.band_b_min[m, c.band], M.band_b_max[m, c.band]
    sat_ratio = per["b_peak"] / (lim.saturation_margin * b_sat)
    checked = np.array([op.ripple_checked for op in ctx.ops])
    ripple_worst = (per["ripple_ratio"][:, checked].max(axis=1) if checked.any() else np.zeros(n))
    kept = per["kept_fraction"].min(axis=1)
    runaway = hb.runaway.any(axis=1)
    t_worst = np.where(runaway, np.inf, hb.t_hot.max(axis=1))
    t_core = np.where(runaway, np.inf, hb.t_core.max(axis=1))
    t_lim_mat = M.t_max[m]
    g = np.column_stack([
        sat_ratio.max(axis=1) - 1,
        b_at_limit / b_sat.min(axis=1) - 1,
        ripple_worst / lim.ripple_pp_max_fraction - 1,
        lim.inductance_kept_min_fraction - kept,
        np.where(b.laid, np.maximum(b.fill / lim.fill_max, b.fit), DOES_NOT_FIT) - 1,
        np.where(np.isfinite(t_worst), (t_worst - lim.hot_spot_max_c) / (lim.hot_spot_max_c - lim.ambient_c),
                 RUNAWAY_PENALTY),
        np.where(np.isfinite(t_core), (t_core - t_lim_mat) / (t_lim_mat - lim.ambient_c), RUNAWAY_PENALTY),
        per["dcm_fraction"].max(axis=1) / lim.dcm_max_fraction - 1,
        amplitude / b_hi - 1,
    ])
    return Limits(g=np.minimum(g, DOES_NOT_FIT), b_sat=b_sat, current_limit=i_limit, b_at_limit=b_at_limit,
                  ripple_amplitude=amplitude, in_range=(amplitude >= b_lo) & (amplitude <= b_hi), sat_ratio=sat_ratio,
                  ripple_worst=ripple_worst, kept=kept, winding_fit=np.where(b.laid, b.fit, DOES_NOT_FIT))
