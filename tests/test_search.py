"""The search against an enumerated true front; run folders; resume; backends; no-feasible exit."""
import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from fluxfront.catalog import load_catalog
from fluxfront.cli.main import main
from fluxfront.design.evaluator import evaluate, prepare
from fluxfront.design.spec import demo_spec_path, load_spec
from fluxfront.optimizer.front import hypervolume, non_dominated
from fluxfront.optimizer.operators import first_occurrence, unique_new
from fluxfront.optimizer.parallel import PopulationEvaluator
from fluxfront.optimizer.run import SYNC_GENERATIONS, Settings, start
from fluxfront.optimizer.space import DesignSpace

TINY_SEARCH = """
[search]
materials = ["mnzn_ferrite_100k", "fesial_powder_60", "fesial_powder_26"]
shapes = ["ETD39", "ETD44", "ETD49", "ETD54", "T47/24/18", "T57/26/15", "T62/33/25"]
wires = ["awg18-g2", "awg16-g2", "awg14-g2"]
stack_max = 2
turns_min = 10
turns_max = 60
gap_mm_min = 2.0
gap_mm_max = 2.0
parallel_max = 3
f_sw_khz_min = 100
f_sw_khz_max = 100
"""


def _spec_with(tmp_path, search_block=TINY_SEARCH, replace=()):
    text = demo_spec_path().read_text()
    text = text[: text.index("[search]")] + search_block
    for old, new in replace:
        assert old in text
        text = text.replace(old, new)
    path = tmp_path / "spec.toml"
    path.write_text(text)
    return path


def test_search_reaches_95_percent_of_enumerated_front(tmp_path, catalog):
    path = _spec_with(tmp_path)
    spec, _ = load_spec(path)
    ctx, space = prepare(spec, catalog), DesignSpace.from_spec(spec, catalog)
    grid = space.grid([2.0], [100.0])
    ev = evaluate(ctx, space.decode(grid))
    F = ev.objectives[ev.feasible]
    true_front = F[non_dominated(F)]
    reference = 1.1 * true_front.max(axis=0)
    budget = 40 * 30
    assert budget < 0.2 * len(grid)            # well below the enumeration
    out = start(spec, path, catalog, tmp_path / "run", Settings(seed=3, population=40, generations=30, jobs=1),
                quiet=True)
    found = pd.read_csv(out.folder / "pareto.csv")[["volume_cm3", "total_loss_w", "cost"]].to_numpy()
    ratio = hypervolume(found, reference) / hypervolume(true_front, reference)
    assert ratio >= 0.95, ratio


@pytest.fixture(scope="module")
def small_run(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("small")
    out = tmp / "run"
    code = main(["run", str(demo_spec_path()), "--out", str(out), "--seed", "5", "--population", "60",
                 "--generations", "12", "--jobs", "1", "--quiet"])
    assert code == 0
    return out


def test_run_folder_contents(small_run):
    for name in ("spec.toml", "catalog.json", "run.json", "pareto.csv", "history.csv", "checkpoint.npz", "run.log"):
        assert (small_run / name).is_file(), name
    history = pd.read_csv(small_run / "history.csv")
    assert list(history.columns) == ["generation", "evaluations", "feasible_fraction", "front_size", "hypervolume",
                                     "elapsed_s"]
    assert history["generation"].tolist() == list(range(1, 13))
    assert history["hypervolume"].is_monotonic_increasing      # the archive never loses a point it dominated
    meta = json.loads((small_run / "run.json").read_text())
    assert meta["settings"]["seed"] == 5 and meta["stop_reason"].startswith("reached 12")
    assert {"numpy", "pymoo", "python"} <= set(meta["versions"])
    assert not list(small_run.glob(".*.tmp"))                  # no temporary files left behind


def test_pareto_rows_feasible_non_dominated_and_reproducible(small_run, tmp_path):
    front = pd.read_csv(small_run / "pareto.csv")
    assert len(front) > 0 and front["feasible"].all()
    F = front[["volume_cm3", "total_loss_w", "cost"]].to_numpy()
    assert len(non_dominated(F)) == len(F)
    design_cols = ["material", "shape", "stack", "turns", "gap_mm", "gaps", "wire", "parallel", "f_sw_khz"]
    front[design_cols].to_csv(tmp_path / "rows.csv", index=False)
    assert main(["evaluate", str(small_run / "spec.toml"), str(tmp_path / "rows.csv"), "--out",
                 str(tmp_path / "again.csv")]) == 0
    again = pd.read_csv(tmp_path / "again.csv")
    np.testing.assert_array_equal(again[["volume_cm3", "total_loss_w", "cost"]].to_numpy(), F)


def _front(folder):
    return pd.read_csv(Path(folder) / "pareto.csv")


def test_stop_and_resume_is_bit_identical(tmp_path, small_run):
    out = tmp_path / "part"
    assert main(["run", str(demo_spec_path()), "--out", str(out), "--seed", "5", "--population", "60",
                 "--generations", "5", "--jobs", "1", "--quiet"]) == 0
    assert main(["resume", str(out), "--more-generations", "7", "--quiet"]) == 0
    pd.testing.assert_frame_equal(_front(out), _front(small_run))
    a = pd.read_csv(out / "history.csv").drop(columns="elapsed_s")
    b = pd.read_csv(small_run / "history.csv").drop(columns="elapsed_s")
    pd.testing.assert_frame_equal(a, b)


def test_kill_then_resume_gives_the_uninterrupted_front(tmp_path, small_run):
    out = tmp_path / "killed"
    cmd = [sys.executable, "-m", "fluxfront.cli", "run", str(demo_spec_path()), "--out", str(out), "--seed", "5",
           "--population", "60", "--generations", "12", "--jobs", "1", "--quiet"]
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    deadline = time.time() + 60
    while time.time() < deadline:
        hist = out / "history.csv"
        if hist.is_file() and len(hist.read_text().splitlines()) >= 4:   # header + 3 generations
            break
        time.sleep(0.01)
    os.kill(proc.pid, signal.SIGKILL)
    proc.wait()
    assert main(["resume", str(out), "--quiet"]) == 0
    pd.testing.assert_frame_equal(_front(out), _front(small_run))


def test_dask_backend_equals_joblib(tmp_path):
    pytest.importorskip("dask.distributed")
    spec, _ = load_spec(demo_spec_path())
    catalog = load_catalog()
    ctx, space = prepare(spec, catalog), DesignSpace.from_spec(spec, catalog)
    designs = space.decode(space.sample(np.random.default_rng(2), 400))
    plain = evaluate(ctx, designs)
    with PopulationEvaluator(ctx, jobs=2, min_chunk=100) as local:
        joblib_ev = local(designs)
    with PopulationEvaluator(ctx, jobs=2, scheduler="local", min_chunk=100) as dask:
        dask_ev = dask(designs)
    np.testing.assert_array_equal(joblib_ev.objectives, plain.objectives)
    np.testing.assert_array_equal(dask_ev.objectives, plain.objectives)
    np.testing.assert_array_equal(dask_ev.constraints, plain.constraints)
    settings = dict(seed=4, population=40, generations=4, jobs=2, min_chunk=10)
    a = start(spec, demo_spec_path(), catalog, tmp_path / "joblib", Settings(**settings), quiet=True)
    b = start(spec, demo_spec_path(), catalog, tmp_path / "dask", Settings(**settings, scheduler="local"), quiet=True)
    pd.testing.assert_frame_equal(_front(a.folder), _front(b.folder))


def test_no_feasible_design_exits_3_and_still_writes(tmp_path, capsys):
    path = _spec_with(tmp_path, replace=[("hot_spot_max_c = 115", "hot_spot_max_c = 51")])
    out = tmp_path / "none"
    assert main(["run", str(path), "--out", str(out), "--population", "20", "--generations", "2", "--jobs", "1",
                 "--quiet"]) == 3
    text = capsys.readouterr().out
    assert "No feasible design" in text and "hot_spot" in text and "Suggestion" in text
    assert (out / "pareto.csv").is_file() and (out / "run.json").is_file()


@pytest.mark.parametrize("args,message", [
    (["--jobs", "0"], "--jobs = 0"),
    (["--population", "-5"], "--population = -5"),
])
def test_bad_search_options_exit_2(tmp_path, capsys, args, message):
    assert main(["run", str(demo_spec_path()), "--out", str(tmp_path / "x"), "--quiet"] + args) == 2
    assert message in capsys.readouterr().err
    assert not (tmp_path / "x").exists()


def test_existing_run_folder_is_never_overwritten(small_run, capsys):
    before = (small_run / "pareto.csv").read_bytes()
    assert main(["run", str(demo_spec_path()), "--out", str(small_run), "--quiet"]) == 2
    assert "already exists" in capsys.readouterr().err
    assert (small_run / "pareto.csv").read_bytes() == before


def test_time_budget_stagnation_and_keep_all(tmp_path, catalog):
    spec, _ = load_spec(demo_spec_path())
    # a budget of a fraction of a second stops after the first chunk of generations
    out = start(spec, demo_spec_path(), catalog, tmp_path / "t",
                Settings(seed=1, population=20, generations=None, hours=1e-7, jobs=1, keep_all=True), quiet=True)
    assert out.generations == SYNC_GENERATIONS and "time budget" in out.stop_reason
    parts = list((tmp_path / "t" / "evaluated").glob("part-*.parquet"))
    assert len(parts) == 1                   # a bounded number of files: one part per KEEP_ALL_ROWS rows
    kept = pd.read_parquet(parts[0])
    assert kept["feasible"].all() and set(kept["generation"]) <= set(range(1, SYNC_GENERATIONS + 1))
    # stagnation: with a tiny population the hypervolume stalls; the run stops before its generation cap
    out = start(spec, demo_spec_path(), catalog, tmp_path / "s",
                Settings(seed=1, population=4, generations=500, stagnation=3, jobs=1), quiet=True)
    assert out.generations < 500 and "hypervolume gained" in out.stop_reason


@pytest.mark.parametrize("delay", [0.0, 0.005, 0.02, 0.3, 0.9])
def test_ctrl_c_then_resume_gives_the_uninterrupted_front(tmp_path, small_run, delay):
    # Ctrl-C at a moment after the first chunk: exit 130 (the chunk in flight is dropped), then
    # resume ends exactly as the straight run
    out = tmp_path / "interrupted"
    cmd = [sys.executable, "-m", "fluxfront.cli", "run", str(demo_spec_path()), "--out", str(out), "--seed", "5",
           "--population", "60", "--generations", "12", "--jobs", "1", "--quiet"]
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    deadline = time.time() + 60
    while time.time() < deadline and not (out / "history.csv").is_file():
        time.sleep(0.01)
    time.sleep(delay)
    proc.send_signal(signal.SIGINT)
    code = proc.wait()
    if code != 130:                  # the run had finished (or was shutting down) before the signal came
        assert json.loads((out / "run.json").read_text())["stop_reason"].startswith("reached")
    else:
        assert main(["resume", str(out), "--quiet"]) == 0
    pd.testing.assert_frame_equal(_front(out), _front(small_run))


def test_a_second_process_on_one_run_folder_is_refused(small_run, capsys):
    from fluxfront.optimizer.runfolder import RunFolder

    holder = RunFolder(small_run)
    holder.lock()
    try:
        before = (small_run / "run.json").read_bytes()
        assert main(["resume", str(small_run), "--quiet"]) == 2
        assert "another fluxfront process" in capsys.readouterr().err
        assert (small_run / "run.json").read_bytes() == before
    finally:
        holder.unlock()


def test_row_dedupe_matches_numpy_unique():
    # reference: numpy's own unique rows (first occurrences); ours avoids np.unique(axis=0) only for
    # its behaviour under Ctrl-C, so the two must agree on every population, empty ones included
    rng = np.random.default_rng(3)
    for _ in range(200):
        rows = rng.integers(0, 3, size=(rng.integers(0, 40), 5)).astype(float)
        expected = np.sort(np.unique(rows, axis=0, return_index=True)[1]) if len(rows) else np.zeros(0, dtype=int)
        np.testing.assert_array_equal(np.flatnonzero(first_occurrence(rows)), expected)
        split = rng.integers(0, len(rows) + 1)
        np.testing.assert_array_equal(unique_new(rows[split:], rows[:split]), first_occurrence(rows)[split:])
    # one design, one encoded row: -0.0 and 0.0 are the same number
    assert unique_new(np.array([[-0.0, 1.0], [0.0, 1.0]]), np.zeros((0, 2))).tolist() == [True, False]
