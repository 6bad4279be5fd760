"""Magnetic circuit: reluctance, air-gap fringing, powder-core bias roll-off, flux density.

SI units: metres, square metres, amperes per metre, tesla, henry.

References
----------
C. W. T. McLyman, Transformer and Inductor Design Handbook, 4th ed., CRC Press 2011,
    chapter on air-gap inductors (fringing factor).
R. W. Erickson and D. Maksimovic, Fundamentals of Power Electronics, 3rd ed., Springer 2020,
    magnetic circuits (reluctance model).
"""
from __future__ import annotations

import numpy as np
from scipy import special

from .winding import MU0

OERSTED = 1000.0 / (4.0 * np.pi)  # 1 Oe in A/m (79.577 A/m)


def reluctance(length, area, mu_r=1.0):
    """Reluctance of a uniform flux path ``R = l / (mu0 mu_r A)`` [1/H].

    Parameters
    ----------
    length : array [m]
    area : array [m2], > 0
    mu_r : array [-]
    """
    return np.asarray(length, dtype=float) / (MU0 * np.asarray(mu_r, dtype=float) * np.asarray(area, dtype=float))


def fringing_factor_log(gap, area, window_height):
    """Fringing factor of a gapped leg, ``F = 1 + (lg/sqrt(A)) ln(2G/lg)`` [-].

    Parameters
    ----------
    gap : array [m]            length of one gap, > 0
    area : array [m2]          section of the gapped leg
    window_height : array [m]  window extent G along the gapped leg

    Notes
    -----
    The handbook applies F to the whole inductance: ``L = F N^2 / (R_core + R_gap)``, and the
    core flux density rises by the same factor.  The formula is an empirical fit; it is used for
    gaps small against the window (lg < G), outside that the factor is held at its value there.
    Zero gap gives F = 1.

    References
    ----------
    C. W. T. McLyman, Transformer and Inductor Design Handbook, 4th ed., 2011 (fringing flux).
    """
    lg = np.asarray(gap, dtype=float)
    g = np.asarray(window_height, dtype=float)
    safe = np.clip(lg, 1e-12, g)
    f = 1.0 + (safe / np.sqrt(np.asarray(area, dtype=float))) * np.log(2.0 * g / safe)
    return np.where(lg > 0, f, 1.0)


def no_fringing(gap, area, window_height):
    """Fringing ignored: F = 1 (the gap's flux stays within the leg's section)."""
    return np.ones(np.broadcast_shapes(np.shape(gap), np.shape(area), np.shape(window_height)))


FRINGING_MODELS = {"log": fringing_factor_log, "none": no_fringing}


def gapped_inductance(turns, le, ae, mu_r, gap, gap_area, fringing=1.0):
    """Inductance of a core with a discrete gap, ``L = F N^2 / (R_core + R_gap)`` [H].

    Parameters
    ----------
    turns : array [-]
    le, ae : array [m, m2]  effective magnetic length and (magnetic) section of the core
    mu_r : array [-]        core relative permeability
    gap : array [m]         total gap length in the path
    gap_area : array [m2]   section of the gapped leg
    fringing : array [-]    fringing factor F (1 = none)

    References
    ----------
    Fundamentals of Power Electronics, 3rd ed. (reluctance model); Transformer and Inductor Design
    Handbook, 4th ed. (fringing factor).
    """
    r_total = reluctance(le, ae, mu_r) + reluctance(gap, gap_area)
    return np.asarray(fringing) * np.asarray(turns, dtype=float) ** 2 / r_total


def powder_permeability_fraction(h, a, b, c):
    """Incremental permeability of a powder core under DC bias, as a fraction of the initial [-].

    Parameters
    ----------
    h : array [A/m]  field strength ``H = N i / le``
    a, b, c : array  fit coefficients of ``1/(a + b H_Oe^c)`` with H in oersted

    Notes
    -----
    The curve-fit form makers publish for their powder cores (common practice, no single source);
    a = 1 makes the fraction 1 at zero bias.  b = 0 gives a bias-independent core.
    """
    h_oe = np.abs(np.asarray(h, dtype=float)) / OERSTED
    return 1.0 / (a + b * h_oe**c)


def powder_flux_density(h, mu_initial, a, b, c):
    """Flux density of a powder core at field ``h`` [T], integrating the incremental permeability.

    Notes
    -----
    ``B(H) = mu0 mu_i int_0^H dh / (a + b h_Oe^c)
           = mu0 mu_i (H/a) 2F1(1, 1/c; 1 + 1/c; -b H_Oe^c / a)``,
    the integral written with the Gauss hypergeometric function (scipy.special.hyp2f1).
    """
    h = np.abs(np.asarray(h, dtype=float))
    a = np.asarray(a, dtype=float)
    z = -np.asarray(b, dtype=float) * (h / OERSTED) ** c / a
    return MU0 * np.asarray(mu_initial, dtype=float) * (h / a) * special.hyp2f1(1.0, 1.0 / c, 1.0 + 1.0 / c, z)


def powder_inductance(turns, le, ae, mu_initial):
    """Zero-bias inductance of a distributed-gap core ``L = mu0 mu_i N^2 Ae / le`` [H]."""
    return MU0 * np.asarray(mu_initial, dtype=float) * np.asarray(turns, dtype=float) ** 2 * np.asarray(ae) / np.asarray(le)


def saturation_flux_density(b_sat_25c, tempco, temperature_c):
    """Saturation flux density at ``temperature_c`` [T], linear in temperature from its 25 C value.

    Notes
    -----
    ``Bsat(T) = Bsat(25 C) (1 + tc (T - 25))``; representative of the data-sheet curves between
    25 C and the material's limit (common practice, no source).
    """
    return np.asarray(b_sat_25c) * (1.0 + np.asarray(tempco) * (np.asarray(temperature_c, dtype=float) - 25.0))


# The common grid on which tabulated roll-offs are resampled: log-spaced DC field [A/m]
ROLLOFF_GRID_H = np.logspace(0.0, 6.5, 651)


def tabulate_rolloff(h_points, fraction_points, grid=ROLLOFF_GRID_H):
    """A measured roll-off on the common grid: the fraction (linear in log H, held at the ends) and
    ``int_0^H fraction dh`` [A/m] (trapezoids; below the grid's first point the first fraction holds).

    Returns (fraction on the grid, its running integral on the grid).
    """
    frac = np.interp(np.log(grid), np.log(np.asarray(h_points, dtype=float)), np.asarray(fraction_points, dtype=float))
    cum = np.concatenate([[frac[0] * grid[0]], np.diff(grid) * 0.5 * (frac[1:] + frac[:-1])]).cumsum()
    return frac, cum


def _grid_lookup(h, rows, grid):
    """Linear interpolation in log H of per-design table ``rows`` (n, G) at fields ``h`` (n,) or (n, S)."""
    h = np.abs(np.asarray(h, dtype=float))
    step = np.log(grid[1] / grid[0])
    u = np.clip(np.log(np.maximum(h, grid[0]) / grid[0]) / step, 0.0, len(grid) - 1.000001)
    i = u.astype(np.intp)
    two_d = h.ndim == 2
    take = (lambda idx: np.take_along_axis(rows, idx, axis=1)) if two_d else (
        lambda idx: rows[np.arange(len(rows)), idx])
    lo, hi = take(i), take(i + 1)
    return lo + (u - i) * (hi - lo), h


def tabulated_permeability_fraction(h, fraction_rows, grid=ROLLOFF_GRID_H):
    """Permeability fraction at field ``h`` [A/m] from tabulated roll-offs (one row per design) [-].

    Notes
    -----
    Linear in log H between the measured points; the first and last fractions hold beyond them.
    """
    value, _ = _grid_lookup(h, fraction_rows, grid)
    return value


def tabulated_flux_density(h, mu_initial, integral_rows, fraction_rows, grid=ROLLOFF_GRID_H):
    """Flux density ``mu0 mu_i int_0^H fraction dh`` [T] from tabulated roll-offs (one row per design).

    Below the grid's first field the first fraction holds (``B = mu0 mu_i f_0 H``).
    """
    integral, h = _grid_lookup(h, integral_rows, grid)
    first = fraction_rows[:, :1] if np.ndim(h) == 2 else fraction_rows[:, 0]
    below = h < grid[0]
    integral = np.where(below, first * h, integral)
    return MU0 * np.asarray(mu_initial, dtype=float) * integral
