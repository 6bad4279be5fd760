"""Winding loss models: Dowell, round-wire skin effect, harmonics, layout."""
import numpy as np
import pytest

from fluxfront.models import winding


@pytest.mark.parametrize("x,values", [
    (1.0, [1.0856, 1.4060, 1.9400, 2.6875, 3.6486]),     # methods.md section 3, Dowell check values
    (2.0, [1.8978, 5.1465, 10.5610, 18.1412, 27.8873]),
])
def test_dowell_check_values(x, values):
    got = winding.dowell_factor(x, np.arange(1, 6))
    assert got == pytest.approx(values, abs=5e-5)         # printed to 4 decimals


def test_dowell_table_equals_closed_form():
    # the tabulated functions used on the hot path against the closed form they were built from
    x = np.geomspace(1e-3, 300, 20001)
    fast = np.array(winding.dowell_terms(x))
    exact = np.array(winding.dowell_terms_exact(x))
    assert fast == pytest.approx(exact, rel=5e-6)


def test_dowell_low_frequency_limit():
    # Dowell's series: Fr = 1 + (5 m^2 - 1) X^4 / 45 for small X (expansion of the closed form)
    x, m = 0.05, 4
    assert winding.dowell_factor(x, m) == pytest.approx(1 + (5 * m**2 - 1) * x**4 / 45, rel=1e-9)


@pytest.mark.parametrize("ratio,expected", [(1, 1.00130), (2, 1.02049), (3, 1.09733), (5, 1.50504), (10, 2.76811)])
def test_round_wire_skin_factor_check_values(ratio, expected):
    # methods.md section 3, Kelvin-function solution (scipy.special.ber/bei): d/delta = 1..10
    assert winding.round_wire_skin_factor(ratio * 1e-3, 1e-3) == pytest.approx(expected, abs=5e-6)


def test_skin_factor_edges_low_and_high_frequency():
    assert winding.round_wire_skin_factor(1e-6, 1.0) == 1.0
    # high-frequency asymptote d/(4 delta) + 1/4 (current in a skin layer), continuous at d/delta = 100
    r = np.array([99.0, 101.0, 1000.0])
    assert np.all(np.isfinite(winding.round_wire_skin_factor(r, 1.0)))
    assert winding.round_wire_skin_factor(99.0, 1.0) == pytest.approx(99 / 4 + 0.25, rel=2e-4)


def test_litz_with_one_layer_is_the_strand_skin_factor():
    r = np.geomspace(0.05, 50, 200)
    assert winding.litz_factor(r, 1.0, 1.0, 0.5) == pytest.approx(winding.round_wire_skin_factor(r, 1.0), rel=1e-6)


def test_skin_depth_check_value():
    # methods.md: 100 kHz copper at 20 C -> 0.2090 mm
    assert winding.skin_depth(100e3) * 1e3 == pytest.approx(0.2090, abs=5e-5)
    with pytest.raises(ValueError):
        winding.skin_depth(0.0)


@pytest.mark.parametrize("duty", [0.05, 0.3, 0.5, 0.77])
def test_triangle_harmonics_sum_to_rms(duty):
    # Parseval: sum of I_n,rms^2 over all harmonics = dI_pp^2 / 12 (RMS of a zero-mean triangle)
    w = winding.triangle_harmonic_weights(np.array([duty]), np.arange(1, 200001))
    assert w.sum() == pytest.approx(1 / 12, rel=1e-5)     # truncation at n = 2e5 ~ 1/n^3


def test_bobbin_layout_counts():
    tpl, layers, build, fit = winding.bobbin_layout(40, 2, 1.0e-3, 20.5e-3, 8e-3)
    assert (tpl, layers) == (10, 4)
    assert build == pytest.approx(4e-3) and fit == pytest.approx(0.5)
    tpl, layers, _, fit = winding.bobbin_layout(10, 3, 5e-3, 10e-3, 8e-3)
    assert tpl == 0 and np.isinf(fit)


def test_ring_layout_fills_shrinking_layers():
    # hole 20 mm, wall 0, wire 1 mm: layer 0 at r = 9.5 mm holds floor(2 pi 9.5) = 59 turns
    tpl, layers, build, fit = winding.ring_layout(np.array([50, 100]), np.array([1, 1]), 1e-3, 20e-3, 0.0)
    assert tpl.tolist() == [59, 59]
    assert layers.tolist() == [1, 2]
    _, layers, _, fit = winding.ring_layout(10000, 1, 1e-3, 20e-3, 0.0)
    assert np.isinf(layers) and np.isinf(fit)
