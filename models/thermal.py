"""Heat transfer from the inductor's outer surface to the surrounding air.

Each model returns the power the surface dissipates at a temperature rise ``dT`` and the
derivative of that power with respect to ``dT``; the evaluator solves the heat balance with them.
Temperatures in C where named ``_c``, rises in K, areas in m2, powers in W.

References
----------
S. W. Churchill and H. H. S. Chu, "Correlating equations for laminar and turbulent free
    convection from a vertical plate", Int. J. Heat Mass Transfer 18, 1975.
Transformer and Inductor Design Handbook, 4th ed., CRC Press 2011 (empirical temperature rise).
"""
from __future__ import annotations

import numpy as np

STEFAN_BOLTZMANN = 5.670374419e-8  # [W/(m2 K4)], CODATA 2018 (exact since the 2019 SI)
GRAVITY = 9.80665                  # [m/s2], standard gravity
KELVIN = 273.15


def air_properties(temperature_c):
    """Thermal conductivity [W/(m K)], kinematic viscosity [m2/s] and Prandtl number of dry air at 1 atm.

    Notes
    -----
    Dynamic viscosity from Sutherland's law (mu0 = 1.716e-5 Pa s at 273.15 K, S = 110.4 K),
    density from the ideal gas (R = 287.05 J/(kg K), p = 101325 Pa), conductivity
    ``k = 0.0241 (T/273.15)^0.81`` and cp = 1007 J/(kg K): within about 2 % of the usual air
    tables from 0 to 150 C (fits from memory, checked against the tabulated 300 K values
    k = 0.0263, nu = 15.9e-6, Pr = 0.707 in the tests).
    """
    t = np.asarray(temperature_c, dtype=float) + KELVIN
    mu = 1.716e-5 * (t / 273.15) ** 1.5 * (273.15 + 110.4) / (t + 110.4)
    rho = 101325.0 / (287.05 * t)
    k = 0.0241 * (t / 273.15) ** 0.81
    return k, mu / rho, 1007.0 * mu / k


def churchill_chu_nusselt(rayleigh, prandtl):
    """Mean Nusselt number of a vertical plate in free convection, all Rayleigh numbers [-].

    Notes
    -----
    ``Nu = {0.825 + 0.387 Ra^(1/6) / [1 + (0.492/Pr)^(9/16)]^(8/27)}^2``.

    References
    ----------
    Churchill and Chu, Int. J. Heat Mass Transfer 18 (1975).
    """
    psi = (1.0 + (0.492 / np.asarray(prandtl)) ** (9.0 / 16.0)) ** (8.0 / 27.0)
    return (0.825 + 0.387 * np.asarray(rayleigh, dtype=float) ** (1.0 / 6.0) / psi) ** 2


def radiation(dt, t_amb_c, area, emissivity):
    """Radiated power to surroundings at ambient temperature and its derivative [W, W/K].

    Notes
    -----
    ``P = eps sigma A (T_s^4 - T_a^4)`` with absolute temperatures; the surroundings are taken
    as a black body at the air temperature.
    """
    ta = np.asarray(t_amb_c, dtype=float) + KELVIN
    ts = ta + np.asarray(dt, dtype=float)
    c = np.asarray(emissivity) * STEFAN_BOLTZMANN * np.asarray(area)
    return c * (ts**4 - ta**4), 4.0 * c * ts**3


def natural_convection(dt, t_amb_c, area, height, emissivity):
    """Natural convection (Churchill-Chu, vertical plate of the part's height) plus radiation.

    Parameters
    ----------
    dt : array [K]          surface temperature rise over the air
    t_amb_c : array [C]     air temperature
    area : array [m2]       outer surface
    height : array [m]      vertical extent (characteristic length)
    emissivity : array [-]

    Returns
    -------
    power : array [W], dpower_ddt : array [W/K]

    Notes
    -----
    Air properties at the film temperature ``T_a + dT/2``; ``Ra = g beta dT L^3/(nu a)`` with
    ``beta = 1/T_film``.  The whole outer surface is treated as vertical plate of height L
    (common practice for small parts, no source).  The derivative neglects the change of air
    properties with temperature; it only steers the solver.
    """
    dt = np.maximum(np.asarray(dt, dtype=float), 1e-6)
    film = np.asarray(t_amb_c, dtype=float) + dt / 2
    k, nu, pr = air_properties(film)
    ra = GRAVITY / (film + KELVIN) * dt * np.asarray(height) ** 3 / (nu * nu / pr)
    nu_num = churchill_chu_nusselt(ra, pr)
    h = nu_num * k / np.asarray(height)
    # dNu/dRa from the correlation, then dRa/ddT = Ra/dT
    psi = (1.0 + (0.492 / pr) ** (9.0 / 16.0)) ** (8.0 / 27.0)
    dnu = 2.0 * np.sqrt(nu_num) * 0.387 / psi * (ra ** (1.0 / 6.0)) / 6.0 / dt
    p_rad, dp_rad = radiation(dt, t_amb_c, area, emissivity)
    return h * area * dt + p_rad, area * (h + dt * dnu * k / np.asarray(height)) + dp_rad


def forced_convection(dt, t_amb_c, area, h_forced, emissivity):
    """Forced air with a given heat-transfer coefficient ``h`` [W/(m2 K)], plus radiation."""
    dt = np.maximum(np.asarray(dt, dtype=float), 0.0)
    p_rad, dp_rad = radiation(dt, t_amb_c, area, emissivity)
    return np.asarray(h_forced) * area * dt + p_rad, np.asarray(h_forced) * area + dp_rad


def empirical_rise(power, area):
    """Empirical temperature rise ``dT = 450 (P / A_cm2)^0.826`` [K] of a natural-convection part.

    References
    ----------
    Transformer and Inductor Design Handbook, 4th ed., 2011 (rise against surface dissipation,
    fitted to measured transformers and inductors; from memory).
    """
    return 450.0 * (np.asarray(power, dtype=float) / (np.asarray(area) * 1e4)) ** 0.826


def empirical_dissipation(dt, area):
    """Inverse of empirical_rise: power [W] that gives the rise ``dt`` [K], and its derivative."""
    dt = np.maximum(np.asarray(dt, dtype=float), 1e-9)
    p = np.asarray(area) * 1e4 * (dt / 450.0) ** (1.0 / 0.826)
    return p, p / (0.826 * dt)


def solve_rise(power, dissipation, dt_start=None, iterations=60, tol_k=1e-6):
    """Temperature rise at which ``dissipation(dt)`` equals ``power`` [K] (safeguarded Newton).

    Parameters
    ----------
    power : array [W]
    dissipation : callable dt -> (power, derivative), increasing in dt
    dt_start : array [K]  starting guess (default 30 K)

    Notes
    -----
    Newton steps on ``dissipation(dt) - power``, kept inside a bracket that shrinks with each
    sign change; converges for every monotonic dissipation curve.
    """
    power = np.asarray(power, dtype=float)
    dt = np.full(power.shape, 30.0) if dt_start is None else np.array(dt_start, dtype=float)
    lo = np.zeros_like(dt)
    hi = np.full_like(dt, 2000.0)
    for _ in range(iterations):
        p, dp = dissipation(dt)
        resid = p - power
        lo = np.where(resid < 0, dt, lo)
        hi = np.where(resid > 0, dt, hi)
        step = resid / np.maximum(dp, 1e-12)
        new = dt - step
        new = np.where((new <= lo) | (new >= hi), 0.5 * (lo + hi), new)
        if np.all(np.abs(new - dt) < tol_k):
            return new
        dt = new
    return dt


def horizontal_plate_nusselt(rayleigh, facing="up"):
    """Mean Nusselt number of a heated horizontal plate's upper (``"up"``) or lower (``"down"``) face [-].

    Notes
    -----
    Upper face: ``Nu = 0.54 Ra^(1/4)`` for Ra up to 1e7, ``0.15 Ra^(1/3)`` above (continuous within
    about 6 % at 1e7: 30.4 against 32.3); lower face: ``Nu = 0.27 Ra^(1/4)``; characteristic length ``L = A / P``.
    The laminar laws are used below their lower Ra bound too (small parts), where they underestimate.

    References
    ----------
    Upper-surface correlation of natural convection above a heated horizontal plate (1974), as given
    in the heat-transfer textbooks; lower face likewise (from memory).
    """
    ra = np.maximum(np.asarray(rayleigh, dtype=float), 0.0)
    if facing == "down":
        return 0.27 * ra**0.25
    return np.where(ra <= 1e7, 0.54 * ra**0.25, 0.15 * ra ** (1.0 / 3.0))


def box_exposed_area(length, width, height, bottom_exposed=False):
    """Faces of a box standing on a horizontal face that reach the air [m2]: four sides and the top,
    and the bottom when it stands free (``bottom_exposed``); on a board the bottom is covered."""
    length, width, height = (np.asarray(v, dtype=float) for v in (length, width, height))
    return 2 * height * (length + width) + length * width * (2.0 if bottom_exposed else 1.0)


def box_natural_convection(dt, t_amb_c, length, width, height, emissivity, bottom_exposed=False):
    """Natural convection and radiation from a box standing on a horizontal face [W, W/K].

    Parameters
    ----------
    dt : array [K]                  surface temperature rise over the air
    t_amb_c : array [C]             air temperature
    length, width : array [m]       edges of the footprint
    height : array [m]              vertical edge
    emissivity : array [-]
    bottom_exposed : bool           free-standing (True) or on a board (False: the bottom face
                                    neither convects nor radiates)

    Returns
    -------
    power : array [W], dpower_ddt : array [W/K]

    Notes
    -----
    Four vertical sides: Churchill-Chu with the true height; top: upper-face correlation with
    ``L = A/P``; bottom (free-standing only): lower-face correlation.  Radiation from every exposed
    face.  Air properties at the film temperature; the derivative assumes ``h ~ dT^(1/4)`` for the
    horizontal faces (the laminar law) and neglects the air properties' change.
    """
    dt = np.maximum(np.asarray(dt, dtype=float), 1e-6)
    length, width, height = (np.asarray(v, dtype=float) for v in (length, width, height))
    sides = 2 * height * (length + width)
    top = length * width
    exposed = box_exposed_area(length, width, height, bottom_exposed)
    p_side, dp_side = natural_convection(dt, t_amb_c, sides, height, 0.0)
    film = np.asarray(t_amb_c, dtype=float) + dt / 2
    k, nu, pr = air_properties(film)
    char = top / (2 * (length + width))
    ra = GRAVITY / (film + KELVIN) * dt * char**3 / (nu * nu / pr)
    h_flat = horizontal_plate_nusselt(ra, "up") * k / char
    if bottom_exposed:
        h_flat = h_flat + horizontal_plate_nusselt(ra, "down") * k / char
    p_flat = h_flat * top * dt
    p_rad, dp_rad = radiation(dt, t_amb_c, exposed, emissivity)
    return p_side + p_flat + p_rad, dp_side + 1.25 * p_flat / dt + dp_rad


def two_node_rises(p_winding, p_core, g_winding, g_core, g_coupling):
    """Rises of the winding and core hot spots over the outer surface, from a two-node network [K].

    Parameters
    ----------
    p_winding, p_core : array [W]   heat generated in the winding and in the core
    g_winding : array [W/K]         winding hot spot to the surface
    g_core : array [W/K]            core hot spot to the surface
    g_coupling : array [W/K]        winding to core (through the bobbin or coating)

    Notes
    -----
    Nodal equations ``(G_w + G_x) T_w - G_x T_c = P_w`` and ``-G_x T_w + (G_c + G_x) T_c = P_c``,
    solved in closed form.
    """
    gw, gc, gx = (np.asarray(v, dtype=float) for v in (g_winding, g_core, g_coupling))
    det = (gw + gx) * (gc + gx) - gx * gx
    rise_w = (np.asarray(p_winding) * (gc + gx) + gx * np.asarray(p_core)) / det
    rise_c = (np.asarray(p_core) * (gw + gx) + gx * np.asarray(p_winding)) / det
    return rise_w, rise_c


def slab_conductance(conductivity, area, thickness):
    """Conductance from the hot mid-plane of a slab heated evenly through its volume to its faces [W/K].

    Notes
    -----
    A slab of thickness ``t`` generating ``P`` evenly, cooled on one face of area ``A`` (the other face
    adiabatic), rises ``P t / (2 k A)`` at its far face: ``G = 2 k A / t``.  Conduction textbooks'
    one-dimensional result with uniform generation.
    """
    return 2.0 * np.asarray(conductivity) * np.asarray(area) / np.asarray(thickness)


THERMAL_MODELS = ("natural", "forced", "empirical")
MOUNTINGS = ("board", "free")
