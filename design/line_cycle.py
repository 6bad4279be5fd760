"""Stage 3, the line cycle: currents, ripple, flux and core loss over each operating point's half cycle.

Everything is evaluated at the material's loss reference temperature here; the heat balance
(``heat.py``) scales the core loss to the temperature it settles at.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from fluxfront.models import core_loss, switching
from fluxfront.models.core_loss import GAP_LOSS_KI

from .build import Build
from .circuit import Circuit
from .context import Context, OperatingPoint
from .designs import Designs

PER_OP = ("i_peak", "ripple_max", "ripple_ratio", "dcm_fraction", "b_peak", "b_line", "db_max", "kept_fraction",
          "core_ref", "core_line_ref", "core_bias_factor", "core_gap", "i_line_rms", "ripple_ms", "switching",
          "inductance_at_peak")


@dataclass(frozen=True)
class LineCycle:
    """Per design and operating point (arrays (n, n_ops), SI units; names in ``PER_OP``)."""

    per_op: dict[str, np.ndarray]
    harmonics_ms: np.ndarray    # (n, n_ops, Nh): mean square of each ripple harmonic over the line cycle [A2]
    samples: list[dict[str, np.ndarray]] = field(default_factory=list)  # per op, (n, S) arrays if kept


def _rowdot(a, b):
    """``a @ b`` for a (n, S) and b (S, H) with every row summed in the same order whatever n.

    einsum's own loops (not BLAS, whose blocking depends on the batch) keep a design's bits
    independent of the batch it is evaluated in; tests/test_evaluator.py checks it.
    """
    return np.einsum("ns,sh->nh", a, b)


def _samples(ctx: Context, d: Designs, b: Build, c: Circuit, op: OperatingPoint, ripple, i_top, frac):
    """The sampled line cycle of one operating point, for plots and ``evaluate --json``."""
    M = ctx.catalog.material_arrays
    m, f = d.material, d.f_sw
    n = len(d)
    db = op.volt_seconds / (c.turns * b.ae * f)[:, None]
    alpha, beta = M.band_alpha[m, c.band], M.band_beta[m, c.band]
    b_avg = np.column_stack([c.flux_density(np.full(n, op.i_avg[k])) for k in range(ripple.shape[1])])
    # loss density at the material's reference temperature (the sheet's plots say so), DC bias included
    pv = core_loss.igse_triangle(db, op.duty, f[:, None], M.band_k[m, c.band][:, None], alpha[:, None], beta[:, None])
    pv = pv * c.loss_scale[:, None] * core_loss.bias_loss_factor(b_avg, c.b_sat_ref[:, None], c.bias_k[:, None])
    shape = ripple.shape
    return {
        "angle_deg": np.broadcast_to(np.degrees(op.theta), shape), "v_in_v": np.broadcast_to(op.v_in, shape),
        "duty": np.broadcast_to(op.duty, shape), "i_avg_a": np.broadcast_to(op.i_avg, shape),
        "ripple_pp_a": ripple, "i_top_a": i_top, "inductance_uh": (c.l0[:, None] * frac) * 1e6,
        "b_avg_t": b_avg,
        "b_top_t": np.column_stack([c.flux_density(i_top[:, k]) for k in range(shape[1])]),
        "b_ripple_pp_t": db, "core_loss_density_w_cm3_at_ref": pv * 1e-6}


def _gap_loss(ctx: Context, d: Designs, b: Build, c: Circuit, op: OperatingPoint):
    """Eddy loss at the cut faces of gapped ribbon cores [W]; zero for other cores.

    The ripple's mean square dB/dt over the line cycle, ``eddy_shape / (N Ae)^2``, is expressed as
    the amplitude of a sine of the switching frequency with the same mean square dB/dt.
    """
    cat = ctx.catalog
    tape = cat.material_arrays.tape_wound[d.material] & (c.gap_total > 0)
    if not tape.any():
        return np.zeros(len(d))
    coils = cat.shape_arrays["winding_legs"][d.shape]
    k_i = np.where(coils == 2, GAP_LOSS_KI[2], GAP_LOSS_KI[1])
    b_eq = np.sqrt(op.eddy_shape / (2 * np.pi**2)) / (c.turns * b.ae * d.f_sw)
    strip = b.geo.core_box[:, 2]                    # ribbon width across all stacked cores
    return np.where(tape, core_loss.cut_core_gap_loss(strip, c.gap_total, d.f_sw, b_eq, k_i), 0.0)


def line_cycle(ctx: Context, d: Designs, b: Build, c: Circuit, keep_samples: bool) -> LineCycle:
    """Ripple with the incremental inductance along the cycle, peaks, flux, iGSE and line-loop loss.

    The peak flux is reported at the core's narrowest section (``b_peak``), the flux that drives
    the loss on its effective section (``b_line``, ``db_max``).  The core loss carries the DC-bias
    factor of each sample and the cut-core factor; the gap loss of cut ribbon cores is its own term.
    """
    M = ctx.catalog.material_arrays
    m, f, n = d.material, d.f_sw, len(d)
    lb = ctx.line_band[m]
    pw = np.concatenate([c.powder, c.tabulated])       # powder designs: the roll-off shapes the ripple
    per = {k: np.empty((n, len(ctx.ops))) for k in PER_OP}
    harm = np.empty((n, len(ctx.ops), len(ctx.harmonics)))
    samples = []
    for j, op in enumerate(ctx.ops):
        frac = c.kept_fraction(np.broadcast_to(op.i_avg, (n, len(op.i_avg))))
        ripple = op.volt_seconds / ((c.l0 * f)[:, None] * frac)
        i_top = op.i_avg + 0.5 * ripple
        i_peak = i_top.max(axis=1)
        per["i_peak"][:, j] = i_peak
        per["ripple_max"][:, j] = ripple.max(axis=1)
        per["ripple_ratio"][:, j] = per["ripple_max"][:, j] / op.i_pk
        per["dcm_fraction"][:, j] = np.mean(0.5 * ripple > op.i_avg, axis=1)
        per["b_peak"][:, j] = c.flux_density(i_peak) * c.section_ratio
        b_line = c.flux_density(np.full(n, op.i_pk))
        per["b_line"][:, j] = b_line
        per["db_max"][:, j] = op.volt_seconds.max() / (c.turns * b.ae * f)
        kept = c.kept_fraction(i_peak)
        per["kept_fraction"][:, j] = kept
        per["inductance_at_peak"][:, j] = c.l0 * kept
        line_loop = core_loss.rectified_sine_loop(b_line, ctx.spec.converter.line_hz, M.band_k[m, lb],
                                                  M.band_alpha[m, lb], M.band_beta[m, lb]) * b.ve * c.loss_scale
        # bias factor 1 + k (B_dc/B_sat)^2 with B_dc = b_line i_avg/i_pk, averaged exactly (context.py)
        plain, weighted = op.core_shape[m, c.band], op.core_shape_bias[m, c.band]
        biased = plain + c.bias_k * (b_line / c.b_sat_ref) ** 2 * weighted
        per["core_bias_factor"][:, j] = biased / plain
        per["core_ref"][:, j] = c.hf_scale * biased + line_loop
        per["core_line_ref"][:, j] = line_loop
        per["core_gap"][:, j] = _gap_loss(ctx, d, b, c, op)
        per["i_line_rms"][:, j] = op.i_rms
        # ripple harmonics over the line cycle: (1/(L0 f))^2 * frac^-2 @ (v d)^2 w_n(D), summed
        # elementwise rather than by BLAS so that a design's result does not depend on its batch;
        # gapped cores keep L0 over the cycle (frac = 1): their sum is the column sum, computed once
        weights = np.broadcast_to(op.harmonic_matrix.sum(axis=0), (n, len(ctx.harmonics))).copy()
        weights[pw] = _rowdot(frac[pw] ** -2, op.harmonic_matrix)
        harm[:, j, :] = weights / ((c.l0 * f) ** 2)[:, None]
        per["ripple_ms"][:, j] = harm[:, j, :].sum(axis=1)
        per["switching"][:, j] = switching.switching_loss(op.switching_energy, f)
        if keep_samples:
            samples.append(_samples(ctx, d, b, c, op, ripple, i_top, frac))
    return LineCycle(per, harm, samples)
