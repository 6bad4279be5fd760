"""Line-cycle waveforms of a boost PFC stage in continuous conduction.

The input current follows the rectified line voltage; the boost stage sees over one half line
cycle ``v_in = V_pk |sin theta|``, the duty cycle ``d = 1 - v_in / V_out`` and a switching ripple
``dI_pp = v_in d / (L f_sw)``.  Everything depends on ``|sin theta|`` only, which is symmetric about
the line peak; sampling the quarter cycle 0..pi/2 at midpoints therefore equals sampling the half
cycle at twice the count.

References
----------
R. W. Erickson and D. Maksimovic, Fundamentals of Power Electronics, 3rd ed., Springer 2020,
chapter on PWM rectifiers (ideal boost PFC waveforms).
"""
from __future__ import annotations

import numpy as np


def line_angles(samples_per_half_cycle):
    """Midpoint sample angles over the quarter line cycle [rad], ``samples_per_half_cycle/2`` of them.

    The midpoint rule over 0..pi/2 with n/2 points equals the rule over the half cycle with n
    points by symmetry of ``|sin theta|`` about pi/2.
    """
    n = int(samples_per_half_cycle)
    if n < 2 or n % 2:
        raise ValueError("samples_per_half_cycle must be an even number >= 2")
    q = n // 2
    return (np.arange(q) + 0.5) * (np.pi / 2) / q


def pfc_line_cycle(v_rms, power_w, v_out, efficiency, theta):
    """Input voltage, average inductor current and duty cycle at angles ``theta``.

    Parameters
    ----------
    v_rms : float [V]      input RMS voltage
    power_w : float [W]    output power at this operating point
    v_out : float [V]      bus voltage, must exceed the line peak
    efficiency : float [-] converter efficiency (input power = output / efficiency)
    theta : array [rad]    line angles

    Returns
    -------
    v_in : array [V], i_avg : array [A] (switching-period average), duty : array [-],
    i_pk : float [A] (peak of the line current), i_rms : float [A] (RMS of the line current)

    Notes
    -----
    ``I_rms = P/(eta V_rms)``, ``I_pk = sqrt(2) I_rms``, ``i = I_pk |sin theta|``, ``d = 1 - v_in/V_out``.
    """
    v_pk = np.sqrt(2.0) * v_rms
    if v_pk >= v_out:
        raise ValueError(f"line peak {v_pk:.1f} V must stay below the bus voltage {v_out:.1f} V")
    i_rms = power_w / (efficiency * v_rms)
    i_pk = np.sqrt(2.0) * i_rms
    s = np.abs(np.sin(theta))
    v_in = v_pk * s
    return v_in, i_pk * s, 1.0 - v_in / v_out, i_pk, i_rms


def ripple_pp(v_in, duty, inductance, f_sw):
    """Peak-to-peak switching ripple of the inductor current ``dI = v_in d / (L f_sw)`` [A].

    Parameters
    ----------
    v_in : array [V], duty : array [-], inductance : array [H] (incremental, at the local current),
    f_sw : array [Hz]
    """
    return np.asarray(v_in) * np.asarray(duty) / (np.asarray(inductance) * np.asarray(f_sw))


def largest_ripple_pp(v_pk, v_out, inductance, f_sw):
    """Largest ripple over the line cycle for a constant inductance [A].

    Notes
    -----
    ``v d = v (1 - v/V_out)`` peaks at ``v = V_out/2`` (d = 0.5) with ``V_out/4``; if the line
    peak stays below ``V_out/2`` the largest ripple is at the line peak.
    """
    v = np.minimum(np.asarray(v_pk, dtype=float), np.asarray(v_out) / 2.0)
    return v * (1.0 - v / np.asarray(v_out)) / (np.asarray(inductance) * np.asarray(f_sw))


def ripple_mean_square_closed_form(v_pk, v_out, inductance, f_sw):
    """Line-cycle mean of ``dI_pp^2`` for a constant inductance in CCM [A^2].

    Notes
    -----
    ``<dI_pp^2> = a^2 (1/2 - 8m/(3 pi) + 3 m^2/8)`` with ``a = V_pk/(L f_sw)``, ``m = V_pk/V_out``
    (mean of ``sin^2 (1 - m sin)^2`` over a half cycle); the inductor RMS current is then
    ``I_L,rms^2 = I_rms^2 + <dI_pp^2>/12``.
    """
    a = np.asarray(v_pk) / (np.asarray(inductance) * np.asarray(f_sw))
    m = np.asarray(v_pk) / np.asarray(v_out)
    return a**2 * (0.5 - 8 * m / (3 * np.pi) + 3 * m**2 / 8)
