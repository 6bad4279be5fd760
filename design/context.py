"""What the evaluator computes once per spec and catalog, before any design: the evaluation context.

Four facts keep the population work small, each exact within the CCM model:
* the ripple flux swing ``dB = v_in d / (N Ae f)`` does not depend on the inductance, so the
  line-cycle mean of the iGSE is ``(N Ae f)^-beta`` times a design-independent integral per
  operating point and Steinmetz band (``OperatingPoint.core_shape``);
* the DC-bias factor of the core loss is quadratic in the bias (models.core_loss.bias_loss_factor)
  and the bias follows the line current, so its line-cycle mean is one more design-independent
  integral, weighted by ``(i_avg / i_pk)^2`` (``OperatingPoint.core_shape_bias``);
* the harmonic weights of a triangular ripple depend on the duty cycle only, so the ripple's
  harmonic content over the line cycle is one matrix per operating point
  (``OperatingPoint.harmonic_matrix``);
* temperature enters the losses only through the material's loss factor and the copper
  resistivity, so the heat balance is solved on per-design scalars (see ``heat.py``).
"""
from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from fluxfront.catalog import Catalog
from fluxfront.models import core_loss, magnetics, switching, waveforms, winding

from .spec import Spec


@dataclass(frozen=True)
class OperatingPoint:
    """Design-independent line-cycle data of one operating point."""

    name: str
    v_rms: float
    power_w: float
    theta: np.ndarray         # (S,) line angles [rad]
    v_in: np.ndarray          # (S,) [V]
    i_avg: np.ndarray         # (S,) [A]
    duty: np.ndarray          # (S,) [-]
    i_pk: float               # [A]
    i_rms: float              # [A]
    volt_seconds: np.ndarray  # (S,) v_in d [V], ripple = volt_seconds / (L f)
    harmonic_matrix: np.ndarray  # (S, Nh): (v d)^2 w_n(D) / S
    core_shape: np.ndarray    # (n_materials, n_bands): mean over s of (v d)^beta (D^(1-a) + (1-D)^(1-a))
    core_shape_bias: np.ndarray  # (n_materials, n_bands): the same mean weighted by (i_avg / i_pk)^2
    eddy_shape: float         # mean over s of (v d)^2 / (D (1 - D)) [V2]: mean square dB/dt of the ripple
    switching_energy: float   # line-cycle mean energy per switching period [J]
    weight: float
    ripple_checked: bool


@dataclass(frozen=True)
class Context:
    """Spec, catalog and everything precomputed from them that the stages share."""

    spec: Spec
    catalog: Catalog
    ops: tuple[OperatingPoint, ...]
    harmonics: np.ndarray
    band_ki: np.ndarray       # (n_materials, n_bands)
    line_band: np.ndarray     # (n_materials,) band used for the line-frequency loop
    fringing: Callable  # gap fringing model chosen in the spec (magnetics.FRINGING_MODELS)

    @property
    def weights(self) -> np.ndarray:
        """Operating-point weights, normalised to sum 1, in operating-point order."""
        return np.array([op.weight for op in self.ops])

    @property
    def objectives(self) -> tuple[str, str, str]:
        """Result columns the search minimises: volume, the loss the spec asks for, cost."""
        return objective_columns(self.spec)


INDUCTOR_OBJECTIVES = ("volume_cm3", "total_loss_w", "cost")


def objective_columns(spec: Spec) -> tuple[str, str, str]:
    """``volume_cm3``, ``total_loss_w`` (the inductor's own) or ``system_loss_w``, and ``cost``."""
    if spec.search.loss_objective == "system":
        return ("volume_cm3", "system_loss_w", "cost")
    return INDUCTOR_OBJECTIVES


def _operating_point(spec: Spec, catalog: Catalog, op, weight, theta, harmonics) -> OperatingPoint:
    M = catalog.material_arrays
    sw = spec.switching
    power = spec.converter.power_w * op.load_fraction
    v_in, i_avg, duty, i_pk, i_rms = waveforms.pfc_line_cycle(
        op.v_rms, power, spec.converter.bus_v, spec.converter.efficiency, theta)
    vs = v_in * duty
    hmat = (vs**2)[:, None] * winding.triangle_harmonic_weights(duty, harmonics) / len(theta)
    # (v d)^beta (D^(1-alpha) + (1-D)^(1-alpha)), averaged over the line cycle, per band
    a, b = M.band_alpha[..., None], M.band_beta[..., None]
    per_sample = vs**b * (duty ** (1 - a) + (1 - duty) ** (1 - a))
    shape = np.mean(per_sample, axis=-1)
    shape_bias = np.mean(per_sample * (i_avg / i_pk) ** 2, axis=-1)
    # a triangle of swing dB and duty D has mean (dB/dt)^2 = dB^2 f^2 / (D (1 - D))
    eddy = float(np.mean(vs**2 / np.maximum(duty * (1 - duty), 1e-12)))
    e_mean = 0.0
    if sw.enabled:
        e_mean = float(np.mean(switching.switching_energy(
            i_avg, spec.converter.bus_v, sw.e0_uj * 1e-6, sw.e1_uj_per_a * 1e-6, sw.e2_uj_per_a2 * 1e-6,
            sw.v_ref_v, sw.diode_uj * 1e-6)))
    return OperatingPoint(op.name or f"{op.v_rms:g} V, {op.load_fraction:g} load", op.v_rms, power,
                          theta, v_in, i_avg, duty, i_pk, i_rms, vs, hmat, shape, shape_bias, eddy, e_mean,
                          float(weight), op.ripple_checked)


def prepare(spec: Spec, catalog: Catalog) -> Context:
    """Precompute everything that depends on the spec and the catalog but not on the designs."""
    theta = waveforms.line_angles(spec.model.samples_per_half_cycle)
    harmonics = np.arange(1, spec.model.harmonics + 1)
    M = catalog.material_arrays
    ops = tuple(_operating_point(spec, catalog, op, weight, theta, harmonics)
                for op, weight in zip(spec.operating_point, spec.weights))
    line_band, _ = core_loss.select_band(np.full(len(M.density), 2 * spec.converter.line_hz),
                                         M.band_f_min, M.band_f_max)
    return Context(spec, catalog, ops, harmonics,
                   core_loss.igse_ki(M.band_k, M.band_alpha, M.band_beta), line_band,
                   magnetics.FRINGING_MODELS[spec.model.fringing])
