"""Stage 2, the magnetic circuit: inductance at zero bias, powder roll-off, flux density, loss band.

A ``Circuit`` answers two questions for any current: the flux density in the core and the share
of the zero-bias permeability kept (1 for gapped cores, the roll-off fit for powder cores).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from fluxfront.models import core_loss, magnetics

from .build import Build
from .context import Context
from .designs import Designs


@dataclass(frozen=True)
class Circuit:
    """Magnetic circuit of each design (arrays of length n)."""

    distributed: np.ndarray   # distributed-gap (powder) material (bool)
    powder: np.ndarray        # indices of the powder designs with a fitted roll-off (bias-dependent terms)
    tabulated: np.ndarray     # indices of the powder designs whose roll-off is a table of points
    table_rows: tuple         # (fraction, integral) rows on magnetics.ROLLOFF_GRID_H for those
    fringe: np.ndarray        # fringing factor of each discrete gap (1 for powder)
    gap_total: np.ndarray     # total gap in the path, a cut pair's residual joints included [m]
    gap_share: np.ndarray     # share of the ampere-turns that drops across the discrete gaps
    section_ratio: np.ndarray  # Ae / A_min: flux density at the narrowest section over that on Ae
    l0: np.ndarray            # zero-bias inductance [H]
    turns: np.ndarray         # [-] as float
    ae: np.ndarray            # magnetic section [m2]
    n_over_le: np.ndarray     # N / le [1/m]: field per ampere
    mu_initial: np.ndarray    # relative initial permeability
    rolloff: tuple            # (a, b, c) of the powder roll-off fit, per design
    band: np.ndarray          # Steinmetz band at the switching frequency
    in_band: np.ndarray       # the switching frequency lies in that band's range (bool)
    hf_scale: np.ndarray      # k_i f^alpha (N Ae f)^-beta Ve (x cut factor): times an op's core_shape, the iGSE loss [W]
    loss_scale: np.ndarray    # cut-core loss factor (1 for uncut cores) times the part's own k deviation
    bias_k: np.ndarray        # DC-bias loss coefficient of the material
    b_sat_ref: np.ndarray     # saturation flux density the bias is measured against [T]

    def flux_density(self, current):
        """Core flux density at inductor current ``current`` [A] (per design) [T]."""
        pw = self.powder
        a, b, c = self.rolloff
        bf = self.l0 * current / (self.turns * self.ae)
        bf[pw] = magnetics.powder_flux_density(self.n_over_le[pw] * current[pw], self.mu_initial[pw], a[pw], b[pw],
                                               c[pw])
        tb = self.tabulated
        if tb.size:
            frac, integral = self.table_rows
            bf[tb] = magnetics.tabulated_flux_density(self.n_over_le[tb] * current[tb], self.mu_initial[tb],
                                                      integral, frac)
        return bf

    def kept_fraction(self, current):
        """Permeability fraction kept at ``current`` [A], shape (n,) or (n, S); 1 for gapped cores."""
        pw = self.powder
        a, b, c = self.rolloff
        n = len(self.l0)
        out = np.ones(np.shape(current) if np.ndim(current) == 2 else (n,))
        cur = current[pw] if np.ndim(current) else current
        col = (slice(None), None) if out.ndim == 2 else (slice(None),)
        out[pw] = magnetics.powder_permeability_fraction(self.n_over_le[pw][col] * cur, a[pw][col], b[pw][col],
                                                         c[pw][col])
        tb = self.tabulated
        if tb.size:
            h = self.n_over_le[tb][col] * (current[tb] if np.ndim(current) else current)
            out[tb] = magnetics.tabulated_permeability_fraction(h, self.table_rows[0])
        return out


def circuit(ctx: Context, d: Designs, b: Build) -> Circuit:
    """Reluctance with fringing (gapped) or the powder's initial permeability; Steinmetz band choice.

    A gapped leg's gap may be split into ``d.gaps`` equal gaps spread along it; the handbook fringing
    factor is then taken per gap with the gaps' pitch as its window (each gap fringes only up to its
    neighbours; an assumption, no source).  Cut ribbon pairs add their residual joint gaps.
    """
    M, S = ctx.catalog.material_arrays, ctx.catalog.shape_arrays
    m, geo = d.material, b.geo
    N, f = d.turns.astype(float), d.f_sw
    dist = M.distributed_gap[m]
    gap_legs = S["gap_legs"][d.shape]
    legs = np.maximum(gap_legs, 1)
    gap_area = np.where(gap_legs > 0, geo.gap_area, geo.ae)
    gap_total = (d.gap + np.where(M.tape_wound[m], M.cut_residual_gap[m] * legs, 0.0)) * ctx.spec.model.gap_factor
    each = np.where(gap_total > 0, gap_total, 1e-9) / (legs * d.gaps)
    fringe = np.where(dist | (gap_total <= 0), 1.0, ctx.fringing(each, gap_area, geo.gap_window_height / d.gaps))
    mu = M.mu_initial[m] * d.mu_factor
    l0 = np.where(dist, magnetics.powder_inductance(N, geo.le, b.ae, mu),
                  magnetics.gapped_inductance(N, geo.le, b.ae, mu, gap_total, gap_area, fringe))
    r_core = magnetics.reluctance(geo.le, b.ae, mu)
    r_gap = magnetics.reluctance(gap_total, gap_area)   # as in gapped_inductance: F scales L, not R_gap
    share = np.where(dist, 0.0, r_gap / (r_gap + r_core))
    band, in_band = core_loss.select_band(f, M.band_f_min[m], M.band_f_max[m])
    k_i, alpha, beta = ctx.band_ki[m, band], M.band_alpha[m, band], M.band_beta[m, band]
    scale = M.cut_loss_factor[m] * d.k_factor
    table = M.rolloff_tabulated[m]
    tb = np.nonzero(dist & table)[0]
    return Circuit(
        distributed=dist, powder=np.nonzero(dist & ~table)[0], tabulated=tb,
        table_rows=(M.rolloff_fraction[m[tb]], M.rolloff_integral[m[tb]]), fringe=fringe, gap_total=np.where(dist, 0.0, gap_total),
        gap_share=share, section_ratio=b.ae / (geo.a_min * M.stacking_factor[m]), l0=l0, turns=N, ae=b.ae,
        n_over_le=N / geo.le, mu_initial=mu, rolloff=(M.rolloff_a[m], M.rolloff_b[m], M.rolloff_c[m]),
        band=band, in_band=in_band, hf_scale=k_i * f**alpha * (N * b.ae * f) ** (-beta) * b.ve * scale,
        loss_scale=scale, bias_k=M.bias_loss_k[m], b_sat_ref=M.b_sat_25c[m])
