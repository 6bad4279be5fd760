"""The catalog a run used, rebuilt from the run folder's catalog.json (a run keeps its own entries)."""
from __future__ import annotations

from dataclasses import fields
from pathlib import Path

import numpy as np

from .loader import Catalog, CatalogError, Wire, _validated
from .schema import Copper, Costs, Family, Material, Shape


def catalog_from_snapshot(data, source) -> Catalog:
    """The catalog a run used, rebuilt from its ``catalog.json`` and validated like the data files.

    Raises CatalogError with one line naming the file and the part that is wrong.
    """
    path = Path(source)
    needed = ("materials", "shapes", "families", "wires", "copper", "costs")
    if not isinstance(data, dict) or any(not isinstance(data.get(k), dict) for k in needed):
        raise CatalogError(f"{path}: not a catalog snapshot (expected the sections {', '.join(needed)})")
    families = {k: _validated(Family, v, path, "family", k) for k, v in data["families"].items()}
    materials = {k: _validated(Material, v, path, "material", k) for k, v in data["materials"].items()}
    shapes = {k: _validated(Shape, v, path, "shape", k) for k, v in data["shapes"].items()}
    wires = {}
    names = [f.name for f in fields(Wire)]
    for k, raw in data["wires"].items():
        if not isinstance(raw, dict) or sorted(raw) != sorted(names):
            raise CatalogError(f"{path}: wire {k!r}: expected exactly the fields {', '.join(names)}")
        numbers = [raw[n] for n in ("strand_diameter", "outer_diameter", "copper_area")]
        if not all(isinstance(v, (int, float)) and not isinstance(v, bool) and np.isfinite(v) and v > 0
                   for v in numbers) or raw["kind"] not in ("round", "litz") or not isinstance(raw["strands"], int):
            raise CatalogError(f"{path}: wire {k!r}: sizes must be positive numbers, kind round or litz")
        wires[k] = Wire(**raw)
    if not materials or not shapes or not wires:
        raise CatalogError(f"{path}: the snapshot holds no material, shape or wire")
    return Catalog(materials, families, shapes, wires, _validated(Copper, data["copper"], path, "copper", "copper"),
                   _validated(Costs, data["costs"], path, "costs", "costs"), list(data.get("sources") or []))
