"""Semiconductor switching loss of the boost stage, so that frequency costs something outside the inductor.

References
----------
Fundamentals of Power Electronics, 3rd ed., Springer 2020 (switching loss of hard-switched
converters: energy per event times switching frequency).
"""
from __future__ import annotations

import numpy as np


def switching_energy(current, v_bus, e0, e1, e2, v_ref, diode_e):
    """Energy lost per switching period: transistor turn-on plus turn-off plus diode recovery [J].

    Parameters
    ----------
    current : array [A]   inductor current at the switching instant
    v_bus : array [V]     blocked voltage (the bus)
    e0, e1, e2 : float    fit of the transistor's on+off energy at ``v_ref``:
                          ``E = e0 + e1 i + e2 i^2`` [J, J/A, J/A^2]
    v_ref : float [V]     voltage at which the fit was measured
    diode_e : float [J]   boost diode's recovery (or capacitive) energy per period at ``v_ref``

    Notes
    -----
    The energies of a hard-switched half bridge scale about linearly with the blocked voltage
    (common practice, no source), hence the factor ``v_bus / v_ref``.
    """
    i = np.asarray(current, dtype=float)
    return (e0 + e1 * i + e2 * i * i + diode_e) * (np.asarray(v_bus) / v_ref)


def switching_loss(mean_energy, f_sw):
    """Switching loss ``P = f_sw <E>`` [W] from the line-cycle mean energy per period [J]."""
    return np.asarray(f_sw, dtype=float) * np.asarray(mean_energy)
