"""Designs that survive their tolerances: corner choice, robust runs re-checked from outside, yield.

The claims checked here are the project's own (no published source searches PFC inductors under
tolerances): the chosen corners find every limit's worst case, a robust run's design passes every
corner when its perturbed inputs go through `fluxfront evaluate`, and the Monte Carlo yield is
seeded and behaves as a yield must on a limit's boundary (about half the parts on each side).
"""
import json

import numpy as np
import pandas as pd
import pytest

from fluxfront.cli.main import main
from fluxfront.design import tolerance
from fluxfront.design.designs import resolve_designs
from fluxfront.design.evaluator import CONSTRAINTS, evaluate, prepare
from fluxfront.design.spec import Tolerance, demo_spec_path
from fluxfront.optimizer.space import DesignSpace

DESIGN = dict(material="mnzn_ferrite_300k", shape="E55/28/21", stack=2, turns=18, gap_mm=2.15, gaps=4,
              wire="awg14-g2", parallel=3, f_sw_khz=292.5)


def _robust(spec, **changes):
    return spec.model_copy(update={"tolerance": Tolerance(enabled=True, **changes)})


def test_selected_corners_find_every_worst_case(demo_spec, catalog):
    # on random designs within reach of feasibility (every limit at most 100 % over at every corner:
    # beyond that a design is rejected whatever the corner), the 9 selected corners give exactly the
    # worst value of every limit over all 33
    spec = _robust(demo_spec)
    ctx = prepare(spec, catalog)
    space = DesignSpace.from_spec(spec, catalog)
    d = space.decode(space.sample(np.random.default_rng(3), 3000))
    chosen = np.stack([e.constraints for e in tolerance.evaluate_corners(tolerance.tolerant_context(ctx), d)])
    every = np.stack([e.constraints for e in tolerance.evaluate_corners(tolerance.tolerant_context(ctx, "all"), d)])
    near = every.max(axis=0).max(axis=1) < 1.0
    assert near.sum() >= 100              # enough designs near the boundaries to test the claim
    np.testing.assert_array_equal(chosen.max(axis=0)[near], every.max(axis=0)[near])


def test_tolerances_off_is_the_nominal_search(demo_context, catalog):
    tc = tolerance.tolerant_context(demo_context)
    assert not tc.enabled and tc.corners == (tolerance.NOMINAL,)
    d = resolve_designs(pd.DataFrame([DESIGN]), catalog)
    np.testing.assert_array_equal(tolerance.evaluate_tolerant(tc, d).constraints, evaluate(demo_context, d).constraints)


def test_yield_is_seeded_and_reproducible(demo_context, catalog):
    d = resolve_designs(pd.DataFrame([DESIGN]), catalog)
    a = tolerance.monte_carlo_yield(demo_context, d, samples=300, seed=4)
    b = tolerance.monte_carlo_yield(demo_context, d, samples=300, seed=4)
    assert a == b and 0.0 <= a.share <= 1.0


def test_a_design_on_a_boundary_yields_about_half(demo_spec, catalog):
    # only the gap varies (symmetric, uniform); the saturation limit is set exactly at the design's
    # nominal peak flux, so about half the parts (the short gaps) exceed it: 0.5 +- 3 sigma of 2000 draws
    spec = demo_spec.model_copy(update={"tolerance": Tolerance(gap_mm=0.0, gap_percent=5.0, permeability_percent=0,
                                                               steinmetz_k_percent=0, ambient_k=0, line_sag=1.0)})
    d = resolve_designs(pd.DataFrame([DESIGN]), catalog)
    ratio = evaluate(prepare(spec, catalog), d).figures["saturation_ratio"][0]
    limits = spec.limits.model_copy(update={"saturation_margin": spec.limits.saturation_margin * ratio})
    ctx = prepare(spec.model_copy(update={"limits": limits}), catalog)
    y = tolerance.monte_carlo_yield(ctx, d, samples=2000, seed=1)
    assert y.failing["saturation"] == pytest.approx(0.5, abs=3 * np.sqrt(0.25 / 2000))
    assert y.most_failing in ("saturation", "saturation_at_limit")


def _toml_value(v):
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, str):
        return json.dumps(v)
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{k} = {_toml_value(x)}" for k, x in v.items()) + " }"
    return repr(float(v)) if isinstance(v, float) else str(v)


def _material_override(material, mu_factor, k_factor):
    entry = material.model_dump(by_alias=True, exclude_none=True)
    entry["mu_initial"] *= mu_factor
    entry["steinmetz"] = [dict(b, k=b["k"] * k_factor) for b in entry["steinmetz"]]
    return "[[material]]\n" + "".join(f"{k} = {_toml_value(v)}\n" for k, v in entry.items())


@pytest.fixture(scope="module")
def robust_run(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("robust")
    text = demo_spec_path().read_text()
    text = text.replace('materials = ["all"]', 'materials = ["mnzn_ferrite_300k", "fesial_powder_60"]')
    text = text.replace("[tolerance]\nenabled = false", "[tolerance]\nenabled = true")
    spec = tmp / "robust.toml"
    spec.write_text(text)
    out = tmp / "run"
    assert main(["run", str(spec), "--out", str(out), "--seed", "2", "--population", "30", "--generations", "15",
                 "--jobs", "1", "--quiet"]) == 0
    return spec, out


def test_robust_front_passes_every_corner_through_evaluate(robust_run, tmp_path, catalog):
    spec_path, run = robust_run
    front = pd.read_csv(run / "pareto.csv")
    assert front["robust"].all()
    knee = front.iloc[[len(front) // 2]]
    tol = Tolerance()
    cols = ["material", "shape", "stack", "turns", "gap_mm", "gaps", "wire", "parallel", "f_sw_khz"]
    d = resolve_designs(knee[cols].reset_index(drop=True), catalog)
    dev_mm = float(tolerance.gap_deviation(d, catalog, tol)[0] * 1e3)
    base = spec_path.read_text()
    for corner in tolerance.SELECTED:
        folder = tmp_path / f"corner{tolerance.SELECTED.index(corner)}"
        (folder / "cat").mkdir(parents=True)
        mat = catalog.materials[knee.iloc[0]["material"]]
        (folder / "cat" / "materials.toml").write_text(_material_override(
            mat, 1 + corner.mu * tol.permeability_percent / 100, 1 + corner.k * tol.steinmetz_k_percent / 100))
        text = base.replace("ambient_c = 50 ", f"ambient_c = {50 + corner.ambient * tol.ambient_k:g} ")
        for v in (90, 115, 230, 264):
            text = text.replace(f"v_rms = {v}\n", f"v_rms = {v * (tol.line_sag if corner.sag else 1.0):g}\n")
        (folder / "spec.toml").write_text(text)
        row = knee[cols].copy()
        if row.iloc[0]["gap_mm"] > 0:
            row["gap_mm"] = round(float(row.iloc[0]["gap_mm"]) + corner.gap * dev_mm, 6)
        row.to_csv(folder / "row.csv", index=False)
        assert main(["evaluate", str(folder / "spec.toml"), str(folder / "row.csv"), "--catalog", str(folder / "cat"),
                     "--out", str(folder / "out.csv")]) == 0
        again = pd.read_csv(folder / "out.csv")
        assert again["feasible"].iloc[0], (corner.name, [c for c in CONSTRAINTS if again[f"g_{c}"].iloc[0] > 0])


def test_pick_reports_robustness_and_yield(robust_run, capsys):
    _, run = robust_run
    assert main(["pick", str(run), "--knee"]) == 0
    out = capsys.readouterr().out
    assert "robust: every limit met at every tolerance corner" in out and "yield" in out
    sheet = next((run / "picks").glob("row*/build_sheet.html")).read_text()
    assert "worst corner" in sheet and "class='banner'" not in sheet
