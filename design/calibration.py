"""Calibration against a measured prototype: the model's few uncertain factors set from bench readings.

Measured (``MEASURED.toml``, section ``[measured]``):

* ``inductance_uh``: small-signal inductance at zero bias -> the effective gap factor (gapped cores:
  the gaps' effective length over their ground length, ``model.gap_factor``) or the permeability
  factor (powder cores, a catalog override of ``mu_initial``);
* ``temperature_rise_k`` at ``at_loss_w``: the surface's rise when the part dissipates that power
  (a DC heat run) -> ``thermal.dissipation_factor`` = stated loss / the model's dissipation at that rise;
* ``core_loss_w`` at ``core_loss_f_khz`` and ``core_loss_b_mt`` (sinusoidal peak flux, at the
  material's reference temperature) -> a loss factor on the material's Steinmetz k (catalog override);
* optionally ``inductance_at_bias_uh`` at ``bias_a`` and ``r_dc_mohm`` at ``r_dc_temperature_c``:
  compared before and after, not fitted.

Each factor must fall in a plausible range (``PLAUSIBLE``) or it is refused with the reason: a
reading twice the model's is a wrong core, turn count or measurement, not a calibration.
"""
from __future__ import annotations

import tomllib
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Annotated

import numpy as np
from pydantic import BaseModel, ConfigDict, Field, model_validator
from scipy import optimize

from fluxfront.catalog import Catalog
from fluxfront.catalog.validation import validate_entry
from fluxfront.errors import InputError
from fluxfront.models import core_loss, winding

from .build import build
from .circuit import circuit
from .context import Context, prepare
from .designs import Designs
from .heat import dissipation

PLAUSIBLE = {"gap_factor": (0.5, 2.0), "permeability_factor": (0.7, 1.4), "dissipation_factor": (0.5, 2.0),
             "loss_factor": (0.4, 2.5)}     # common practice for a first prototype, no source


class Measured(BaseModel):
    model_config = ConfigDict(extra="forbid", strict=True, allow_inf_nan=False)
    inductance_uh: Annotated[float, Field(gt=0)]
    inductance_at_bias_uh: Annotated[float, Field(gt=0)] | None = None
    bias_a: Annotated[float, Field(gt=0)] | None = None
    r_dc_mohm: Annotated[float, Field(gt=0)] | None = None
    r_dc_temperature_c: Annotated[float, Field(ge=-40, le=200)] = 20.0
    temperature_rise_k: Annotated[float, Field(gt=0, le=300)] | None = None
    at_loss_w: Annotated[float, Field(gt=0)] | None = None
    core_loss_w: Annotated[float, Field(gt=0)] | None = None
    core_loss_f_khz: Annotated[float, Field(gt=0)] | None = None
    core_loss_b_mt: Annotated[float, Field(gt=0)] | None = None

    @model_validator(mode="after")
    def _pairs(self):
        for a, b in (("inductance_at_bias_uh", "bias_a"), ("temperature_rise_k", "at_loss_w"),
                     ("core_loss_w", "core_loss_f_khz"), ("core_loss_w", "core_loss_b_mt")):
            if (getattr(self, a) is None) != (getattr(self, b) is None):
                raise ValueError(f"measured.{a} and measured.{b} go together")
        return self


def read_measured(path) -> Measured:
    path = Path(path)
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError(f"{path}: no such file") from None
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise InputError(f"{path}: not valid TOML ({exc})") from None
    return validate_entry(Measured, data.get("measured", data), str(path), InputError)


@dataclass(frozen=True)
class Calibration:
    factors: dict[str, float]              # the fitted factors (only those the readings allow)
    rows: list[tuple[str, str, str, str]]  # quantity, model before, model after, measured


def _inductance_uh(ctx: Context, d: Designs) -> float:
    return float(circuit(ctx, d, build(ctx, d)).l0[0] * 1e6)


def _inductance_at_bias_uh(ctx: Context, d: Designs, current: float) -> float:
    """Incremental inductance at a DC ``current`` [A]: zero-bias value times the permeability kept [uH]."""
    cc = circuit(ctx, d, build(ctx, d))
    return float(cc.l0[0] * cc.kept_fraction(np.array([current]))[0] * 1e6)


def _with(ctx: Context, **sections) -> Context:
    return prepare(ctx.spec.model_copy(update=sections), ctx.catalog)


def _checked(name: str, value: float, reason: str) -> float:
    lo, hi = PLAUSIBLE[name]
    if not (np.isfinite(value) and lo <= value <= hi):
        raise InputError(f"calibration: {name} = {value:.3g} lies outside the plausible {lo:g}-{hi:g}; {reason}")
    return float(value)


def _fit_gap(ctx: Context, d: Designs, target_uh: float) -> float:
    def miss(k):
        return _inductance_uh(_with(ctx, model=ctx.spec.model.model_copy(update={"gap_factor": k})), d) - target_uh
    lo, hi = PLAUSIBLE["gap_factor"]
    if miss(lo) * miss(hi) > 0:
        ratio = target_uh / _inductance_uh(ctx, d)
        _checked("gap_factor", 1 / ratio, "the measured inductance is "
                 f"{ratio:.2f} x the model's: check the turns, the core and the gap before calibrating")
    return _checked("gap_factor", optimize.brentq(miss, lo, hi, xtol=1e-9), "")


def _core_volume_and_band(ctx: Context, d: Designs, f: float):
    M, m = ctx.catalog.material_arrays, int(d.material[0])
    band, _ = core_loss.select_band(np.array([f]), M.band_f_min[m:m + 1], M.band_f_max[m:m + 1])
    geo = ctx.catalog.core_geometry(d.shape, d.stack)
    return float(geo.ve[0] * M.stacking_factor[m] * M.cut_loss_factor[m]), int(band[0])


def core_loss_at(ctx: Context, d: Designs, f: float, b: float) -> float:
    """Core loss of the design's core under a sinusoidal flux of peak ``b`` [T] at ``f`` [Hz], at the
    material's loss reference temperature [W]."""
    ve, band = _core_volume_and_band(ctx, d, f)
    M, m = ctx.catalog.material_arrays, int(d.material[0])
    return float(core_loss.steinmetz(f, b, M.band_k[m, band], M.band_alpha[m, band], M.band_beta[m, band]) * ve)


def calibrate(ctx: Context, d: Designs, meas: Measured) -> Calibration:
    """The factors the readings allow, each checked for plausibility, and the before/after table."""
    factors, rows = {}, []
    powder = bool(ctx.catalog.material_arrays.distributed_gap[d.material[0]])
    before_l = _inductance_uh(ctx, d)
    if powder:
        factors["permeability_factor"] = _checked(
            "permeability_factor", meas.inductance_uh / before_l,
            "check the turns and the core before calibrating")
        ctx_after, d_after = ctx, replace(d, mu_scale=d.mu_factor * factors["permeability_factor"])
    else:
        factors["gap_factor"] = _fit_gap(ctx, d, meas.inductance_uh)
        ctx_after, d_after = _with(ctx, model=ctx.spec.model.model_copy(update={"gap_factor": factors["gap_factor"]})), d
    after_l = _inductance_uh(ctx_after, d_after)
    rows.append(("inductance at zero bias [uH]", f"{before_l:.4g}", f"{after_l:.4g}", f"{meas.inductance_uh:.4g}"))
    if meas.inductance_at_bias_uh is not None:
        rows.append((f"inductance at {meas.bias_a:g} A DC [uH] (compared, not fitted)",
                     f"{_inductance_at_bias_uh(ctx, d, meas.bias_a):.4g}",
                     f"{_inductance_at_bias_uh(ctx_after, d_after, meas.bias_a):.4g}", f"{meas.inductance_at_bias_uh:.4g}"))
    if meas.temperature_rise_k is not None:
        b = build(ctx, d)
        box = tuple(np.sort(b.size[0])[::-1])
        p_model, _ = dissipation(ctx.spec, box, meas.temperature_rise_k)
        factors["dissipation_factor"] = _checked(
            "dissipation_factor", ctx.spec.thermal.dissipation_factor * meas.at_loss_w / float(p_model),
            "check that the stated loss is what the part dissipated and the rise is of its surface")
        rows.append((f"dissipation at a {meas.temperature_rise_k:g} K rise [W]", f"{float(p_model):.4g}",
                     f"{meas.at_loss_w:.4g}", f"{meas.at_loss_w:.4g}"))
    if meas.core_loss_w is not None:
        f, bpk = meas.core_loss_f_khz * 1e3, meas.core_loss_b_mt * 1e-3
        model = core_loss_at(ctx, d, f, bpk)
        factors["loss_factor"] = _checked("loss_factor", meas.core_loss_w / model,
                                          "check the excitation (sinusoidal peak flux) and the core volume")
        rows.append((f"core loss at {meas.core_loss_f_khz:g} kHz, {meas.core_loss_b_mt:g} mT [W]", f"{model:.4g}",
                     f"{model * factors['loss_factor']:.4g}", f"{meas.core_loss_w:.4g}"))
    if meas.r_dc_mohm is not None:
        b = build(ctx, d)
        cu = ctx.catalog.copper
        r = b.r_dc20[0] * winding.copper_resistivity(meas.r_dc_temperature_c, cu.resistivity_ohm_m_20c,
                                                      cu.tempco_per_k) / cu.resistivity_ohm_m_20c * 1e3
        rows.append((f"DC resistance at {meas.r_dc_temperature_c:g} C [mOhm] (compared, not fitted)", f"{r:.4g}",
                     f"{r:.4g}", f"{meas.r_dc_mohm:.4g}"))
    return Calibration(factors, rows)


def calibrated_material(catalog: Catalog, d: Designs, factors: dict, source: str, today: str) -> dict:
    """The design's material as a catalog entry with the permeability and loss factors applied."""
    material = list(catalog.materials.values())[int(d.material[0])]
    entry = material.model_dump(by_alias=True, exclude_none=True)
    entry["mu_initial"] *= factors.get("permeability_factor", 1.0)
    entry["steinmetz"] = [dict(b, k=b["k"] * factors.get("loss_factor", 1.0)) for b in entry["steinmetz"]]
    entry["provenance"] = (f"{material.provenance}; calibrated against the measured prototype in {source} on {today}")
    return entry
