"""Thermal models against the reference check values and air tables."""
import numpy as np
import pytest

from fluxfront.models import thermal


def test_churchill_chu_check_value():
    # methods.md section 5: 5 W, 100 cm2, 5 cm height, 25 C ambient, eps 0.9 -> dT = 37.46 K
    diss = lambda dt: thermal.natural_convection(dt, 25.0, 100e-4, 0.05, 0.9)  # noqa: E731
    assert thermal.solve_rise(np.array([5.0]), diss)[0] == pytest.approx(37.46, abs=0.05)  # printed digits + air-property fits


def test_empirical_rise_check_value_and_inverse():
    # methods.md: 450 (P/A)^0.826 with 5 W on 100 cm2 -> 37.89 K
    assert thermal.empirical_rise(5.0, 100e-4) == pytest.approx(37.89, abs=0.005)
    p, _ = thermal.empirical_dissipation(37.893239725, 100e-4)
    assert p == pytest.approx(5.0, rel=1e-9)


def test_air_properties_near_table_at_300k():
    # usual air tables at 300 K, 1 atm: k 0.0263 W/(m K), nu 15.89e-6 m2/s, Pr 0.707 (from memory);
    # tolerance 2 %: the fits' stated accuracy.
    k, nu, pr = thermal.air_properties(26.85)
    assert k == pytest.approx(0.0263, rel=0.02)
    assert nu == pytest.approx(15.89e-6, rel=0.02)
    assert pr == pytest.approx(0.707, rel=0.02)


def test_churchill_chu_limits():
    # at Ra -> 0 the correlation tends to Nu = 0.825^2 (its conduction limit, by construction)
    assert thermal.churchill_chu_nusselt(0.0, 0.71) == pytest.approx(0.825**2)
    ra = np.array([1e4, 1e6, 1e9])
    assert np.all(np.diff(thermal.churchill_chu_nusselt(ra, 0.71)) > 0)


def test_radiation_by_hand():
    # eps sigma A (Ts^4 - Ta^4) with Ts = 373.15 K, Ta = 298.15 K
    p, _ = thermal.radiation(75.0, 25.0, 0.01, 0.9)
    assert p == pytest.approx(0.9 * 5.670374419e-8 * 0.01 * (373.15**4 - 298.15**4), rel=1e-12)


def test_solver_handles_arrays_and_zero_power():
    diss = lambda dt: thermal.forced_convection(dt, 25.0, 0.01, 25.0, 0.0)  # noqa: E731
    dt = thermal.solve_rise(np.array([0.0, 2.5, 5.0]), diss)
    assert dt == pytest.approx([0.0, 10.0, 20.0], abs=1e-6)   # P = h A dT exactly without radiation
