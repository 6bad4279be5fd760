"""Plots, picks, build sheet, flux map and compare on a small run made here."""
import json
from html.parser import HTMLParser

import numpy as np
import pandas as pd
import pytest
from scipy import optimize

from fluxfront.cli.main import main
from fluxfront.design.spec import demo_spec_path
from fluxfront.optimizer.front import knee_index
from fluxfront.results.fluxmap import crossover_frequency, flux_map, loss_limited_amplitude, saturation_ripple_amplitude
from fluxfront.results.picking import pick_rows
from fluxfront.results.render import KEY_FIGURES_ID

SECTIONS = ["1. What to order", "2. How to build it", "3. How to check it on the bench", "4. Why this design",
            "5. Models, assumptions and cautions", "Assumptions", "Safety", "Key figures", "Traceability"]


@pytest.fixture(scope="module")
def run_dir(tmp_path_factory):
    out = tmp_path_factory.mktemp("res") / "run"
    assert main(["run", str(demo_spec_path()), "--out", str(out), "--seed", "2", "--population", "30",
                 "--generations", "15", "--jobs", "1", "--quiet"]) == 0
    return out


def test_plot_files_exist_and_decode(run_dir):
    from matplotlib import image

    assert main(["plot", str(run_dir)]) == 0
    for name in ("front_volume_loss", "front_pairs", "front_frequency", "progress"):
        img = image.imread(run_dir / "plots" / f"{name}.png")
        assert img.ndim == 3 and img.shape[0] > 100
        assert (run_dir / "plots" / f"{name}.svg").read_text().lstrip().startswith("<?xml")


class _Collector(HTMLParser):
    def __init__(self):
        super().__init__()
        self.h2, self.links, self.imgs, self.key, self._in, self._row, self._cell = [], [], [], {}, None, [], None

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "h2":
            self._in = "h2"
        if tag == "a" and "href" in a:
            self.links.append(a["href"])
        if tag == "img":
            self.imgs.append(a["src"])
        if tag == "table" and a.get("id") == KEY_FIGURES_ID:
            self._in = "key"
        if tag == "td" and self._in == "key":
            self._cell = ""

    def handle_endtag(self, tag):
        if tag == "h2":
            self._in = None
        if tag == "td" and self._cell is not None:
            self._row.append(self._cell)
            self._cell = None
        if tag == "tr" and self._in == "key" and len(self._row) == 2:
            self.key[self._row[0]] = json.loads(self._row[1])
        if tag == "tr":
            self._row = []
        if tag == "table" and self._in == "key":
            self._in = None

    def handle_data(self, data):
        if self._in == "h2":
            self.h2.append(data)
        if self._cell is not None:
            self._cell += data


def test_build_sheet_sections_self_contained_and_equal_to_evaluate(run_dir, tmp_path):
    assert main(["pick", str(run_dir), "--row", "0"]) == 0
    folder = run_dir / "picks" / "row000"
    page = _Collector()
    page.feed((folder / "build_sheet.html").read_text())
    # a status banner heads the sheet when the design fails a limit at a tolerance corner
    assert [h for h in page.h2 if h != "Status"] == SECTIONS
    assert not page.links                                    # no external links
    assert page.imgs and all(src.startswith("data:image/png;base64,") for src in page.imgs)
    md = (folder / "build_sheet.md").read_text()
    assert all(f"## {s}" in md for s in SECTIONS)
    assert "mains" in md and "local codes" in md
    # the sheet's numbers equal `fluxfront evaluate` of the same design
    assert main(["evaluate", str(run_dir / "spec.toml"), str(folder / "design.csv"), "--out", str(tmp_path / "e.csv")]) == 0
    row = pd.read_csv(tmp_path / "e.csv").iloc[0]
    for col in ("inductance_uh", "inductance_at_peak_uh", "b_peak_t", "total_loss_w", "temperature_c", "volume_cm3", "cost"):
        assert page.key[col] == row[col], col


def test_pick_by_limits_and_knee_stability(run_dir):
    front = pd.read_csv(run_dir / "pareto.csv")
    lim_v = float(front.volume_cm3.median())
    for by in ("knee", "volume", "loss", "cost"):
        [r] = pick_rows(front, max_volume_cm3=lim_v, by=by)
        assert front.volume_cm3.iloc[r] <= lim_v
    [r] = pick_rows(front, max_volume_cm3=lim_v, max_loss_w=float(front.total_loss_w.max()), by="loss")
    within = front[front.volume_cm3 <= lim_v]
    assert front.total_loss_w.iloc[r] == within.total_loss_w.min()
    F = front[["volume_cm3", "total_loss_w", "cost"]].to_numpy()
    assert pick_rows(front, knee=True) == [knee_index(F)] == [knee_index(F.copy())]
    # adding a dominated point far away does not move the knee's design
    worse = np.vstack([F, F.max(axis=0) * 1.001])
    assert knee_index(F) == knee_index(worse[: len(F)])


def test_pick_with_impossible_limits_exit_2(run_dir, capsys):
    assert main(["pick", str(run_dir), "--max-volume-cm3", "0.001"]) == 2
    assert "no design on the front meets the limits" in capsys.readouterr().err


def test_flux_map_curves_fall_and_crossover_is_the_root(demo_spec, catalog, tmp_path):
    curves, summary = flux_map(demo_spec, catalog, [100.0, 300.0])
    for _, g in curves.groupby(["material", "loss_density_mw_cm3"]):
        assert np.all(np.diff(g["b_loss_mt"].to_numpy()) < 0)   # loss-limited ripple flux falls with frequency
    checked = 0
    lo, hi = demo_spec.search.f_sw_khz_min * 1e3, demo_spec.search.f_sw_khz_max * 1e3
    for _, r in summary.iterrows():
        if lo < r.crossover_khz * 1e3 < hi:
            b_sat = saturation_ripple_amplitude(demo_spec, catalog, r.material)
            root = optimize.brentq(lambda f: loss_limited_amplitude(catalog, r.material, f, r.loss_density_mw_cm3 * 1e3)[0]
                                   - b_sat, lo, hi, xtol=1e-6, rtol=1e-12)
            assert r.crossover_khz * 1e3 == pytest.approx(root, rel=1e-6)
            checked += 1
    assert checked >= 3
    assert main(["flux-map", str(demo_spec_path()), "--loss-density", "150", "--out", str(tmp_path / "fm")]) == 0
    assert (tmp_path / "fm" / "flux_map.png").is_file() and (tmp_path / "fm" / "flux_map_crossover.csv").is_file()


def test_crossover_edges(demo_spec, catalog):
    b = saturation_ripple_amplitude(demo_spec, catalog, "fe_amorphous")
    assert crossover_frequency(catalog, "fe_amorphous", 1.0, b, 30e3, 300e3) == 30e3      # tiny budget: loss limits at once
    assert crossover_frequency(catalog, "fe_amorphous", 1e12, b, 30e3, 300e3) == np.inf  # huge budget: never


def test_compare_two_runs(run_dir, tmp_path, capsys):
    assert main(["compare", str(run_dir), str(run_dir), "--out", str(tmp_path / "cmp")]) == 0
    table = pd.read_csv(tmp_path / "cmp" / "compare.csv")
    assert len(table) == 2 and table.hypervolume.iloc[0] == table.hypervolume.iloc[1] > 0
    assert main(["compare", str(run_dir)]) == 2


def test_sheet_for_a_typed_in_design(tmp_path, capsys):
    one = tmp_path / "mine.toml"
    one.write_text('material = "mnzn_ferrite_300k"\nshape = "E55/28/21"\nstack = 2\nturns = 18\ngap_mm = 2.15\n'
                   'gaps = 4\nwire = "awg14-g2"\nparallel = 3\nf_sw_khz = 292.5\n')
    assert main(["sheet", str(demo_spec_path()), str(one), "--out", str(tmp_path / "s")]) == 0
    page = (tmp_path / "s" / "build_sheet.html").read_text()
    assert "Traceability" in page and "typed in (mine.toml)" in page and "worst corner" in page
    assert "yield" in capsys.readouterr().out


def test_version_plain_help_and_every_option_explained(capsys):
    import argparse

    from fluxfront import __version__
    from fluxfront.cli.main import build_parser

    with pytest.raises(SystemExit):
        main(["--version"])
    assert __version__ in capsys.readouterr().out
    assert main([]) == 0 and "COMMAND" in capsys.readouterr().out

    def missing(parser, path):
        for a in parser._actions:
            if isinstance(a, argparse._SubParsersAction):
                for name, sp in a.choices.items():
                    yield from missing(sp, path + [name])
            elif a.help is None and not isinstance(a, argparse._HelpAction):
                yield " ".join(path + [a.dest])
    assert list(missing(build_parser(), [])) == []


def test_simulation_export_parses_and_matches_the_design(tmp_path, capsys):
    # a small netlist parser: subcircuit frame, element cards, the flux table; the slope of the flux
    # table at zero current is the design's inductance and the series resistance its DC resistance
    one = tmp_path / "mine.toml"
    one.write_text('material = "fesial_powder_60"\nshape = "T57/26/15"\nstack = 2\nturns = 45\ngap_mm = 0\n'
                   'wire = "awg16-g2"\nparallel = 1\nf_sw_khz = 65\n')
    assert main(["sheet", str(demo_spec_path()), str(one), "--out", str(tmp_path / "s")]) == 0
    cards = [ln for ln in (tmp_path / "s" / "inductor.cir").read_text().splitlines() if ln and not ln.startswith("*")]
    assert cards[0].split()[:2] == [".subckt", "FLUXFRONT_L"] and cards[-1] == ".ends FLUXFRONT_L"
    elements = {c.split()[0]: c for c in cards[1:-1]}
    assert set(elements) == {"Rs", "Vsense", "Bpsi", "Rcore"}
    assert all(len(elements[k].split()) == 4 for k in ("Rs", "Vsense", "Rcore"))   # name, two nodes, value
    table = [float(x) for x in elements["Bpsi"].split("pwl(i(Vsense),")[1].rstrip("))").split(",")]
    current, flux = np.array(table[0::2]), np.array(table[1::2])
    assert np.all(np.diff(current) > 0) and np.all(np.diff(flux) > 0)          # monotonic, odd
    np.testing.assert_allclose(flux, -flux[::-1], atol=1e-12)
    lt = pd.read_csv(tmp_path / "s" / "inductance_vs_current.csv")
    mid = len(current) // 2
    slope = (flux[mid + 1] - flux[mid]) / (current[mid + 1] - current[mid])
    assert slope * 1e6 == pytest.approx((lt.inductance_uh[0] + lt.inductance_uh[1]) / 2, rel=1e-5)
    assert main(["evaluate", str(demo_spec_path()), str(one)]) == 0
    l0 = float(capsys.readouterr().out.split("inductance ")[1].split(" uH")[0])
    assert lt.inductance_uh[0] == pytest.approx(l0, rel=1e-3)                     # summary rounds to 0.1 uH
    rt = pd.read_csv(tmp_path / "s" / "ac_resistance_vs_frequency.csv")
    assert float(elements["Rs"].split()[3]) == pytest.approx(rt.resistance_mohm[0] * 1e-3, rel=1e-5)
    assert np.all(np.diff(rt.resistance_mohm) >= 0)                              # AC resistance rises with f
