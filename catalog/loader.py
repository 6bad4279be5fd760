"""The one loader of the catalog: reads the data files, validates them, merges user catalogs.

Built-in data live in ``catalog/data``; a user catalog folder (``--catalog DIR``) may hold any
of ``materials.toml``, ``shapes.toml``, ``wires.toml``, ``costs.toml`` in the same layout.
Its entries add to the built-in ones, and an entry with an existing id replaces it.

Every problem is reported as one CatalogError line:
``<file>: <kind> '<id>': field '<field>' = <value>: <what was expected>``.
"""
from __future__ import annotations

import hashlib
import json
import tomllib
from dataclasses import dataclass, fields, replace
from functools import cached_property
from importlib import resources
from pathlib import Path

import numpy as np
import pandas as pd
from pydantic import BaseModel

from fluxfront.models import geometry, magnetics, winding

from .schema import Copper, Costs, Family, Litz, Material, RoundWireRule, Shape
from .validation import validate_entry

FILE_NAMES = ("materials.toml", "shapes.toml", "wires.toml", "costs.toml")


class CatalogError(ValueError):
    """A catalog file or entry is invalid; the message is one line meant for the user."""


def _builtin_dir() -> Path:
    return Path(str(resources.files("fluxfront.catalog") / "data"))


def _read_toml(path: Path) -> dict:
    try:
        with open(path, "rb") as fh:
            return tomllib.load(fh)
    except tomllib.TOMLDecodeError as exc:
        raise CatalogError(f"{path}: not valid TOML ({exc})") from None
    except UnicodeDecodeError:
        raise CatalogError(f"{path}: not a UTF-8 text file; a catalog file is TOML text") from None
    except OSError as exc:
        raise CatalogError(f"{path}: cannot be read ({exc.strerror})") from None


def _validated(model: type[BaseModel], raw, path: Path, kind: str, entry_id: str):
    return validate_entry(model, raw, f"{path}: {kind} '{entry_id}'", CatalogError)


@dataclass(frozen=True)
class Wire:
    """A winding conductor as the models need it (SI units)."""

    id: str
    kind: str                 # "round" or "litz"
    strand_diameter: float    # bare copper diameter of one strand (round wire: the wire) [m]
    strands: int              # strands in parallel inside the conductor (round wire: 1)
    outer_diameter: float     # over insulation (litz: over serving) [m]
    copper_area: float        # total copper section [m2]
    awg: int                  # gauge of the wire or of the strand
    grade: int                # enamel grade (litz strands: 1)
    provenance: str


def _round_wires(rule: RoundWireRule) -> list[Wire]:
    out = []
    for awg in range(rule.awg_min, rule.awg_max + 1):
        d = float(winding.awg_diameter(awg))
        build2 = float(np.interp(awg, rule.build_anchor_awg, rule.build_anchor_grade2_mm)) * 1e-3
        for grade in rule.grades:
            build = build2 * {1: rule.grade1_fraction, 2: 1.0, 3: 1.0 + (1.0 - rule.grade1_fraction)}[grade]
            out.append(Wire(f"awg{awg}-g{grade}", "round", d, 1, d + build, np.pi * d**2 / 4,
                            awg, grade, rule.provenance))
    return out


def _litz_wire(entry: Litz, rule: RoundWireRule) -> Wire:
    d = float(winding.awg_diameter(entry.strand_awg))
    build = float(np.interp(entry.strand_awg, rule.build_anchor_awg, rule.build_anchor_grade2_mm)) * 1e-3
    strand_outer = d + rule.grade1_fraction * build
    bundle = np.sqrt(entry.strands * strand_outer**2 / entry.packing_factor) + entry.serving_mm * 1e-3
    return Wire(entry.id, "litz", d, entry.strands, float(bundle), entry.strands * np.pi * d**2 / 4,
                entry.strand_awg, 1, entry.provenance)


@dataclass(frozen=True)
class MaterialArrays:
    """Material properties as arrays indexed by material number (for the vectorized evaluator).

    Steinmetz bands are padded to the largest band count; padding bands have an empty range.
    """

    density: np.ndarray
    b_sat_25c: np.ndarray
    b_sat_tempco: np.ndarray
    mu_initial: np.ndarray
    rolloff_a: np.ndarray     # discrete-gap materials: a = 1, b = 0 (no roll-off)
    rolloff_b: np.ndarray
    rolloff_c: np.ndarray
    rolloff_tabulated: np.ndarray   # the roll-off is a table of points (bool)
    rolloff_fraction: np.ndarray    # (n_materials, G): tabulated roll-offs on magnetics.ROLLOFF_GRID_H
    rolloff_integral: np.ndarray    # (n_materials, G): their running integral [A/m]
    stacking_factor: np.ndarray
    loss_temp_ref: np.ndarray
    loss_temp_c1: np.ndarray
    loss_temp_c2: np.ndarray
    t_max: np.ndarray
    distributed_gap: np.ndarray
    price_per_kg: np.ndarray
    band_f_min: np.ndarray    # (n_materials, n_bands)
    band_f_max: np.ndarray
    band_k: np.ndarray
    band_alpha: np.ndarray
    band_beta: np.ndarray
    band_b_min: np.ndarray
    band_b_max: np.ndarray
    bias_loss_k: np.ndarray
    tape_wound: np.ndarray
    cut_loss_factor: np.ndarray
    cut_residual_gap: np.ndarray    # per joint [m]
    thermal_conductivity: np.ndarray


def _rolloff_tables(mats) -> dict:
    """Tabulated roll-offs resampled on the common grid (rows of ones for the others, never used)."""
    grid = magnetics.ROLLOFF_GRID_H
    frac = np.ones((len(mats), len(grid)))
    cum = np.tile(grid, (len(mats), 1))
    for i, m in enumerate(mats):
        if m.rolloff_table_h_a_per_m is not None:
            frac[i], cum[i] = magnetics.tabulate_rolloff(m.rolloff_table_h_a_per_m, m.rolloff_table_fraction)
    return {"rolloff_tabulated": np.array([m.rolloff_table_h_a_per_m is not None for m in mats]),
            "rolloff_fraction": frac, "rolloff_integral": cum}


class Catalog:
    """Validated catalog: materials, shape families, shapes, wires, copper data and costs."""

    def __init__(self, materials, families, shapes, wires, copper, costs, sources):
        self.materials: dict[str, Material] = materials
        self.families: dict[str, Family] = families
        self.shapes: dict[str, Shape] = shapes
        self.wires: dict[str, Wire] = wires
        self.copper: Copper = copper
        self.costs: Costs = costs
        self.sources: list[str] = sources

    # ---- lookups with errors that list the valid names ------------------------------------
    def _index(self, table: dict, kind: str, name: str) -> int:
        key = f"_positions_{kind}"
        if key not in self.__dict__:                     # built once: lookups in constant time
            self.__dict__[key] = {n: i for i, n in enumerate(table)}
        positions = self.__dict__[key]
        if name not in positions:
            raise CatalogError(f"unknown {kind} {name!r}; valid: {', '.join(table)}")
        return positions[name]

    def material_index(self, name: str) -> int:
        return self._index(self.materials, "material", name)

    def shape_index(self, name: str) -> int:
        return self._index(self.shapes, "shape", name)

    def wire_index(self, name: str) -> int:
        return self._index(self.wires, "wire", name)

    # ---- arrays for the evaluator ---------------------------------------------------------
    @cached_property
    def material_arrays(self) -> MaterialArrays:
        mats = list(self.materials.values())
        nb = max(len(m.steinmetz) for m in mats)

        def bands(attr, pad):
            out = np.full((len(mats), nb), pad, dtype=float)
            for i, m in enumerate(mats):
                for j, b in enumerate(sorted(m.steinmetz, key=lambda b: b.f_min_hz)):
                    out[i, j] = getattr(b, attr)
            return out

        col = lambda attr: np.array([getattr(m, attr) for m in mats], dtype=float)  # noqa: E731
        dist = np.array([m.gap_kind == "distributed" for m in mats])
        return MaterialArrays(
            density=col("density_kg_m3"), b_sat_25c=col("b_sat_t_25c"), b_sat_tempco=col("b_sat_tempco_per_k"),
            mu_initial=col("mu_initial"),
            **_rolloff_tables(mats),
            rolloff_a=np.array([m.rolloff_a or 1.0 for m in mats]),
            rolloff_b=np.array([m.rolloff_b or 0.0 for m in mats]),
            rolloff_c=np.array([m.rolloff_c or 1.0 for m in mats]),
            stacking_factor=col("stacking_factor"), loss_temp_ref=col("loss_temp_ref_c"),
            loss_temp_c1=col("loss_temp_c1"), loss_temp_c2=col("loss_temp_c2"), t_max=col("t_max_c"),
            distributed_gap=dist, price_per_kg=col("price_per_kg"),
            band_f_min=bands("f_min_hz", np.inf), band_f_max=bands("f_max_hz", np.inf),
            band_k=bands("k", 1.0), band_alpha=bands("alpha", 1.5), band_beta=bands("beta", 2.0),
            band_b_min=bands("b_min_t", 0.0), band_b_max=bands("b_max_t", np.inf),
            bias_loss_k=col("bias_loss_k"), tape_wound=np.array([m.tape_wound for m in mats]),
            cut_loss_factor=col("cut_loss_factor"), cut_residual_gap=col("cut_residual_gap_mm") * 1e-3,
            thermal_conductivity=col("thermal_conductivity_w_mk"),
        )

    def with_permeability_scaled(self, factor: float) -> "Catalog":
        """A copy whose materials all have ``factor`` times their permeability (tolerance studies)."""
        other = Catalog(self.materials, self.families, self.shapes, self.wires, self.copper, self.costs, self.sources)
        arrays = self.material_arrays
        other.__dict__["material_arrays"] = replace(arrays, mu_initial=arrays.mu_initial * factor)
        return other

    @cached_property
    def _geometry_table(self) -> geometry.CoreGeometry:
        """Geometry of every shape at stack 1..3, arrays of shape (n_shapes, 3[, 3])."""
        names = list(self.shapes)
        parts: dict[int, geometry.CoreGeometry] = {}
        for fam in {s.family for s in self.shapes.values()}:
            rows = [i for i, n in enumerate(names) if self.shapes[n].family == fam]
            dims = {k: np.array([self.shapes[names[i]].dims[k] for i in rows])[:, None] * 1e-3
                    for k in geometry.FAMILIES[fam][1]}
            wall = self.families[fam].bobbin_wall_mm * 1e-3
            geo = geometry.family_geometry(fam, dims, np.arange(1, 4)[None, :], wall)
            for j, i in enumerate(rows):
                parts[i] = geometry.CoreGeometry(**{f.name: getattr(geo, f.name)[j] for f in fields(geo)})
        return geometry.CoreGeometry(**{f.name: np.stack([getattr(parts[i], f.name) for i in range(len(names))])
                                        for f in fields(geometry.CoreGeometry)})

    def core_geometry(self, shape_index, stack) -> geometry.CoreGeometry:
        """Geometry arrays for shape numbers ``shape_index`` stacked ``stack`` (1-3) times."""
        table = self._geometry_table
        i, j = np.asarray(shape_index), np.asarray(stack) - 1
        return geometry.CoreGeometry(**{f.name: getattr(table, f.name)[i, j] for f in fields(table)})

    @cached_property
    def shape_arrays(self) -> dict[str, np.ndarray]:
        """Per-shape family facts: winding legs, gap legs, maximum stack, family name."""
        fams = [self.families[s.family] for s in self.shapes.values()]
        return {
            "family": np.array([s.family for s in self.shapes.values()]),
            "winding_legs": np.array([f.winding_legs for f in fams]),
            "gap_legs": np.array([f.gap_legs for f in fams]),
            "max_stack": np.array([f.max_stack for f in fams]),
        }

    @cached_property
    def wire_arrays(self) -> dict[str, np.ndarray]:
        ws = list(self.wires.values())
        return {
            "litz": np.array([w.kind == "litz" for w in ws]),
            "strand_diameter": np.array([w.strand_diameter for w in ws]),
            "strands": np.array([w.strands for w in ws], dtype=float),
            "outer_diameter": np.array([w.outer_diameter for w in ws]),
            "copper_area": np.array([w.copper_area for w in ws]),
        }

    def compatible(self, material_index, shape_index) -> np.ndarray:
        """True where the material is made in the shape's family."""
        return self._made_in[np.asarray(material_index), np.asarray(shape_index)]

    @cached_property
    def _made_in(self) -> np.ndarray:
        """(n_materials, n_shapes): material made in the shape's family."""
        fams = self.shape_arrays["family"]
        return np.array([[f in m.families for f in fams] for m in self.materials.values()], dtype=bool)

    # ---- tables for people ----------------------------------------------------------------
    def material_table(self) -> pd.DataFrame:
        rows = []
        for m in self.materials.values():
            row = m.model_dump(by_alias=True, exclude={"steinmetz", "description"})
            row["families"] = " ".join(m.families)
            row["steinmetz_bands"] = "; ".join(
                f"{b.f_min_hz / 1e3:g}-{b.f_max_hz / 1e3:g} kHz: k={b.k:g} a={b.alpha:g} b={b.beta:g}"
                for b in m.steinmetz)
            rows.append(row)
        return pd.DataFrame(rows)

    def shape_table(self) -> pd.DataFrame:
        geo = self.core_geometry(np.arange(len(self.shapes)), np.ones(len(self.shapes), dtype=int))
        density = {}
        for fam in self.families:
            ds = [m.density_kg_m3 for m in self.materials.values() if fam in m.families]
            density[fam] = (float(np.median(ds)) if ds else np.nan)
        box = geo.core_box
        df = pd.DataFrame({
            "id": list(self.shapes),
            "family": [s.family for s in self.shapes.values()],
            "dims_mm": [" ".join(f"{k}={v:g}" for k, v in s.dims.items()) for s in self.shapes.values()],
            "le_mm": geo.le * 1e3, "ae_mm2": geo.ae * 1e6, "ve_cm3": geo.ve * 1e6,
            "a_min_mm2": geo.a_min * 1e6, "window_mm2": geo.window_area * 1e6,
            "window_breadth_mm": geo.window_breadth * 1e3, "window_height_mm": geo.window_height * 1e3,
            "box_cm3": box.prod(axis=-1) * 1e6,
            "mass_g": geo.ve * np.array([density[s.family] for s in self.shapes.values()]) * 1e3,
            "mass_density_kg_m3": [density[s.family] for s in self.shapes.values()],
            "max_stack": self.shape_arrays["max_stack"],
            "provenance": [self.families[s.family].provenance for s in self.shapes.values()],
        })
        return df.round(4)

    def wire_table(self) -> pd.DataFrame:
        df = pd.DataFrame([w.__dict__ for w in self.wires.values()])
        df["strand_diameter_mm"] = df.pop("strand_diameter") * 1e3
        df["outer_diameter_mm"] = df.pop("outer_diameter") * 1e3
        df["copper_area_mm2"] = df.pop("copper_area") * 1e6
        rho = self.copper.resistivity_ohm_m_20c
        df["resistance_mohm_per_m_20c"] = rho / (df["copper_area_mm2"] * 1e-6) * 1e3
        return df.round(6)

    def content_hash(self) -> str:
        """SHA-256 of every validated entry, for run folders (same catalog, same hash)."""
        blob = json.dumps({
            "materials": {k: v.model_dump(by_alias=True) for k, v in self.materials.items()},
            "families": {k: v.model_dump() for k, v in self.families.items()},
            "shapes": {k: v.model_dump() for k, v in self.shapes.items()},
            "wires": {k: v.__dict__ for k, v in self.wires.items()},
            "copper": self.copper.model_dump(), "costs": self.costs.model_dump(),
        }, sort_keys=True, default=str)
        return hashlib.sha256(blob.encode()).hexdigest()


def _entries(data: dict, key: str, path: Path) -> list:
    """The [[key]] tables of a file; an id used twice in one file is refused (which one was meant?)."""
    items = data.get(key, [])
    if not isinstance(items, list):
        raise CatalogError(f"{path}: '{key}' must be an array of tables ([[{key}]])")
    seen = set()
    for raw in items:
        eid = raw.get("id") if isinstance(raw, dict) else None
        if isinstance(eid, str) and eid in seen:
            raise CatalogError(f"{path}: {key} '{eid}' appears twice in this file; each id once per file")
        seen.add(eid)
    return items


def _merge_files(paths: list[Path], acc: dict) -> None:
    """Read catalog files into ``acc``; the file name says its kind, later ids replace earlier."""
    for path in paths:
        name = path.name
        data = _read_toml(path)
        acc["sources"].append(str(path))
        known = {"materials.toml": {"material"}, "shapes.toml": {"family", "shape"},
                 "wires.toml": {"copper", "round", "litz"}, "costs.toml": set(Costs.model_fields)}[name]
        unknown = set(data) - known
        if unknown:
            raise CatalogError(f"{path}: unknown key {sorted(unknown)[0]!r}; valid keys: {', '.join(sorted(known))}")
        if name == "materials.toml":
            for raw in _entries(data, "material", path):
                mid = raw.get("id", "?") if isinstance(raw, dict) else "?"
                acc["materials"][mid] = _validated(Material, raw, path, "material", mid)
        elif name == "shapes.toml":
            fams = data.get("family", {})
            for fid, raw in fams.items():
                if fid not in geometry.FAMILIES:
                    raise CatalogError(f"{path}: family '{fid}': unknown family; valid: {', '.join(geometry.FAMILIES)}")
                acc["families"][fid] = _validated(Family, raw, path, "family", fid)
            for raw in _entries(data, "shape", path):
                sid = raw.get("id", "?") if isinstance(raw, dict) else "?"
                acc["shapes"][sid] = _validated(Shape, raw, path, "shape", sid)
        elif name == "wires.toml":
            if "copper" in data:
                acc["copper"] = _validated(Copper, data["copper"], path, "copper", "copper")
            if "round" in data:
                acc["round"] = _validated(RoundWireRule, data["round"], path, "round", "round")
            for raw in _entries(data, "litz", path):
                lid = raw.get("id", "?") if isinstance(raw, dict) else "?"
                acc["litz"][lid] = _validated(Litz, raw, path, "litz", lid)
        else:
            acc["costs"] = _validated(Costs, data, path, "costs", "costs")


def load_catalog(extra=()) -> Catalog:
    """Load the built-in catalog, then each user folder or single file of ``extra`` over it.

    Raises
    ------
    CatalogError
        one line naming file, entry, field, value and expectation.
    """
    acc = {"materials": {}, "families": {}, "shapes": {}, "litz": {}, "sources": []}
    _merge_files([_builtin_dir() / n for n in FILE_NAMES], acc)
    for item in extra:
        p = Path(item)
        if p.is_file():
            if p.name not in FILE_NAMES:
                raise CatalogError(f"{p}: catalog file name must be one of {', '.join(FILE_NAMES)}")
            _merge_files([p], acc)
        elif p.is_dir():
            found = [p / n for n in FILE_NAMES if (p / n).is_file()]
            if not found:
                raise CatalogError(f"{p}: no catalog file found; expected one of {', '.join(FILE_NAMES)}")
            _merge_files(found, acc)
        else:
            raise CatalogError(f"{p}: no such catalog file or folder")
    for sid, shape in acc["shapes"].items():
        if shape.family not in acc["families"]:
            raise CatalogError(f"shape '{sid}': family '{shape.family}' has no [family.{shape.family}] entry")
    for mid, mat in acc["materials"].items():
        if not any(s.family in mat.families for s in acc["shapes"].values()):
            raise CatalogError(f"material '{mid}': no shape in the catalog belongs to its families {mat.families}")
        # a discrete gap needs a leg to sit in: without one no model covers its fringing, loss or cost
        ungapped = [f for f in mat.families if f in acc["families"] and acc["families"][f].gap_legs == 0]
        if mat.gap_kind == "discrete" and ungapped:
            raise CatalogError(f"material '{mid}': field 'families' = {mat.families}: family '{ungapped[0]}' has "
                               f"gap_legs = 0; expected families with a gapped leg for gap_kind = 'discrete'")
    wires = {w.id: w for w in _round_wires(acc["round"])}
    for lid, entry in acc["litz"].items():
        wires[lid] = _litz_wire(entry, acc["round"])
    return Catalog(acc["materials"], acc["families"], acc["shapes"], wires, acc["copper"], acc["costs"],
                   acc["sources"])
