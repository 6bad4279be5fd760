"""Catalog entries from the engineer's own data: Steinmetz bands and roll-off fits from measured points.

Point files are CSV with the unit in each column name (``f_khz``, ``b_mt``, ``pv_kw_m3``,
``t_c``; ``h_oe`` or ``h_a_per_m`` with ``fraction``); the usual variants are listed in ``UNITS``.
Every fit is least squares (numpy/scipy) and reports its errors; every refusal is one line.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd
from scipy import optimize

from fluxfront.models.magnetics import OERSTED

from .loader import CatalogError

# quantity -> {column name: factor to SI}
UNITS = {
    "f": {"f_hz": 1.0, "f_khz": 1e3, "f_mhz": 1e6, "frequency_hz": 1.0, "frequency_khz": 1e3},
    "b": {"b_t": 1.0, "b_mt": 1e-3, "b_peak_t": 1.0, "b_peak_mt": 1e-3, "b_gauss": 1e-4},
    "pv": {"pv_w_m3": 1.0, "pv_kw_m3": 1e3, "pv_mw_cm3": 1e3, "pv_w_cm3": 1e6, "loss_w_m3": 1.0,
           "loss_kw_m3": 1e3, "loss_mw_cm3": 1e3},
    "t": {"t_c": 1.0, "temperature_c": 1.0},
    "h": {"h_a_per_m": 1.0, "h_ka_per_m": 1e3, "h_oe": OERSTED},
    "fraction": {"fraction": 1.0, "mu_fraction": 1.0, "percent": 0.01, "mu_percent": 0.01},
}
MIN_POINTS = 6
SPLIT_ERROR = 0.10         # a band whose worst point is off by more than 10 % is split (up to MAX_BANDS)
MAX_BANDS = 3


def read_points(path, quantities) -> tuple[dict[str, np.ndarray], dict[str, str]]:
    """The columns of ``quantities`` in SI, and which column each came from; one-line CatalogError."""
    path = Path(path)
    try:
        df = pd.read_csv(path, skipinitialspace=True)
    except FileNotFoundError:
        raise CatalogError(f"{path}: no such points file") from None
    except (pd.errors.ParserError, pd.errors.EmptyDataError, UnicodeDecodeError) as exc:
        raise CatalogError(f"{path}: not a readable CSV ({str(exc).splitlines()[0] if str(exc) else 'empty'})") from None
    cols = {c.strip().lower(): c for c in df.columns}
    out, used = {}, {}
    for q, required in quantities.items():
        found = [name for name in UNITS[q] if name in cols]
        if len(found) > 1:
            raise CatalogError(f"{path}: columns {found[0]!r} and {found[1]!r} both give {q}; keep one unit")
        if not found:
            if required:
                raise CatalogError(f"{path}: no column for {q}; expected one of {', '.join(UNITS[q])}")
            continue
        values = pd.to_numeric(df[cols[found[0]]], errors="coerce").to_numpy(dtype=float)
        bad = ~np.isfinite(values) | ((values <= 0) if q != "t" else np.zeros(len(values), dtype=bool))
        if bad.any():
            i = int(np.argmax(bad))
            raise CatalogError(f"{path} row {i + 1}: column '{found[0]}' = {df[cols[found[0]]].iloc[i]!r}: expected "
                               f"a {'finite number' if q == 't' else 'positive number'}")
        out[q], used[q] = values * UNITS[q][found[0]], found[0]
    n = len(next(iter(out.values())))
    if n < MIN_POINTS:
        raise CatalogError(f"{path}: {n} points; a fit needs at least {MIN_POINTS}")
    return out, used


@dataclass(frozen=True)
class Band:
    f_min: float
    f_max: float
    b_min: float
    b_max: float
    k: float
    alpha: float
    beta: float


def _fit_band(f, b, pv) -> Band:
    """log Pv = log k + alpha log f + beta log B by linear least squares."""
    a = np.column_stack([np.ones_like(f), np.log(f), np.log(b)])
    coef, *_ = np.linalg.lstsq(a, np.log(pv), rcond=None)
    return Band(float(f.min()), float(f.max()), float(b.min()), float(b.max()), float(np.exp(coef[0])),
                float(coef[1]), float(coef[2]))


def _check_band_data(f, b, path):
    if len(np.unique(f)) < 2 or len(np.unique(b)) < 2:
        raise CatalogError(f"{path}: a band needs points at two frequencies and two flux levels at least "
                           f"(this one has {len(np.unique(f))} frequencies, {len(np.unique(b))} flux levels)")


def _worst(bands, f, b, pv) -> float:
    return float(np.max(np.abs(predict(bands, f, b) / pv - 1)))


def predict(bands, f, b):
    """Loss density of the bands at (f, b) [W/m3], each point from the band that holds its frequency."""
    out = np.empty_like(f)
    for i, band in enumerate(bands):
        upper = bands[i + 1].f_min if i + 1 < len(bands) else np.inf
        sel = (f >= (band.f_min if i else 0)) & (f < upper)
        out[sel] = band.k * f[sel] ** band.alpha * b[sel] ** band.beta
    return out


def fit_bands(f, b, pv, path) -> list[Band]:
    """One band, split at the frequency that helps most while a band fits worse than SPLIT_ERROR."""
    _check_band_data(f, b, path)
    bands = [_fit_band(f, b, pv)]
    while len(bands) < MAX_BANDS and _worst(bands, f, b, pv) > SPLIT_ERROR:
        freqs = np.unique(f)
        best = None
        for cut in freqs[2:-1]:                          # at least two frequencies on each side
            lo, hi = f < cut, f >= cut
            try:
                for sel in (lo, hi):
                    _check_band_data(f[sel], b[sel], path)
            except CatalogError:
                continue
            trial = sorted(fit_bands(f[lo], b[lo], pv[lo], path) + [_fit_band(f[hi], b[hi], pv[hi])],
                           key=lambda x: x.f_min)
            if len(trial) > MAX_BANDS:                   # the lower side split on its own: keep to the cap
                continue
            err = _worst(trial, f, b, pv)
            if best is None or err < best[0]:
                best = (err, trial)
        if best is None or best[0] >= _worst(bands, f, b, pv):
            break
        bands = best[1]
    return _contiguous(bands)


def _contiguous(bands: list[Band]) -> list[Band]:
    """Neighbouring bands meet at the geometric mean of their data's edges (no gap, no overlap)."""
    out = list(bands)
    for i in range(len(out) - 1):
        edge = math.sqrt(out[i].f_max * out[i + 1].f_min)
        out[i] = Band(out[i].f_min, edge, out[i].b_min, out[i].b_max, out[i].k, out[i].alpha, out[i].beta)
        nxt = out[i + 1]
        out[i + 1] = Band(edge, nxt.f_max, nxt.b_min, nxt.b_max, nxt.k, nxt.alpha, nxt.beta)
    return out


def fit_temperature(ratio, t, t_ref) -> tuple[float, float]:
    """c1, c2 of ``F(T) = 1 + c1 (T - Tref) + c2 (T - Tref)^2`` from loss ratios to the reference."""
    dt = t - t_ref
    if len(np.unique(t)) < 2:
        return 0.0, 0.0
    if len(np.unique(t)) == 2:
        return float(np.sum((ratio - 1) * dt) / np.sum(dt * dt)), 0.0
    coef, *_ = np.linalg.lstsq(np.column_stack([dt, dt * dt]), ratio - 1, rcond=None)
    return float(coef[0]), float(coef[1])


@dataclass(frozen=True)
class LossFit:
    bands: list[Band]
    t_ref: float
    c1: float
    c2: float
    errors: np.ndarray          # relative error of every point, temperature factor included


def fit_loss(points: dict[str, np.ndarray], path) -> LossFit:
    """Steinmetz bands at the reference temperature (the one with most points), then the temperature fit."""
    f, b, pv = points["f"], points["b"], points["pv"]
    t = points.get("t", np.full(len(f), 25.0))
    temps, counts = np.unique(t, return_counts=True)
    t_ref = float(temps[np.argmax(counts)])
    at_ref = t == t_ref
    if at_ref.sum() < MIN_POINTS:
        raise CatalogError(f"{path}: {int(at_ref.sum())} points at the reference temperature {t_ref:g} C; "
                           f"a fit needs at least {MIN_POINTS} at one temperature")
    bands = fit_bands(f[at_ref], b[at_ref], pv[at_ref], path)
    base = predict(bands, f, b)
    c1, c2 = fit_temperature(pv / base, t, t_ref)
    model = base * (1 + c1 * (t - t_ref) + c2 * (t - t_ref) ** 2)
    return LossFit(bands, t_ref, c1, c2, model / pv - 1)


def fit_rolloff(h, fraction, path) -> tuple[float, float, float, np.ndarray]:
    """a, b, c of ``1 / (a + b H_Oe^c)`` (the catalog's form) and the relative error of every point."""
    h_oe = h / OERSTED
    if len(np.unique(h_oe)) < 4:
        raise CatalogError(f"{path}: a roll-off fit needs at least four distinct field values")
    if np.any(fraction > 1.2):
        raise CatalogError(f"{path}: permeability fractions above 1.2; give fractions of the initial value "
                           "(or a percent column)")

    def residual(p):
        a, lb, c = p
        return np.log(1.0 / (a + np.exp(lb) * h_oe**c)) - np.log(fraction)

    lb0 = np.log(max(1.0 / np.min(fraction) - 1.0, 1e-6)) - 1.6 * np.log(np.max(h_oe))
    res = optimize.least_squares(residual, x0=[1.0, lb0, 1.6], bounds=([0.5, -60, 0.3], [2.0, 5, 4.0]))
    a, lb, c = res.x
    model = 1.0 / (a + np.exp(lb) * h_oe**c)
    return float(a), float(np.exp(lb)), float(c), model / fraction - 1
