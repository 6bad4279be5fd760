"""Schemas of the catalog files: field types, units and the physically possible ranges.

Every number is checked on load; an entry outside these ranges is refused with one line that
names the file, the entry, the field, the value and what was expected (see loader.py).
"""
from __future__ import annotations

from typing import Annotated, Literal

from pydantic import BaseModel, ConfigDict, Field, model_validator

from fluxfront.models.geometry import FAMILIES


def _between(lo, hi, unit=""):
    """A float constrained to [lo, hi]; the unit is kept for the error message."""
    return Annotated[float, Field(ge=lo, le=hi, json_schema_extra={"unit": unit})]


# strict: a boolean or a text is never read as a number; no infinite or NaN values anywhere
STRICT = dict(extra="forbid", frozen=True, strict=True, allow_inf_nan=False)


class _Entry(BaseModel):
    model_config = ConfigDict(**STRICT)


class SteinmetzBand(_Entry):
    """One Steinmetz fit ``Pv = k f^alpha B^beta`` [W/m3; Hz, T peak] and where it holds."""

    f_min_hz: _between(1.0, 10e6, "Hz")
    f_max_hz: _between(1.0, 10e6, "Hz")
    b_min_t: _between(0.0, 2.5, "T")
    b_max_t: _between(0.001, 2.5, "T")
    k: Annotated[float, Field(gt=0)]
    alpha: _between(1.0, 3.0)
    beta: _between(1.5, 3.5)

    @model_validator(mode="after")
    def _ordered(self):
        if self.f_max_hz <= self.f_min_hz:
            raise ValueError("f_max_hz must exceed f_min_hz")
        if self.b_max_t <= self.b_min_t:
            raise ValueError("b_max_t must exceed b_min_t")
        return self


class Material(_Entry):
    id: Annotated[str, Field(min_length=1, pattern=r"^[A-Za-z0-9_.\-]+$")]
    class_: Annotated[str, Field(alias="class", min_length=1)]
    description: str = ""
    density_kg_m3: _between(1000.0, 20000.0, "kg/m3")
    b_sat_t_25c: _between(0.1, 2.5, "T")
    b_sat_tempco_per_k: _between(-0.01, 0.001, "1/K")
    mu_initial: _between(1.0, 500000.0)
    rolloff_a: Annotated[float, Field(gt=0, le=10)] | None = None
    rolloff_b: Annotated[float, Field(gt=0, le=10)] | None = None
    rolloff_c: _between(0.3, 4.0) | None = None
    # or the roll-off as measured points, interpolated in log H: DC field [A/m] and permeability fraction
    rolloff_table_h_a_per_m: list[Annotated[float, Field(gt=0, le=1e7)]] | None = None
    rolloff_table_fraction: list[Annotated[float, Field(gt=0, le=1.5)]] | None = None
    stacking_factor: _between(0.3, 1.0) = 1.0
    loss_temp_ref_c: _between(-40.0, 200.0, "C")
    loss_temp_c1: _between(-0.1, 0.1, "1/K")
    loss_temp_c2: _between(-0.01, 0.01, "1/K2")
    t_max_c: _between(50.0, 300.0, "C")
    gap_kind: Literal["discrete", "distributed"]
    families: Annotated[list[Literal[tuple(FAMILIES)]], Field(min_length=1)]
    price_per_kg: _between(0.0, 10000.0, "per kg")
    provenance: Annotated[str, Field(min_length=3)]
    steinmetz: Annotated[list[SteinmetzBand], Field(min_length=1)]
    # loss rise under DC bias: factor 1 + bias_loss_k (B_dc / B_sat)^2 (0 = no measurable effect)
    bias_loss_k: _between(0.0, 20.0) = 0.0
    # tape-wound ribbon cut into a pair: gap loss at the cut faces, loss raised by the cut, and a
    # residual gap at each joint even when no gap is ground
    tape_wound: bool = False
    cut_loss_factor: _between(1.0, 5.0) = 1.0
    cut_residual_gap_mm: _between(0.0, 0.5, "mm") = 0.0
    thermal_conductivity_w_mk: _between(0.1, 400.0, "W/(m K)") = 4.0

    model_config = ConfigDict(**STRICT, populate_by_name=True)

    @model_validator(mode="after")
    def _rolloff_matches_gap(self):
        fit = (self.rolloff_a, self.rolloff_b, self.rolloff_c)
        table = (self.rolloff_table_h_a_per_m, self.rolloff_table_fraction)
        has_fit, has_table = all(v is not None for v in fit), all(v is not None for v in table)
        if self.gap_kind == "distributed" and has_fit == has_table:
            raise ValueError("a distributed-gap material needs rolloff_a, rolloff_b and rolloff_c, or instead "
                             "rolloff_table_h_a_per_m with rolloff_table_fraction (one of the two)")
        if any(v is not None for v in fit) and not has_fit:
            raise ValueError("rolloff_a, rolloff_b and rolloff_c go together")
        if self.gap_kind == "discrete" and (has_fit or any(v is not None for v in table)):
            raise ValueError("a discrete-gap material takes no rolloff_* fit or table")
        if has_table:
            h, frac = table
            if len(h) != len(frac) or len(h) < 3:
                raise ValueError("rolloff_table_h_a_per_m and rolloff_table_fraction need the same length, 3 or more")
            if any(b <= a for a, b in zip(h, h[1:])):
                raise ValueError("rolloff_table_h_a_per_m must increase from point to point")
        bands = sorted(self.steinmetz, key=lambda b: b.f_min_hz)
        if any(hi.f_min_hz < lo.f_max_hz for lo, hi in zip(bands, bands[1:])):
            raise ValueError("steinmetz bands overlap in frequency")
        if not self.tape_wound and (self.cut_loss_factor != 1.0 or self.cut_residual_gap_mm != 0.0):
            raise ValueError("cut_loss_factor and cut_residual_gap_mm apply to tape_wound materials only")
        return self


class Family(_Entry):
    description: str = ""
    max_stack: Annotated[int, Field(ge=1, le=3)]
    bobbin_wall_mm: _between(0.0, 5.0, "mm")
    winding_legs: Annotated[int, Field(ge=1, le=2)]
    gap_legs: Annotated[int, Field(ge=0, le=2)]
    provenance: Annotated[str, Field(min_length=3)]


class Shape(_Entry):
    id: Annotated[str, Field(min_length=1, pattern=r"^[A-Za-z0-9_./\-x]+$")]
    family: Literal[tuple(FAMILIES)]
    dims: dict[str, Annotated[float, Field(gt=0, le=500)]]

    @model_validator(mode="after")
    def _dims_consistent(self):
        letters = FAMILIES[self.family][1]
        if set(self.dims) != set(letters):
            raise ValueError(f"dims for family {self.family} must be exactly {', '.join(letters)} [mm]")
        d = self.dims
        if self.family in ("E", "ETD", "PQ"):
            if not (d["a"] > d["e"] > d["f"] and d["b"] > d["d"]):
                raise ValueError("dims must satisfy a > e > f and b > d")
        if self.family == "T" and not d["od"] > d["id"]:
            raise ValueError("dims must satisfy od > id")
        return self


class Copper(_Entry):
    resistivity_ohm_m_20c: _between(1.5e-8, 3.0e-8, "ohm m")
    tempco_per_k: _between(0.003, 0.0045, "1/K")
    density_kg_m3: _between(8000.0, 9500.0, "kg/m3")
    provenance: Annotated[str, Field(min_length=3)]


class RoundWireRule(_Entry):
    awg_min: Annotated[int, Field(ge=0, le=50)]
    awg_max: Annotated[int, Field(ge=0, le=50)]
    grades: Annotated[list[Literal[1, 2, 3]], Field(min_length=1)]
    build_anchor_awg: Annotated[list[float], Field(min_length=2)]
    build_anchor_grade2_mm: Annotated[list[Annotated[float, Field(gt=0, le=0.5)]], Field(min_length=2)]
    grade1_fraction: _between(0.2, 1.0)
    provenance: Annotated[str, Field(min_length=3)]

    @model_validator(mode="after")
    def _anchors(self):
        if self.awg_max < self.awg_min:
            raise ValueError("awg_max must not be below awg_min")
        if len(self.build_anchor_awg) != len(self.build_anchor_grade2_mm):
            raise ValueError("build_anchor_awg and build_anchor_grade2_mm must have the same length")
        if any(b <= a for a, b in zip(self.build_anchor_awg, self.build_anchor_awg[1:])):
            raise ValueError("build_anchor_awg must increase")
        return self


class Litz(_Entry):
    id: Annotated[str, Field(min_length=1, pattern=r"^[A-Za-z0-9_.\-x]+$")]
    strand_awg: Annotated[int, Field(ge=28, le=50)]
    strands: Annotated[int, Field(ge=2, le=10000)]
    packing_factor: _between(0.3, 0.907)
    serving_mm: _between(0.0, 1.0, "mm")
    provenance: Annotated[str, Field(min_length=3)]


class Costs(_Entry):
    currency: Annotated[str, Field(min_length=1, max_length=20)] = "currency units"
    copper_price_per_kg: _between(0.0, 1000.0, "per kg")
    litz_price_factor: _between(1.0, 20.0)
    labour_per_turn: _between(0.0, 100.0, "per turn")
    labour_per_turn_ring: _between(0.0, 100.0, "per turn") = 0.05
    gap_grinding_per_gap: _between(0.0, 1000.0, "per gap") = 0.0
    cut_and_band_per_core: _between(0.0, 1000.0, "per core") = 0.0
    part_cost_per_core: _between(0.0, 1000.0, "per core")
    assembly_cost: _between(0.0, 10000.0)
    provenance: Annotated[str, Field(min_length=3)]
