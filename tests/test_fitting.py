"""Catalog entries fitted from points: known parameters recovered from synthetic points with stated
noise, band splitting, the round trip through the catalog, and bad point files refused in one line.

The synthetic points are made here from chosen parameters (no outside data): the check is that the
fit recovers what made them, within tolerances set by the noise.
"""
import numpy as np
import pandas as pd
import pytest

from fluxfront.catalog import load_catalog
from fluxfront.catalog.fitting import MAX_BANDS, fit_loss, fit_rolloff, read_points
from fluxfront.cli.main import main
from fluxfront.models import core_loss, magnetics


def _loss_points(path, bands, noise=0.02, temps=(100,), c2=1.4e-4, seed=0):
    rng = np.random.default_rng(seed)
    rows = []
    for t in temps:
        for f in (20e3, 30e3, 50e3, 70e3, 100e3, 150e3, 200e3, 300e3):
            for b in (0.03, 0.06, 0.1, 0.15, 0.2):
                k, a, beta = next((k, a, beta) for lo, hi, k, a, beta in bands if lo <= f <= hi)
                pv = k * f**a * b**beta * (1 + c2 * (t - 100) ** 2) * np.exp(rng.normal(0, noise))
                rows.append({"f_khz": f / 1e3, "b_mt": b * 1e3, "t_c": t, "pv_mw_cm3": pv / 1e3})
    pd.DataFrame(rows).to_csv(path, index=False)
    return path


def test_one_band_recovered_from_noisy_points(tmp_path):
    # 2 % log-normal noise over 40 points: alpha and beta within 0.03, k within 15 %
    path = _loss_points(tmp_path / "p.csv", [(0, 1e9, 3.18, 1.40, 2.60)])
    fit = fit_loss(read_points(path, {"f": True, "b": True, "pv": True, "t": False})[0], path)
    [band] = fit.bands
    assert band.alpha == pytest.approx(1.40, abs=0.03) and band.beta == pytest.approx(2.60, abs=0.03)
    assert band.k * 1e5**band.alpha * 0.1**band.beta == pytest.approx(3.18 * 1e5**1.4 * 0.1**2.6, rel=0.03)
    assert np.median(np.abs(fit.errors)) < 0.03


def test_two_regimes_are_split_into_two_bands(tmp_path):
    # eddy-current rise above 100 kHz (alpha 1.4 -> 1.9, continuous at 100 kHz): one band cannot fit
    k_hi = 3.18 * 1e5 ** (1.4 - 1.9)
    path = _loss_points(tmp_path / "p.csv", [(0, 1e5, 3.18, 1.4, 2.6), (1e5 + 1, 1e9, k_hi, 1.9, 2.6)], noise=0.01)
    fit = fit_loss(read_points(path, {"f": True, "b": True, "pv": True, "t": False})[0], path)
    assert len(fit.bands) >= 2
    assert np.max(np.abs(fit.errors)) < 0.10
    assert all(lo.f_max == hi.f_min for lo, hi in zip(fit.bands, fit.bands[1:]))     # contiguous, no overlap


def test_band_count_stays_within_the_cap(tmp_path):
    # five regimes with alternating slopes (alpha 1.2/2.2, continuous at their edges) cannot be fitted by
    # three bands within 10 %: the splitting must stop at MAX_BANDS rather than add a fourth
    edges = [0, 30e3, 60e3, 110e3, 180e3, 1e9]
    alphas = [1.2, 2.2, 1.2, 2.2, 1.2]
    bands, k = [], 3.18
    for i, (lo, hi, a) in enumerate(zip(edges, edges[1:], alphas)):
        if i:
            k = k * lo ** (alphas[i - 1] - a)
        bands.append((lo + (1 if i else 0), hi, k, a, 2.6))
    path = _loss_points(tmp_path / "p.csv", bands, noise=0.0)
    fit = fit_loss(read_points(path, {"f": True, "b": True, "pv": True, "t": False})[0], path)
    assert 2 <= len(fit.bands) <= MAX_BANDS


def test_temperature_fit_recovered(tmp_path):
    path = _loss_points(tmp_path / "p.csv", [(0, 1e9, 3.18, 1.4, 2.6)], noise=0.005, temps=(25, 60, 100, 120))
    fit = fit_loss(read_points(path, {"f": True, "b": True, "pv": True, "t": False})[0], path)
    # the model's factor relative to its own reference temperature must match the made one's shape
    ref = fit.t_ref
    for t in (25, 60, 120):
        made = (1 + 1.4e-4 * (t - 100) ** 2) / (1 + 1.4e-4 * (ref - 100) ** 2)
        fitted = 1 + fit.c1 * (t - ref) + fit.c2 * (t - ref) ** 2
        assert fitted == pytest.approx(made, rel=0.02)


def test_round_trip_through_the_catalog_reproduces_the_points(tmp_path, capsys):
    path = _loss_points(tmp_path / "p.csv", [(0, 1e9, 3.18, 1.4, 2.6)], noise=0.02)
    assert main(["catalog", "fit-loss", str(path), "--id", "my_ferrite", "--out", str(tmp_path / "fit")]) == 0
    worst = float(capsys.readouterr().out.split("worst ")[1].split(" %")[0]) / 100
    m = load_catalog([tmp_path / "fit"]).materials["my_ferrite"]
    data = pd.read_csv(path)
    f, b = data.f_khz.to_numpy() * 1e3, data.b_mt.to_numpy() * 1e-3
    band = m.steinmetz[0]
    pv = core_loss.steinmetz(f, b, band.k, band.alpha, band.beta)
    assert "fitted from p.csv" in m.provenance
    assert np.max(np.abs(pv / (data.pv_mw_cm3.to_numpy() * 1e3) - 1)) <= worst + 1e-3   # reported rounding


def test_rolloff_recovered_and_written(tmp_path, capsys):
    rng = np.random.default_rng(1)
    h_oe = np.geomspace(5, 400, 14)
    frac = 1 / (1 + 1.43e-3 * h_oe**1.6) * np.exp(rng.normal(0, 0.01, h_oe.size))
    pd.DataFrame({"h_oe": h_oe, "fraction": frac}).to_csv(tmp_path / "r.csv", index=False)
    a, b, c, err = fit_rolloff(h_oe * magnetics.OERSTED, frac, tmp_path / "r.csv")
    # half the permeability at about 60 Oe, as made: within 5 %
    h_half = ((2 - a) / b) ** (1 / c)
    assert h_half == pytest.approx((1 / 1.43e-3) ** (1 / 1.6), rel=0.05)
    assert main(["catalog", "fit-rolloff", str(tmp_path / "r.csv"), "--id", "my_powder",
                 "--out", str(tmp_path / "fit")]) == 0
    assert load_catalog([tmp_path / "fit"]).materials["my_powder"].rolloff_c == pytest.approx(c)


@pytest.mark.parametrize("text,message", [
    ("f_khz,b_mt,pv_kw_m3\n100,100,80\n200,100,200\n", "at least 6"),
    ("f_khz,b_mt,pv_kw_m3\n" + "".join(f"{f},{b},{-1 if f == 100 and b == 50 else 10}\n"
                                      for f in (50, 100, 200) for b in (50, 100)), "positive number"),
    ("f_khz,b_mt,pv_kw_m3\n" + "".join(f"100,{b},{b}\n" for b in (20, 40, 60, 80, 100, 120)), "two frequencies"),
    ("f_khz,f_hz,b_mt,pv_kw_m3\n" + "".join(f"{f},{f * 1e3},{b},{b}\n" for f in (50, 100, 200) for b in (50, 100)),
     "keep one unit"),
    ("freq,b_mt,pv_kw_m3\n1,2,3\n", "no column for f"),
    ("f_khz,b_mt,pv_kw_m3\n" + "".join(f"{f},{b},x\n" for f in (50, 100, 200) for b in (50, 100)), "'pv_kw_m3'"),
])
def test_bad_point_files_are_refused_in_one_line(tmp_path, capsys, text, message):
    (tmp_path / "p.csv").write_text(text)
    assert main(["catalog", "fit-loss", str(tmp_path / "p.csv"), "--id", "x", "--out", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and message in err, err
    assert not (tmp_path / "o").exists()


def test_rolloff_table_matches_the_fit_it_was_sampled_from(tmp_path, demo_context, catalog):
    # a table of 120 points sampled from the built-in fit of a powder: the evaluator's inductance at
    # peak and peak flux agree with the fitted material's within the interpolation error (0.5 %)
    from fluxfront.design.designs import resolve_designs
    from fluxfront.design.evaluator import evaluate, prepare

    m = catalog.materials["fesial_powder_60"]
    h = np.geomspace(10, 3e5, 120)         # linear in log H: the error falls as the square of the step
    frac = magnetics.powder_permeability_fraction(h, m.rolloff_a, m.rolloff_b, m.rolloff_c)
    entry = m.model_dump(by_alias=True, exclude_none=True)
    for key in ("rolloff_a", "rolloff_b", "rolloff_c"):
        entry.pop(key)
    entry.update(id="table_powder", rolloff_table_h_a_per_m=h.tolist(), rolloff_table_fraction=frac.tolist())
    import tomli_w
    (tmp_path / "cat").mkdir()
    (tmp_path / "cat" / "materials.toml").write_text(tomli_w.dumps({"material": [entry]}))
    both = load_catalog([tmp_path / "cat"])
    rows = pd.DataFrame([dict(material=mid, shape="T57/26/15", stack=2, turns=45, gap_mm=0, gaps=1, wire="awg16-g2",
                              parallel=1, f_sw_khz=65) for mid in ("fesial_powder_60", "table_powder")])
    ev = evaluate(prepare(demo_context.spec, both), resolve_designs(rows, both))
    for key in ("inductance_at_peak_uh", "b_peak_t", "ripple_pp_max_a", "total_loss_w"):
        assert ev.figures[key][1] == pytest.approx(ev.figures[key][0], rel=5e-3), key


def test_tabulated_flux_is_the_integral_of_the_fraction():
    # against scipy quadrature of the same interpolated fraction (linear in log H)
    from scipy import integrate

    h_pts, f_pts = np.array([100.0, 1e3, 1e4, 5e4]), np.array([1.0, 0.9, 0.5, 0.2])
    frac, cum = magnetics.tabulate_rolloff(h_pts, f_pts)
    rows_f, rows_c = frac[None, :], cum[None, :]
    for h in (50.0, 800.0, 2e4, 4e5):
        g = lambda x: np.interp(np.log(max(x, 1.0)), np.log(h_pts), f_pts)   # noqa: E731
        expected = magnetics.MU0 * 60 * integrate.quad(g, 0, h, limit=200, points=[100, 1e3, 1e4, 5e4])[0]
        got = magnetics.tabulated_flux_density(np.array([h]), np.array([60.0]), rows_c, rows_f)[0]
        assert got == pytest.approx(expected, rel=2e-3)


def test_fit_rolloff_table_from_oersted_points(tmp_path, capsys):
    h_oe = np.array([5, 10, 20, 40, 80, 160, 320.0])
    frac = 1 / (1 + 1.43e-3 * h_oe**1.6)
    pd.DataFrame({"h_oe": h_oe, "fraction": frac}).to_csv(tmp_path / "r.csv", index=False)
    assert main(["catalog", "fit-rolloff", str(tmp_path / "r.csv"), "--id", "my_table", "--table",
                 "--out", str(tmp_path / "fit")]) == 0
    m = load_catalog([tmp_path / "fit"]).materials["my_table"]
    assert m.rolloff_a is None
    np.testing.assert_allclose(m.rolloff_table_h_a_per_m, h_oe * magnetics.OERSTED)   # stored in A/m
    np.testing.assert_allclose(m.rolloff_table_fraction, frac)
