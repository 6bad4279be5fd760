"""Design rows: one candidate inductor per row, read from CSV or TOML and resolved against the catalog.

Columns (part of the interface): ``material``, ``shape``, ``stack``, ``turns``, ``gap_mm``, ``gaps``,
``wire``, ``parallel``, ``f_sw_khz``.  ``gap_mm`` is the total gap in the magnetic path; it must be 0
for distributed-gap (powder) materials.  ``gaps`` is the number of discrete gaps the gap of each
gapped leg is split into (1: one gap per gapped leg); it may be left out (then 1) and must be 1
for powder materials.
"""
from __future__ import annotations

import csv
import tomllib
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from fluxfront.catalog import Catalog
from fluxfront.errors import InputError

DESIGN_COLUMNS = ("material", "shape", "stack", "turns", "gap_mm", "gaps", "wire", "parallel", "f_sw_khz")
OPTIONAL_COLUMNS = {"gaps": "1"}   # column -> value taken where the column is left out
MAX_GAPS = 8


@dataclass(frozen=True)
class Designs:
    """A population of designs as arrays of catalog indices and SI values."""

    material: np.ndarray   # catalog material index
    shape: np.ndarray      # catalog shape index
    stack: np.ndarray      # cores stacked, 1-3
    turns: np.ndarray      # [-]
    gap: np.ndarray        # total gap [m]
    wire: np.ndarray       # catalog wire index
    parallel: np.ndarray   # wires in hand [-]
    f_sw: np.ndarray       # switching frequency [Hz]
    gaps: np.ndarray       # discrete gaps per gapped leg [-]
    # as-built deviations of one part from its catalog material (tolerance studies); None = none
    mu_scale: np.ndarray | None = None   # permeability over the catalog's
    k_scale: np.ndarray | None = None    # Steinmetz k over the catalog's

    def __len__(self) -> int:
        return len(self.turns)

    @property
    def mu_factor(self) -> np.ndarray:
        return np.ones(len(self)) if self.mu_scale is None else self.mu_scale

    @property
    def k_factor(self) -> np.ndarray:
        return np.ones(len(self)) if self.k_scale is None else self.k_scale

    @classmethod
    def concat(cls, parts: list["Designs"]) -> "Designs":
        def joined(name):
            values = [getattr(p, name) for p in parts]
            if all(v is None for v in values):
                return None
            return np.concatenate([np.ones(len(p)) if v is None else v for p, v in zip(parts, values)])
        return cls(**{f: joined(f) for f in cls.__dataclass_fields__})

    def take(self, index) -> "Designs":
        return Designs(**{f: None if getattr(self, f) is None else getattr(self, f)[index]
                          for f in self.__dataclass_fields__})

    def to_frame(self, catalog: Catalog) -> pd.DataFrame:
        """The rows with catalog ids and engineering units (the interface columns)."""
        return pd.DataFrame({
            "material": np.array(list(catalog.materials))[self.material],
            "shape": np.array(list(catalog.shapes))[self.shape],
            "stack": self.stack.astype(int), "turns": self.turns.astype(int),
            "gap_mm": np.round(self.gap * 1e3, 6), "gaps": self.gaps.astype(int),
            "wire": np.array(list(catalog.wires))[self.wire],
            "parallel": self.parallel.astype(int), "f_sw_khz": np.round(self.f_sw / 1e3, 6),
        })


def read_design_table(path) -> pd.DataFrame:
    """Read design rows from a CSV (many rows) or a TOML file (one design, keys = columns)."""
    path = Path(path)
    if not path.is_file():
        raise InputError(f"{path}: no such designs file (expected a .csv or .toml file)")
    if path.suffix.lower() == ".toml":
        try:
            data = tomllib.loads(path.read_text(encoding="utf-8"))
        except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
            raise InputError(f"{path}: not valid TOML ({exc})") from None
        data = data.get("design", data)
        if not isinstance(data, dict):
            raise InputError(f"{path}: expected one design as keys {', '.join(DESIGN_COLUMNS)}")
        return pd.DataFrame([data])
    if path.suffix.lower() == ".csv":
        try:
            with open(path, encoding="utf-8", newline="") as fh:
                header = next(csv.reader(fh), [])
            frame = pd.read_csv(path, dtype=str, skipinitialspace=True)
        except (pd.errors.ParserError, pd.errors.EmptyDataError, UnicodeDecodeError) as exc:
            raise InputError(f"{path}: not a readable CSV ({str(exc).splitlines()[0]})") from None
        names = [h.strip() for h in header]
        twice = sorted({h for h in names if names.count(h) > 1})
        if twice:
            raise InputError(f"{path}: column '{twice[0]}' appears twice; each column once")
        return frame
    raise InputError(f"{path}: designs file must end in .csv or .toml")


def _numbers(df, col, source, integer, lo, hi):
    flags = df[col].map(lambda v: isinstance(v, (bool, np.bool_)))
    if flags.any():
        i = int(np.argmax(flags.to_numpy()))
        raise InputError(f"{source} row {i + 1}: column '{col}' = {df[col].iloc[i]!r}: expected a number, not true/false")
    values = pd.to_numeric(df[col], errors="coerce").to_numpy(dtype=float)
    bad = ~np.isfinite(values) | (values < lo) | (values > hi)
    if integer:
        bad |= values != np.round(values)
    if bad.any():
        i = int(np.argmax(bad))
        kind = "a whole number" if integer else "a number"
        raise InputError(f"{source} row {i + 1}: column '{col}' = {df[col].iloc[i]!r}: expected {kind} "
                         f"from {lo:g} to {hi:g}")
    return values


def _ids(df, col, table: dict, source, kind):
    names = list(table)
    lut = {n: i for i, n in enumerate(names)}
    values = df[col].astype(str).str.strip()
    idx = values.map(lut)
    if idx.isna().any():
        i = int(np.argmax(idx.isna().to_numpy()))
        raise InputError(f"{source} row {i + 1}: column '{col}' = {values.iloc[i]!r}: unknown {kind}; "
                         f"valid: {', '.join(names)}")
    return idx.to_numpy(dtype=int)


def resolve_designs(df: pd.DataFrame, catalog: Catalog, source="designs", allowed_extra=None) -> Designs:
    """Check every row against the catalog and the physics; return arrays.

    ``allowed_extra``: further columns that may stand beside the design columns and are ignored
    (result columns of a front); any other column is refused, as a misspelt design column would be.
    Raises InputError naming the row, column, value and the valid choices for the first bad cell.
    """
    if allowed_extra is not None:
        unknown = [c for c in df.columns if c not in DESIGN_COLUMNS and c not in allowed_extra]
        if unknown:
            raise InputError(f"{source}: unknown column '{unknown[0]}'; design columns are {', '.join(DESIGN_COLUMNS)} "
                             "(result columns of a front are ignored)")
    df = df.assign(**{c: v for c, v in OPTIONAL_COLUMNS.items() if c not in df.columns})
    missing = [c for c in DESIGN_COLUMNS if c not in df.columns]
    if missing:
        raise InputError(f"{source}: missing column '{missing[0]}'; design columns are {', '.join(DESIGN_COLUMNS)}")
    if len(df) == 0:
        raise InputError(f"{source}: no design rows")
    mat = _ids(df, "material", catalog.materials, source, "material")
    shp = _ids(df, "shape", catalog.shapes, source, "shape")
    wire = _ids(df, "wire", catalog.wires, source, "wire")
    stack = _numbers(df, "stack", source, True, 1, 3)
    turns = _numbers(df, "turns", source, True, 1, 5000)
    gap = _numbers(df, "gap_mm", source, False, 0, 50) * 1e-3
    par = _numbers(df, "parallel", source, True, 1, 100)
    gaps = _numbers(df, "gaps", source, True, 1, MAX_GAPS)
    # rounded to mHz so that a kHz value written to CSV reads back to the identical frequency
    f_sw = np.round(_numbers(df, "f_sw_khz", source, False, 1, 10e3) * 1e3, 3)

    ok = catalog.compatible(mat, shp)
    if not ok.all():
        i = int(np.argmin(ok))
        m = catalog.materials[df["material"].iloc[i].strip()]
        fam = catalog.shape_arrays["family"][shp[i]]
        valid = [s for s, e in catalog.shapes.items() if e.family in m.families]
        raise InputError(f"{source} row {i + 1}: shape {df['shape'].iloc[i].strip()!r} (family {fam}) is not made "
                         f"in material {m.id!r}; valid shapes: {', '.join(valid)}")
    too_tall = stack > catalog.shape_arrays["max_stack"][shp]
    if too_tall.any():
        i = int(np.argmax(too_tall))
        raise InputError(f"{source} row {i + 1}: column 'stack' = {int(stack[i])}: shape "
                         f"{df['shape'].iloc[i].strip()!r} stacks at most {catalog.shape_arrays['max_stack'][shp[i]]}")
    dist = catalog.material_arrays.distributed_gap[mat]
    gapped_powder = dist & (gap > 0)
    if gapped_powder.any():
        i = int(np.argmax(gapped_powder))
        raise InputError(f"{source} row {i + 1}: column 'gap_mm' = {df['gap_mm'].iloc[i]}: material "
                         f"{df['material'].iloc[i].strip()!r} has a distributed gap; expected 0")
    split_powder = dist & (gaps > 1)
    if split_powder.any():
        i = int(np.argmax(split_powder))
        raise InputError(f"{source} row {i + 1}: column 'gaps' = {df['gaps'].iloc[i]}: material "
                         f"{df['material'].iloc[i].strip()!r} has a distributed gap; expected 1")
    return Designs(mat, shp, stack.astype(int), turns, gap, wire, par, f_sw, gaps)
