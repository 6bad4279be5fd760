"""A finished (or stopped) run folder read back for results: plots, picks and comparisons."""
from __future__ import annotations

import hashlib
from pathlib import Path

import numpy as np
import pandas as pd

from fluxfront.catalog import Catalog
from fluxfront.design.designs import DESIGN_COLUMNS
from fluxfront.design.evaluator import CONSTRAINTS, INDUCTOR_OBJECTIVES, Context, objective_columns, prepare
from fluxfront.design.spec import Spec, load_spec
from fluxfront.errors import InputError
from fluxfront.files import write_atomic
from fluxfront.optimizer import state as checkpoint
from fluxfront.optimizer.front import hypervolume, knee_index
from fluxfront.optimizer.resume import check_override, read_settings, snapshot_catalog
from fluxfront.optimizer.runfolder import RunFolder

from . import plots
from .buildsheet import write_pick


def load_run(run_dir, extra_catalogs=()) -> tuple[Spec, Catalog, Context, pd.DataFrame, pd.DataFrame | None]:
    """Spec, catalog, evaluation context, front and history of a run folder."""
    run_dir = Path(run_dir)
    needed = ("run.json", "spec.toml", "pareto.csv")
    missing = [n for n in needed if not (run_dir / n).is_file()]
    if missing:
        raise InputError(f"{run_dir}: not a run folder (missing {missing[0]}; expected {', '.join(needed)})")
    folder = RunFolder(run_dir)
    read_settings(folder)
    spec, _ = load_spec(run_dir / "spec.toml")
    catalog = snapshot_catalog(folder)              # the run's own entries, whatever the catalog says today
    check_override(folder, spec, catalog, extra_catalogs)
    front = read_front(run_dir / "pareto.csv")
    history = read_history(run_dir / "history.csv")
    return spec, catalog, prepare(spec, catalog), front, history


def read_front(path: Path) -> pd.DataFrame:
    """pareto.csv, checked: one line naming the file and what is wrong."""
    try:
        front = pd.read_csv(path)
    except (pd.errors.ParserError, pd.errors.EmptyDataError, UnicodeDecodeError, OSError) as exc:
        raise InputError(f"{path}: not a readable front ({str(exc).splitlines()[0] if str(exc) else 'empty'})") from None
    needed = list(DESIGN_COLUMNS) + list(INDUCTOR_OBJECTIVES) + ["system_loss_w", "feasible"]
    missing = [c for c in needed if c not in front.columns]
    if missing:
        raise InputError(f"{path}: column '{missing[0]}' missing; not a front written by fluxfront")
    numeric = front[[c for c in needed if c not in ("material", "shape", "wire", "feasible")]]
    if not np.isfinite(numeric.apply(pd.to_numeric, errors="coerce").to_numpy(dtype=float)).all():
        raise InputError(f"{path}: a design or objective value is not a finite number")
    return front


def read_history(path: Path) -> pd.DataFrame | None:
    if not path.is_file():
        return None
    try:
        return pd.read_csv(path)
    except (pd.errors.ParserError, pd.errors.EmptyDataError, UnicodeDecodeError, OSError):
        raise InputError(f"{path}: not a readable history") from None


def front_knee(front: pd.DataFrame, spec: Spec) -> int:
    """Row of the front's balanced design in the run's own objectives (see optimizer.front.knee_index)."""
    return knee_index(front[list(objective_columns(spec))].to_numpy())


def write_plots(run_dir, extra_catalogs=()) -> list[Path]:
    """Front, pairwise, frequency and progress plots (PNG and SVG) in RUN_DIR/plots/."""
    spec, catalog, ctx, front, history = load_run(run_dir, extra_catalogs)
    out = Path(run_dir) / "plots"
    paths = []
    if len(front):
        paths += plots.save(plots.front_volume_loss(front, catalog, front_knee(front, spec)), out,
                            "front_volume_loss")
        paths += plots.save(plots.pairwise(front, catalog), out, "front_pairs")
        paths += plots.save(plots.frequency_along_front(front, catalog), out, "front_frequency")
    if history is not None and len(history):
        paths += plots.save(plots.progress(history), out, "progress")
    if (Path(run_dir) / "checkpoint.npz").is_file():
        paths.append(write_atomic(out / "materials.csv", material_table(run_dir, spec, catalog, front)
                                  .to_csv(index=False)))
    return paths


def run_trace(run_dir) -> dict:
    """What a build sheet from this run names: seed and the spec's hash."""
    meta, settings = read_settings(RunFolder(Path(run_dir)))
    spec_hash = hashlib.sha256((Path(run_dir) / "spec.toml").read_bytes()).hexdigest()
    return {"seed": settings.seed, "spec hash (SHA-256)": spec_hash, "run started": meta.get("start_time", "?")}


def material_table(run_dir, spec: Spec, catalog: Catalog, front: pd.DataFrame) -> pd.DataFrame:
    """Per material searched: designs on the front and its best one, or the limit that keeps it off.

    Off the front, the island's least-violating design names the limit it breaks most (from the
    checkpoint's populations).
    """
    state = checkpoint.load(Path(run_dir))
    names = list(catalog.materials)
    objectives = list(objective_columns(spec))
    rows = []
    for isl in state.islands:
        mid = names[isl.material]
        mine = front[front["material"] == mid]
        row = {"material": mid, "class": catalog.materials[mid].class_, "designs_on_front": len(mine)}
        if len(mine):
            best = mine.index[knee_index(mine[objectives].to_numpy())] if len(mine) > 1 else mine.index[0]
            row.update(best_front_row=int(best), volume_cm3=mine.loc[best, "volume_cm3"],
                       total_loss_w=mine.loc[best, "total_loss_w"], cost=mine.loc[best, "cost"], kept_off_by="")
        elif len(isl.G):
            closest = int(np.argmin(np.maximum(isl.G, 0).sum(axis=1)))
            worst = int(np.argmax(isl.G[closest]))
            feasible = bool(np.all(isl.G[closest] <= 0))
            row.update(best_front_row=None, kept_off_by="dominated by other materials" if feasible else
                       f"{CONSTRAINTS[worst]} ({isl.G[closest, worst]:+.0%} over its limit at best)")
        rows.append(row)
    return pd.DataFrame(rows)


def write_knee_sheet(run_dir):
    """Build sheet of the front's balanced design; returns the Pick."""
    spec, _, ctx, front, _ = load_run(run_dir)
    return write_pick(run_dir, ctx, front, front_knee(front, spec), run_trace(run_dir))


def compare_runs(run_dirs, out) -> tuple[pd.DataFrame, np.ndarray, list[Path]]:
    """Overlay the fronts of several runs; hypervolumes against one common reference point.

    The reference is 1.1 x the worst objective over all fronts; the loss compared is the inductor's
    own (``total_loss_w``), whatever each run minimised. Returns the table, the reference and the
    written files (plot and compare.csv in ``out``).
    """
    if len(run_dirs) < 2:
        raise InputError("compare: expected at least two run folders")
    fronts = {}
    for run in run_dirs:
        path = Path(run) / "pareto.csv"
        if not path.is_file():
            raise InputError(f"{run}: not a run folder (no pareto.csv)")
        label = Path(run).name
        if label in fronts:                      # two runs with the same folder name: tell them apart
            label = f"{label} ({len(fronts) + 1})"
        fronts[label] = read_front(path)
    cols = list(INDUCTOR_OBJECTIVES)
    stacked = np.vstack([f[cols].to_numpy() for f in fronts.values() if len(f)])
    reference = 1.1 * stacked.max(axis=0)
    table = pd.DataFrame([{"run": k, "front_size": len(f), "hypervolume": hypervolume(f[cols].to_numpy(), reference),
                           "min_volume_cm3": f.volume_cm3.min(), "min_loss_w": f.total_loss_w.min(),
                           "min_cost": f.cost.min()} for k, f in fronts.items()])
    out = Path(out)
    paths = plots.save(plots.compare_fronts(fronts), out, "compare_fronts")
    paths.append(write_atomic(out / "compare.csv", table.to_csv(index=False)))
    return table, reference, paths
