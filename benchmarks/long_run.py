"""Time per generation late in a long run against early: the loop must not slow down as it ages.

Run:  python benchmarks/long_run.py [--generations 20000] [--population 4]
A small population per material keeps a generation cheap, so that twenty thousand generations fit
in minutes; history.csv's elapsed time gives the time per generation.  Prints the median time per
generation around generation 100 and around the last generation, and their ratio.
Target (issue: search engine): at generation 20,000 no more than 1.2 x that at generation 100.
"""
from __future__ import annotations

import argparse
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd

from fluxfront.catalog import load_catalog
from fluxfront.design.spec import demo_spec_path, load_spec
from fluxfront.optimizer.run import Settings, start


def per_generation(h: pd.DataFrame, around: int, width: int = 50) -> float:
    """Median seconds per generation over chunks ending near generation ``around``."""
    rows = h[(h.generation > around - width) & (h.generation <= around + width)]
    ends = rows.drop_duplicates("elapsed_s", keep="last")       # rows of one chunk share their time
    return float(np.median(np.diff(ends.elapsed_s.to_numpy()) / np.diff(ends.generation.to_numpy())))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--generations", type=int, default=20000)
    ap.add_argument("--population", type=int, default=4)
    args = ap.parse_args()
    spec, _ = load_spec(demo_spec_path())
    with tempfile.TemporaryDirectory() as tmp:
        out = start(spec, demo_spec_path(), load_catalog(), Path(tmp) / "long",
                    Settings(seed=1, population=args.population, generations=args.generations, jobs=1), quiet=True)
        h = pd.read_csv(out.folder / "history.csv")
    early, late = per_generation(h, 100), per_generation(h, args.generations - 60)
    print(f"{args.generations} generations of {args.population} designs per material; front {out.front_size}")
    print(f"time per generation: {early * 1e3:.2f} ms near generation 100, {late * 1e3:.2f} ms near generation "
          f"{args.generations}; ratio {late / early:.2f}")


if __name__ == "__main__":
    main()
