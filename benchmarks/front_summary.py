"""Where a front lives: material classes, gaps, frequencies and loss medians of run folders.

    python benchmarks/front_summary.py RUN_DIR [RUN_DIR ...] [--reevaluate SPEC]

With ``--reevaluate SPEC`` every front is also evaluated again with today's models under SPEC
(design columns only), which shows how much of a front stood where older models were silent.
Prints figures; asserts nothing.
"""
from __future__ import annotations

import argparse
from pathlib import Path

import pandas as pd

from fluxfront.catalog import load_catalog
from fluxfront.design.designs import DESIGN_COLUMNS, resolve_designs
from fluxfront.design.evaluator import evaluate, prepare
from fluxfront.design.spec import load_spec
from fluxfront.design.table import evaluation_frame

LOSS_PARTS = ("winding_fringing_loss_w", "core_gap_loss_w", "core_bias_factor")


def describe(front: pd.DataFrame, catalog, label: str) -> None:
    classes = front["material"].map(lambda m: catalog.materials[m].class_ if m in catalog.materials else m)
    gapped = front[front["gap_mm"] > 0]
    print(f"{label}: {len(front)} designs; classes {classes.value_counts().to_dict()}")
    if len(gapped):
        print(f"  gapped {len(gapped)}: gap median {gapped['gap_mm'].median():.2f} mm, above 2 mm "
              f"{int((gapped['gap_mm'] > 2).sum())}" + (f", gaps per leg {gapped['gaps'].value_counts().sort_index().to_dict()}"
                                                        if "gaps" in gapped else ""))
    print(f"  frequency median {front['f_sw_khz'].median():.0f} kHz (above 100 kHz: {int((front['f_sw_khz'] > 100).sum())}); "
          f"total_loss_w median {front['total_loss_w'].median():.2f} W; volume median {front['volume_cm3'].median():.0f} cm3")
    present = [k for k in LOSS_PARTS if k in front]
    if present:
        print("  medians: " + ", ".join(f"{k} {front[k].median():.2f}" for k in present))


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("runs", nargs="+")
    parser.add_argument("--reevaluate", metavar="SPEC")
    args = parser.parse_args()
    catalog = load_catalog()
    ctx = prepare(load_spec(args.reevaluate)[0], catalog) if args.reevaluate else None
    for run in args.runs:
        front = pd.read_csv(Path(run) / "pareto.csv")
        describe(front, catalog, run)
        if ctx is not None and len(front):
            cols = [c for c in DESIGN_COLUMNS if c in front]
            again = evaluation_frame(evaluate(ctx, resolve_designs(front[cols], catalog)), catalog)
            describe(again, catalog, "  re-evaluated with today's models")
            print(f"  feasible now: {int(again['feasible'].sum())} of {len(again)}")


if __name__ == "__main__":
    main()
