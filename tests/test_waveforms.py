"""Boost PFC line-cycle waveforms against the reference check values."""
import numpy as np
import pytest
from scipy import integrate

from fluxfront.models import waveforms

# methods.md section 2: 1 kW, 90 Vrms, 400 V, 100 kHz, 500 uH, eta = 1
P, VRMS, VOUT, FSW, L = 1000.0, 90.0, 400.0, 100e3, 500e-6


def test_peak_current_and_ripple_check_values():
    theta = np.array([np.pi / 2])
    v_in, i_avg, duty, i_pk, i_rms = waveforms.pfc_line_cycle(VRMS, P, VOUT, 1.0, theta)
    ripple = waveforms.ripple_pp(v_in, duty, L, FSW)
    assert i_pk == pytest.approx(15.7135, abs=5e-5)           # printed to 4 decimals
    assert ripple[0] == pytest.approx(1.73558, abs=5e-6)
    assert i_pk + ripple[0] / 2 == pytest.approx(16.5813, abs=5e-5)


def test_inductor_rms_current_check_value_by_quadrature_and_closed_form():
    # methods.md: I_L,rms = 11.1176 A; closed form <dI^2> and a direct quadrature agree.
    v_pk = np.sqrt(2) * VRMS
    ms = waveforms.ripple_mean_square_closed_form(v_pk, VOUT, L, FSW)
    quad = integrate.quad(lambda t: (v_pk * np.sin(t) * (1 - v_pk * np.sin(t) / VOUT) / (L * FSW)) ** 2, 0, np.pi)[0] / np.pi
    assert ms == pytest.approx(quad, rel=1e-10)
    i_rms = P / VRMS
    assert np.sqrt(i_rms**2 + ms / 12) == pytest.approx(11.1176, abs=5e-5)


def test_largest_ripple_at_half_duty_when_line_peak_exceeds_half_bus():
    theta = np.linspace(1e-4, np.pi / 2, 20001)
    v_in, _, duty, _, _ = waveforms.pfc_line_cycle(230.0, P, VOUT, 1.0, theta)
    ripple = waveforms.ripple_pp(v_in, duty, L, FSW)
    k = np.argmax(ripple)
    assert duty[k] == pytest.approx(0.5, abs=1e-3)
    assert ripple.max() == pytest.approx(VOUT / (4 * L * FSW), rel=1e-6)
    assert waveforms.largest_ripple_pp(np.sqrt(2) * 230, VOUT, L, FSW) == pytest.approx(VOUT / (4 * L * FSW))
    # below half the bus the largest ripple sits at the line peak
    assert waveforms.largest_ripple_pp(np.sqrt(2) * 90, VOUT, L, FSW) == pytest.approx(1.73558, abs=5e-6)


def test_ripple_inverse_in_inductance_and_frequency():
    base = waveforms.ripple_pp(100.0, 0.5, L, FSW)
    assert waveforms.ripple_pp(100.0, 0.5, 2 * L, FSW) == pytest.approx(base / 2)
    assert waveforms.ripple_pp(100.0, 0.5, L, 3 * FSW) == pytest.approx(base / 3)


def test_quarter_cycle_midpoints_equal_half_cycle_mean():
    theta = waveforms.line_angles(64)
    assert len(theta) == 32
    half = (np.arange(64) + 0.5) * np.pi / 64
    f = lambda t: np.abs(np.sin(t)) ** 3 * (1 - 0.7 * np.abs(np.sin(t)))  # noqa: E731
    assert f(theta).mean() == pytest.approx(f(half).mean(), rel=1e-13)


def test_boost_needs_bus_above_line_peak():
    with pytest.raises(ValueError, match="below the bus"):
        waveforms.pfc_line_cycle(300.0, P, 400.0, 1.0, np.array([1.0]))
    with pytest.raises(ValueError):
        waveforms.line_angles(7)
