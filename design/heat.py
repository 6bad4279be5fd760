"""Stages 4 and 5: the winding's AC factor at three temperatures, then the heat balance.

Temperature enters the losses only through the material's loss factor and the copper
resistivity, so the balance is solved on per-design scalars: the AC factor is evaluated at three
temperatures and interpolated (quadratic, error below 0.5 % over 150 K), and Newton steps settle
``dissipation(dT) = loss(dT)`` for each design and operating point.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from fluxfront.models import core_loss, thermal, winding

from .build import Build
from .context import Context
from .designs import Designs
from .line_cycle import LineCycle

TEMPERATURE_NODES_K = (0.0, 75.0, 150.0)  # above ambient: where the AC factor is evaluated
NEWTON_STEPS = 60
RUNAWAY_RISE_K = 1000.0  # a balance above this rise is runaway: no insulation or core survives it


def _natural(spec, area, height, dt):
    return thermal.natural_convection(dt, spec.limits.ambient_c, area, height, spec.thermal.emissivity)


def _forced(spec, area, height, dt):
    return thermal.forced_convection(dt, spec.limits.ambient_c, area, spec.thermal.h_forced_w_m2k,
                                     spec.thermal.emissivity)


def _empirical(spec, area, height, dt):
    return thermal.empirical_dissipation(dt, area)


# spec.thermal.model -> (spec, area [m2], height [m], rise [K]) -> (power [W], slope [W/K])
DISSIPATION_MODELS = {"natural": _natural, "forced": _forced, "empirical": _empirical}
assert tuple(DISSIPATION_MODELS) == thermal.THERMAL_MODELS


@dataclass(frozen=True)
class AcFactors:
    """Sum over harmonics of F_R(n f) times the harmonic's mean square, at three temperatures."""

    t_nodes: np.ndarray   # (3,) hot-spot temperatures of the nodes [C]
    nodes: np.ndarray     # (n, n_ops, 3) [A2]: winding AC loss = R_dc(T) * interpolated value


@dataclass(frozen=True)
class HeatBalance:
    """Settled temperatures and the losses at them (arrays (n, n_ops), SI units)."""

    t_surface: np.ndarray   # [C]
    t_hot: np.ndarray       # [C]; where runaway: the last iterate, not a state
    runaway: np.ndarray     # no stable balance below RUNAWAY_RISE_K (bool)
    core: np.ndarray        # core loss at temperature [W]
    core_line: np.ndarray   # its line-frequency loop part [W]
    winding_dc: np.ndarray  # [W]
    winding_ac: np.ndarray  # [W]
    switching: np.ndarray   # semiconductor switching loss [W]
    total: np.ndarray       # [W]


def _lagrange3(x, nodes, values):
    """Quadratic through three (node, value) pairs, evaluated at x; values (..., 3) broadcast with x."""
    x0, x1, x2 = nodes
    l0 = (x - x1) * (x - x2) / ((x0 - x1) * (x0 - x2))
    l1 = (x - x0) * (x - x2) / ((x1 - x0) * (x1 - x2))
    l2 = (x - x0) * (x - x1) / ((x2 - x0) * (x2 - x1))
    return l0 * values[..., 0] + l1 * values[..., 1] + l2 * values[..., 2]


def _lagrange3_slope(x, nodes, values):
    """Derivative in x of the quadratic through three (node, value) pairs."""
    x0, x1, x2 = nodes
    d0 = (2 * x - x1 - x2) / ((x0 - x1) * (x0 - x2))
    d1 = (2 * x - x0 - x2) / ((x1 - x0) * (x1 - x2))
    d2 = (2 * x - x0 - x1) / ((x2 - x0) * (x2 - x1))
    return d0 * values[..., 0] + d1 * values[..., 1] + d2 * values[..., 2]


def ac_factors(ctx: Context, d: Designs, b: Build, lc: LineCycle) -> AcFactors:
    """Dowell (solid wire) or strand-level litz factor over the ripple harmonics, at three temperatures."""
    cat, geo = ctx.catalog, b.geo
    W = cat.wire_arrays
    w, f, par = d.wire, d.f_sw, d.parallel.astype(float)
    n = len(d)
    od = W["outer_diameter"][w]
    t_nodes = ctx.spec.limits.ambient_c + np.array(TEMPERATURE_NODES_K)
    litz = W["litz"][w]
    d_s, n_s = W["strand_diameter"][w], W["strands"][w]
    # porosity of a layer: copper width along the layer over its breadth
    breadth = np.where(b.ring, np.pi * 2 * np.maximum(geo.window_height - od / 2, od), geo.window_breadth)
    # (held within (0, 1]: a layer cannot hold more copper than its breadth, nor less than a trace)
    eta = np.clip(b.turns_per_layer * par * np.where(litz, np.sqrt(n_s) * d_s, d_s) / breadth, 1e-3, 1.0)
    strand_layers = np.where(litz, b.layers * np.sqrt(n_s), b.layers)
    nodes = np.empty((n, len(ctx.ops), 3))
    solid = ~litz
    for k, t in enumerate(t_nodes):
        delta = winding.skin_depth(f[:, None] * ctx.harmonics, winding.copper_resistivity(
            t, cat.copper.resistivity_ohm_m_20c, cat.copper.tempco_per_k))
        fr = np.empty_like(delta)
        fr[litz] = winding.litz_factor(d_s[litz, None], delta[litz], strand_layers[litz, None], eta[litz, None])
        fr[solid] = winding.dowell_factor(winding.round_wire_dowell_x(d_s[solid, None], delta[solid], eta[solid, None]),
                                          b.layers[solid, None])
        nodes[:, :, k] = (fr[:, None, :] * lc.harmonics_ms).sum(axis=-1)
    return AcFactors(t_nodes, nodes)


def _newton(ctx: Context, d: Designs, b: Build, lc: LineCycle, ac: AcFactors):
    """Surface rise per design and operating point, and whether a stable balance was reached."""
    spec, M = ctx.spec, ctx.catalog.material_arrays
    m, n, n_ops = d.material, len(d), len(ctx.ops)
    amb = spec.limits.ambient_c
    area = np.broadcast_to(b.surface[:, None], (n, n_ops))
    height = np.broadcast_to(b.size.max(axis=1)[:, None], (n, n_ops))
    dissipation = DISSIPATION_MODELS[spec.thermal.model]
    ref, c1, c2 = M.loss_temp_ref[m], M.loss_temp_c1[m], M.loss_temp_c2[m]
    rise_int, alpha_cu = spec.thermal.internal_rise_k, ctx.catalog.copper.tempco_per_k
    core_ref, i2 = lc.per_op["core_ref"], lc.per_op["i_line_rms"] ** 2
    r20 = np.broadcast_to(b.r_dc20[:, None], (n, n_ops))
    t_nodes = ac.t_nodes
    # starting guess: the loss at a 30 K rise spread with a typical 12 W/(m2 K) of convection plus
    # radiation (only a start; the Newton steps below settle the balance)
    t0 = amb + 30.0 + rise_int
    loss0 = core_ref * core_loss.temperature_factor(t0, ref, c1, c2)[:, None] + r20 * (
        1 + alpha_cu * (t0 - 20.0)) * (i2 + _lagrange3(t0, t_nodes, ac.nodes))
    dt = np.clip(loss0 / (12.0 * area), 1.0, 1500.0)
    converged = np.zeros((n, n_ops), dtype=bool)
    stable = np.zeros((n, n_ops), dtype=bool)
    active = np.nonzero(np.ones((n, n_ops), dtype=bool))
    for _ in range(NEWTON_STEPS):
        # Newton on dissipation(dT) - loss(dT) = 0, only where not yet converged.  The loss slope in
        # the denominator makes it converge in a few steps; its floor (a fifth of the dissipation
        # slope) keeps each step moving up towards the first, stable, crossing from below.
        rows = active[0]
        x = dt[active]
        t_hot = amb + x + rise_int
        a_t = _lagrange3(t_hot, t_nodes, ac.nodes[active])
        r_t = r20[active] * (1 + alpha_cu * (t_hot - 20.0))
        loss = core_ref[active] * core_loss.temperature_factor(t_hot, ref[rows], c1[rows], c2[rows]) + r_t * (
            i2[active] + a_t)
        dloss = (core_ref[active] * core_loss.temperature_factor_slope(t_hot, ref[rows], c1[rows], c2[rows])
                 + r20[active] * alpha_cu * (i2[active] + a_t)
                 + r_t * _lagrange3_slope(t_hot, t_nodes, ac.nodes[active]))
        p, dp = dissipation(spec, area[active], height[active], x)
        new = np.clip(x - (p - loss) / np.maximum(dp - dloss, 0.2 * dp), 0.0, 2000.0)
        done = np.abs(new - x) < 0.01
        dt[active] = new
        hit = (active[0][done], active[1][done])
        converged[hit] = True
        stable[hit] = (dp > dloss)[done]          # dissipation rises faster than loss: a stable balance
        active = (active[0][~done], active[1][~done])
        if active[0].size == 0:
            break
    return dt, converged, stable


def heat_balance(ctx: Context, d: Designs, b: Build, lc: LineCycle, ac: AcFactors) -> HeatBalance:
    """Settle the temperature of every design and operating point; losses at that temperature."""
    spec, M = ctx.spec, ctx.catalog.material_arrays
    m = d.material
    dt, converged, stable = _newton(ctx, d, b, lc, ac)
    # no converged, stable balance, or one above RUNAWAY_RISE_K: thermal runaway
    runaway = ~converged | ~stable | (dt >= RUNAWAY_RISE_K)
    t_surface = spec.limits.ambient_c + dt
    t_hot = t_surface + spec.thermal.internal_rise_k
    r_dc = b.r_dc20[:, None] * (1 + ctx.catalog.copper.tempco_per_k * (t_hot - 20.0))
    loss_factor = core_loss.temperature_factor(t_hot, M.loss_temp_ref[m, None], M.loss_temp_c1[m, None],
                                               M.loss_temp_c2[m, None])
    core = lc.per_op["core_ref"] * loss_factor
    wdc = r_dc * lc.per_op["i_line_rms"] ** 2
    wac = r_dc * _lagrange3(t_hot, ac.t_nodes, ac.nodes)
    sw = lc.per_op["switching"]
    return HeatBalance(t_surface=t_surface, t_hot=t_hot, runaway=runaway, core=core,
                       core_line=lc.per_op["core_line_ref"] * loss_factor, winding_dc=wdc, winding_ac=wac,
                       switching=sw, total=core + wdc + wac + sw)
