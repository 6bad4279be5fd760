"""Fitted catalog entries written for the engineer: a materials.toml to pass with --catalog, a plot of
data against fit, and the fit's errors."""
from __future__ import annotations

from datetime import date
from pathlib import Path

import numpy as np
import tomli_w

from fluxfront.catalog import Catalog, CatalogError, load_catalog
from fluxfront.catalog.fitting import fit_loss, fit_rolloff, read_points
from fluxfront.files import write_atomic

from . import plots


def _entry(catalog: Catalog, base_id: str, new_id: str, changes: dict, points: Path) -> dict:
    if base_id not in catalog.materials:
        raise CatalogError(f"--base {base_id!r}: unknown material; valid: {', '.join(catalog.materials)}")
    entry = catalog.materials[base_id].model_dump(by_alias=True, exclude_none=True)
    entry.update(changes)
    entry["id"] = new_id
    entry["description"] = f"fitted to measured points ({points.name}); fields not fitted come from {base_id}"
    entry["provenance"] = f"fitted from {points.name} on {date.today().isoformat()}; other fields from {base_id}"
    return entry


def _write(out: Path, entry: dict) -> Path:
    """Write materials.toml and check it loads as a catalog folder (the fit must be a valid entry)."""
    path = write_atomic(out / "materials.toml", tomli_w.dumps({"material": [entry]}))
    load_catalog([out])
    return path


def _summary(errors: np.ndarray) -> str:
    e = np.abs(errors) * 100
    return f"fit error: median {np.median(e):.1f} %, worst {np.max(e):.1f} % over {len(e)} points"


def write_loss_fit(points_path, out, new_id: str, base_id: str, catalog: Catalog) -> list[str]:
    """Steinmetz bands (and the loss-temperature fit) from loss-density points; returns report lines."""
    points_path, out = Path(points_path), Path(out)
    points, used = read_points(points_path, {"f": True, "b": True, "pv": True, "t": False})
    fit = fit_loss(points, points_path)
    bands = [{"f_min_hz": bd.f_min, "f_max_hz": bd.f_max, "b_min_t": bd.b_min, "b_max_t": bd.b_max, "k": bd.k,
              "alpha": bd.alpha, "beta": bd.beta} for bd in fit.bands]
    entry = _entry(catalog, base_id, new_id, {"steinmetz": bands, "loss_temp_ref_c": fit.t_ref,
                                              "loss_temp_c1": fit.c1, "loss_temp_c2": fit.c2}, points_path)
    path = _write(out, entry)
    figure = plots.save(plots.loss_fit(points, fit), out, "loss_fit")[0]
    lines = [f"read {len(points['f'])} points ({', '.join(used.values())}) from {points_path}"]
    for bd in fit.bands:
        lines.append(f"  band {bd.f_min / 1e3:g}-{bd.f_max / 1e3:g} kHz, {bd.b_min * 1e3:.0f}-{bd.b_max * 1e3:.0f} mT: "
                     f"k = {bd.k:.4g}, alpha = {bd.alpha:.3f}, beta = {bd.beta:.3f}")
    lines.append(f"  loss-temperature factor at {fit.t_ref:g} C: c1 = {fit.c1:.3g} /K, c2 = {fit.c2:.3g} /K2")
    lines += [f"  {_summary(fit.errors)}", f"wrote {path} (material '{new_id}') and {figure}",
              f"use it with: --catalog {out}"]
    return lines


def write_rolloff_fit(points_path, out, new_id: str, base_id: str, catalog: Catalog) -> list[str]:
    """The powder roll-off fit ``1/(a + b H_Oe^c)`` from permeability fractions against DC field."""
    points_path, out = Path(points_path), Path(out)
    points, used = read_points(points_path, {"h": True, "fraction": True})
    base = catalog.materials.get(base_id)
    if base is not None and base.gap_kind != "distributed":
        raise CatalogError(f"--base {base_id!r}: a roll-off belongs to a distributed-gap (powder) material")
    a, b, c, errors = fit_rolloff(points["h"], points["fraction"], points_path)
    entry = _entry(catalog, base_id, new_id, {"rolloff_a": a, "rolloff_b": b, "rolloff_c": c}, points_path)
    path = _write(out, entry)
    figure = plots.save(plots.rolloff_fit(points, (a, b, c)), out, "rolloff_fit")[0]
    return [f"read {len(points['h'])} points ({', '.join(used.values())}) from {points_path}",
            f"  fraction = 1 / ({a:.4g} + {b:.4g} H^{c:.3f}), H in oersted (the catalog's form)",
            f"  {_summary(errors)}", f"wrote {path} (material '{new_id}') and {figure}",
            f"use it with: --catalog {out}"]
