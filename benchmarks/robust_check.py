"""A design re-checked at every tolerance corner from outside the search, and its yield.

Run:  python benchmarks/robust_check.py RUN_DIR [--row N]   (default: the front's knee)
For each corner of design/tolerance.py it writes what an engineer would change by hand -- the spec
(ambient, every operating point's voltage), a catalog override of the material (permeability,
Steinmetz k) and the design row (the gap) -- and runs `fluxfront evaluate` on them, then prints
whether the design meets every limit there, and the Monte Carlo yield.  Prints; asserts nothing.
"""
from __future__ import annotations

import argparse
import tempfile
import tomllib
from pathlib import Path

import pandas as pd
import tomli_w

from fluxfront.cli.main import main as fluxfront
from fluxfront.design.designs import DESIGN_COLUMNS, resolve_designs
from fluxfront.design.evaluator import CONSTRAINTS, objective_columns, prepare
from fluxfront.design.spec import load_spec
from fluxfront.design.tolerance import SELECTED, gap_deviation, monte_carlo_yield
from fluxfront.optimizer.front import knee_index
from fluxfront.optimizer.resume import snapshot_catalog
from fluxfront.optimizer.runfolder import RunFolder


def corner_inputs(run: Path, row: pd.DataFrame, catalog, corner, folder: Path) -> None:
    spec = tomllib.loads((run / "spec.toml").read_text())
    tol = spec.get("tolerance", {})
    pct_mu, pct_k = tol.get("permeability_percent", 8.0), tol.get("steinmetz_k_percent", 25.0)
    spec["limits"]["ambient_c"] += corner.ambient * tol.get("ambient_k", 5.0)
    for op in spec["operating_point"]:
        op["v_rms"] *= tol.get("line_sag", 0.95) if corner.sag else 1.0
    spec["catalog"] = []
    (folder / "cat").mkdir(parents=True)
    (folder / "spec.toml").write_text(tomli_w.dumps(spec))
    entry = catalog.materials[row.iloc[0]["material"]].model_dump(by_alias=True, exclude_none=True)
    entry["mu_initial"] *= 1 + corner.mu * pct_mu / 100
    entry["steinmetz"] = [dict(b, k=b["k"] * (1 + corner.k * pct_k / 100)) for b in entry["steinmetz"]]
    (folder / "cat" / "materials.toml").write_text(tomli_w.dumps({"material": [entry]}))
    rows = row.copy()
    if rows.iloc[0]["gap_mm"] > 0:
        from fluxfront.design.spec import load_spec  # the run's own tolerance values for the gap
        dev = gap_deviation(resolve_designs(row, catalog), catalog, load_spec(run / "spec.toml")[0].tolerance)[0]
        rows["gap_mm"] = round(float(rows.iloc[0]["gap_mm"]) + corner.gap * dev * 1e3, 6)
    rows.to_csv(folder / "row.csv", index=False)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("run")
    ap.add_argument("--row", type=int)
    args = ap.parse_args()
    run = Path(args.run)
    catalog = snapshot_catalog(RunFolder(run))
    spec = load_spec(run / "spec.toml")[0]
    front = pd.read_csv(run / "pareto.csv")
    i = args.row if args.row is not None else knee_index(front[list(objective_columns(spec))].to_numpy())
    row = front.iloc[[i]][list(DESIGN_COLUMNS)].reset_index(drop=True)
    print(f"{run}: row {i}: " + ", ".join(f"{k}={row.iloc[0][k]}" for k in DESIGN_COLUMNS))
    passed = 0
    with tempfile.TemporaryDirectory() as tmp:
        for n, corner in enumerate(SELECTED):
            folder = Path(tmp) / f"c{n}"
            corner_inputs(run, row, catalog, corner, folder)
            code = fluxfront(["evaluate", str(folder / "spec.toml"), str(folder / "row.csv"), "--catalog",
                              str(folder / "cat"), "--out", str(folder / "out.csv")])
            out = pd.read_csv(folder / "out.csv").iloc[0]
            fails = [c for c in CONSTRAINTS if out[f"g_{c}"] > 0]
            passed += code == 0 and not fails
            print(f"  {corner.name}: {'passes' if not fails else 'FAILS ' + ', '.join(fails)}")
    y = monte_carlo_yield(prepare(spec, catalog), resolve_designs(row, catalog))
    print(f"  corners passed {passed} of {len(SELECTED)}; yield {y.share:.1%} of {y.samples} (seed {y.seed})"
          + (f", fails most: {y.most_failing}" if y.most_failing else ""))


if __name__ == "__main__":
    main()
