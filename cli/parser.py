"""The command line's arguments: one parser per subcommand, each with a help text, pointing at its
handler in commands.py."""
from __future__ import annotations

import argparse

from fluxfront.results.picking import PICK_RULES

from .commands import (
    cmd_calibrate,
    cmd_catalog,
    cmd_compare,
    cmd_demo,
    cmd_evaluate,
    cmd_explore,
    cmd_fit,
    cmd_flux_map,
    cmd_init,
    cmd_pick,
    cmd_plot,
    cmd_resume,
    cmd_run,
    cmd_sheet,
)


def catalog_arg(p: argparse.ArgumentParser) -> None:
    p.add_argument("--catalog", action="append", default=[], metavar="DIR",
                   help="user catalog folder or file added over the built-in one (repeatable)")


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
