"""Search quality: hypervolume reached by the search against the true front of an enumerated space.

Run:  python benchmarks/search_quality.py [--population 100] [--generations 200] [--seeds 1 2 3]
The design space (about a million designs) is the demo scenario restricted to three materials,
nine cores, five wires, and coarse gap and frequency steps, so that every design can be evaluated.
Target (issue: search): 99 % of the true hypervolume with at most 2 % of the enumeration's evaluations.
"""
from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

import pandas as pd

from fluxfront.catalog import load_catalog
from fluxfront.design.evaluator import evaluate, prepare
from fluxfront.design.spec import demo_spec_path, load_spec
from fluxfront.optimizer.front import hypervolume, non_dominated
from fluxfront.optimizer.run import Settings, start
from fluxfront.optimizer.space import DesignSpace

SEARCH = """
[search]
materials = ["mnzn_ferrite_100k", "fesial_powder_60", "fesial_powder_26"]
shapes = ["ETD39", "ETD44", "ETD49", "ETD54", "E42/21/15", "E55/28/21", "T47/24/18", "T57/26/15", "T62/33/25"]
wires = ["awg20-g2", "awg18-g2", "awg16-g2", "awg14-g2", "litz175x38awg"]
stack_max = 2
turns_min = 10
turns_max = 134
gap_mm_min = 1.0
gap_mm_max = 3.0
gap_mm_step = 0.5
parallel_max = 4
f_sw_khz_min = 50
f_sw_khz_max = 150
f_sw_khz_step = 25
"""


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--population", type=int, default=50, help="per material (three materials here)")
    ap.add_argument("--generations", type=int, default=133)
    ap.add_argument("--seeds", type=int, nargs="+", default=[1, 2, 3])
    args = ap.parse_args()

    with tempfile.TemporaryDirectory() as tmp:
        text = demo_spec_path().read_text()
        spec_path = Path(tmp) / "spec.toml"
        spec_path.write_text(text[: text.index("[search]")] + SEARCH)
        spec, _ = load_spec(spec_path)
        catalog = load_catalog()
        ctx, space = prepare(spec, catalog), DesignSpace.from_spec(spec, catalog)
        grid = space.grid()
        t0 = time.perf_counter()
        ev = evaluate(ctx, space.decode(grid), chunk=8192)
        t_enum = time.perf_counter() - t0
        F = ev.objectives[ev.feasible]
        true_front = F[non_dominated(F)]
        reference = 1.1 * true_front.max(axis=0)
        hv_true = hypervolume(true_front, reference)
        print(f"enumerated {len(grid):,} designs in {t_enum:.1f} s; {ev.feasible.mean():.1%} feasible; "
              f"true front {len(true_front)} designs, hypervolume {hv_true:.5f}")
        for seed in args.seeds:
            t0 = time.perf_counter()
            out = start(spec, spec_path, catalog, Path(tmp) / f"run{seed}",
                        Settings(seed=seed, population=args.population, generations=args.generations, jobs=1),
                        quiet=True)
            hist = pd.read_csv(out.folder / "pareto.csv")[["volume_cm3", "total_loss_w", "cost"]].to_numpy()
            ratio = hypervolume(hist, reference) / hv_true
            print(f"seed {seed}: {out.evaluations:,} evaluations = {out.evaluations / len(grid):.2%} of the "
                  f"enumeration, hypervolume {ratio:.2%} of the true front's, {time.perf_counter() - t0:.1f} s")


if __name__ == "__main__":
    main()
