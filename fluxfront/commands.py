"""Subcommands beyond the catalog: init, evaluate (and the search and results commands)."""
from __future__ import annotations

import json
import sys
from pathlib import Path

from catalog import load_catalog

from .designs import read_design_table, resolve_designs
from .errors import InputError
from .evaluator import evaluate, prepare
from .files import write_atomic
from .report import detail, evaluation_frame, summary_text
from .spec import demo_spec_text, load_spec


def load_problem(spec_path, extra_catalogs):
    """Spec and catalog for a command: the spec's own catalog entries first, then --catalog ones."""
    spec, spec_hash = load_spec(spec_path)
    base = Path(spec_path).parent
    catalogs = [str((base / c)) for c in spec.catalog] + list(extra_catalogs)
    return spec, spec_hash, load_catalog(catalogs)


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
    designs = resolve_designs(table, catalog, source=str(args.designs))
    ctx = prepare(spec, catalog)
    one = len(designs) == 1
    ev = evaluate(ctx, designs, keep_samples=one and args.json)
    if args.json:
        if not one:
            raise InputError(f"{args.designs}: --json prints one design; the file holds {len(designs)} rows")
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


def register(sub, catalog_arg) -> None:
    """Add the subcommands to the parser ``sub``."""
    p = sub.add_parser("init", help="write the commented demo spec as a starting point",
                       description="Write the demo spec, commented field by field, to FILE.")
    p.add_argument("file", metavar="FILE")
    p.add_argument("--force", action="store_true", help="replace FILE if it exists")
    p.set_defaults(func=cmd_init)

    p = sub.add_parser("evaluate", help="evaluate designs from a TOML (one) or CSV (many) file",
                       description="Evaluate one design (TOML, or a one-row CSV) or many (CSV) against SPEC. "
                                   "Design columns: material, shape, stack, turns, gap_mm, wire, parallel, f_sw_khz.")
    p.add_argument("spec", metavar="SPEC")
    p.add_argument("designs", metavar="DESIGNS")
    p.add_argument("--out", metavar="FILE", help="write the CSV (or, with --json, the JSON) here")
    p.add_argument("--json", action="store_true",
                   help="one design: print every intermediate quantity, line-cycle samples included")
    catalog_arg(p)
    p.set_defaults(func=cmd_evaluate)
