"""The design spec: converter, operating points, limits, models and the search ranges (a TOML file).

Every quantity carries its unit in its key (``_w``, ``_v``, ``_hz``, ``_khz``, ``_mm``, ``_c``, ``_k``,
``_uj``) or is a plain fraction.  ``fluxfront init FILE`` writes the demo spec with a comment on
every field.
"""
from __future__ import annotations

import hashlib
import tomllib
from importlib import resources
from pathlib import Path
from typing import Annotated, Literal

import numpy as np
from pydantic import BaseModel, ConfigDict, Field, model_validator

from fluxfront.catalog import Catalog, load_catalog
from fluxfront.catalog.validation import validate_entry
from fluxfront.errors import InputError
from fluxfront.models.magnetics import FRINGING_MODELS
from fluxfront.models.thermal import MOUNTINGS, THERMAL_MODELS


class _Section(BaseModel):
    # strict: a boolean or a text is never read as a number; no infinite or NaN values anywhere
    model_config = ConfigDict(extra="forbid", frozen=True, strict=True, allow_inf_nan=False)


class Converter(_Section):
    power_w: Annotated[float, Field(gt=0, le=100e3)]
    bus_v: Annotated[float, Field(gt=0, le=1500)]
    line_hz: Annotated[float, Field(ge=16, le=1000)]
    efficiency: Annotated[float, Field(gt=0.5, le=1.0)]


class OperatingPoint(_Section):
    name: str = ""
    v_rms: Annotated[float, Field(gt=0, le=1000)]
    load_fraction: Annotated[float, Field(gt=0, le=1.5)]
    weight: Annotated[float, Field(ge=0)]
    ripple_checked: bool = True


class Limits(_Section):
    ripple_pp_max_fraction: Annotated[float, Field(gt=0, le=4)]
    saturation_margin: Annotated[float, Field(gt=0, le=1)]
    inductance_kept_min_fraction: Annotated[float, Field(ge=0, lt=1)]
    fill_max: Annotated[float, Field(gt=0, le=0.9)]
    ambient_c: Annotated[float, Field(ge=-40, le=150)]
    hot_spot_max_c: Annotated[float, Field(gt=-40, le=300)]
    dcm_max_fraction: Annotated[float, Field(gt=0, le=1)]
    # the controller's peak current limit: an absolute value, or a factor over each design's own
    # worst peak current (1.25: common practice, no source); a transient check, no temperature limit
    current_limit_a: Annotated[float, Field(gt=0, le=1e4)] | None = None
    current_limit_factor: Annotated[float, Field(ge=1, le=5)] = 1.25

    @model_validator(mode="after")
    def _hot_above_ambient(self):
        if self.hot_spot_max_c <= self.ambient_c:
            raise ValueError("limits.hot_spot_max_c must exceed limits.ambient_c")
        return self


class Thermal(_Section):
    model: Literal[THERMAL_MODELS]
    mounting: Literal[MOUNTINGS] = "board"
    emissivity: Annotated[float, Field(ge=0, le=1)] = 0.9
    h_forced_w_m2k: Annotated[float, Field(gt=0, le=1000)] = 25.0
    # hot spot above the surface: None = from the two-node winding-core network (design/heat.py);
    # a number fixes it instead
    internal_rise_k: Annotated[float, Field(ge=0, le=100)] | None = None
    winding_conductivity_w_mk: Annotated[float, Field(gt=0, le=400)] = 0.5
    # calibration (fluxfront calibrate): the measured part's heat dissipation over the model's at one rise
    dissipation_factor: Annotated[float, Field(ge=0.2, le=5.0)] = 1.0
    bobbin_conductivity_w_mk: Annotated[float, Field(gt=0, le=400)] = 0.25


class Tolerance(_Section):
    """Manufacturing and operating tolerances the design must survive (off: the search is nominal).

    Defaults: gap +-0.02 mm or +-5 % per ground gap, whichever is larger (grinding practice, from
    memory); permeability +-8 % (powder cores, common practice); Steinmetz k +25 % (lot-to-lot
    spread of ferrite, from memory); ambient +5 K and the line 5 % below every operating point's
    voltage (common practice, no source).
    """

    enabled: bool = False
    gap_mm: Annotated[float, Field(ge=0, le=1)] = 0.02
    gap_percent: Annotated[float, Field(ge=0, le=50)] = 5.0
    permeability_percent: Annotated[float, Field(ge=0, le=50)] = 8.0
    steinmetz_k_percent: Annotated[float, Field(ge=0, le=200)] = 25.0
    ambient_k: Annotated[float, Field(ge=0, le=50)] = 5.0
    line_sag: Annotated[float, Field(gt=0.5, le=1)] = 0.95
    distribution: Literal["uniform", "normal"] = "uniform"   # Monte Carlo; normal: tolerance = 3 sigma
    objectives: Literal["nominal", "worst"] = "nominal"      # objectives at nominal, or the worst corner
    corners: Literal["selected", "all"] = "selected"          # the monotonic worst corners, or all 2^5
    yield_samples: Annotated[int, Field(ge=100, le=100000)] = 2000


class Construction(_Section):
    # extra distance between a gapped leg and the first layer, beyond the bobbin wall
    gap_keepout_mm: Annotated[float, Field(ge=0, le=20)] = 0.0


class Switching(_Section):
    enabled: bool = True
    e0_uj: Annotated[float, Field(ge=0, le=1e4)] = 0.0
    e1_uj_per_a: Annotated[float, Field(ge=0, le=1e3)] = 0.0
    e2_uj_per_a2: Annotated[float, Field(ge=0, le=1e2)] = 0.0
    diode_uj: Annotated[float, Field(ge=0, le=1e4)] = 0.0
    v_ref_v: Annotated[float, Field(gt=0, le=2000)] = 400.0


class ModelOptions(_Section):
    samples_per_half_cycle: Annotated[int, Field(ge=4, le=2048, multiple_of=2)] = 64
    harmonics: Annotated[int, Field(ge=1, le=200)] = 15
    fringing: Literal[tuple(FRINGING_MODELS)] = "log"
    # calibration against a measured prototype (fluxfront calibrate): the discrete gaps' effective
    # length over their ground length (fringing and face flatness the model misses)
    gap_factor: Annotated[float, Field(ge=0.3, le=3.0)] = 1.0


class Search(_Section):
    materials: Annotated[list[str], Field(min_length=1, default_factory=lambda: ["all"])]
    shapes: Annotated[list[str], Field(min_length=1, default_factory=lambda: ["all"])]
    wires: Annotated[list[str], Field(min_length=1, default_factory=lambda: ["all"])]
    stack_max: Annotated[int, Field(ge=1, le=3)] = 3
    turns_min: Annotated[int, Field(ge=1, le=2000)] = 5
    turns_max: Annotated[int, Field(ge=1, le=2000)] = 150
    gap_mm_min: Annotated[float, Field(ge=0, le=50)] = 0.1
    gap_mm_max: Annotated[float, Field(gt=0, le=50)] = 8.0
    gap_mm_step: Annotated[float, Field(ge=0.001, le=10)] = 0.01
    parallel_max: Annotated[int, Field(ge=1, le=50)] = 4
    f_sw_khz_min: Annotated[float, Field(gt=0, le=10e3)] = 30.0
    f_sw_khz_max: Annotated[float, Field(gt=0, le=10e3)] = 300.0
    f_sw_khz_step: Annotated[float, Field(ge=0.001, le=1000)] = 0.1
    gaps_max: Annotated[int, Field(ge=1, le=8)] = 4
    loss_objective: Literal["inductor", "system"] = "inductor"

    @model_validator(mode="after")
    def _ranges(self):
        for lo, hi in (("turns_min", "turns_max"), ("gap_mm_min", "gap_mm_max"), ("f_sw_khz_min", "f_sw_khz_max")):
            if getattr(self, hi) < getattr(self, lo):
                raise ValueError(f"search.{hi} must not be below search.{lo}")
        return self


class Spec(_Section):
    converter: Converter
    operating_point: Annotated[list[OperatingPoint], Field(min_length=1, max_length=32)]
    limits: Limits
    thermal: Thermal
    switching: Switching = Field(default_factory=lambda: Switching(enabled=False))
    construction: Construction = Field(default_factory=Construction)
    tolerance: Tolerance = Field(default_factory=Tolerance)
    model: ModelOptions = Field(default_factory=ModelOptions)
    search: Search = Field(default_factory=Search)
    catalog: list[str] = Field(default_factory=list)

    @model_validator(mode="after")
    def _physics(self):
        for i, op in enumerate(self.operating_point):
            if np.sqrt(2) * op.v_rms >= self.converter.bus_v:
                raise ValueError(f"operating_point[{i}].v_rms = {op.v_rms}: its peak must stay below "
                                 f"converter.bus_v = {self.converter.bus_v} V for a boost stage")
        if sum(op.weight for op in self.operating_point) <= 0:
            raise ValueError("operating_point weights must not all be zero")
        if self.search.loss_objective == "system" and not self.switching.enabled:
            raise ValueError("search.loss_objective = 'system' needs a [switching] section with enabled = true "
                             "and the switching-energy fit of your own devices")
        return self

    @property
    def weights(self) -> np.ndarray:
        """Operating-point weights normalised to sum 1."""
        w = np.array([op.weight for op in self.operating_point], dtype=float)
        return w / w.sum()


def load_spec(path) -> tuple[Spec, str]:
    """Read and validate a spec file; returns the spec and the SHA-256 of the file's bytes.

    Raises InputError with one line naming the field, the value and the expected form.
    """
    path = Path(path)
    try:
        raw_bytes = path.read_bytes()
    except OSError as exc:
        raise InputError(f"{path}: cannot read the spec ({exc.strerror})") from None
    try:
        data = tomllib.loads(raw_bytes.decode("utf-8"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise InputError(f"{path}: not valid TOML ({exc})") from None
    spec = validate_entry(Spec, data, str(path), InputError)
    return spec, hashlib.sha256(raw_bytes).hexdigest()


def catalog_folders(spec: Spec, spec_dir, extra=()) -> list[str]:
    """User catalogs of a run: the spec's ``catalog`` entries (relative to the spec's folder), then ``extra``."""
    return [str(Path(spec_dir) / c) for c in spec.catalog] + [str(e) for e in extra]


def load_problem(spec_path, extra_catalogs=()) -> tuple[Spec, str, Catalog]:
    """Spec, its hash and its catalog: the spec's own catalog folders first, then ``extra_catalogs``."""
    spec, spec_hash = load_spec(spec_path)
    catalogs = catalog_folders(spec, Path(spec_path).parent, extra_catalogs)
    return spec, spec_hash, load_catalog(catalogs)


def demo_spec_text() -> str:
    """The commented demo spec shipped with the package."""
    return (resources.files("fluxfront.design") / "data" / "demo_spec.toml").read_text(encoding="utf-8")


def demo_spec_path() -> Path:
    return Path(str(resources.files("fluxfront.design") / "data" / "demo_spec.toml"))
