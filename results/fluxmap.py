"""Which material is loss-limited at which frequency: the ripple flux each can afford, before a search.

For each material and switching frequency: the largest ripple flux amplitude whose iGSE loss (a
triangle at duty 0.5, the high-line worst case) stays at a chosen loss density, beside the ripple
amplitude saturation allows.  With ripple ratio r (peak-to-peak ripple over the line-current peak)
the peak flux is ``B_line (1 + r/2)`` and the ripple amplitude ``B_line r/2``, so saturation allows
``(r/2)/(1 + r/2) * margin * Bsat(T)`` at the hot-spot limit T.  Above the crossover frequency the
loss, not saturation, limits the design.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from fluxfront.catalog import Catalog
from fluxfront.design.spec import Spec
from fluxfront.files import write_atomic
from fluxfront.models import core_loss, magnetics

from . import plots


def _material_ids(spec: Spec, catalog: Catalog) -> list[str]:
    return list(catalog.materials) if spec.search.materials == ["all"] else spec.search.materials


def saturation_ripple_amplitude(spec: Spec, catalog: Catalog, material: str) -> float:
    """Ripple flux amplitude that saturation allows for ``material`` under the spec's limits [T]."""
    m = catalog.materials[material]
    t = min(spec.limits.hot_spot_max_c, m.t_max_c)
    b_sat = float(magnetics.saturation_flux_density(m.b_sat_t_25c, m.b_sat_tempco_per_k, t))
    half = spec.limits.ripple_pp_max_fraction / 2
    return half / (1 + half) * spec.limits.saturation_margin * b_sat


def loss_limited_amplitude(catalog: Catalog, material: str, f_hz, pv_limit_w_m3) -> np.ndarray:
    """Largest ripple amplitude at frequencies ``f_hz`` for the loss density ``pv_limit_w_m3`` [T]."""
    m = catalog.materials[material]
    bands = sorted(m.steinmetz, key=lambda b: b.f_min_hz)
    f = np.atleast_1d(np.asarray(f_hz, dtype=float))
    f_min = np.array([[b.f_min_hz for b in bands]] * len(f))
    f_max = np.array([[b.f_max_hz for b in bands]] * len(f))
    idx, _ = core_loss.select_band(f, f_min, f_max)
    k = np.array([b.k for b in bands])[idx]
    a = np.array([b.alpha for b in bands])[idx]
    be = np.array([b.beta for b in bands])[idx]
    return core_loss.triangle_amplitude_for_loss(pv_limit_w_m3, f, k, a, be)


def crossover_frequency(catalog: Catalog, material: str, pv_limit_w_m3: float, b_sat_amp: float,
                        f_lo: float, f_hi: float) -> float:
    """Frequency [Hz] where the loss-limited amplitude falls to the saturation-allowed one.

    Closed form in each Steinmetz band: ``f = (Pv / (k_i s (2B)^beta))^(1/alpha)`` with s = 2 * 0.5^(1-alpha),
    kept if it lies in the band and in [f_lo, f_hi].  Returns f_lo if loss already limits at f_lo,
    and inf if it never does below f_hi.
    """
    if loss_limited_amplitude(catalog, material, f_lo, pv_limit_w_m3)[0] <= b_sat_amp:
        return f_lo
    if loss_limited_amplitude(catalog, material, f_hi, pv_limit_w_m3)[0] > b_sat_amp:
        return np.inf
    for b in sorted(catalog.materials[material].steinmetz, key=lambda b: b.f_min_hz):
        shape = 2 * 0.5 ** (1 - b.alpha)
        f = (pv_limit_w_m3 / (core_loss.igse_ki(b.k, b.alpha, b.beta) * shape * (2 * b_sat_amp) ** b.beta)) ** (1 / b.alpha)
        if max(b.f_min_hz, f_lo) <= f <= min(b.f_max_hz, f_hi):
            return float(f)
    # the curve crosses in a gap between bands (or across extrapolated ends): bisection on the curve
    lo, hi = f_lo, f_hi
    for _ in range(200):
        mid = np.sqrt(lo * hi)
        if loss_limited_amplitude(catalog, material, mid, pv_limit_w_m3)[0] > b_sat_amp:
            lo = mid
        else:
            hi = mid
    return float(np.sqrt(lo * hi))


def flux_map(spec: Spec, catalog: Catalog, loss_densities_mw_cm3, points: int = 60):
    """Curves and crossovers for every allowed material.

    Returns
    -------
    curves : DataFrame  material, class, loss_density_mw_cm3, f_khz, b_loss_mt, b_saturation_mt
    summary : DataFrame material, class, loss_density_mw_cm3, b_saturation_mt, crossover_khz
    """
    f_lo, f_hi = spec.search.f_sw_khz_min * 1e3, spec.search.f_sw_khz_max * 1e3
    f = np.geomspace(f_lo, f_hi, points)
    curves, summary = [], []
    for mid in _material_ids(spec, catalog):
        cls = catalog.materials[mid].class_
        b_sat = saturation_ripple_amplitude(spec, catalog, mid)
        for pv in loss_densities_mw_cm3:
            b = loss_limited_amplitude(catalog, mid, f, pv * 1e3)
            curves.append(pd.DataFrame({"material": mid, "class": cls, "loss_density_mw_cm3": pv, "f_khz": f / 1e3,
                                        "b_loss_mt": b * 1e3, "b_saturation_mt": b_sat * 1e3}))
            fx = crossover_frequency(catalog, mid, pv * 1e3, b_sat, f_lo, f_hi)
            summary.append({"material": mid, "class": cls, "loss_density_mw_cm3": pv, "b_saturation_mt": b_sat * 1e3,
                            "crossover_khz": fx / 1e3})
    return pd.concat(curves, ignore_index=True), pd.DataFrame(summary)


def write_flux_map(spec: Spec, catalog: Catalog, loss_densities_mw_cm3, out) -> tuple[pd.DataFrame, list[Path]]:
    """Flux-map figure and its two tables in ``out``; returns the crossover table and the files."""
    curves, summary = flux_map(spec, catalog, loss_densities_mw_cm3)
    out = Path(out)
    paths = plots.save(plots.flux_map_figure(curves, summary), out, "flux_map")
    paths.append(write_atomic(out / "flux_map_curves.csv", curves.to_csv(index=False)))
    paths.append(write_atomic(out / "flux_map_crossover.csv", summary.to_csv(index=False)))
    return summary, paths


def crossover_lines(spec: Spec, summary: pd.DataFrame) -> list[str]:
    """One line per material and loss density: where the loss, not saturation, limits the ripple flux."""
    lo, hi = spec.search.f_sw_khz_min, spec.search.f_sw_khz_max
    lines = ["Frequency above which core loss, not saturation, limits the ripple flux "
             f"(searched range {lo:g}-{hi:g} kHz):"]
    for _, r in summary.iterrows():
        fx = r.crossover_khz
        where = (f"above {fx:.0f} kHz" if lo < fx < hi else
                 "loss-limited over the whole range" if fx <= lo else "saturation-limited over the whole range")
        lines.append(f"  {r.material:22s} ({r['class']}), {r.loss_density_mw_cm3:g} mW/cm3: {where} "
                     f"(saturation allows {r.b_saturation_mt:.0f} mT ripple amplitude)")
    return lines
