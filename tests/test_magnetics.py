"""Magnetic circuit: reluctance, fringing, powder roll-off."""
import numpy as np
import pytest
from scipy import integrate

from fluxfront.models import magnetics

# methods.md section 4: N=50, 10x10 mm leg, le 100 mm, mu_r 2000, lg 1 mm
N, A, LE, MU, LG = 50, 1e-4, 0.1, 2000.0, 1e-3


def test_inductance_without_fringing_check_value():
    assert magnetics.gapped_inductance(N, LE, A, MU, LG, A) * 1e6 == pytest.approx(299.2, abs=0.05)


def test_fringing_handbook_formula_check_value():
    # Transformer and Inductor Design Handbook fringing factor with G = 20 mm -> 409.6 uH (methods.md)
    f = magnetics.fringing_factor_log(LG, A, 20e-3)
    assert f == pytest.approx(1 + 0.1 * np.log(40.0), rel=1e-12)
    assert magnetics.gapped_inductance(N, LE, A, MU, LG, A, f) * 1e6 == pytest.approx(409.6, abs=0.05)


def test_inductance_scales_with_turns_squared():
    l1 = magnetics.gapped_inductance(np.array([10, 20, 40]), LE, A, MU, LG, A)
    assert l1[1] / l1[0] == pytest.approx(4.0) and l1[2] / l1[0] == pytest.approx(16.0)
    p = magnetics.powder_inductance(np.array([10, 30]), LE, A, 60)
    assert p[1] / p[0] == pytest.approx(9.0)


def test_fringing_edges():
    assert magnetics.fringing_factor_log(0.0, A, 20e-3) == 1.0
    assert np.isfinite(magnetics.fringing_factor_log(50e-3, A, 20e-3))  # beyond the window: held
    assert magnetics.no_fringing(np.ones(3), A, 1.0).tolist() == [1.0, 1.0, 1.0]


def test_powder_rolloff_half_point():
    # fit 1/(1 + b H^c): half permeability where b H^c = 1; 60 Oe in A/m with 1 Oe = 79.577 A/m
    b, c = 60.0**-1.6, 1.6
    assert magnetics.powder_permeability_fraction(60 * 79.5775, 1.0, b, c) == pytest.approx(0.5, rel=1e-5)
    assert magnetics.powder_permeability_fraction(0.0, 1.0, b, c) == 1.0


@pytest.mark.parametrize("h_oe", [1.0, 30.0, 100.0, 400.0])
def test_powder_flux_density_hypergeometric_equals_quadrature(h_oe):
    a, b, c, mu = 1.0, 1.43e-3, 1.6, 60.0
    h = h_oe * magnetics.OERSTED
    quad = integrate.quad(lambda x: magnetics.MU0 * mu * magnetics.powder_permeability_fraction(x, a, b, c), 0, h,
                          epsabs=0, epsrel=1e-12)[0]
    assert magnetics.powder_flux_density(h, mu, a, b, c) == pytest.approx(quad, rel=1e-9)


def test_saturation_falls_with_temperature():
    assert magnetics.saturation_flux_density(0.49, -2.7e-3, 25.0) == 0.49
    assert magnetics.saturation_flux_density(0.49, -2.7e-3, 100.0) == pytest.approx(0.49 * (1 - 0.2025))
