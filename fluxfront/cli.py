"""The ``fluxfront`` command: one entry point, one subcommand per job.

Exit codes: 0 done; 2 bad input (one line on stderr naming the field and the expected form);
3 a search found no feasible design (the run folder is still written).
"""
from __future__ import annotations

import argparse
import json
import sys

import pandas as pd

from catalog import CatalogError, load_catalog

from .errors import InputError

EXIT_BAD_INPUT = 2
EXIT_NO_FEASIBLE = 3


def _catalog_arg(p: argparse.ArgumentParser) -> None:
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


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="fluxfront",
        description="Design the boost inductor of an active PFC front end: search material, core, turns, "
                    "gap, wire and switching frequency together for the volume-loss-cost Pareto front.")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    p = sub.add_parser("catalog", help="list or check catalog data",
                       description="List materials, shapes (with computed geometry) or wires, or check a user catalog.")
    csub = p.add_subparsers(dest="what", required=True, metavar="WHAT")
    for what, text in (("materials", "core materials by class"), ("shapes", "core shapes with le, Ae, Ve, window, mass"),
                       ("wires", "round magnet wire and litz")):
        q = csub.add_parser(what, help=f"list {text}", description=f"List {text}.")
        q.add_argument("--json", action="store_true", help="print JSON records instead of a table")
        _catalog_arg(q)
        q.set_defaults(func=cmd_catalog)
    q = csub.add_parser("check", help="validate a user catalog file or folder",
                        description="Validate a user catalog file or folder; exit 0 when valid, 2 otherwise.")
    q.add_argument("path", help="catalog folder, or one of materials.toml, shapes.toml, wires.toml, costs.toml")
    q.set_defaults(func=cmd_catalog)

    from . import commands  # the physics and search commands register themselves
    commands.register(sub, _catalog_arg)
    return parser


def main(argv=None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return args.func(args)
    except (CatalogError, InputError) as exc:
        print(f"fluxfront: error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        print("fluxfront: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # output piped into a reader that stopped early (e.g. head): not an error
        import os

        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())


__all__ = ["main", "build_parser", "EXIT_BAD_INPUT", "EXIT_NO_FEASIBLE"]
