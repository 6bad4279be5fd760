"""The evaluator chained over populations: hand recomputation, batch equals single, properties."""
import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fluxfront.design.designs import resolve_designs
from fluxfront.design.evaluator import CONSTRAINTS, evaluate
from fluxfront.models import magnetics, waveforms
from fluxfront.optimizer.space import DesignSpace

FERRITE = dict(material="mnzn_ferrite_100k", shape="ETD49", stack=1, turns=40, gap_mm=3.0, wire="litz175x38awg",
               parallel=1, f_sw_khz=65)
POWDER = dict(material="fesial_powder_60", shape="T57/26/15", stack=2, turns=45, gap_mm=0, wire="awg16-g2",
              parallel=1, f_sw_khz=65)


def _eval(ctx, catalog, rows, **kw):
    return evaluate(ctx, resolve_designs(pd.DataFrame(rows), catalog), **kw)


def test_inductance_and_peak_flux_recomputed_by_hand(demo_context, catalog):
    ev = _eval(demo_context, catalog, [FERRITE])
    geo = catalog.core_geometry(np.array([catalog.shape_index("ETD49")]), np.array([1]))
    mat = catalog.materials["mnzn_ferrite_100k"]
    f = magnetics.fringing_factor_log(3e-3, geo.gap_area[0], geo.gap_window_height[0])
    l_hand = f * 40**2 / (geo.le[0] / (magnetics.MU0 * mat.mu_initial * geo.ae[0]) + 3e-3 / (magnetics.MU0 * geo.gap_area[0]))
    assert ev.figures["inductance_uh"][0] == pytest.approx(l_hand * 1e6, rel=1e-12)
    # peak flux at the narrowest section: L i / (N A_min) (methods.md section 9)
    b_hand = l_hand * ev.figures["i_peak_a"][0] / (40 * geo.a_min[0])
    assert ev.figures["b_peak_t"][0] == pytest.approx(b_hand, rel=1e-12)
    # low line, full load: the ripple at the line peak from the textbook formula (methods.md section 2)
    spec = demo_context.spec
    i_pk = np.sqrt(2) * spec.converter.power_w / (spec.converter.efficiency * 90)
    assert demo_context.ops[0].i_pk == pytest.approx(i_pk)
    assert ev.figures["ripple_pp_max_a"][0] >= waveforms.largest_ripple_pp(np.sqrt(2) * 90, 400, l_hand, 65e3) * 0.99


def test_powder_core_loses_inductance_under_bias(demo_context, catalog):
    ev = _eval(demo_context, catalog, [POWDER])
    assert ev.figures["inductance_at_peak_uh"][0] < 0.5 * ev.figures["inductance_uh"][0]
    assert ev.constraints[0, CONSTRAINTS.index("inductance_kept")] > 0   # the demo spec's 50 % limit is violated


def test_batch_equals_one_at_a_time_and_chunk_independent(demo_context, catalog, demo_spec):
    space = DesignSpace.from_spec(demo_spec, catalog)
    d = space.decode(space.sample(np.random.default_rng(7), 300))
    batch = evaluate(demo_context, d, chunk=128)
    whole = evaluate(demo_context, d, chunk=1000)
    np.testing.assert_array_equal(batch.objectives, whole.objectives)
    for i in range(0, 300, 7):   # bit for bit: re-evaluation, parallel backends and resume rely on it
        one = evaluate(demo_context, d.take(slice(i, i + 1)))
        np.testing.assert_array_equal(one.objectives[0], batch.objectives[i])
        np.testing.assert_array_equal(one.constraints[0], batch.constraints[i])


def test_more_turns_less_core_loss(demo_context, catalog):
    # same core and frequency: dB = v d / (N Ae f), so fewer turns means a larger swing and more core loss
    rows = [dict(FERRITE, turns=n) for n in (20, 30, 45)]
    core = _eval(demo_context, catalog, rows).per_op["core_loss_w"][:, 0]
    assert core[0] > core[1] > core[2]


def test_switching_loss_is_reported_apart_from_the_inductor_loss(demo_spec, catalog):
    # energy per period times frequency: three times the frequency, three times the loss; it enters
    # system_loss_w, never total_loss_w (the inductor's own)
    from fluxfront.design.evaluator import prepare
    from fluxfront.design.spec import Switching

    spec = demo_spec.model_copy(update={"switching": Switching(enabled=True, e0_uj=2.0, e1_uj_per_a=1.2)})
    ev = _eval(prepare(spec, catalog), catalog, [dict(FERRITE, f_sw_khz=50), dict(FERRITE, f_sw_khz=150)])
    sw = ev.figures["switching_loss_w"]
    assert sw[0] > 0 and sw[1] == pytest.approx(3 * sw[0])
    np.testing.assert_allclose(ev.figures["system_loss_w"], ev.figures["total_loss_w"] + sw, rtol=1e-12)
    assert np.all(ev.objectives[:, 1] == ev.figures["total_loss_w"])


def test_json_samples_are_kept_for_one_design(demo_context, catalog):
    ev = _eval(demo_context, catalog, [FERRITE], keep_samples=True)
    s = ev.samples[0]
    assert s["ripple_pp_a"].shape == (1, demo_context.spec.model.samples_per_half_cycle // 2)
    np.testing.assert_allclose(s["ripple_pp_a"][0], s["v_in_v"][0] * s["duty"][0] / (ev.figures["inductance_uh"][0] * 1e-6 * 65e3))


@settings(max_examples=40, deadline=None)
@given(seed=st.integers(0, 2**31 - 1))
def test_random_valid_designs_give_finite_numbers(seed, demo_context, catalog, demo_spec):
    space = DesignSpace.from_spec(demo_spec, catalog)
    d = space.decode(space.sample(np.random.default_rng(seed), 64))
    ev = evaluate(demo_context, d)
    assert np.all(np.isfinite(ev.objectives))
    assert np.all(np.isfinite(ev.constraints))
    for k, v in ev.figures.items():
        assert np.all(np.isfinite(np.asarray(v, dtype=float))), k
    # a design reported feasible has no thermal runaway and meets every limit
    assert not np.any(ev.feasible & ev.figures["thermal_runaway"])


def test_reported_temperature_balances_loss_and_dissipation(demo_context, catalog):
    # heat balance at the result: natural convection + radiation from the box standing on a board
    # (the models under test in test_thermal.py) carries away exactly the inductor's own loss
    from fluxfront.models import geometry, thermal

    ev = _eval(demo_context, catalog, [FERRITE])
    spec = demo_context.spec
    parts = ("core_loss_w", "core_gap_loss_w", "winding_dc_loss_w", "winding_ac_loss_w", "winding_fringing_loss_w")
    loss = sum(ev.per_op[k] for k in parts)[0]
    np.testing.assert_allclose(loss, ev.per_op["total_loss_w"][0], rtol=1e-12)
    surface = ev.per_op["surface_temperature_c"][0]
    d = resolve_designs(pd.DataFrame([FERRITE]), catalog)
    size = np.sort(geometry.boxed_size(catalog.core_geometry(d.shape, d.stack), ev.figures["layers"][0] *
                                       catalog.wires["litz175x38awg"].outer_diameter)[0])
    p, _ = thermal.box_natural_convection(surface - spec.limits.ambient_c, spec.limits.ambient_c, size[2], size[1],
                                          size[0], spec.thermal.emissivity, bottom_exposed=False)
    np.testing.assert_allclose(p, loss, rtol=2e-3)   # the solver stops when the step is below 0.01 K


def test_overloaded_small_core_is_thermal_runaway(demo_context, catalog):
    tiny = dict(FERRITE, shape="E30/15/7", turns=12, gap_mm=0.5, wire="awg24-g2", f_sw_khz=300)
    ev = _eval(demo_context, catalog, [tiny])
    assert ev.figures["thermal_runaway"][0] and not ev.feasible[0]
    assert ev.constraints[0, CONSTRAINTS.index("hot_spot")] > 0 and np.isfinite(ev.constraints[0]).all()
