"""Core loss: Steinmetz equation, iGSE for triangular flux, line-frequency loop, temperature.

Pv in W/m3, f in Hz, B in T (peak for sine, peak-to-peak ``db_pp`` for the iGSE).

References
----------
C. P. Steinmetz, "On the law of hysteresis", Trans. AIEE 9, 1892.
K. Venkatachalam, C. R. Sullivan, T. Abdallah, H. Tacca, IEEE Workshop on Computers in Power
    Electronics (COMPEL) 2002: the improved generalized Steinmetz equation (iGSE).
"""
from __future__ import annotations

import numpy as np
from scipy import special


def steinmetz(f, b_peak, k, alpha, beta):
    """Steinmetz loss density for sinusoidal flux ``Pv = k f^alpha B^beta`` [W/m3].

    Parameters
    ----------
    f : array [Hz]
    b_peak : array [T]  peak (half of peak-to-peak) flux density
    k, alpha, beta : array  Steinmetz parameters for Pv in W/m3

    References
    ----------
    Steinmetz, Trans. AIEE 9 (1892); frequency form as commonly fitted to data sheets.
    """
    return np.asarray(k) * np.asarray(f, dtype=float) ** alpha * np.asarray(b_peak, dtype=float) ** beta


def igse_ki(k, alpha, beta):
    """iGSE coefficient ``k_i = k / ((2 pi)^(alpha-1) 2^(beta-alpha) int_0^2pi |cos t|^alpha dt)``.

    Notes
    -----
    ``int_0^2pi |cos t|^alpha dt = 2 sqrt(pi) Gamma((alpha+1)/2) / Gamma(alpha/2 + 1)``, so that
    the iGSE equals the Steinmetz equation for sinusoidal flux.

    References
    ----------
    iGSE, IEEE COMPEL 2002 (see module references).
    """
    alpha = np.asarray(alpha, dtype=float)
    cos_integral = 2.0 * np.sqrt(np.pi) * special.gamma((alpha + 1) / 2) / special.gamma(alpha / 2 + 1)
    return np.asarray(k) / ((2 * np.pi) ** (alpha - 1) * 2.0 ** (beta - alpha) * cos_integral)


def igse_triangle(db_pp, duty, f, k, alpha, beta):
    """iGSE loss density of a triangular flux wave [W/m3].

    Parameters
    ----------
    db_pp : array [T]  peak-to-peak flux swing
    duty : array [-]   rising fraction D of the period, 0 < D < 1
    f : array [Hz]     repetition frequency
    k, alpha, beta : array  Steinmetz parameters

    Notes
    -----
    ``Pv = k_i dB_pp^beta f^alpha (D^(1-alpha) + (1-D)^(1-alpha))``: the iGSE integral
    ``(1/T) int k_i |dB/dt|^alpha dB_pp^(beta-alpha) dt`` over the two straight flanks.
    DC bias of the flux is not modelled (it raises the loss of most materials).

    References
    ----------
    iGSE, IEEE COMPEL 2002 (see module references).
    """
    d = np.asarray(duty, dtype=float)
    if np.any(d <= 0) or np.any(d >= 1):
        raise ValueError("duty must lie strictly between 0 and 1")
    shape = d ** (1 - np.asarray(alpha)) + (1 - d) ** (1 - np.asarray(alpha))
    return igse_ki(k, alpha, beta) * np.asarray(db_pp, dtype=float) ** beta * np.asarray(f, dtype=float) ** alpha * shape


def rectified_sine_loop(b_peak, f_line, k, alpha, beta):
    """iGSE loss density of the line-frequency loop of a PFC inductor [W/m3].

    Parameters
    ----------
    b_peak : array [T]  flux density at the line-current peak (the loop runs 0 -> b_peak -> 0)
    f_line : array [Hz] mains frequency; the loop repeats at 2 f_line
    k, alpha, beta : array  Steinmetz parameters of the band that holds at 2 f_line

    Notes
    -----
    For ``B = B_pk |sin(2 pi f_line t)|`` the iGSE integral evaluates in closed form to
    ``Pv = k (2 f_line)^alpha (B_pk/2)^beta``: the Steinmetz loss of a sine of amplitude B_pk/2 at
    twice the line frequency (derived here from the iGSE; checked numerically in the tests).
    """
    return steinmetz(2.0 * np.asarray(f_line, dtype=float), 0.5 * np.asarray(b_peak, dtype=float), k, alpha, beta)


def temperature_factor(temperature_c, t_ref, c1, c2):
    """Loss multiplier at core temperature ``temperature_c`` [-]: ``1 + c1 dT + c2 dT^2``, dT = T - Tref.

    Notes
    -----
    The quadratic fit of loss against temperature used for ferrites (minimum near 80-100 C) and
    a flat or gently falling line for ribbons and powders.  Floored at 0.2 so that a fit taken
    beyond its range cannot return zero or negative loss (common practice, no source).
    """
    dt = np.asarray(temperature_c, dtype=float) - np.asarray(t_ref)
    return np.maximum(1.0 + np.asarray(c1) * dt + np.asarray(c2) * dt * dt, 0.2)


def select_band(f, f_min, f_max):
    """Index of the Steinmetz band for frequency ``f`` [Hz].

    Parameters
    ----------
    f : array [Hz], shape (n,)
    f_min, f_max : array [Hz], shape (n, n_bands)  band limits (padding bands: +inf)

    Returns
    -------
    index : int array (n,)  the band holding f; outside every band, the nearest band (the fit
        is then extrapolated, which the caller may report).
    inside : bool array (n,)
    """
    f = np.asarray(f, dtype=float)[:, None]
    inside = (f >= f_min) & (f <= f_max)
    # distance to each band as a frequency ratio >= 1 (1 inside); padding bands (f_min = inf) are infinitely far
    distance = np.maximum(np.maximum(f_min / f, f / f_max), 1.0)
    return np.argmin(distance, axis=1), inside.any(axis=1)


def triangle_amplitude_for_loss(pv_limit, f, k, alpha, beta, duty=0.5):
    """Largest triangular flux amplitude (half the peak-to-peak swing) whose iGSE loss stays at ``pv_limit`` [T].

    Parameters
    ----------
    pv_limit : array [W/m3]
    f : array [Hz]
    k, alpha, beta : array  Steinmetz parameters
    duty : array [-]        rising fraction of the period (0.5: the PFC worst case at high line)

    Notes
    -----
    Inverse of igse_triangle: ``B = (1/2) (Pv / (k_i f^alpha (D^(1-alpha) + (1-D)^(1-alpha))))^(1/beta)``.
    """
    d = np.asarray(duty, dtype=float)
    shape = d ** (1 - np.asarray(alpha)) + (1 - d) ** (1 - np.asarray(alpha))
    return 0.5 * (np.asarray(pv_limit) / (igse_ki(k, alpha, beta) * np.asarray(f, dtype=float) ** alpha * shape)) ** (
        1.0 / np.asarray(beta))


def temperature_factor_slope(temperature_c, t_ref, c1, c2):
    """Derivative of temperature_factor with respect to temperature [1/K] (0 where the floor holds)."""
    dt = np.asarray(temperature_c, dtype=float) - np.asarray(t_ref)
    value = 1.0 + np.asarray(c1) * dt + np.asarray(c2) * dt * dt
    return np.where(value > 0.2, np.asarray(c1) + 2.0 * np.asarray(c2) * dt, 0.0)


# Handbook gap-loss coefficient by the number of coils on a cut core (from memory; the handbook
# tabulates it by coil arrangement, about 0.39 for two coils and 0.78 for one)
GAP_LOSS_KI = {2: 0.388, 1: 0.775}


def cut_core_gap_loss(strip_width, gap, f, b_ac, k_i=GAP_LOSS_KI[2]):
    """Eddy loss near the gaps of a tape-wound cut core [W].

    Parameters
    ----------
    strip_width : array [m]  ribbon width across which the fringing flux drives eddy currents
    gap : array [m]          total gap of the magnetic path
    f : array [Hz]
    b_ac : array [T]         peak of the equivalent sinusoidal AC flux density
    k_i : float              coil-arrangement coefficient (GAP_LOSS_KI)

    Notes
    -----
    ``P = K_i E l_g f B_ac^2`` with ``E`` and ``l_g`` in cm, ``f`` in Hz, ``B_ac`` in T: the fringing flux
    enters the ribbon at right angles near the gap.  Empirical; linear in the gap, so splitting a gap
    does not reduce it in this model (conservative).

    References
    ----------
    Transformer and Inductor Design Handbook, 4th ed., CRC Press 2011, chapter on gapped inductors
    (gap loss; from memory).
    """
    return k_i * (np.asarray(strip_width) * 100.0) * (np.asarray(gap) * 100.0) * np.asarray(f) * np.asarray(b_ac) ** 2


def bias_loss_factor(b_dc, b_sat, k_bias):
    """Rise of the core loss under a DC premagnetization, ``1 + k_b (B_dc/B_sat)^2`` [-].

    Parameters
    ----------
    b_dc : array [T]     DC (here: line-frequency, quasi-static) flux density
    b_sat : array [T]    saturation flux density the bias is measured against
    k_bias : array [-]   material coefficient (0: no effect)

    Notes
    -----
    A quadratic in the bias relative to saturation: the shape of the loss rise that published
    premagnetization measurements show for ferrite and ribbon materials at moderate bias (strong
    for MnZn ferrite and nanocrystalline ribbon, hardly any for MoNi powder).  The quadratic keeps
    the line-cycle mean exact from two design-independent integrals (see design/context.py).

    References
    ----------
    "Core losses under the DC bias condition based on Steinmetz parameters", IEEE Trans. Power
    Electronics 27(2), 2012 (trend by class; coefficients in the catalog are from memory).
    """
    return 1.0 + np.asarray(k_bias) * (np.asarray(b_dc) / np.asarray(b_sat)) ** 2
