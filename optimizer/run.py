"""The search loop: islands of NSGA-II on arrays, evolved in chunks, with the run folder written as it goes.

Islands: one population per allowed material, each within its material's Steinmetz frequency
range.  Materials differ so much that a single population loses every material but the first to
reach feasibility; with one island each, every material keeps its own front, and the archive
merges them.  Islands hold different materials and encodings, so no migrants pass between them;
what they share is the evaluation budget (below).

Chunks: the islands evolve ``SYNC_GENERATIONS`` generations at a time, each worker process owning
whole islands (ask, evaluate, tell locally) and sending back only its islands and what they
evaluated.  After a chunk the archive, history, checkpoint and (every tenth generation) pareto.csv
are written.  Every ``SYNC_GENERATIONS`` generations the islands' shares of the evaluations are set
by their exclusive contribution to the archive's hypervolume, with a floor (``BUDGET_FLOOR``) so
that no material starves.  At the end a local sweep (one step in every variable around each
archive member) polishes the front.

Reproducibility: every island has its own seeded random stream, stored in the checkpoint, and
every evaluation is a pure function of the design, so a run is bit-identical whatever the number
of worker processes, and a run stopped (Ctrl-C, kill, power cut) and resumed ends as if it had run
straight through (for the generation and stagnation rules; a wall-clock budget stops where the
clock says).  Ctrl-C discards the chunk in flight.
"""
from __future__ import annotations

import logging
import shutil
import time
from dataclasses import asdict, dataclass, replace
from datetime import datetime, timezone
from pathlib import Path

import numpy as np
import pandas as pd
from tqdm import tqdm

from fluxfront.catalog import Catalog
from fluxfront.design.evaluator import CONSTRAINTS, prepare
from fluxfront.design.spec import Spec
from fluxfront.design.table import evaluation_frame
from fluxfront.design.tolerance import TolerantContext, evaluate_tolerant, tolerant_context

from . import state as checkpoint
from .front import ParetoArchive, hypervolume
from .islands import seeded_island
from .parallel import MIN_CHUNK, PopulationEvaluator
from .runfolder import RunFolder, catalog_used, command_line, library_versions
from .space import DesignSpace
from .state import State
from .summary import summary_text
from .sweep import local_sweep

log = logging.getLogger("fluxfront.run")

REFERENCE_SAMPLE = 4096      # random designs evaluated to fix the hypervolume reference point (counted)
PARETO_EVERY = 10            # generations between rewrites of pareto.csv (always at the end)
SYNC_GENERATIONS = 5         # generations per chunk; budgets change only at multiples of it
BUDGET_FLOOR = 0.3           # share of each generation's evaluations spread evenly over the islands
BUDGET_CAP = 0.5             # most of a generation one island may take: two workers can then share it evenly
KEEP_ALL_ROWS = 100_000      # --keep-all rows per Parquet part


@dataclass
class Settings:
    seed: int = 1
    population: int = 40            # designs per island (per material) per generation
    generations: int | None = 300
    hours: float | None = None
    stagnation: int | None = None   # stop when the hypervolume gains < 1e-4 over this many generations
    jobs: int = -1
    scheduler: str | None = None
    keep_all: bool = False
    min_chunk: int = MIN_CHUNK      # smallest chunk of a large batch sent to a worker


@dataclass
class Outcome:
    folder: Path
    stop_reason: str
    front_size: int
    evaluations: int
    generations: int
    hypervolume: float
    summary: str
    interrupted: bool = False


def island_spaces(space: DesignSpace, catalog: Catalog) -> list[DesignSpace]:
    """One sub-space per material, in a fixed order, each within its material's Steinmetz bands."""
    mats = list(catalog.materials.values())
    out = []
    for m in space.materials:
        bands = mats[m].steinmetz
        out.append(space.island(m, (min(b.f_min_hz for b in bands), max(b.f_max_hz for b in bands))))
    return out


def reference_sample(ctx: TolerantContext, space: DesignSpace, seed: int, evaluator):
    """A seeded uniform sample of the space, evaluated: it fixes the hypervolume reference (1.1 x the
    worst feasible objectives; with fewer than ten feasible designs, the 95th percentile of all) and
    seeds the islands' first populations.  Returns (X, objectives, constraints, feasible, reference)."""
    x = space.canonical(space.sample(np.random.default_rng([seed, 1]), REFERENCE_SAMPLE))
    ev = evaluator(space.decode(x))
    enough = ev.feasible.sum() >= 10
    F = ev.objectives[ev.feasible] if enough else ev.objectives
    worst = F.max(axis=0) if enough else np.percentile(F, 95, axis=0)
    return x, ev.objectives, ev.constraints, ev.feasible, 1.1 * worst


def pareto_frame(ctx: TolerantContext, space: DesignSpace, archive: ParetoArchive) -> pd.DataFrame:
    """The archive evaluated again for its full table (same columns as `fluxfront evaluate`)."""
    if len(archive) == 0:
        return evaluation_frame(evaluate_tolerant(ctx, space.decode(space.sample(np.random.default_rng(0), 1))),
                                ctx.catalog).iloc[0:0]
    return evaluation_frame(evaluate_tolerant(ctx, space.decode(archive.X)), ctx.catalog)


def _stop_reason(state: State, settings: Settings, trace: list[float]) -> str | None:
    if settings.generations is not None and state.generation >= settings.generations:
        return f"reached {settings.generations} generations"
    if settings.hours is not None and state.elapsed_s >= settings.hours * 3600:
        return f"reached the time budget of {settings.hours:g} h"
    n = settings.stagnation
    if n and len(trace) > n and trace[-1] - trace[-1 - n] < 1e-4:
        return f"hypervolume gained less than 1e-4 over {n} generations"
    return None


def _chunk_length(state: State, settings: Settings) -> int:
    """Generations up to the next multiple of SYNC_GENERATIONS, or fewer to end on the target."""
    n = SYNC_GENERATIONS - state.generation % SYNC_GENERATIONS
    if settings.generations is not None:
        n = min(n, settings.generations - state.generation)
    return max(n, 1)


def _set_budgets(state: State, settings: Settings) -> None:
    """Share the next generations' evaluations by the islands' exclusive hypervolume contributions."""
    k = len(state.islands)
    total = settings.population * k
    contrib = state.archive.contributions(state.reference, k)
    share = np.full(k, 1.0 / k) if contrib.sum() <= 0 else contrib / contrib.sum()
    share = BUDGET_FLOOR / k + (1 - BUDGET_FLOOR) * share
    if k > 1:                                       # no island above BUDGET_CAP: the rest share the excess
        for _ in range(k):
            over = share > BUDGET_CAP
            if not over.any():
                break
            excess = float((share[over] - BUDGET_CAP).sum())
            share[over] = BUDGET_CAP
            share[~over] += excess * share[~over] / share[~over].sum()
    budget = np.maximum(np.rint(total * share), 2).astype(int)
    state.islands = [replace(isl, offspring=int(b)) for isl, b in zip(state.islands, budget)]


def _absorb(state: State, spaces, records, started: float, keep_all: bool) -> list[dict]:
    """Fold a chunk's evaluations into the archive, generation by generation; returns history rows."""
    rows = []
    g_all = []
    for gen in sorted({r.generation for r in records}):
        batch = sorted((r for r in records if r.generation == gen), key=lambda r: r.island)
        n = 0
        feasible = 0
        for r in batch:
            x_global = spaces[r.island].to_global(r.X)
            state.archive.update(x_global, r.F, r.feasible, r.island)
            n += len(r.X)
            feasible += int(r.feasible.sum())
            g_all.append(r.G)
            if keep_all and r.feasible.any():
                ok = r.feasible
                block = np.column_stack([np.full(ok.sum(), gen), np.full(ok.sum(), r.island), x_global[ok], r.F[ok],
                                         r.feasible[ok]])
                state.kept = block if state.kept is None else np.vstack([state.kept, block])
        state.evaluations += n
        rows.append({"generation": gen + 1, "evaluations": state.evaluations,
                     "feasible_fraction": feasible / max(n, 1), "front_size": len(state.archive),
                     "hypervolume": hypervolume(state.archive.F, state.reference),
                     "elapsed_s": round(time.monotonic() - started, 3)})
    if g_all:
        positive = np.maximum(np.vstack(g_all), 0.0)
        state.violation = dict(zip(CONSTRAINTS, positive.mean(axis=0).tolist()))
        state.violated_share = dict(zip(CONSTRAINTS, (positive > 0).mean(axis=0).tolist()))
    return rows


def _flush_kept(folder: RunFolder, space: DesignSpace, ctx: TolerantContext, state: State, force: bool) -> None:
    """Write the buffered --keep-all rows (every feasible design evaluated) as one Parquet part when there
    are enough of them, or at the end."""
    if state.kept is None or (len(state.kept) < KEEP_ALL_ROWS and not force):
        return
    kept = state.kept
    frame = space.decode(kept[:, 2:2 + space.lower.size]).to_frame(ctx.catalog)
    for i, name in enumerate(ctx.objectives):
        frame[name] = kept[:, 2 + space.lower.size + i]
    frame["feasible"] = kept[:, -1].astype(bool)
    frame.insert(0, "generation", kept[:, 0].astype(int) + 1)
    folder.write_parquet(f"evaluated/part-{state.parts:05d}.parquet", frame)
    state.kept, state.parts = None, state.parts + 1


def search(ctx: TolerantContext, space: DesignSpace, folder: RunFolder, settings: Settings, state: State,
           workers: PopulationEvaluator, quiet: bool = False) -> Outcome:
    """Run chunks of generations until a stop rule holds; write the run folder as it goes."""
    meta = folder.read_json("run.json")
    spaces = island_spaces(space, ctx.catalog)
    trace = folder.hypervolume_trace()
    bar = None if quiet else tqdm(total=settings.generations, initial=state.generation, unit="gen",
                                  dynamic_ncols=True, leave=True)
    started = time.monotonic() - state.elapsed_s
    interrupted = False
    try:
        while (stop := _stop_reason(state, settings, trace)) is None:
            t0 = time.monotonic()
            n = _chunk_length(state, settings)
            islands, records = workers.run(ctx, state.islands, spaces, state.generation, n)
            state.islands = islands
            rows = _absorb(state, spaces, records, started, settings.keep_all)
            state.generation += n
            state.elapsed_s = time.monotonic() - started
            if state.generation % SYNC_GENERATIONS == 0:
                _set_budgets(state, settings)
            folder.append_history(rows)
            trace += [r["hypervolume"] for r in rows]
            if state.generation % PARETO_EVERY < n:
                folder.write_csv("pareto.csv", pareto_frame(ctx, space, state.archive))
            _flush_kept(folder, space, ctx, state, force=False)
            checkpoint.save(folder.path, state)
            log.info("generation %d: %d evaluations, front %d, hypervolume %.5f", state.generation,
                     state.evaluations, len(state.archive), trace[-1] if trace else 0.0)
            if bar is not None:
                rate = sum(len(r.X) for r in records) / max(time.monotonic() - t0, 1e-9)
                bar.set_postfix_str(f"{rate:,.0f} designs/s, front {len(state.archive)}, "
                                    f"HV {trace[-1] if trace else 0:.4f}", refresh=False)
                bar.update(n)
    except KeyboardInterrupt:
        # whatever the chunk in flight had changed, the last checkpoint is the last whole state
        stop, interrupted = "interrupted (the chunk in flight was discarded; resume with: fluxfront resume RUN_DIR)", True
        state = checkpoint.load(folder.path)
        folder.trim_history(state.generation)
    finally:
        if bar is not None:
            bar.close()
    if not interrupted and state.polished is None:
        state.polished = ParetoArchive(state.archive.X.shape[1], 3, state.archive.X, state.archive.F, state.archive.tag)
        added, state.sweep_evaluations = local_sweep(space, state, workers)
        meta["sweep"] = {"evaluations": state.sweep_evaluations, "archive_members_added": added}
    _flush_kept(folder, space, ctx, state, force=not interrupted)
    final = state.polished if state.polished is not None else state.archive
    front = pareto_frame(ctx, space, final)
    folder.write_csv("pareto.csv", front)
    checkpoint.save(folder.path, state)
    hv = hypervolume(final.F, state.reference)
    meta.update({"end_time": datetime.now(timezone.utc).isoformat(timespec="seconds"), "stop_reason": stop,
                 "evaluations": state.evaluations + state.sweep_evaluations, "generations": state.generation,
                 "front_size": len(front),
                 "hypervolume": hv, "elapsed_s": round(state.elapsed_s, 3)})
    folder.write_json("run.json", meta)
    log.info("stopped: %s", stop)
    return Outcome(folder.path, stop, len(front), state.evaluations + state.sweep_evaluations, state.generation, hv,
                   summary_text(front, state, ctx.spec, ctx.catalog.costs.currency), interrupted)


def _new_state(ctx: TolerantContext, space: DesignSpace, settings: Settings, evaluator) -> State:
    spaces = island_spaces(space, ctx.catalog)
    X, F, G, ok, reference = reference_sample(ctx, space, settings.seed, evaluator)
    islands = [seeded_island(m, sub, settings.population, np.random.SeedSequence([settings.seed, k]), X, F, G)
               for k, (m, sub) in enumerate(zip(space.materials, spaces))]
    archive = ParetoArchive(space.lower.size, 3)
    materials = list(space.materials)
    archive.update(X, F, ok, [materials.index(m) for m in space.pair_material[np.rint(X[:, 0]).astype(int)]])
    return State(islands, archive, reference, evaluations=REFERENCE_SAMPLE)


def start(spec: Spec, spec_path: Path, catalog: Catalog, out_dir: Path, settings: Settings,
          quiet: bool = False) -> Outcome:
    """A new run: open the workers, make the folder, write spec, catalog and metadata, then search.

    The workers (or the cluster connection) come first so that a scheduler that cannot be reached
    stops the command before anything is written.
    """
    ctx = tolerant_context(prepare(spec, catalog))
    space = DesignSpace.from_spec(spec, catalog)
    with PopulationEvaluator(ctx, settings.jobs, settings.scheduler, settings.min_chunk) as workers:
        out_dir.mkdir(parents=True, exist_ok=False)
        folder = RunFolder(out_dir)
        folder.lock()
        try:
            _attach_log(folder)
            shutil.copyfile(spec_path, folder.file("spec.toml"))
            folder.write_json("catalog.json", catalog_used(catalog, space))
            state = _new_state(ctx, space, settings, workers)
            folder.write_json("run.json", {
                "tool": "fluxfront", "versions": library_versions(), "command_line": command_line(),
                "start_time": datetime.now(timezone.utc).isoformat(timespec="seconds"), "settings": asdict(settings),
                "spec_file": str(spec_path), "design_space_size": space.size, "reference_point": state.reference.tolist(),
                "islands": [list(catalog.materials)[m] for m in space.materials],
                "objectives": list(ctx.objectives), "stop_reason": None,
                "tolerance_corners": [c.name for c in ctx.corners],
            })
            checkpoint.save(folder.path, state)
            log.info("run started in %s: seed %d, population %d", out_dir, settings.seed, settings.population)
            return search(ctx, space, folder, settings, state, workers, quiet)
        finally:
            folder.unlock()


def resume_state(folder: RunFolder, spec: Spec, catalog: Catalog, settings: Settings, extended: bool,
                 quiet: bool, state: State) -> Outcome:
    """Continue from a loaded checkpoint with ``settings`` (the run's own; ``extended``: a larger budget)."""
    if extended:
        state.polished, state.sweep_evaluations = None, 0    # the front will move again: sweep at the new end
    folder.trim_history(state.generation)
    ctx = tolerant_context(prepare(spec, catalog))
    log.info("resumed at generation %d", state.generation)
    with PopulationEvaluator(ctx, settings.jobs, settings.scheduler, settings.min_chunk) as workers:
        return search(ctx, DesignSpace.from_spec(spec, catalog), folder, settings, state, workers, quiet)


def _attach_log(folder: RunFolder) -> None:
    root = logging.getLogger("fluxfront")
    for h in list(root.handlers):
        if isinstance(h, logging.FileHandler):
            root.removeHandler(h)
            h.close()
    handler = logging.FileHandler(folder.file("run.log"))
    handler.setFormatter(logging.Formatter("%(asctime)s %(levelname)s %(message)s"))
    root.addHandler(handler)
    root.setLevel(logging.INFO)


def attach_log(folder: RunFolder) -> None:
    """Send the library's log records to RUN_DIR/run.log."""
    _attach_log(folder)
