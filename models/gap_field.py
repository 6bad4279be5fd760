"""The field near discrete air gaps and the eddy loss it drives in the winding beside them.

Two-dimensional model in the plane that cuts the gapped leg lengthwise: the leg's surface is the
line ``x = 0`` (the winding lies at ``x > 0``), a gap of length ``g`` centred at ``y = 0`` carries
the magnetomotive force ``F`` across it, and the core on both sides is ideal (mu -> infinity).
The magnetic scalar potential on the surface is then constant above and below the gap and
linear across it; the field in the half plane is its harmonic extension:

    H_y - i H_x = (F / (pi g)) ln((z - i g/2) / (z + i g/2)),   z = x + i y,

(conformal-map field of a slot between two high-permeability faces).  Far from the gap it falls
as ``F / (pi r)``.  A conductor in that field carries eddy currents whose loss per unit length
is ``rho Gamma(d/delta) |H|^2`` (``round_wire_transverse_factor``).

The winding's own one-dimensional field (Dowell's model, ``winding.py``) is what a gap spread
evenly over the whole window would leave; the fringing term here is the excess of the discrete
gaps' field over that even spread, so that it vanishes for a distributed gap and is not counted
twice.

References
----------
"Fringing field formulas and winding loss due to an air gap", IEEE Trans. Magnetics 43(8),
    2007 (closed-form gap field and the winding loss it drives; from memory).
Round conductor in a transverse alternating field: the exact Bessel-function solution of the
    eddy-current textbooks (from memory); checked in tests against direct quadrature and against
    the low-frequency limit derived from the induced current density.
"""
from __future__ import annotations

import numpy as np
from scipy import special

HIGH_FREQUENCY_RATIO = 200.0  # d/delta beyond which the transverse factor is extended linearly


def gap_field(x, y, gap, mmf):
    """Magnitude of the field at ``(x, y)`` beside one gap on an ideal-core surface [A/m].

    Parameters
    ----------
    x : array [m]     distance from the leg surface (> 0)
    y : array [m]     position along the leg, from the gap's centre
    gap : array [m]   gap length
    mmf : array [A]   magnetomotive force across the gap (peak, for a peak field)

    Notes
    -----
    ``|H| = (F / (pi g)) |ln((z - i g/2)/(z + i g/2))|`` with ``z = x + i y``; on the line through
    the gap's centre ``|H(x, 0)| = (2 F / (pi g)) atan(g / (2 x))``, which is ``F/g`` at the face.
    """
    z = np.asarray(x, dtype=float) + 1j * np.asarray(y, dtype=float)
    g = np.asarray(gap, dtype=float)
    return np.asarray(mmf) / (np.pi * g) * np.abs(np.log((z - 0.5j * g) / (z + 0.5j * g)))


def _sinc2_laplace(q, half):
    """``int_0^inf sin^2(half u)/u^2 exp(-q u) du`` for Re q > 0 (closed form, complex q allowed)."""
    return half * np.arctan(2 * half / q) - 0.25 * q * np.log1p(4 * half * half / (q * q))


def gap_row_field_integral(x, gap, mmf, count=1, pitch=1.0):
    """``int |H|^2 dy`` along a line at distance ``x`` from the leg, beside a row of equal gaps [A^2/m].

    Parameters
    ----------
    x : array [m]       distance of the line from the leg surface (> 0)
    gap : array [m]     length of each gap
    mmf : array [A]     magnetomotive force across each gap
    count : array [-]   number of gaps in the row (whole numbers >= 1)
    pitch : array [m]   distance between neighbouring gap centres

    Notes
    -----
    By Parseval along ``y``: ``int |H|^2 dy = (8 F^2 / (pi g^2)) sum_(m,l) Re J(2x - i |m-l| p)``,
    ``J(q) = int_0^inf sin^2(g u/2)/u^2 e^(-q u) du = (g/2) atan(g/q) - (q/4) ln(1 + g^2/q^2)``.
    For one gap it is ``(4 F^2/(pi g)) [atan(g/2x) - (x/g) ln(1 + g^2/(4x^2))]``, tending to
    ``F^2/(pi x)`` far away.  The line is taken as long against ``x`` (the winding spans the window).
    """
    x, gap, mmf, count, pitch = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (x, gap, mmf, count,
                                                                                            pitch)))
    half = gap / 2
    total = count * _sinc2_laplace(2 * x, half).real
    for lag in range(1, int(np.max(count, initial=1))):
        pairs = np.maximum(count - lag, 0.0)
        total = total + 2 * pairs * _sinc2_laplace(2 * x - 1j * lag * pitch, half).real
    return 8 * mmf**2 / (np.pi * gap**2) * total


def fringing_field_excess(x, gap_total, mmf_total, count, span):
    """Excess of ``int |H|^2 dy`` of ``count`` discrete gaps over the same gap spread over ``span`` [A^2/m].

    Parameters
    ----------
    x : array [m]           distance from the leg surface
    gap_total : array [m]   sum of the gaps on the leg
    mmf_total : array [A]   magnetomotive force across all of them
    count : array [-]       discrete gaps the total is split into, evenly spaced over ``span``
    span : array [m]        length of the leg the winding covers (window height)

    Notes
    -----
    Each gap ``g = gap_total/count`` carries ``F = mmf_total/count`` at pitch ``span/count``; the even
    spread is one "gap" of length ``span`` carrying ``mmf_total``.  Held at zero or above.
    """
    count = np.asarray(count, dtype=float)
    discrete = gap_row_field_integral(x, np.asarray(gap_total) / count, np.asarray(mmf_total) / count, count,
                                      np.asarray(span) / count)
    spread = gap_row_field_integral(x, span, mmf_total)
    return np.maximum(discrete - spread, 0.0)


def round_wire_transverse_factor_exact(d_over_delta):
    """Eddy loss of a round conductor in a uniform transverse AC field, ``P' / (rho H_pk^2)`` [-].

    Parameters
    ----------
    d_over_delta : array [-]   conductor diameter over skin depth

    Notes
    -----
    With ``k = (1 - j)/delta`` and radius ``a = d/2``, the vector potential inside is
    ``C J1(k r) sin(theta)``, ``C = 2 mu0 H / (k J0(k a))``; the time-averaged loss per unit length
    ``P' = (omega sigma)^2 |C|^2 (pi / (2 sigma)) int_0^a |J1(k r)|^2 r dr`` (Lommel's integral in
    closed form).  Low-frequency limit: ``pi (d/delta)^4 / 32``, i.e. ``P' = pi d^4 omega^2 mu0^2
    H^2 / (128 rho)``.  Beyond ``d/delta = 200`` the factor is extended linearly (its asymptote).

    References
    ----------
    Eddy-current textbooks' round conductor in a transverse field (from memory); the tests check it
    against direct quadrature of the current density and against the low-frequency limit.
    """
    x = np.asarray(d_over_delta, dtype=float)
    xc = np.clip(x, 1e-6, HIGH_FREQUENCY_RATIO)
    k = 1.0 - 1.0j                     # in units of 1/delta
    ka = k * xc / 2
    j1 = special.jv(1, ka)
    dj1 = special.jvp(1, ka)
    # Lommel: int_0^a |J1(k r)|^2 r dr = a Re[(k* J1(ka) conj(J1'(ka)) - k J1'(ka) conj(J1(ka)))] / (k^2 - k*^2)
    lommel = (xc / 2 * (np.conj(k) * j1 * np.conj(dj1) - k * dj1 * np.conj(j1)) / (k * k - np.conj(k) ** 2)).real
    factor = 8 * np.pi * lommel / np.abs(k * special.jv(0, ka)) ** 2
    low = np.pi * xc**4 / 32
    factor = np.where(xc < 0.05, low, factor)     # series limit where the closed form loses digits
    return np.where(x > HIGH_FREQUENCY_RATIO, factor * x / HIGH_FREQUENCY_RATIO, factor)


MAX_LAYERS = 16  # layers summed; beyond them the discrete gaps' excess field is negligible (it falls ~1/x^3)


def fringing_geometry_factor(leg_perimeter, first_distance, layer_pitch, layers, strands_per_metre, gap_total,
                             count, span, max_layers=MAX_LAYERS):
    """Sum over a coil's layers of turn length x strands per metre x excess field integral per unit MMF [1/m].

    Parameters
    ----------
    leg_perimeter : array [m]      perimeter of the gapped leg's section
    first_distance : array [m]     from the leg surface to the inner face of the first layer
    layer_pitch : array [m]        radial thickness of one layer (wire outer diameter)
    layers : array [-]             layers of the coil
    strands_per_metre : array [1/m]  conductors (strands, for litz) per metre of a layer along the leg
    gap_total : array [m]          total gap on the leg
    count : array [-]              discrete gaps on the leg
    span : array [m]               length of the leg the coil covers
    max_layers : int               layers summed (see MAX_LAYERS)

    Notes
    -----
    ``G = sum_k (P_leg + 2 pi x_k) n_y fringing_field_excess(x_k; F = 1)``, ``x_k`` the centre of layer
    k.  The winding loss the gaps drive is then ``rho G sum_n Gamma(d/delta_n) F_n^2`` with ``F_n`` the
    peak MMF of harmonic n across the leg's gaps (``fringing_winding_loss``).  The turn length
    counts the whole turn: a gap in a leg fringes all round it.
    """
    k = np.arange(max_layers)
    x = np.asarray(first_distance)[:, None] + (k + 0.5) * np.asarray(layer_pitch)[:, None]
    excess = fringing_field_excess(x, np.asarray(gap_total)[:, None], 1.0, np.asarray(count)[:, None],
                                   np.asarray(span)[:, None])
    in_coil = k < np.asarray(layers)[:, None]
    turn = np.asarray(leg_perimeter)[:, None] + 2 * np.pi * x
    return np.asarray(strands_per_metre) * np.sum(np.where(in_coil, turn * excess, 0.0), axis=1)


def fringing_winding_loss(geometry_factor, mmf_peak_sq, transverse_factor, resistivity):
    """Eddy loss the discrete gaps' fringing field drives in one coil [W].

    Parameters
    ----------
    geometry_factor : array [1/m]        from fringing_geometry_factor
    mmf_peak_sq : array (..., H) [A^2]   squared peak MMF across the leg's gaps, per current harmonic
    transverse_factor : array (..., H)   round_wire_transverse_factor(d/delta_n) of the strands
    resistivity : array [ohm m]          of the conductor at its temperature

    Notes
    -----
    ``P = rho G sum_n Gamma(d/delta_n) F_n^2`` (peak MMF, time-averaged loss).
    """
    return np.asarray(resistivity) * np.asarray(geometry_factor) * np.sum(
        np.asarray(transverse_factor) * np.asarray(mmf_peak_sq), axis=-1)


# The factor tabulated once on a fine logarithmic grid of d/delta: the evaluator needs it for every
# strand, harmonic and temperature node, and the complex Bessel functions dominate its time.  Linear
# interpolation of log(factor) in log(d/delta) is accurate to about 1e-6 (tests/test_gap_field.py).
_TABLE_LOG10_RATIO = np.linspace(-2.0, np.log10(HIGH_FREQUENCY_RATIO), 6001)
_TABLE_LOG10_FACTOR = np.log10(round_wire_transverse_factor_exact(10.0**_TABLE_LOG10_RATIO))


def round_wire_transverse_factor(d_over_delta):
    """``P' / (rho H_pk^2)`` of a round conductor in a transverse field (tabulated exact form) [-].

    See round_wire_transverse_factor_exact; below d/delta = 0.01 the low-frequency limit
    ``pi (d/delta)^4 / 32`` (exact to 1e-9 there), above the table the linear extension.
    """
    x = np.asarray(d_over_delta, dtype=float)
    step = _TABLE_LOG10_RATIO[1] - _TABLE_LOG10_RATIO[0]
    u = (np.log10(np.maximum(x, 1e-300)) - _TABLE_LOG10_RATIO[0]) / step
    u = np.clip(u, 0.0, len(_TABLE_LOG10_FACTOR) - 1.000001)
    i = u.astype(np.intp)
    lo = _TABLE_LOG10_FACTOR[i]
    tabulated = 10.0 ** (lo + (u - i) * (_TABLE_LOG10_FACTOR[i + 1] - lo))
    top = 10.0 ** _TABLE_LOG10_FACTOR[-1]
    return np.where(x < 0.01, np.pi * x**4 / 32,
                    np.where(x > HIGH_FREQUENCY_RATIO, top * x / HIGH_FREQUENCY_RATIO, tabulated))
