"""Calibration against a measured prototype: known perturbations recovered from "measurements" made
with the models themselves (a gap 5 % longer, heat dissipation 10 % lower, core loss 20 % higher),
implausible readings refused, and the outputs usable by the next run."""
import numpy as np
import pandas as pd
import pytest
from scipy import optimize

from fluxfront.catalog import load_catalog
from fluxfront.cli.main import main
from fluxfront.design import calibration
from fluxfront.design.build import build
from fluxfront.design.designs import resolve_designs
from fluxfront.design.evaluator import evaluate, prepare
from fluxfront.design.heat import dissipation
from fluxfront.design.spec import demo_spec_path
from fluxfront.models import magnetics

DESIGN = dict(material="mnzn_ferrite_100k", shape="ETD49", stack=1, turns=40, gap_mm=3.0, gaps=1,
              wire="litz175x38awg", parallel=1, f_sw_khz=65)
POWDER = dict(material="fesial_powder_60", shape="T57/26/15", stack=2, turns=45, gap_mm=0, gaps=1, wire="awg16-g2",
              parallel=1, f_sw_khz=65)


def _measurements(spec, catalog, row, gap=1.05, heat=0.9, loss=1.2):
    d = resolve_designs(pd.DataFrame([row]), catalog)
    true = spec.model_copy(update={"model": spec.model.model_copy(update={"gap_factor": gap}),
                                   "thermal": spec.thermal.model_copy(update={"dissipation_factor": heat})})
    ctx = prepare(true, catalog)
    inductance = evaluate(ctx, d).figures["inductance_uh"][0]
    box = tuple(np.sort(build(ctx, d).size[0])[::-1])
    rise = optimize.brentq(lambda dt: dissipation(true, box, dt)[0] - 5.0, 0.1, 500.0, xtol=1e-12)
    core = calibration.core_loss_at(ctx, d, 100e3, 0.1) * loss
    return d, calibration.Measured(inductance_uh=float(inductance), temperature_rise_k=float(rise), at_loss_w=5.0,
                                   core_loss_w=float(core), core_loss_f_khz=100.0, core_loss_b_mt=100.0)


def test_known_perturbations_are_recovered(demo_spec, catalog):
    d, meas = _measurements(demo_spec, catalog, DESIGN)
    result = calibration.calibrate(prepare(demo_spec, catalog), d, meas)
    assert result.factors["gap_factor"] == pytest.approx(1.05, rel=1e-6)
    assert result.factors["dissipation_factor"] == pytest.approx(0.9, rel=1e-9)
    assert result.factors["loss_factor"] == pytest.approx(1.2, rel=1e-9)


def test_powder_inductance_calibrates_the_permeability(demo_spec, catalog):
    d = resolve_designs(pd.DataFrame([POWDER]), catalog)
    model = evaluate(prepare(demo_spec, catalog), d).figures["inductance_uh"][0]
    result = calibration.calibrate(prepare(demo_spec, catalog), d, calibration.Measured(inductance_uh=model * 0.92))
    assert result.factors["permeability_factor"] == pytest.approx(0.92, rel=1e-9)


def test_inductance_at_bias_is_compared_not_fitted(demo_spec, catalog):
    # powder core: the model's L(I) = L0 x roll-off fraction at H = N I / le (models.magnetics); a
    # permeability 8 % low scales L0 and leaves the fraction, so after calibration the row meets the reading
    d = resolve_designs(pd.DataFrame([POWDER]), catalog)
    ctx = prepare(demo_spec, catalog)
    l0 = evaluate(ctx, d).figures["inductance_uh"][0]
    M, m = catalog.material_arrays, d.material[0]
    h = POWDER["turns"] * 8.0 / catalog.core_geometry(d.shape, d.stack).le[0]
    frac = magnetics.powder_permeability_fraction(h, M.rolloff_a[m], M.rolloff_b[m], M.rolloff_c[m])
    meas = calibration.Measured(inductance_uh=l0 * 0.92, inductance_at_bias_uh=l0 * 0.92 * frac, bias_a=8.0)
    result = calibration.calibrate(ctx, d, meas)
    row = next(r for r in result.rows if r[0].startswith("inductance at 8 A DC"))
    assert float(row[1]) == pytest.approx(l0 * frac, rel=1e-3)      # the table shows 4 significant digits
    assert float(row[2]) == pytest.approx(float(row[3]), rel=1e-3)
    assert set(result.factors) == {"permeability_factor"}          # compared only: nothing fitted from it


def test_implausible_reading_is_refused(demo_spec, catalog):
    d = resolve_designs(pd.DataFrame([DESIGN]), catalog)
    model = evaluate(prepare(demo_spec, catalog), d).figures["inductance_uh"][0]
    with pytest.raises(Exception, match="plausible"):
        calibration.calibrate(prepare(demo_spec, catalog), d, calibration.Measured(inductance_uh=model * 3))


def test_calibrate_command_writes_what_the_next_run_uses(tmp_path, demo_spec, catalog, capsys):
    d, meas = _measurements(demo_spec, catalog, DESIGN)
    pd.DataFrame([DESIGN]).to_csv(tmp_path / "built.csv", index=False)
    (tmp_path / "measured.toml").write_text(
        "[measured]\n" + "".join(f"{k} = {v!r}\n" for k, v in meas.model_dump(exclude_none=True).items()))
    assert main(["calibrate", str(demo_spec_path()), str(tmp_path / "built.csv"), str(tmp_path / "measured.toml"),
                 "--out", str(tmp_path / "cal")]) == 0
    out = capsys.readouterr().out
    assert "gap_factor 1.05" in out and "loss_factor 1.2" in out
    # the catalog override and the spec keys reproduce the "measured" core loss and inductance
    cal = load_catalog([tmp_path / "cal"])
    spec_text = demo_spec_path().read_text().replace('fringing = "log"', 'fringing = "log"\ngap_factor = 1.05')
    (tmp_path / "spec.toml").write_text(spec_text)
    assert main(["evaluate", str(tmp_path / "spec.toml"), str(tmp_path / "built.csv"), "--catalog",
                 str(tmp_path / "cal"), "--out", str(tmp_path / "e.csv")]) == 0
    again = pd.read_csv(tmp_path / "e.csv").iloc[0]
    assert again["inductance_uh"] == pytest.approx(meas.inductance_uh, rel=1e-6)
    core = calibration.core_loss_at(prepare(demo_spec, cal), resolve_designs(pd.DataFrame([DESIGN]), cal),
                                  100e3, 0.1)
    assert core == pytest.approx(meas.core_loss_w, rel=1e-9)
    assert (tmp_path / "cal" / "calibration.toml").is_file() and (tmp_path / "cal" / "calibration.md").is_file()


def test_incomplete_measurement_refused_in_one_line(tmp_path, capsys):
    pd.DataFrame([DESIGN]).to_csv(tmp_path / "built.csv", index=False)
    (tmp_path / "m.toml").write_text("[measured]\ninductance_uh = 200\ntemperature_rise_k = 40\n")
    assert main(["calibrate", str(demo_spec_path()), str(tmp_path / "built.csv"), str(tmp_path / "m.toml"),
                 "--out", str(tmp_path / "cal")]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "at_loss_w" in err
    assert not (tmp_path / "cal").exists()
