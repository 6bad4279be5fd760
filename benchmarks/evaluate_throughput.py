"""Throughput of the evaluator on the demo spec: designs per second and peak memory.

Run:  python benchmarks/evaluate_throughput.py [--designs 100000] [--chunk 4096]
Prints the batch figure (one process, one core), the same 1,000 designs one call per design,
and their ratio.  Targets (issue: physics): at least 100,000 designs/s on one core.
"""
from __future__ import annotations

import argparse
import os
import resource
import time

os.environ.setdefault("OMP_NUM_THREADS", "1")       # one core: keep BLAS single-threaded
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")

import numpy as np  # noqa: E402

from fluxfront.catalog import load_catalog  # noqa: E402
from fluxfront.design.evaluator import evaluate, prepare  # noqa: E402
from fluxfront.design.spec import demo_spec_path, load_spec  # noqa: E402
from fluxfront.optimizer.space import DesignSpace  # noqa: E402


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--designs", type=int, default=100_000)
    ap.add_argument("--chunk", type=int, default=4096)
    ap.add_argument("--single", type=int, default=1000)
    args = ap.parse_args()

    catalog = load_catalog()
    spec, _ = load_spec(demo_spec_path())
    ctx = prepare(spec, catalog)
    space = DesignSpace.from_spec(spec, catalog)
    designs = space.decode(space.sample(np.random.default_rng(1), args.designs))
    evaluate(ctx, designs.take(slice(0, 2000)), chunk=args.chunk)       # warm-up (tables, caches)

    t0 = time.perf_counter()
    ev = evaluate(ctx, designs, chunk=args.chunk)
    batch = time.perf_counter() - t0
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    n1 = min(args.single, args.designs)
    t0 = time.perf_counter()
    for i in range(n1):
        evaluate(ctx, designs.take(slice(i, i + 1)))
    single = time.perf_counter() - t0

    print(f"operating points: {len(spec.operating_point)}, samples per half cycle: "
          f"{spec.model.samples_per_half_cycle}, harmonics: {spec.model.harmonics}")
    print(f"batch:  {args.designs} designs in {batch:.2f} s = {args.designs / batch:,.0f} designs/s "
          f"(chunk {args.chunk}); feasible {ev.feasible.mean():.1%}")
    print(f"peak memory (max resident set): {peak_mb:,.0f} MB")
    print(f"single: {n1} designs one call each in {single:.2f} s = {n1 / single:,.0f} designs/s")
    print(f"batch / single speed ratio: {(args.designs / batch) / (n1 / single):,.0f}")


if __name__ == "__main__":
    main()
