"""The search loop: NSGA-II over the encoded design space, one generation at a time, with callbacks
that write the run folder and a checkpoint after every generation.

Islands: one NSGA-II population per allowed material.  Materials differ so much (a ferrite and a
powder core meet the limits in very different corners of the space) that a single population
loses every material but the first one to reach feasibility; with one island each, every
material keeps its own front, and the archive merges them.  Each generation, the offspring of
all islands are evaluated in one batch (one vectorized, possibly parallel, call).

Reproducibility: the algorithm's random state is a seeded numpy Generator that lives inside the
pickled algorithm, and every evaluation is a pure function of the design, so a run stopped
after generation k and resumed ends bit-identical to one that ran straight through (for the
generation and stagnation stop rules; a wall-clock budget stops wherever the clock says).
"""
from __future__ import annotations

import logging
import shutil
import time
from dataclasses import asdict, dataclass, field
from datetime import datetime, timezone
from pathlib import Path

import numpy as np
import pandas as pd
from pymoo.algorithms.moo.nsga2 import NSGA2
from pymoo.core.evaluator import Evaluator
from pymoo.core.termination import NoTermination
from pymoo.operators.crossover.sbx import SBX
from pymoo.operators.mutation.pm import PM
from pymoo.operators.sampling.rnd import FloatRandomSampling
from pymoo.problems.static import StaticProblem
from tqdm import tqdm

from fluxfront.catalog import Catalog, load_catalog
from fluxfront.design.designs import Designs
from fluxfront.design.evaluator import CONSTRAINTS, objective_columns, prepare
from fluxfront.design.spec import Spec, catalog_folders, load_spec
from fluxfront.design.table import evaluation_frame
from fluxfront.design.tolerance import TolerantContext, evaluate_tolerant, tolerant_context

from .front import ParetoArchive, hypervolume, knee_index
from .parallel import MIN_CHUNK, PopulationEvaluator
from .problem import InductorProblem, SnapToDesigns, duplicate_check
from .runfolder import RunFolder, catalog_used, command_line, library_versions
from .space import DesignSpace

log = logging.getLogger("fluxfront.run")

REFERENCE_SAMPLE = 4096      # random designs evaluated to fix the hypervolume reference point
PARETO_EVERY = 10            # generations between rewrites of pareto.csv (always at the end)
CROSSOVER_ETA = 5.0         # SBX distribution index (pymoo default 15); see new_algorithms
MUTATION_ETA = 5.0          # polynomial mutation distribution index (pymoo default 20)
MUTATION_RATE = 0.3         # probability per variable (pymoo default 1/7 here)
CHECKPOINT_SHARE = 10.0      # wait at least this many times the last checkpoint's cost before the next


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
    min_chunk: int = MIN_CHUNK      # smallest chunk sent to a worker (lower it only to exercise backends)


@dataclass
class State:
    """Everything the loop needs to continue; pickled as the checkpoint."""

    algorithms: list                # one NSGA2 per island, in DesignSpace.materials order
    archive: ParetoArchive
    reference: np.ndarray
    generation: int = 0
    evaluations: int = 0
    elapsed_s: float = 0.0
    history: list = field(default_factory=list)
    violation: dict = field(default_factory=dict)   # last generation: mean violation per constraint
    violated_share: dict = field(default_factory=dict)


@dataclass
class Outcome:
    folder: Path
    stop_reason: str
    front_size: int
    evaluations: int
    generations: int
    hypervolume: float
    summary: str


def reference_point(ctx: TolerantContext, space: DesignSpace, seed: int) -> np.ndarray:
    """Hypervolume reference fixed for the run: 1.1 x the worst feasible objectives of a seeded sample.

    With fewer than ten feasible designs in the sample, the 95th percentile of all its designs is used.
    """
    x = space.sample(np.random.default_rng([seed, 1]), REFERENCE_SAMPLE)
    ev = evaluate_tolerant(ctx, space.decode(x))
    F = ev.objectives[ev.feasible] if ev.feasible.sum() >= 10 else ev.objectives
    worst = F.max(axis=0) if ev.feasible.sum() >= 10 else np.percentile(F, 95, axis=0)
    return 1.1 * worst


def islands(space: DesignSpace, catalog: Catalog) -> list[DesignSpace]:
    """One sub-space per material, in a fixed order, each within its material's Steinmetz bands."""
    mats = list(catalog.materials.values())
    out = []
    for m in space.materials:
        bands = mats[m].steinmetz
        out.append(space.island(m, (min(b.f_min_hz for b in bands), max(b.f_max_hz for b in bands))))
    return out


def new_algorithms(space: DesignSpace, catalog: Catalog, settings: Settings) -> list[NSGA2]:
    """Seeded NSGA-II per island: island k draws from the seed sequence (seed, k).

    Distribution indices of 5 for crossover and mutation (pymoo's defaults are 15 and 20) and a
    mutation rate of 0.3 per variable: wider and more frequent steps suit catalog indices and turn
    counts, whose feasible pockets are narrow.  Chosen with benchmarks/search_quality.py over six
    seeds: 100 % of the enumerated front's hypervolume on all six, against a mean of 94 % (worst
    89 %) with the indices alone and lower still with pymoo's defaults.
    """
    out = []
    for k, island in enumerate(islands(space, catalog)):
        algorithm = NSGA2(pop_size=settings.population, sampling=FloatRandomSampling(),
                          crossover=SBX(eta=CROSSOVER_ETA, prob=0.9), mutation=PM(eta=MUTATION_ETA, prob_var=MUTATION_RATE),
                          repair=SnapToDesigns(), eliminate_duplicates=duplicate_check())
        seed = int(np.random.SeedSequence([settings.seed, k]).generate_state(1)[0])
        algorithm.setup(InductorProblem(island), seed=seed, termination=NoTermination(), verbose=False)
        out.append(algorithm)
    return out


def _stop_reason(state: State, settings: Settings) -> str | None:
    if settings.generations is not None and state.generation >= settings.generations:
        return f"reached {settings.generations} generations"
    if settings.hours is not None and state.elapsed_s >= settings.hours * 3600:
        return f"reached the time budget of {settings.hours:g} h"
    n = settings.stagnation
    if n and len(state.history) > n:
        gain = state.history[-1]["hypervolume"] - state.history[-1 - n]["hypervolume"]
        if gain < 1e-4:
            return f"hypervolume gained less than 1e-4 over {n} generations"
    return None


def pareto_frame(ctx: TolerantContext, space: DesignSpace, archive: ParetoArchive) -> pd.DataFrame:
    """The archive evaluated again for its full table (same columns as `fluxfront evaluate`)."""
    if len(archive) == 0:
        return evaluation_frame(evaluate_tolerant(ctx, space.decode(space.sample(np.random.default_rng(0), 1))),
                                ctx.catalog).iloc[0:0]
    return evaluation_frame(evaluate_tolerant(ctx, space.decode(archive.X)), ctx.catalog)


def _one_generation(state: State, space: DesignSpace, evaluator: PopulationEvaluator):
    pops = [algorithm.ask() for algorithm in state.algorithms]
    xs = [pop.get("X") for pop in pops]
    subspaces = [algorithm.problem.space for algorithm in state.algorithms]
    ev = evaluator(Designs.concat([sub.decode(x) for sub, x in zip(subspaces, xs)]))
    edges = np.cumsum([0] + [len(x) for x in xs])
    for algorithm, pop, a, b in zip(state.algorithms, pops, edges[:-1], edges[1:]):
        Evaluator().eval(StaticProblem(algorithm.problem, F=ev.objectives[a:b], G=ev.constraints[a:b]), pop)
        algorithm.tell(infills=pop)
    x_global = np.vstack([sub.to_global(sub.canonical(x)) for sub, x in zip(subspaces, xs)])
    state.archive.update(x_global, ev.objectives, ev.feasible)
    state.generation += 1
    state.evaluations += int(edges[-1])
    positive = np.maximum(ev.constraints, 0.0)
    state.violation = dict(zip(CONSTRAINTS, positive.mean(axis=0).tolist()))
    state.violated_share = dict(zip(CONSTRAINTS, (positive > 0).mean(axis=0).tolist()))
    return ev


def _progress(quiet: bool, settings: Settings, state: State):
    if quiet:
        return None
    total = settings.generations
    return tqdm(total=total, initial=state.generation, unit="gen", dynamic_ncols=True, leave=True)


def search(ctx: TolerantContext, space: DesignSpace, folder: RunFolder, settings: Settings, state: State,
           evaluator: PopulationEvaluator, quiet: bool = False) -> Outcome:
    """Run generations until a stop rule holds; write the run folder as it goes."""
    meta = folder.read_json("run.json")
    bar = _progress(quiet, settings, state)
    stop = None
    started = time.monotonic() - state.elapsed_s
    last_save, save_cost = time.monotonic(), 0.0
    try:
        while (stop := _stop_reason(state, settings)) is None:
            t0 = time.monotonic()
            ev = _one_generation(state, space, evaluator)
            state.elapsed_s = time.monotonic() - started
            hv = hypervolume(state.archive.F, state.reference)
            row = {"generation": state.generation, "evaluations": state.evaluations,
                   "feasible_fraction": float(ev.feasible.mean()), "front_size": len(state.archive),
                   "hypervolume": hv, "elapsed_s": round(state.elapsed_s, 3)}
            state.history.append(row)
            if settings.keep_all and ev.feasible.any():
                folder.write_parquet(f"evaluated/gen_{state.generation:06d}.parquet",
                                     evaluation_frame(ev, ctx.catalog)[ev.feasible])
            folder.write_csv("history.csv", pd.DataFrame(state.history))
            if state.generation % PARETO_EVERY == 0:
                folder.write_csv("pareto.csv", pareto_frame(ctx, space, state.archive))
            # a checkpoint after every generation, unless pickling large populations would take
            # more than a tenth of the run: then as often as that allows (resume is exact either way)
            if time.monotonic() - last_save >= CHECKPOINT_SHARE * save_cost:
                t_save = time.monotonic()
                folder.save_checkpoint(state)
                last_save = time.monotonic()
                save_cost = last_save - t_save
            rate = len(ev.designs) / max(time.monotonic() - t0, 1e-9)
            log.info("generation %d: %d evaluations, %.1f%% feasible, front %d, hypervolume %.5f",
                     state.generation, state.evaluations, 100 * row["feasible_fraction"], row["front_size"], hv)
            if bar is not None:
                left = ""
                if settings.hours is not None:
                    left = f"{max(settings.hours * 3600 - state.elapsed_s, 0) / 60:.1f} min"
                bar.set_postfix_str(f"{rate:,.0f} eval/s, feasible {row['feasible_fraction']:.0%}, "
                                    f"front {row['front_size']}, HV {hv:.4f}" + (f", left {left}" if left else ""),
                                    refresh=False)
                bar.update(1)
    except KeyboardInterrupt:
        stop = "interrupted (resume with: fluxfront resume RUN_DIR)"
    finally:
        if bar is not None:
            bar.close()
    front = pareto_frame(ctx, space, state.archive)
    folder.write_csv("pareto.csv", front)
    folder.save_checkpoint(state)
    hv = state.history[-1]["hypervolume"] if state.history else 0.0
    meta.update({"end_time": datetime.now(timezone.utc).isoformat(timespec="seconds"), "stop_reason": stop,
                 "evaluations": state.evaluations, "generations": state.generation, "front_size": len(front),
                 "hypervolume": hv, "elapsed_s": round(state.elapsed_s, 3)})
    folder.write_json("run.json", meta)
    log.info("stopped: %s", stop)
    return Outcome(folder.path, stop, len(front), state.evaluations, state.generation, hv,
                   summary_text(front, state, ctx.spec))


def start(spec: Spec, spec_path: Path, catalog: Catalog, out_dir: Path, settings: Settings,
          quiet: bool = False) -> Outcome:
    """A new run: open the workers, make the folder, write spec, catalog and metadata, then search.

    The workers (or the cluster connection) come first so that a scheduler that cannot be reached
    stops the command before anything is written.
    """
    ctx = tolerant_context(prepare(spec, catalog))
    space = DesignSpace.from_spec(spec, catalog)
    with PopulationEvaluator(ctx, settings.jobs, settings.scheduler, settings.min_chunk) as evaluator:
        return _start(ctx, space, spec_path, catalog, out_dir, settings, evaluator, quiet)


def _start(ctx, space, spec_path, catalog, out_dir, settings, evaluator, quiet) -> Outcome:
    out_dir.mkdir(parents=True, exist_ok=False)
    folder = RunFolder(out_dir)
    _attach_log(folder)
    shutil.copyfile(spec_path, folder.file("spec.toml"))
    folder.write_json("catalog.json", catalog_used(catalog, space))
    reference = reference_point(ctx, space, settings.seed)
    folder.write_json("run.json", {
        "tool": "fluxfront", "versions": library_versions(), "command_line": command_line(),
        "start_time": datetime.now(timezone.utc).isoformat(timespec="seconds"), "settings": asdict(settings),
        "spec_file": str(spec_path), "design_space_size": space.size, "reference_point": reference.tolist(),
        "islands": [list(catalog.materials)[m] for m in space.materials],
        "objectives": list(ctx.objectives), "stop_reason": None,
        "tolerance_corners": [c.name for c in ctx.corners],
    })
    state = State(new_algorithms(space, catalog, settings), ParetoArchive(space.lower.size, 3), reference)
    folder.save_checkpoint(state)
    log.info("run started in %s: seed %d, population %d", out_dir, settings.seed, settings.population)
    return search(ctx, space, folder, settings, state, evaluator, quiet)


def resume(run_dir: Path, catalog_dirs=(), quiet: bool = False, extra_generations: int | None = None) -> Outcome:
    """Continue a stopped or killed run from its last checkpoint."""
    folder = RunFolder(run_dir)
    _attach_log(folder)
    meta = folder.read_json("run.json")
    settings = Settings(**meta["settings"])
    if extra_generations is not None:
        settings.generations = (settings.generations or 0) + extra_generations
    spec, _ = load_spec(folder.file("spec.toml"))
    base = Path(meta["spec_file"]).parent
    catalog = load_catalog(catalog_folders(spec, base, catalog_dirs))
    used = folder.read_json("catalog.json")
    if used["catalog_sha256"] != catalog.content_hash():
        log.warning("the catalog differs from the one the run started with (hash %s)", used["catalog_sha256"])
    state = folder.load_checkpoint()
    meta["resumed"] = meta.get("resumed", []) + [datetime.now(timezone.utc).isoformat(timespec="seconds")]
    meta["settings"] = asdict(settings)
    folder.write_json("run.json", meta)
    log.info("resumed at generation %d", state.generation)
    ctx = tolerant_context(prepare(spec, catalog))
    with PopulationEvaluator(ctx, settings.jobs, settings.scheduler, settings.min_chunk) as evaluator:
        return search(ctx, DesignSpace.from_spec(spec, catalog), folder, settings, state, evaluator, quiet)


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


def representatives(front: pd.DataFrame, objectives) -> dict[str, int]:
    """Row numbers of the smallest, lightest, lowest-loss, cheapest and balanced (knee) designs."""
    F = front[list(objectives)].to_numpy()
    return {"smallest": int(np.argmin(F[:, 0])), "lightest": int(np.argmin(front["mass_g"].to_numpy())),
            "lowest loss": int(np.argmin(F[:, 1])),
            "cheapest": int(np.argmin(F[:, 2])), "balanced (knee)": knee_index(F)}


ADVICE = {
    "saturation": "allow more turns or a larger gap/core (search.turns_max, search.gap_mm_max, larger shapes), "
                  "or a lower limits.saturation_margin only if the material data allow",
    "ripple": "raise limits.ripple_pp_max_fraction, or allow higher search.f_sw_khz_max or more turns",
    "inductance_kept": "lower limits.inductance_kept_min_fraction or allow lower-permeability powders",
    "fill": "raise limits.fill_max, allow larger shapes or thinner wires",
    "hot_spot": "raise limits.hot_spot_max_c, lower limits.ambient_c, or use thermal.model = \"forced\"",
    "material_temperature": "allow materials with a higher t_max_c or improve cooling",
    "dcm": "raise limits.dcm_max_fraction or allow more inductance (turns, smaller gaps)",
}


def no_feasible_text(state: State) -> str:
    ranked = sorted(CONSTRAINTS, key=lambda c: -state.violation.get(c, 0.0))
    lines = ["No feasible design was found.", "Violations over the last generation (share of designs, mean excess "
             "as a fraction of the limit):"]
    for c in ranked:
        if state.violated_share.get(c, 0) > 0:
            lines.append(f"  {c}: {state.violated_share[c]:.0%} of designs, mean excess {state.violation[c]:.2f}")
    lines.append(f"Most binding: {ranked[0]}. Suggestion: {ADVICE[ranked[0]]}.")
    return "\n".join(lines)


def summary_text(front: pd.DataFrame, state: State, spec: Spec) -> str:
    """The end-of-run summary: the representative designs, each once, with the figures that matter."""
    if len(front) == 0:
        return no_feasible_text(state)
    lines = [f"Pareto front: {len(front)} feasible designs after {state.evaluations:,} evaluations "
             f"({state.generation} generations)."]
    if "robust" in front:
        lines.append(f"Every limit checked at its worst tolerance corner: {int(front['robust'].sum())} of "
                     f"{len(front)} designs robust.")
    rows: dict[int, list[str]] = {}
    for label, i in representatives(front, objective_columns(spec)).items():
        rows.setdefault(i, []).append(label)
    for i, labels in rows.items():
        r = front.iloc[i]
        gap = f"gap {r.gap_mm:g} mm" + (f" in {int(r.gaps)}" if r.get("gaps", 1) > 1 else "") if r.gap_mm > 0 \
            else "no gap"
        lines.append(f"  {' / '.join(labels)} (row {i}): {r.material} {r.stack}x{r['shape']} N={r.turns} {gap} "
                     f"{r.parallel}x{r.wire} {r.f_sw_khz:g} kHz")
        margin = f", worst-corner margin {-r.worst_margin:.0%} ({r.worst_limit})" if "worst_margin" in r else ""
        lines.append(f"      {r.volume_cm3:.1f} cm3, inductor loss {r.total_loss_w:.2f} W, cost {r.cost:.2f}, "
                     f"{r.inductance_uh:.0f} uH, B peak {r.b_peak_t:.3f} of {r.b_sat_t:.3f} T, "
                     f"hot spot {r.temperature_c:.0f} C{margin}")
    return "\n".join(lines)
