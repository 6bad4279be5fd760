"""Winding: wire sizes, resistance, skin and proximity effect, ripple harmonics, layout.

All functions are vectorized over numpy arrays; SI units inside (metres, ohms, amperes).

References
----------
ASTM B258, Standard specification for standard nominal diameters and cross-sectional areas of
    AWG sizes of solid round wires used as electrical conductors.
IEC 60028, International standard of resistance for copper.
P. L. Dowell, "Effects of eddy currents in transformer windings", Proc. IEE 113(8), 1966.
J. A. Ferreira, "Improved analytical modeling of conductive losses in magnetic components",
    IEEE Trans. Power Electronics 9(1), 1994 (round-wire skin effect with Kelvin functions).
"""
from __future__ import annotations

import numpy as np
from scipy import special

MU0 = 4e-7 * np.pi  # vacuum permeability [H/m]; the pre-2019 exact value, within 1e-9 of CODATA
COPPER_RESISTIVITY_20C = 1.7241e-8  # [ohm m], 1/58 ohm mm2/m, IEC 60028
COPPER_TEMPCO_20C = 0.00393  # [1/K], IEC 60028 (from memory)


def awg_diameter(gauge):
    """Bare diameter of American Wire Gauge ``gauge`` [m].

    Parameters
    ----------
    gauge : array [-]  AWG number (0000 = -3 ... 40 and beyond; fractional values allowed)

    Notes
    -----
    ``d = 0.127 mm * 92^((36 - n)/39)``.

    References
    ----------
    ASTM B258 (gauge formula).
    """
    return 0.127e-3 * 92.0 ** ((36.0 - np.asarray(gauge, dtype=float)) / 39.0)


def copper_resistivity(temperature_c, rho_20=COPPER_RESISTIVITY_20C, tempco=COPPER_TEMPCO_20C):
    """Copper resistivity at ``temperature_c`` [C] -> [ohm m].

    Notes
    -----
    ``rho(T) = rho_20 (1 + alpha_20 (T - 20))``, linear, good to about 1 % from -50 to 200 C.

    References
    ----------
    IEC 60028 (rho_20 = 1/58 ohm mm2/m, alpha_20 = 0.00393 /K).
    """
    return rho_20 * (1.0 + tempco * (np.asarray(temperature_c, dtype=float) - 20.0))


def skin_depth(frequency_hz, resistivity=COPPER_RESISTIVITY_20C, mu_r=1.0):
    """Skin depth ``delta = sqrt(rho / (pi f mu0 mu_r))`` [m].

    Parameters
    ----------
    frequency_hz : array [Hz], > 0
    resistivity : array [ohm m]
    """
    f = np.asarray(frequency_hz, dtype=float)
    if np.any(f <= 0):
        raise ValueError("frequency_hz must be positive")
    return np.sqrt(resistivity / (np.pi * f * MU0 * mu_r))


def round_wire_skin_factor(diameter, delta):
    """AC-to-DC resistance ratio of an isolated straight round wire (skin effect only) [-].

    Parameters
    ----------
    diameter : array [m]
    delta : array [m]  skin depth

    Notes
    -----
    With ``xi = d / (sqrt(2) delta)``:
    ``Rac/Rdc = (xi/2) (ber xi bei' xi - bei xi ber' xi) / (ber'^2 xi + bei'^2 xi)``,
    the exact Bessel-function solution written with Kelvin functions.  For ``xi`` below 1e-3 the
    expression cancels badly in floating point and the ratio is 1 to better than 1e-12; for
    ``d/delta`` above 100 the Kelvin functions overflow and the high-frequency asymptote
    ``d/(4 delta) + 1/4`` (within 1e-4 there) is used.

    References
    ----------
    J. A. Ferreira, IEEE Trans. Power Electronics 9(1), 1994.
    """
    xi = np.asarray(diameter, dtype=float) / (np.sqrt(2.0) * np.asarray(delta, dtype=float))
    xi_safe = np.clip(xi, 1e-3, 100.0 / np.sqrt(2.0))
    ber, bei, berp, beip = special.ber(xi_safe), special.bei(xi_safe), special.berp(xi_safe), special.beip(xi_safe)
    ratio = (xi_safe / 2) * (ber * beip - bei * berp) / (berp**2 + beip**2)
    asymptote = np.sqrt(2.0) * xi / 4 + 0.25
    return np.where(xi < 1e-3, 1.0, np.where(xi > 100.0 / np.sqrt(2.0), asymptote, ratio))


def dowell_terms_exact(x):
    """Skin and proximity functions of Dowell's solution from the closed forms, all x >= 0.

    Returns ``(skin, prox)`` with ``skin = X (sinh 2X + sin 2X)/(cosh 2X - cos 2X)`` and
    ``prox = X (sinh X - sin X)/(cosh X + cos X)``.  Below X = 0.1 their series
    ``skin = 1 + 4 X^4/45``, ``prox = X^4/6 - 17 X^8/2520`` (truncation below 1e-12) replace the
    closed forms, which cancel there; above X = 20 the hyperbolic terms dominate and
    ``skin = prox = X`` to within 1e-8.
    """
    x = np.asarray(x, dtype=float)
    xs = np.clip(x, 0.1, 20.0)
    e1 = np.exp(xs)
    e2 = e1 * e1
    s1, c1 = np.sin(xs), np.cos(xs)
    sinh2, cosh2 = 0.5 * (e2 - 1 / e2), 0.5 * (e2 + 1 / e2)
    sinh1, cosh1 = 0.5 * (e1 - 1 / e1), 0.5 * (e1 + 1 / e1)
    skin = xs * (sinh2 + 2 * s1 * c1) / (cosh2 - (1 - 2 * s1 * s1))
    prox = xs * (sinh1 - s1) / (cosh1 + c1)
    x4 = x**4
    skin = np.where(x < 0.1, 1 + 4 * x4 / 45, np.where(x > 20.0, x, skin))
    prox = np.where(x < 0.1, x4 / 6 - 17 * x4 * x4 / 2520, np.where(x > 20.0, x, prox))
    return skin, prox


# Dowell's two functions tabulated once on a fine logarithmic grid of X; the evaluator calls them
# hundreds of millions of times and linear interpolation in log X is accurate to a few 1e-6
# (tests/test_winding.py checks it against the closed form).
_TABLE_LOG10_X = np.linspace(-2.0, 2.0, 8001)
_TABLE_SKIN, _TABLE_PROX = dowell_terms_exact(10.0**_TABLE_LOG10_X)


def _uniform_interp(u, table):
    """Linear interpolation in ``table`` at fractional index ``u`` (clipped to the table).

    np.interp searches the grid for every point; on a uniform grid the index is arithmetic,
    which is several times faster on the evaluator's hot path.
    """
    u = np.clip(u, 0.0, len(table) - 1.000001)
    i = u.astype(np.intp)
    lo = table[i]
    return lo + (u - i) * (table[i + 1] - lo)


def dowell_terms(x):
    """Skin and proximity functions of Dowell's solution (tabulated closed form); see dowell_terms_exact."""
    x = np.asarray(x, dtype=float)
    step = _TABLE_LOG10_X[1] - _TABLE_LOG10_X[0]
    u = (np.log10(np.maximum(x, 1e-300)) - _TABLE_LOG10_X[0]) / step
    skin = _uniform_interp(u, _TABLE_SKIN)
    prox = _uniform_interp(u, _TABLE_PROX)
    small = x < 0.01           # below the table: the leading series terms are exact to 1e-16
    large = x > 100.0          # above the table: both functions equal X
    x4 = x**4
    skin = np.where(small, 1 + 4 * x4 / 45, np.where(large, x, skin))
    prox = np.where(small, x4 / 6, np.where(large, x, prox))
    return skin, prox


def dowell_factor(x, layers):
    """Dowell's AC resistance factor Fr = Rac/Rdc of a winding of ``layers`` foil layers [-].

    Parameters
    ----------
    x : array [-]       layer thickness over skin depth, ``X = h/delta`` (equivalent foil)
    layers : array [-]  number of layers m (>= 1)

    Notes
    -----
    ``Fr = X [(sinh 2X + sin 2X)/(cosh 2X - cos 2X) + (2(m^2-1)/3)(sinh X - sin X)/(cosh X + cos X)]``.
    A round wire of diameter d is an equivalent foil of thickness ``h = (sqrt(pi)/2) d`` and
    conductivity reduced by the porosity ``eta``; see round_wire_dowell_x.

    References
    ----------
    P. L. Dowell, Proc. IEE 113(8), 1966.
    """
    skin, prox = dowell_terms(x)
    m = np.asarray(layers, dtype=float)
    return skin + (2.0 * (m**2 - 1.0) / 3.0) * prox


def round_wire_dowell_x(diameter, delta, porosity):
    """Dowell's X for a layer of round wires: ``X = (pi/4)^(3/4) (d/delta) sqrt(eta)`` [-].

    Parameters
    ----------
    diameter : array [m]  bare copper diameter
    delta : array [m]     skin depth at the harmonic's frequency
    porosity : array [-]  layer porosity ``eta = N_layer d / b_w`` (0 < eta <= 1)

    References
    ----------
    P. L. Dowell, Proc. IEE 113(8), 1966 (square-to-round equivalence with porosity).
    """
    return (np.pi / 4) ** 0.75 * np.asarray(diameter) / np.asarray(delta) * np.sqrt(np.asarray(porosity))


# The exact round-wire skin factor tabulated over d/delta = 0.01..100 for the litz hot path
# (scipy's Kelvin functions cost about a microsecond per call); interpolation error below 1e-6.
_SKIN_LOG10_RATIO = np.linspace(-2.0, 2.0, 8001)
_SKIN_TABLE = round_wire_skin_factor(10.0**_SKIN_LOG10_RATIO, 1.0)


def litz_factor(strand_diameter, delta, strand_layers, porosity):
    """AC resistance factor of a litz winding treated at strand level [-].

    Parameters
    ----------
    strand_diameter : array [m]
    delta : array [m]
    strand_layers : array [-]  effective number of strand layers across the winding build:
        bundle layers times the square root of the strand count (strands in a square array)
    porosity : array [-]       copper fraction of a strand layer

    Notes
    -----
    ``Fr = F_skin(d_s) + X (2(m^2-1)/3)(sinh X - sin X)/(cosh X + cos X)``: the strand's own skin
    effect from the exact round-wire solution plus Dowell's proximity term over the strand layers.
    Perfect transposition is assumed (no bundle-level eddy currents).

    References
    ----------
    J. A. Ferreira, IEEE Trans. Power Electronics 9(1), 1994 (skin and proximity split);
    P. L. Dowell, Proc. IEE 113(8), 1966.
    """
    x = round_wire_dowell_x(strand_diameter, delta, porosity)
    _, prox = dowell_terms(x)
    m = np.asarray(strand_layers, dtype=float)
    ratio = np.asarray(strand_diameter, dtype=float) / np.asarray(delta, dtype=float)
    skin = _uniform_interp((np.log10(np.maximum(ratio, 1e-300)) - _SKIN_LOG10_RATIO[0]) /
                           (_SKIN_LOG10_RATIO[1] - _SKIN_LOG10_RATIO[0]), _SKIN_TABLE)
    skin = np.where(ratio > 100.0, ratio / 4 + 0.25, skin)  # beyond the table: the asymptote (1e-4)
    return skin + (2.0 * (m**2 - 1.0) / 3.0) * prox


def triangle_harmonic_weights(duty, harmonics):
    """Squared RMS of each harmonic of a unit peak-to-peak triangular wave [-].

    Parameters
    ----------
    duty : array [-]       rising fraction D of the period, 0 < D < 1
    harmonics : array [-]  harmonic numbers n >= 1

    Returns
    -------
    array, shape ``duty.shape + harmonics.shape``: ``I_n,rms^2 / dI_pp^2``

    Notes
    -----
    Amplitude ``I_n = dI_pp |sin(n pi D)| / (pi^2 n^2 D (1-D))``; the weights are ``I_n^2/2`` and sum
    to ``1/12`` over all n (the RMS of the triangle), for every D.  They depend on D only, so the
    harmonic content of the ripple over a whole line cycle is a matrix product.

    References
    ----------
    Fourier series of an asymmetric triangular wave, e.g. R. W. Erickson and D. Maksimovic,
    Fundamentals of Power Electronics, 3rd ed., Springer 2020.
    """
    d = np.asarray(duty, dtype=float)[..., None]
    n = np.asarray(harmonics, dtype=float)
    if np.any(d <= 0) or np.any(d >= 1):
        raise ValueError("duty must lie strictly between 0 and 1")
    amp = np.abs(np.sin(n * np.pi * d)) / (np.pi**2 * n**2 * d * (1 - d))
    return amp**2 / 2


def bobbin_layout(turns, parallel, wire_outer, breadth, height, legs=1):
    """Layered winding on a bobbin (or on each leg of a two-coil core), square stacking.

    Parameters
    ----------
    turns : array [-]        total turns (split evenly over ``legs`` coils in series)
    parallel : array [-]     wires wound in parallel, side by side in a layer
    wire_outer : array [m]   outer diameter of one wire (over enamel or serving)
    breadth : array [m]      room along the leg for one layer
    height : array [m]       radial room for the build
    legs : array [-]         coils (1, or 2 on cut cores)

    Returns
    -------
    turns_per_layer, layers, build [m], fit (build / height, > 1 does not fit)

    Notes
    -----
    ``turns_per_layer = floor(floor(b / d_o) / n_par)``, ``layers = ceil(N_coil / turns_per_layer)``,
    ``build = layers d_o``: orthocyclic nesting would save up to 13 % of the build; the square
    count is the conservative choice for a first prototype (common practice, no source).
    """
    per_coil = np.ceil(np.asarray(turns, dtype=float) / legs)
    positions = np.floor(np.asarray(breadth) / np.asarray(wire_outer))
    tpl = np.floor(positions / np.asarray(parallel))
    ok = tpl >= 1
    layers = np.where(ok, np.ceil(per_coil / np.maximum(tpl, 1)), np.inf)
    build = layers * wire_outer
    return tpl, layers, build, np.where(ok, build / np.asarray(height), np.inf)


def ring_layout(turns, parallel, wire_outer, hole_diameter, wall, max_layers=40):
    """Layered winding on a ring core: each layer holds fewer turns as the hole closes.

    Parameters
    ----------
    turns, parallel : array [-]
    wire_outer : array [m]
    hole_diameter : array [m]  inner diameter of the ring
    wall : array [m]           coating and tape on the inner face
    max_layers : int           layers examined (the hole closes long before)

    Returns
    -------
    turns_per_layer (first layer), layers, build [m], fit (build / usable radius; > 1 does not fit)

    Notes
    -----
    Layer k (from 0) lies at radius ``r_k = id/2 - wall - (k + 1/2) d_o`` on the inside of the ring
    and holds ``floor(floor(2 pi r_k / d_o) / n_par)`` turns.
    """
    n = np.asarray(turns, dtype=float)[..., None]
    d = np.asarray(wire_outer, dtype=float)[..., None]
    k = np.arange(max_layers)
    radius = np.asarray(hole_diameter)[..., None] / 2 - np.asarray(wall)[..., None] - (k + 0.5) * d
    per_layer = np.where(radius > 0, np.floor(np.floor(2 * np.pi * np.maximum(radius, 0) / d)
                                              / np.asarray(parallel, dtype=float)[..., None]), 0.0)
    cum = np.cumsum(per_layer, axis=-1)
    enough = cum >= n
    fits = enough[..., -1]
    layers = np.where(fits, np.argmax(enough, axis=-1) + 1.0, np.inf)
    build = layers * d[..., 0]
    usable = np.asarray(hole_diameter) / 2 - np.asarray(wall)
    return per_layer[..., 0], layers, build, np.where(fits, build / usable, np.inf)
