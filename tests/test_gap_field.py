"""The field beside discrete gaps and the eddy loss it drives in round conductors.

Check values come from independent numerical integration with scipy (the half-plane Poisson
kernel, quadrature of |H|^2, quadrature of the Bessel-function current density) and from the
low-frequency limit of the transverse-field loss, ``P' = pi d^4 omega^2 mu0^2 H^2 / (128 rho)``
(methods.md section 9, derived there and checked numerically).
"""
import numpy as np
import pytest
from scipy import integrate, special

from fluxfront.models import gap_field, winding
from fluxfront.models.magnetics import MU0


def _poisson_field(x, y, gap, mmf):
    """|H| at (x, y) from the surface field F/g over the gap, through the half-plane Poisson kernel."""
    h_t = mmf / gap
    kern_n = lambda t: h_t * x / (x**2 + (y - t) ** 2) / np.pi          # noqa: E731
    kern_t = lambda t: h_t * (y - t) / (x**2 + (y - t) ** 2) / np.pi    # noqa: E731
    hy = integrate.quad(kern_n, -gap / 2, gap / 2)[0]
    hx = integrate.quad(kern_t, -gap / 2, gap / 2)[0]
    return np.hypot(hx, hy)


@pytest.mark.parametrize("x,y", [(0.2e-3, 0.0), (1e-3, 0.5e-3), (3e-3, -2e-3), (10e-3, 4e-3)])
def test_closed_form_field_equals_the_poisson_integral(x, y):
    # the closed form is the harmonic extension of the gap's surface field: quadrature agrees to 1e-9
    assert gap_field.gap_field(x, y, 2e-3, 100.0) == pytest.approx(_poisson_field(x, y, 2e-3, 100.0), rel=1e-9)


def test_field_at_the_face_and_far_away():
    g, f = 2e-3, 100.0
    # at the face over the gap's centre the field is the gap's own, F/g
    assert gap_field.gap_field(1e-9, 0.0, g, f) == pytest.approx(f / g, rel=1e-5)
    # far away it falls as F / (pi r), whatever the gap length
    assert gap_field.gap_field(0.3, 0.0, g, f) == pytest.approx(f / (np.pi * 0.3), rel=1e-4)


@pytest.mark.parametrize("x", [0.3e-3, 1e-3, 4e-3])
def test_line_integral_of_h_squared_equals_quadrature(x):
    # Parseval closed form against direct quadrature of |H|^2 along the line (one gap, then two)
    g, f = 2e-3, 80.0
    num = integrate.quad(lambda y: gap_field.gap_field(x, y, g, f) ** 2, -np.inf, np.inf, limit=400)[0]
    assert gap_field.gap_row_field_integral(x, g, f) == pytest.approx(num, rel=1e-7)
    pitch = 6e-3

    def two(y):
        z = x + 1j * y
        ln = sum(np.log((z - c - 0.5j * g) / (z - c + 0.5j * g)) for c in (-0.5j * pitch, 0.5j * pitch))
        return abs(f / (np.pi * g) * ln) ** 2

    num2 = integrate.quad(two, -np.inf, np.inf, limit=400)[0]
    assert gap_field.gap_row_field_integral(x, g, f, 2, pitch) == pytest.approx(num2, rel=1e-7)


def test_far_line_integral_tends_to_f_squared_over_pi_x():
    # int dy F^2/(pi^2 (x^2 + y^2)) = F^2 / (pi x): the far field of any gap
    assert gap_field.gap_row_field_integral(0.5, 1e-3, 10.0) == pytest.approx(100.0 / (np.pi * 0.5), rel=1e-5)


def test_excess_field_falls_with_split_and_distance_and_vanishes_when_spread():
    x = np.array([0.5e-3, 2e-3, 8e-3])
    counts = np.array([1, 2, 4, 8])[:, None]
    e = gap_field.fringing_field_excess(x, 4e-3, 100.0, counts, 30e-3)
    assert np.all(np.diff(e, axis=0) < 0)      # more gaps, less excess
    assert np.all(np.diff(e, axis=1) < 0)      # further out, less excess
    # a gap as long as the span is the even spread itself
    assert gap_field.fringing_field_excess(1e-3, 30e-3, 100.0, 1, 30e-3) == pytest.approx(0.0, abs=1e-6)


def _transverse_by_quadrature(x):
    """P'/(rho H^2) from the current density J = -j omega sigma C J1(k r) sin(theta), integrated by quad."""
    a, k = x / 2, 1 - 1j          # units of delta; omega mu0 sigma = 2 / delta^2
    inner = integrate.quad(lambda r: abs(special.jv(1, k * r)) ** 2 * r, 0, a, limit=200)[0]
    return 16 / abs(k * special.jv(0, k * a)) ** 2 * np.pi / 2 * inner


@pytest.mark.parametrize("ratio", [0.5, 1.0, 2.0, 5.0, 20.0])
def test_transverse_factor_equals_quadrature(ratio):
    assert gap_field.round_wire_transverse_factor_exact(ratio) == pytest.approx(_transverse_by_quadrature(ratio),
                                                                                rel=1e-8)


def test_tabulated_transverse_factor_equals_the_exact_form():
    # the evaluator's table against the closed form over the whole range, edges included
    x = np.logspace(-3, 3, 2001)
    np.testing.assert_allclose(gap_field.round_wire_transverse_factor(x),
                               gap_field.round_wire_transverse_factor_exact(x), rtol=2e-6)


def test_transverse_factor_low_frequency_limit():
    # 0.1 mm strand at 100 kHz in 1000 A/m (methods.md section 9): P' = pi d^4 omega^2 mu0^2 H^2 / (128 rho)
    rho = winding.copper_resistivity(20.0)
    d, f, h = 0.1e-3, 100e3, 1000.0
    delta = winding.skin_depth(f, rho)
    p_exact = rho * h**2 * gap_field.round_wire_transverse_factor(d / delta)
    p_low = np.pi * d**4 * (2 * np.pi * f) ** 2 * MU0**2 * h**2 / (128 * rho)
    assert p_exact == pytest.approx(p_low, rel=1e-3)   # d/delta = 0.48: the series' next term is below 0.1 %
    assert gap_field.round_wire_transverse_factor(0.01) == pytest.approx(np.pi * 0.01**4 / 32, rel=1e-6)


def test_transverse_factor_grows_without_bound_and_stays_finite():
    r = gap_field.round_wire_transverse_factor(np.array([1.0, 10.0, 100.0, 1000.0]))
    assert np.all(np.diff(r) > 0) and np.all(np.isfinite(r))


def test_fringing_loss_of_one_layer_by_hand():
    # one layer of 20 strands per cm at 2 mm from a 3 mm gap carrying 200 A peak at 100 kHz
    rho = winding.copper_resistivity(20.0)
    gamma = gap_field.round_wire_transverse_factor(0.3e-3 / winding.skin_depth(100e3, rho))
    geo = gap_field.fringing_geometry_factor(np.array([0.06]), np.array([1.7e-3]), np.array([0.6e-3]),
                                             np.array([1]), np.array([2000.0]), np.array([3e-3]), np.array([1]),
                                             np.array([0.03]))
    x = 2e-3
    excess = gap_field.fringing_field_excess(x, 3e-3, 1.0, 1, 0.03)
    by_hand = rho * (0.06 + 2 * np.pi * x) * 2000.0 * excess * gamma * 200.0**2
    loss = gap_field.fringing_winding_loss(geo, np.array([[200.0**2]]), np.array([[gamma]]), rho)
    assert loss[0] == pytest.approx(by_hand, rel=1e-12)
