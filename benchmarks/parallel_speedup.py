"""Search-loop overhead and the speed-up of --jobs 2 over --jobs 1 on this machine.

Run:  python benchmarks/parallel_speedup.py [--population 500] [--generations 20] [--repeats 3]
Prints the raw evaluator's rate on one core, then, for 1 and 2 worker processes, the rate of the
generations themselves (designs evaluated per second of loop time from history.csv: breeding,
evaluation, survival, archive, history, checkpoints, pareto.csv; the reference sample and the
final sweep excluded) and of the whole run (everything, from start to end).  Medians of repeats.
Targets (issue: search engine): the loop at 75 % or more of the raw rate at 500 designs per
material; --jobs 2 at 1.7x or more of --jobs 1 for the whole search.
"""
from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

from fluxfront.catalog import load_catalog
from fluxfront.design.evaluator import evaluate, prepare
from fluxfront.design.spec import demo_spec_path, load_spec
from fluxfront.optimizer.run import Settings, start
from fluxfront.optimizer.space import DesignSpace


def loop_rate(folder: Path) -> float:
    """Designs per second over the generations (first chunk excluded: workers start there)."""
    h = pd.read_csv(folder / "history.csv")
    first = h.iloc[4]                      # end of the first chunk of five generations
    last = h.iloc[-1]
    return (last.evaluations - first.evaluations) / (last.elapsed_s - first.elapsed_s)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--population", type=int, default=500, help="per material (ten materials in the demo)")
    ap.add_argument("--generations", type=int, default=20)
    ap.add_argument("--repeats", type=int, default=3)
    args = ap.parse_args()
    spec, _ = load_spec(demo_spec_path())
    catalog = load_catalog()
    ctx, space = prepare(spec, catalog), DesignSpace.from_spec(spec, catalog)
    designs = space.decode(space.sample(np.random.default_rng(0), args.population * len(space.materials)))
    evaluate(ctx, designs.take(slice(0, 1000)))
    raws = []
    for _ in range(args.repeats):
        t0 = time.perf_counter()
        evaluate(ctx, designs)
        raws.append(len(designs) / (time.perf_counter() - t0))
    raw = float(np.median(raws))
    print(f"raw evaluator: {raw:,.0f} designs/s ({len(designs):,} designs, one process, median of {args.repeats})")
    loops, wholes = {}, {}
    with tempfile.TemporaryDirectory() as tmp:
        for jobs in (1, 2):
            lr, wr = [], []
            for r in range(args.repeats):
                t0 = time.perf_counter()
                out = start(spec, demo_spec_path(), catalog, Path(tmp) / f"j{jobs}r{r}",
                            Settings(seed=1, population=args.population, generations=args.generations, jobs=jobs),
                            quiet=True)
                wr.append(out.evaluations / (time.perf_counter() - t0))
                lr.append(loop_rate(out.folder))
            loops[jobs], wholes[jobs] = float(np.median(lr)), float(np.median(wr))
            print(f"--jobs {jobs}: generations at {loops[jobs]:,.0f} designs/s ({loops[jobs] / raw:.0%} of the raw "
                  f"rate), whole run at {wholes[jobs]:,.0f} designs/s")
    print(f"speed-up of --jobs 2 over --jobs 1: generations {loops[2] / loops[1]:.2f}x, whole run "
          f"{wholes[2] / wholes[1]:.2f}x")


if __name__ == "__main__":
    main()
