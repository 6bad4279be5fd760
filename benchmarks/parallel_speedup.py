"""Search-loop overhead and the speed-up of --jobs 2 over --jobs 1 on this machine.

Run:  python benchmarks/parallel_speedup.py [--population 2000] [--generations 6]
Prints evaluations per second inside the search loop (whole generations: ask, evaluate, tell,
archive, files) against the raw evaluator on the same number of designs, and the same search
with 1 and 2 worker processes.  A large population per material is used so that a generation is
worth splitting (see optimizer/parallel.py).
"""
from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

import numpy as np

from fluxfront.catalog import load_catalog
from fluxfront.design.evaluator import evaluate, prepare
from fluxfront.design.spec import demo_spec_path, load_spec
from fluxfront.optimizer.parallel import PopulationEvaluator
from fluxfront.optimizer.run import Settings, start
from fluxfront.optimizer.space import DesignSpace


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--population", type=int, default=500, help="per material (ten materials in the demo)")
    ap.add_argument("--generations", type=int, default=10)
    args = ap.parse_args()
    spec, _ = load_spec(demo_spec_path())
    catalog = load_catalog()
    ctx, space = prepare(spec, catalog), DesignSpace.from_spec(spec, catalog)
    n_islands = len(space.materials)
    designs = space.decode(space.sample(np.random.default_rng(0), args.population * n_islands))
    evaluate(ctx, designs.take(slice(0, 1000)))
    t0 = time.perf_counter()
    evaluate(ctx, designs)
    raw = len(designs) / (time.perf_counter() - t0)
    print(f"raw evaluator: {raw:,.0f} designs/s ({len(designs):,} designs, one process)")
    big = space.decode(space.sample(np.random.default_rng(1), 100_000))
    eval_rates = {}
    for jobs in (1, 2):
        with PopulationEvaluator(ctx, jobs=jobs) as pe:
            pe(big.take(slice(0, 5000)))                      # start the workers
            t0 = time.perf_counter()
            pe(big)
            eval_rates[jobs] = len(big) / (time.perf_counter() - t0)
        print(f"evaluation only, --jobs {jobs}: {eval_rates[jobs]:,.0f} designs/s (100,000 designs)")
    print(f"evaluation speed-up of --jobs 2 over --jobs 1: {eval_rates[2] / eval_rates[1]:.2f}x")
    rates = {}
    with tempfile.TemporaryDirectory() as tmp:
        for jobs in (1, 2):
            t0 = time.perf_counter()
            out = start(spec, demo_spec_path(), catalog, Path(tmp) / f"j{jobs}",
                        Settings(seed=1, population=args.population, generations=args.generations, jobs=jobs),
                        quiet=True)
            rates[jobs] = out.evaluations / (time.perf_counter() - t0)
            print(f"search, --jobs {jobs}: {out.evaluations:,} evaluations at {rates[jobs]:,.0f} /s "
                  f"(including the reference sample and file writes)")
    print(f"loop overhead at --jobs 1: the loop runs at {rates[1] / raw:.0%} of the raw evaluator's rate")
    print(f"whole-search speed-up of --jobs 2 over --jobs 1: {rates[2] / rates[1]:.2f}x "
          f"(the genetic operators and survival run in the main process)")


if __name__ == "__main__":
    main()
