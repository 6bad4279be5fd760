"""The subcommands of ``fluxfront``: their arguments and a thin handler each.

A handler checks its options, calls one function of the layers below, prints what it returns and
leaves errors to ``main`` (which maps them to exit codes). Nothing here computes a result.
"""
from __future__ import annotations

import argparse
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
from fluxfront.results.picking import PICK_RULES, pick_rows
from fluxfront.results.report import SAFETY_NOTE, detail, summary_text
from fluxfront.results.runs import compare_runs, load_run, run_trace, write_knee_sheet, write_plots

EXIT_NO_FEASIBLE = 3   # a search found no feasible design (the run folder is still written)
EXIT_INTERRUPTED = 130   # Ctrl-C: the last finished chunk is saved, resume continues exactly


def catalog_arg(p: argparse.ArgumentParser) -> None:
    p.add_argument("--catalog", action="append", default=[], metavar="DIR",
                   help="user catalog folder or file added over the built-in one (repeatable)")


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


def _search_args(p) -> None:
    p.add_argument("--seed", type=int, default=1, help="random seed (default 1); same seed, same front")
    p.add_argument("--population", type=int, default=40, metavar="P",
                   help="designs per material per generation (default 40; one population per material)")
    stop = p.add_mutually_exclusive_group()
    stop.add_argument("--generations", type=int, metavar="G", help="stop after G generations (default 300)")
    stop.add_argument("--hours", type=float, metavar="H", help="stop after H hours of wall-clock time")
    p.add_argument("--stagnation", type=int, metavar="K",
                   help="also stop when the hypervolume gains less than 1e-4 over K generations")
    p.add_argument("--jobs", type=int, default=-1, metavar="J", help="worker processes (default -1: all cores)")
    p.add_argument("--scheduler", metavar="ADDRESS",
                   help="evaluate on a Dask cluster at ADDRESS, or 'local' to start one on this machine")
    p.add_argument("--keep-all", action="store_true", help="also keep every feasible design evaluated (Parquet)")
    p.add_argument("--quiet", action="store_true", help="no progress bar (batch jobs)")


def _register_catalog(sub) -> None:
    """The catalog listing and check."""
    p = sub.add_parser("catalog", help="list or check catalog data",
                       description="List materials, shapes (with computed geometry) or wires, or check a user catalog.")
    csub = p.add_subparsers(dest="what", required=True, metavar="WHAT")
    for what, text in (("materials", "core materials by class"), ("shapes", "core shapes with le, Ae, Ve, window, mass"),
                       ("wires", "round magnet wire and litz")):
        q = csub.add_parser(what, help=f"list {text}", description=f"List {text}.")
        q.add_argument("--json", action="store_true", help="print JSON records instead of a table")
        catalog_arg(q)
        q.set_defaults(func=cmd_catalog)
    q = csub.add_parser("check", help="validate a user catalog file or folder",
                        description="Validate a user catalog file or folder; exit 0 when valid, 2 otherwise.")
    q.add_argument("path", help="catalog folder, or one of materials.toml, shapes.toml, wires.toml, costs.toml")
    q.set_defaults(func=cmd_catalog)
    for what, text, default_base, columns in (
            ("fit-loss", "Steinmetz bands (and the loss-temperature fit) from measured loss-density points",
             "mnzn_ferrite_100k", "frequency (f_hz, f_khz, f_mhz), peak flux (b_t, b_mt), loss density (pv_w_m3, "
             "pv_kw_m3, pv_mw_cm3) and optionally temperature (t_c)"),
            ("fit-rolloff", "a powder roll-off fit from permeability fractions against DC field",
             "fesial_powder_60", "DC field (h_a_per_m, h_ka_per_m, h_oe) and the permeability fraction (fraction, "
             "or percent)")):
        q = csub.add_parser(what, help=f"fit {text}",
                            description=f"Fit {text}; columns: {columns}. Writes OUT/materials.toml (use it with "
                                        "--catalog OUT) and a plot of data against fit.")
        q.add_argument("points", metavar="POINTS.csv", help="measured points, the unit in each column name")
        q.add_argument("--id", required=True, help="id of the new material entry")
        q.add_argument("--base", default=default_base,
                       help=f"material whose other fields the entry copies (default {default_base})")
        q.add_argument("--out", metavar="DIR", help="output folder (default POINTS-fit beside the points file)")
        if what == "fit-rolloff":
            q.add_argument("--table", action="store_true",
                           help="store the points as a table (interpolated in log H) instead of the fitted curve")
        catalog_arg(q)
        q.set_defaults(func=cmd_fit)


def _register_design(sub) -> None:
    """Spec, evaluation and material comparison before a search."""
    p = sub.add_parser("init", help="write the commented demo spec as a starting point",
                       description="Write the demo spec, commented field by field, to FILE.")
    p.add_argument("file", metavar="FILE", help="where to write the spec (TOML)")
    p.add_argument("--force", action="store_true", help="replace FILE if it exists")
    p.set_defaults(func=cmd_init)

    p = sub.add_parser("evaluate", help="evaluate designs from a TOML (one) or CSV (many) file",
                       description="Evaluate one design (TOML, or a one-row CSV) or many (CSV) against SPEC. "
                                   "Design columns: material, shape, stack, turns, gap_mm, wire, parallel, f_sw_khz.")
    p.add_argument("spec", metavar="SPEC", help="the design spec (TOML; fluxfront init writes a commented one)")
    p.add_argument("designs", metavar="DESIGNS", help="design rows: a .toml (one design) or a .csv (many)")
    p.add_argument("--out", metavar="FILE", help="write the CSV (or, with --json, the JSON) here")
    p.add_argument("--json", action="store_true",
                   help="one design: print every intermediate quantity, line-cycle samples included")
    catalog_arg(p)
    p.set_defaults(func=cmd_evaluate)

    p = sub.add_parser("flux-map", help="compare materials: loss-limited against saturation-limited ripple flux",
                       description="For every allowed material, the largest ripple flux amplitude that keeps the core "
                                   "loss density at a limit, against frequency, beside what saturation allows.")
    p.add_argument("spec", metavar="SPEC", help="the design spec (TOML; fluxfront init writes a commented one)")
    p.add_argument("--loss-density", type=float, nargs="+", default=[100.0, 300.0], metavar="MW_PER_CM3",
                   help="core loss density limits in mW/cm3 (default 100 300)")
    p.add_argument("--out", metavar="DIR", help="output folder (default runs/<spec>-flux-map)")
    catalog_arg(p)
    p.set_defaults(func=cmd_flux_map)


def _register_explore(sub) -> None:
    """The interactive front explorer."""
    p = sub.add_parser("explore", help="write an interactive page of a run's front (one offline HTML file)",
                       description="Write RUN_DIR/explore.html: the front in three linked panels, filters (class, "
                                   "frequency, hot spot, height, cost, loss, robust only) and each design's figures "
                                   "and build-sheet command on click. Opens offline; nothing is fetched.")
    p.add_argument("run_dir", metavar="RUN_DIR", help="a run folder written by fluxfront run")
    p.add_argument("--out", metavar="FILE", help="where to write the page (default RUN_DIR/explore.html)")
    catalog_arg(p)
    p.set_defaults(func=cmd_explore)


def _register_sheet(sub) -> None:
    """The build sheet of a design typed in by hand."""
    p = sub.add_parser("sheet", help="write the build sheet of a design typed in by hand",
                       description="Write the build sheet (HTML and Markdown) of one design typed in by hand, "
                                   "evaluated against SPEC, with every tolerance corner and its yield.")
    p.add_argument("spec", metavar="SPEC", help="the design spec (TOML)")
    p.add_argument("design", metavar="DESIGN", help="one design: TOML keys, or a one-row CSV, of the design columns")
    p.add_argument("--out", metavar="DIR", help="output folder (default DESIGN-sheet beside it)")
    catalog_arg(p)
    p.set_defaults(func=cmd_sheet)


def _register_calibrate(sub) -> None:
    """Calibration against a measured prototype."""
    p = sub.add_parser("calibrate", help="set the model's factors from a measured prototype",
                       description="From bench readings of a built design (MEASURED.toml: inductance, optionally "
                                   "inductance at a bias, DC resistance, temperature rise at a stated loss, core "
                                   "loss at a stated excitation), set the effective gap (or permeability), "
                                   "dissipation and core-loss factors; write a catalog override and the spec keys "
                                   "for the next run.")
    p.add_argument("spec", metavar="SPEC", help="the design spec (TOML; fluxfront init writes a commented one)")
    p.add_argument("design", metavar="DESIGN", help="the built design (TOML, or a one-row CSV)")
    p.add_argument("measured", metavar="MEASURED.toml", help="the readings, in a [measured] section")
    p.add_argument("--out", metavar="DIR", help="output folder (default MEASURED-calibration beside it)")
    catalog_arg(p)
    p.set_defaults(func=cmd_calibrate)


def _register_search(sub) -> None:
    """Searching: run, resume, demo."""
    p = sub.add_parser("run", help="search the design space for the volume-loss-cost Pareto front",
                       description="Multi-objective search (NSGA-II) over material, core, stack, turns, gap, wire, "
                                   "parallel wires and switching frequency; writes a run folder.")
    p.add_argument("spec", metavar="SPEC", help="the design spec (TOML; fluxfront init writes a commented one)")
    p.add_argument("--out", metavar="DIR", help="run folder (default runs/<spec>-<time>)")
    _search_args(p)
    catalog_arg(p)
    p.set_defaults(func=cmd_run)

    p = sub.add_parser("resume", help="continue a stopped or killed run",
                       description="Continue a run from its last checkpoint; ends as if it had never stopped.")
    p.add_argument("run_dir", metavar="RUN_DIR", help="a run folder written by fluxfront run")
    extend = p.add_mutually_exclusive_group()
    extend.add_argument("--more-generations", type=int, metavar="G",
                        help="run G generations beyond the checkpoint (time and stagnation rules no longer stop it)")
    extend.add_argument("--more-hours", type=float, metavar="H", help="run H more hours of wall-clock time")
    p.add_argument("--scheduler", metavar="ADDRESS",
                   help="evaluate on this Dask cluster (an address stored in the run folder is never used)")
    p.add_argument("--quiet", action="store_true", help="no progress bar")
    catalog_arg(p)
    p.set_defaults(func=cmd_resume)

    p = sub.add_parser("demo", help="run the built-in scenario end to end (about two minutes)",
                       description="Search the built-in demo scenario, write a run folder, plots and the build "
                                   "sheet of the balanced design, and print where they are.")
    p.add_argument("--out", metavar="DIR", help="run folder (default runs/demo-<time>)")
    p.add_argument("--seed", type=int, default=1, help="random seed (default 1)")
    p.add_argument("--generations", type=int, default=200, metavar="G", help="generations (default 200)")
    p.add_argument("--jobs", type=int, default=2, metavar="J",
                   help="worker processes, each evolving whole islands (default 2)")
    p.add_argument("--quiet", action="store_true", help="no progress bar")
    p.set_defaults(func=cmd_demo)


def _register_results(sub) -> None:
    """Results of a run: plots, picks and comparisons."""
    p = sub.add_parser("plot", help="plot a run's front and progress",
                       description="Write the front, pairwise, frequency and progress plots (PNG and SVG) to RUN_DIR/plots/.")
    p.add_argument("run_dir", metavar="RUN_DIR", help="a run folder written by fluxfront run")
    catalog_arg(p)
    p.set_defaults(func=cmd_plot)

    p = sub.add_parser("pick", help="choose designs from a front and write their build sheets",
                       description="Choose a design of RUN_DIR's front by row, by knee, or by limits and a rule; "
                                   "write RUN_DIR/picks/row<N>/build_sheet.html and .md.")
    p.add_argument("run_dir", metavar="RUN_DIR", help="a run folder written by fluxfront run")
    how = p.add_mutually_exclusive_group()
    how.add_argument("--row", type=int, metavar="N", help="row N of pareto.csv (from 0)")
    how.add_argument("--knee", action="store_true",
                     help="the balanced design: closest to the ideal point with each objective scaled to 0..1")
    p.add_argument("--max-volume-cm3", type=float, metavar="V", help="only designs of at most V cm3 (boxed)")
    p.add_argument("--max-loss-w", type=float, metavar="P", help="only designs losing at most P W (the run's loss)")
    p.add_argument("--max-cost", type=float, metavar="C", help="only designs costing at most C")
    p.add_argument("--by", choices=PICK_RULES, default="knee",
                   help="among the designs within the limits, take the knee (default) or the smallest volume, loss or cost")
    catalog_arg(p)
    p.set_defaults(func=cmd_pick)

    p = sub.add_parser("compare", help="overlay the fronts of several runs",
                       description="Overlay the fronts of several runs and tabulate their hypervolumes against a "
                                   "common reference point (1.1 x the worst objective over all fronts).")
    p.add_argument("runs", nargs="+", metavar="RUN_DIR", help="two or more run folders")
    p.add_argument("--out", metavar="DIR", help="output folder (default runs/compare)")
    p.set_defaults(func=cmd_compare)


def register(sub) -> None:
    """Add the subcommands to the parser ``sub``."""
    _register_catalog(sub)
    _register_design(sub)
    _register_search(sub)
    _register_results(sub)
    _register_explore(sub)
    _register_sheet(sub)
    _register_calibrate(sub)
