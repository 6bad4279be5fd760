"""Core loss: iGSE against its own integral and the reference check values; facts of the trade."""
import numpy as np
import pytest
from scipy import integrate

from fluxfront.models import core_loss

K, ALPHA, BETA = 1.0, 1.5, 2.5  # the made-up Steinmetz set of shared/reference/methods.md section 1


def igse_numeric(b_of_t, period, k, alpha, beta, n=200_001):
    """(1/T) int k_i |dB/dt|^alpha dB_pp^(beta-alpha) dt by dense sampling (independent of the closed forms)."""
    t = np.linspace(0.0, period, n)
    b = b_of_t(t)
    dbdt = np.gradient(b, t)
    db_pp = b.max() - b.min()
    return integrate.trapezoid(core_loss.igse_ki(k, alpha, beta) * np.abs(dbdt) ** alpha * db_pp ** (beta - alpha), t) / period


def test_ki_check_value():
    # methods.md section 1: k=1, alpha=1.5, beta=2.5 -> k_i = 0.0570557 (7 digits printed)
    assert core_loss.igse_ki(K, ALPHA, BETA) == pytest.approx(0.0570557, abs=5e-8)


def test_cos_integral_uses_gamma_closed_form():
    # int_0^2pi |cos t|^alpha dt by quadrature equals the Gamma-function form inside igse_ki
    for alpha in (1.1, 1.5, 2.3):
        quad = integrate.quad(lambda t: abs(np.cos(t)) ** alpha, 0, 2 * np.pi, limit=200)[0]
        ki = core_loss.igse_ki(1.0, alpha, 2.5)
        implied = 1.0 / (ki * (2 * np.pi) ** (alpha - 1) * 2.0 ** (2.5 - alpha))
        assert implied == pytest.approx(quad, rel=1e-9)


def test_igse_of_sine_equals_steinmetz():
    # methods.md: sine 100 kHz, 0.1 T peak through the iGSE integral gives 100000 W/m3 (= Steinmetz).
    f = 100e3
    numeric = igse_numeric(lambda t: 0.1 * np.sin(2 * np.pi * f * t), 1 / f, K, ALPHA, BETA)
    assert numeric == pytest.approx(100000.0, rel=1e-6)   # sampling error of the dense grid
    assert core_loss.steinmetz(f, 0.1, K, ALPHA, BETA) == pytest.approx(100000.0, rel=1e-12)


@pytest.mark.parametrize("duty,expected", [(0.5, 91289.14), (0.3, 97503.58), (0.1, 136085.81)])
def test_triangle_closed_form_check_values(duty, expected):
    # methods.md: triangle 100 kHz, 0.2 T pp; tolerance: the printed 7-8 digits
    assert core_loss.igse_triangle(0.2, duty, 100e3, K, ALPHA, BETA) == pytest.approx(expected, abs=0.006)


@pytest.mark.parametrize("duty", [0.1, 0.3, 0.5, 0.8])
def test_triangle_closed_form_equals_numeric_integral(duty):
    f = 100e3

    def tri(t):
        ph = (t * f) % 1.0
        return np.where(ph < duty, 0.2 * ph / duty, 0.2 * (1 - ph) / (1 - duty))

    numeric = igse_numeric(tri, 1 / f, K, ALPHA, BETA)
    assert core_loss.igse_triangle(0.2, duty, f, K, ALPHA, BETA) == pytest.approx(numeric, rel=1e-4)  # kinks in np.gradient


def test_rectified_sine_loop_closed_form_equals_igse_integral():
    # B = Bpk |sin(2 pi f_line t)| over one repetition (1/(2 f_line)); closed form derived in the module.
    b_pk, f_line = 0.25, 50.0
    numeric = igse_numeric(lambda t: b_pk * np.abs(np.sin(2 * np.pi * f_line * t)), 1 / (2 * f_line), K, ALPHA, BETA)
    assert core_loss.rectified_sine_loop(b_pk, f_line, K, ALPHA, BETA) == pytest.approx(numeric, rel=1e-5)


def test_loss_grows_with_flux_swing_and_frequency():
    db = np.linspace(0.01, 0.3, 30)
    p = core_loss.igse_triangle(db, 0.4, 100e3, K, ALPHA, BETA)
    assert np.all(np.diff(p) > 0)
    assert core_loss.igse_triangle(0.1, 0.4, 200e3, K, ALPHA, BETA) > core_loss.igse_triangle(0.1, 0.4, 100e3, K, ALPHA, BETA)


@pytest.mark.parametrize("duty", [0.0, 1.0, -0.1])
def test_triangle_refuses_duty_at_the_edge(duty):
    with pytest.raises(ValueError):
        core_loss.igse_triangle(0.1, duty, 100e3, K, ALPHA, BETA)


def test_band_selection_and_extrapolation_flag():
    f_min = np.array([[50.0, 20e3, np.inf]])
    f_max = np.array([[20e3, 200e3, np.inf]])
    idx, inside = core_loss.select_band(np.array([100.0, 50e3, 1e6]), np.repeat(f_min, 3, 0), np.repeat(f_max, 3, 0))
    assert idx.tolist() == [0, 1, 1]
    assert inside.tolist() == [True, True, False]


def test_temperature_factor_is_one_at_reference_and_floored():
    assert core_loss.temperature_factor(100.0, 100.0, 0.0, 1.42e-4) == 1.0
    assert core_loss.temperature_factor(1000.0, 25.0, -0.01, 0.0) == 0.2


def _material(catalog, name):
    return catalog.materials[name]


def _band(mat, f):
    return next(b for b in mat.steinmetz if b.f_min_hz <= f <= b.f_max_hz)


def test_trade_fact_ferrite_at_100khz_60mt(catalog):
    # Common practice, no source: a 100 kHz-class MnZn power ferrite at 100 kHz and 60 mT amplitude
    # dissipates on the order of 20 mW/cm3 (within a factor of two).
    m = _material(catalog, "mnzn_ferrite_100k")
    b = _band(m, 100e3)
    pv_mw_cm3 = core_loss.steinmetz(100e3, 0.060, b.k, b.alpha, b.beta) * 1e-3
    assert 10.0 <= pv_mw_cm3 <= 40.0


def test_trade_fact_amorphous_at_50khz_and_its_consequence(catalog):
    # Common practice, no source: Fe-based amorphous ribbon at 50 kHz and 0.26 T amplitude: on the
    # order of 1 W/cm3 (factor of two); so for the ferrite's loss density it must run far below Bsat.
    m = _material(catalog, "fe_amorphous")
    b = _band(m, 50e3)
    pv = core_loss.steinmetz(50e3, 0.26, b.k, b.alpha, b.beta)
    assert 0.5e6 <= pv <= 2.0e6
    ferrite_level = 20e3  # W/m3, the ferrite fact above
    b_allowed = (ferrite_level / (b.k * 50e3**b.alpha)) ** (1 / b.beta)
    assert b_allowed < 0.1 * m.b_sat_t_25c
