"""The subcommands of ``fluxfront``: their arguments and a thin handler each.

A handler checks its options, calls one function of the layers below, prints what it returns and
leaves errors to ``main`` (which maps them to exit codes). Nothing here computes a result.
"""
from __future__ import annotations

import json
import math
import sys
import tempfile
from datetime import datetime
from pathlib import Path

import pandas as pd

from fluxfront.catalog import load_catalog
from fluxfront.design.designs import read_design_table, resolve_designs
from fluxfront.design.evaluator import evaluate, objective_columns, prepare
from fluxfront.design.spec import demo_spec_text, load_problem
from fluxfront.design.table import evaluation_frame, result_columns
from fluxfront.errors import InputError
from fluxfront.files import write_atomic
from fluxfront.optimizer.resume import resume
from fluxfront.optimizer.run import Outcome, Settings, start
from fluxfront.optimizer.state import CheckpointError
from fluxfront.results.buildsheet import write_pick, write_typed_sheet
from fluxfront.results.explorer import write_explorer
from fluxfront.results.fits import write_calibration, write_loss_fit, write_rolloff_fit
from fluxfront.results.fluxmap import crossover_lines, write_flux_map
from fluxfront.results.picking import pick_rows
from fluxfront.results.report import SAFETY_NOTE, detail, summary_text
from fluxfront.results.runs import compare_runs, load_run, run_trace, write_knee_sheet, write_plots

EXIT_NO_FEASIBLE = 3   # a search found no feasible design (the run folder is still written)
EXIT_INTERRUPTED = 130   # Ctrl-C: the last finished chunk is saved, resume continues exactly


def _print_table(df: pd.DataFrame, as_json: bool) -> None:
    if as_json:
        clean = df.astype(object).where(df.notna(), None)  # NaN is not JSON; an absent value is null
        print(json.dumps(clean.to_dict(orient="records"), indent=1, default=str))
    else:
        with pd.option_context("display.max_rows", None, "display.max_columns", None, "display.width", 200,
                               "display.max_colwidth", 60):
            print(df.to_string(index=False))


def cmd_fit(args) -> int:
    catalog = load_catalog(args.catalog)
    out = Path(args.out) if args.out else Path(args.points).with_name(f"{Path(args.points).stem}-fit")
    if args.what == "fit-loss":
        lines = write_loss_fit(args.points, out, args.id, args.base, catalog)
    else:
        lines = write_rolloff_fit(args.points, out, args.id, args.base, catalog, table=args.table)
    print("\n".join(lines))
    return 0


def cmd_calibrate(args) -> int:
    out = Path(args.out) if args.out else Path(args.measured).with_name(f"{Path(args.measured).stem}-calibration")
    print("\n".join(write_calibration(args.spec, args.design, args.measured, out, args.catalog)))
    return 0


def cmd_catalog(args) -> int:
    if args.what == "check":
        cat = load_catalog([args.path])
        print(f"{args.path}: valid ({len(cat.materials)} materials, {len(cat.shapes)} shapes, "
              f"{len(cat.wires)} wires after merging with the built-in catalog)")
        return 0
    cat = load_catalog(args.catalog)
    table = {"materials": cat.material_table, "shapes": cat.shape_table, "wires": cat.wire_table}[args.what]()
    _print_table(table, args.json)
    return 0


def cmd_init(args) -> int:
    path = Path(args.file)
    if path.exists() and not args.force:
        raise InputError(f"{path}: already exists; choose another FILE or pass --force to replace it")
    write_atomic(path, demo_spec_text())
    print(f"wrote the demo spec to {path}; edit it, then: fluxfront evaluate {path} DESIGNS  or  fluxfront run {path}")
    return 0


def cmd_evaluate(args) -> int:
    spec, _, catalog = load_problem(args.spec, args.catalog)
    table = read_design_table(args.designs)
    designs = resolve_designs(table, catalog, source=str(args.designs), allowed_extra=result_columns())
    ctx = prepare(spec, catalog)
    one = len(designs) == 1
    if args.json and not one:
        raise InputError(f"{args.designs}: --json prints one design; the file holds {len(designs)} rows")
    ev = evaluate(ctx, designs, keep_samples=one and args.json)
    if args.json:
        text = json.dumps(detail(ctx, ev), indent=1, allow_nan=True)
        if args.out:
            write_atomic(args.out, text + "\n")
        else:
            print(text)
        return 0
    frame = evaluation_frame(ev, catalog)
    if args.out:
        write_atomic(args.out, frame.to_csv(index=False))
        print(f"wrote {len(frame)} evaluated designs ({int(frame['feasible'].sum())} feasible) to {args.out}")
    elif one:
        print(summary_text(ctx, ev))
    else:
        sys.stdout.write(frame.to_csv(index=False))
    return 0


def _default_run_dir(spec_path) -> Path:
    stamp = datetime.now().strftime("%Y%m%d-%H%M%S")
    return Path("runs") / f"{Path(spec_path).stem}-{stamp}"


def _positive(name, value, integer=True):
    if value is not None and not (math.isfinite(value) and value > 0):
        raise InputError(f"--{name} = {value}: expected a positive {'whole number' if integer else 'finite number'}")


def _settings(args) -> Settings:
    _positive("population", args.population)
    _positive("generations", args.generations)
    _positive("hours", args.hours, integer=False)
    _positive("stagnation", args.stagnation)
    if args.seed < 0:
        raise InputError(f"--seed = {args.seed}: expected a whole number >= 0")
    if args.jobs == 0 or args.jobs < -1:
        raise InputError(f"--jobs = {args.jobs}: expected a positive number of processes, or -1 for all cores")
    generations = args.generations if args.generations is not None or args.hours is not None else 300
    return Settings(seed=args.seed, population=args.population, generations=generations, hours=args.hours,
                    stagnation=args.stagnation, jobs=args.jobs, scheduler=args.scheduler, keep_all=args.keep_all)


def _finish(outcome: Outcome) -> int:
    print(outcome.summary)
    print(f"stopped: {outcome.stop_reason}")
    print(f"run folder: {outcome.folder}")
    if outcome.interrupted:
        return EXIT_INTERRUPTED
    return 0 if outcome.front_size > 0 else EXIT_NO_FEASIBLE


def cmd_run(args) -> int:
    settings = _settings(args)
    spec, _, catalog = load_problem(args.spec, args.catalog)
    out = Path(args.out) if args.out else _default_run_dir(args.spec)
    if out.exists():
        hint = (f"resume it with 'fluxfront resume {out}'" if (out / "checkpoint.npz").is_file() else
                "it holds no checkpoint (a run stopped before its first one, or another folder): remove it or "
                "choose another --out")
        raise InputError(f"--out {out}: already exists; a run never writes over another ({hint})")
    return _finish(start(spec, Path(args.spec), catalog, out, settings, quiet=args.quiet))


def cmd_resume(args) -> int:
    run_dir = Path(args.run_dir)
    if not run_dir.is_dir():
        raise InputError(f"{run_dir}: no such run folder")
    _positive("more-generations", args.more_generations)
    _positive("more-hours", args.more_hours, integer=False)
    try:
        return _finish(resume(run_dir, args.catalog, quiet=args.quiet, more_generations=args.more_generations,
                              more_hours=args.more_hours, scheduler=args.scheduler))
    except CheckpointError as exc:
        raise InputError(str(exc)) from None


def cmd_demo(args) -> int:
    out = Path(args.out) if args.out else _default_run_dir("demo")
    if out.exists():
        raise InputError(f"--out {out}: already exists; choose another folder")
    # the demo searches with the tolerance section on: its balanced design is one a prototype can be built from
    text = demo_spec_text().replace("[tolerance]\nenabled = false", "[tolerance]\nenabled = true")
    with tempfile.TemporaryDirectory() as tmp:
        spec_path = write_atomic(Path(tmp) / "demo_spec.toml", text)
        spec, _, catalog = load_problem(spec_path, [])
        settings = Settings(seed=args.seed, population=40, generations=args.generations, jobs=args.jobs)
        print(f"fluxfront demo: the built-in 1.5 kW universal-input PFC scenario, {settings.generations} generations "
              f"of {settings.population} designs per material, every limit checked at its worst tolerance corner")
        outcome = start(spec, spec_path, catalog, out, settings, quiet=args.quiet)
    code = _finish(outcome)
    if outcome.front_size > 0:
        for path in write_plots(outcome.folder):
            print(f"plot: {path}")
        pick = write_knee_sheet(outcome.folder)
        _, catalog_d, _, front_d, _ = load_run(outcome.folder)
        page = write_explorer(outcome.folder, front_d, catalog_d, SAFETY_NOTE)
        print(f"explore the front in a browser: {page}")
        print(f"build sheet of the balanced design: {pick.folder / 'build_sheet.html'} (and build_sheet.md)")
        print(_pick_line(pick))
    return code


def cmd_plot(args) -> int:
    paths = write_plots(args.run_dir, args.catalog)
    if not paths:
        raise InputError(f"{args.run_dir}: nothing to plot (empty front and no history)")
    for p in paths:
        print(p)
    return 0


def cmd_explore(args) -> int:
    spec, catalog, ctx, front, _ = load_run(args.run_dir, args.catalog)
    if len(front) == 0:
        raise InputError(f"{args.run_dir}: the front is empty; there is nothing to explore")
    print(f"wrote {write_explorer(args.run_dir, front, catalog, SAFETY_NOTE, args.out)} (opens offline in a browser)")
    return 0


def cmd_pick(args) -> int:
    for name in ("max_volume_cm3", "max_loss_w", "max_cost"):
        _positive(name.replace("_", "-"), getattr(args, name), integer=False)
    spec, catalog, ctx, front, _ = load_run(args.run_dir, args.catalog)
    rows = pick_rows(front, row=args.row, knee=args.knee, max_volume_cm3=args.max_volume_cm3,
                     max_loss_w=args.max_loss_w, max_cost=args.max_cost, by=args.by,
                     objectives=objective_columns(spec))
    for row in rows:
        pick = write_pick(args.run_dir, ctx, front, row, run_trace(args.run_dir))
        r = front.iloc[row]
        print(f"row {row}: {r.volume_cm3:.1f} cm3, inductor loss {r.total_loss_w:.2f} W, cost {r.cost:.2f} -> "
              f"{pick.folder / 'build_sheet.html'}")
        print(_pick_line(pick))
    return 0


def _pick_line(pick) -> str:
    """Robustness and yield of a pick in a few lines: the margin of every limit at its worst corner."""
    y = pick.yield_estimate
    margins = ", ".join(f"{k} {-v:+.0%}" for k, v in pick.worst_margin.items())
    state = "robust: every limit met at every tolerance corner" if pick.robust else "NOT ROBUST: fails a corner"
    most = f"; fails most: {y.most_failing} ({y.failing[y.most_failing]:.1%})" if y.most_failing else ""
    return (f"  {state}\n  margin at the worst corner (negative = violated): {margins}\n"
            f"  yield {y.share:.1%} of {y.samples} Monte Carlo parts (seed {y.seed}){most}")


def cmd_sheet(args) -> int:
    out = Path(args.out) if args.out else Path(args.design).with_name(f"{Path(args.design).stem}-sheet")
    pick = write_typed_sheet(args.spec, args.design, out, args.catalog)
    print(f"build sheet: {pick.folder / 'build_sheet.html'} (and build_sheet.md)")
    print(_pick_line(pick))
    return 0


def cmd_flux_map(args) -> int:
    for v in args.loss_density:
        _positive("loss-density", v, integer=False)
    spec, _, catalog = load_problem(args.spec, args.catalog)
    out = Path(args.out) if args.out else Path("runs") / f"{Path(args.spec).stem}-flux-map"
    summary, paths = write_flux_map(spec, catalog, args.loss_density, out)
    print("\n".join(crossover_lines(spec, summary)))
    print(f"wrote {paths[0]}, {out / 'flux_map_crossover.csv'}")
    return 0


def cmd_compare(args) -> int:
    out = Path(args.out) if args.out else Path("runs") / "compare"
    table, reference, paths = compare_runs(args.runs, out)
    print(f"common reference point: volume {reference[0]:.1f} cm3, loss {reference[1]:.2f} W, cost {reference[2]:.2f}")
    print(table.to_string(index=False))
    print(f"wrote {paths[0]} and {out / 'compare.csv'}")
    return 0
