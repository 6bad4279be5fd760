"""Fitted catalog entries written for the engineer: a materials.toml to pass with --catalog, a plot of
data against fit, and the fit's errors."""
from __future__ import annotations

from datetime import date
from pathlib import Path

import numpy as np
import tomli_w

from fluxfront.catalog import Catalog, CatalogError, load_catalog
from fluxfront.catalog.fitting import fit_loss, fit_rolloff, read_points
from fluxfront.design.calibration import calibrate, calibrated_material, read_measured
from fluxfront.design.designs import read_design_table, resolve_designs
from fluxfront.design.evaluator import prepare
from fluxfront.design.spec import load_problem
from fluxfront.errors import InputError
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


def write_rolloff_fit(points_path, out, new_id: str, base_id: str, catalog: Catalog, table: bool = False) -> list[str]:
    """The powder roll-off fit ``1/(a + b H_Oe^c)`` from permeability fractions against DC field, or
    (``table``) the points themselves, stored with the field in A/m and interpolated in log H."""
    points_path, out = Path(points_path), Path(out)
    points, used = read_points(points_path, {"h": True, "fraction": True})
    base = catalog.materials.get(base_id)
    if base is not None and base.gap_kind != "distributed":
        raise CatalogError(f"--base {base_id!r}: a roll-off belongs to a distributed-gap (powder) material")
    a, b, c, errors = fit_rolloff(points["h"], points["fraction"], points_path)
    if table:
        order = np.argsort(points["h"])
        h, frac = points["h"][order], points["fraction"][order]
        if np.any(np.diff(h) <= 0):
            raise CatalogError(f"{points_path}: a roll-off table needs each field value once")
        entry = _entry(catalog, base_id, new_id, {"rolloff_table_h_a_per_m": h.tolist(),
                                                  "rolloff_table_fraction": frac.tolist()}, points_path)
        for key in ("rolloff_a", "rolloff_b", "rolloff_c"):
            entry.pop(key, None)
        path = _write(out, entry)
        figure = plots.save(plots.rolloff_fit(points, (a, b, c)), out, "rolloff_fit")[0]
        return [f"read {len(h)} points ({', '.join(used.values())}) from {points_path}",
                f"  stored as a table of {len(h)} points, field in A/m, interpolated in log H (a fit for "
                f"comparison: 1 / ({a:.4g} + {b:.4g} H_Oe^{c:.3f}), {_summary(errors)})",
                f"wrote {path} (material '{new_id}') and {figure}", f"use it with: --catalog {out}"]
    entry = _entry(catalog, base_id, new_id, {"rolloff_a": a, "rolloff_b": b, "rolloff_c": c}, points_path)
    path = _write(out, entry)
    figure = plots.save(plots.rolloff_fit(points, (a, b, c)), out, "rolloff_fit")[0]
    return [f"read {len(points['h'])} points ({', '.join(used.values())}) from {points_path}",
            f"  fraction = 1 / ({a:.4g} + {b:.4g} H^{c:.3f}), H in oersted (the catalog's form)",
            f"  {_summary(errors)}", f"wrote {path} (material '{new_id}') and {figure}",
            f"use it with: --catalog {out}"]


def write_calibration(spec_path, design_path, measured_path, out, extra_catalogs=()) -> list[str]:
    """Calibration factors from a measured prototype, a before/after table, and what the next run uses:
    OUT/materials.toml (the material with its factors) and OUT/calibration.toml (the spec's factors)."""
    spec, _, catalog = load_problem(spec_path, extra_catalogs)
    designs = resolve_designs(read_design_table(design_path), catalog, source=str(design_path))
    if len(designs) != 1:
        raise InputError(f"{design_path}: calibration takes one design (the one that was built); "
                         f"the file holds {len(designs)}")
    meas = read_measured(measured_path)
    result = calibrate(prepare(spec, catalog), designs, meas)
    out = Path(out)
    today = date.today().isoformat()
    entry = calibrated_material(catalog, designs, result.factors, Path(measured_path).name, today)
    material_path = _write(out, entry)
    settings = {"model": {"gap_factor": result.factors.get("gap_factor", spec.model.gap_factor)},
                "thermal": {"dissipation_factor": result.factors.get("dissipation_factor",
                                                                     spec.thermal.dissipation_factor)}}
    spec_path_out = write_atomic(out / "calibration.toml", "# copy these keys into the spec's sections\n"
                                 + tomli_w.dumps(settings))
    table = ["| quantity | model before | model after | measured |", "|---|---|---|---|"]
    table += [f"| {a} | {b} | {c} | {d} |" for a, b, c, d in result.rows]
    write_atomic(out / "calibration.md", "# Calibration against the measured prototype\n\n" + "\n".join(table) + "\n")
    lines = ["calibration factors: " + ", ".join(f"{k} {v:.4g}" for k, v in result.factors.items())]
    lines += [f"  {a}: model {b} -> {c}, measured {d}" for a, b, c, d in result.rows]
    lines += [f"wrote {material_path} (material '{entry['id']}' with the factors), {spec_path_out} (gap and "
              f"dissipation factors for the spec) and {out / 'calibration.md'}",
              f"search again with: the keys of {spec_path_out} in the spec, and --catalog {out}"]
    return lines
