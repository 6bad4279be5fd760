"""Stages 4 and 5: the winding's AC terms at three temperatures, then the heat balance.

Temperature enters the losses only through the material's loss factor and the copper
resistivity, so the balance is solved on per-design scalars: the winding AC terms (Dowell and
gap fringing) are evaluated at three temperatures and interpolated (quadratic, error below
0.5 % over 150 K), and Newton steps settle ``dissipation(dT) = loss(dT)`` for each design and
operating point.  The winding and the core each have their own hot spot above the surface, from
a two-node network (``_conductances``); copper is evaluated at the winding's, the core at its own.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from fluxfront.models import core_loss, gap_field, geometry, thermal, winding

from .build import Build
from .circuit import Circuit
from .context import Context
from .designs import Designs
from .line_cycle import LineCycle

TEMPERATURE_NODES_K = (0.0, 75.0, 150.0)  # above ambient: where the winding AC terms are evaluated
NEWTON_STEPS = 60
RUNAWAY_RISE_K = 1000.0  # a balance above this rise is runaway: no insulation or core survives it
SETTLE_STEPS = 15        # after these steps a design whose hot spot is past HOPELESS_RISE x the allowed rise stops:
HOPELESS_RISE = 3.0      # it cannot meet the hot-spot limit (slow tails there cost most of the iterations)


def _natural(spec, box, dt):
    length, width, height = box
    return thermal.box_natural_convection(dt, spec.limits.ambient_c, length, width, height, spec.thermal.emissivity,
                                          bottom_exposed=spec.thermal.mounting == "free")


def _exposed_area(spec, box):
    return thermal.box_exposed_area(*box, bottom_exposed=spec.thermal.mounting == "free")


def _forced(spec, box, dt):
    return thermal.forced_convection(dt, spec.limits.ambient_c, _exposed_area(spec, box), spec.thermal.h_forced_w_m2k,
                                     spec.thermal.emissivity)


def _empirical(spec, box, dt):
    return thermal.empirical_dissipation(dt, _exposed_area(spec, box))


# spec.thermal.model -> (spec, box (length, width, height) [m], rise [K]) -> (power [W], slope [W/K]).
# The part stands on its largest face (lowest profile): the height is the box's smallest edge.
DISSIPATION_MODELS = {"natural": _natural, "forced": _forced, "empirical": _empirical}
assert tuple(DISSIPATION_MODELS) == thermal.THERMAL_MODELS


def dissipation(spec, box, dt):
    """The spec's dissipation model times its calibration factor: (power [W], slope [W/K]) at rise dt."""
    p, dp = DISSIPATION_MODELS[spec.thermal.model](spec, box, dt)
    k = spec.thermal.dissipation_factor
    return p * k, dp * k


@dataclass(frozen=True)
class AcFactors:
    """Winding AC terms at three temperatures, interpolated by the heat balance."""

    t_nodes: np.ndarray   # (3,) winding temperatures of the nodes [C]
    nodes: np.ndarray     # (n, n_ops, 3) [A2]: Dowell AC loss = R_dc(T) * interpolated value
    fringing: np.ndarray  # (n, n_ops, 3) [W]: loss the discrete gaps' fringing field drives


@dataclass(frozen=True)
class HeatBalance:
    """Settled temperatures and the losses at them (arrays (n, n_ops), SI units)."""

    t_surface: np.ndarray   # [C]
    t_winding: np.ndarray   # winding hot spot [C]
    t_core: np.ndarray      # core hot spot [C]
    t_hot: np.ndarray       # the hotter of the two [C]; where runaway: the last iterate, not a state
    runaway: np.ndarray     # no stable balance below RUNAWAY_RISE_K (bool)
    core: np.ndarray        # core loss at temperature, bias and cut factors included [W]
    core_line: np.ndarray   # its line-frequency loop part [W]
    core_gap: np.ndarray    # gap loss of cut ribbon cores [W]
    winding_dc: np.ndarray  # [W]
    winding_ac: np.ndarray  # [W]
    winding_fringing: np.ndarray  # [W]
    switching: np.ndarray   # semiconductor switching loss, not the inductor's [W]
    total: np.ndarray       # the inductor's own loss [W]


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


def _fringing_geometry(ctx: Context, d: Designs, b: Build, c: Circuit):
    """Geometry factor of every coil beside discrete gaps, times the coil count [1/m]; 0 without gaps."""
    cat, geo = ctx.catalog, b.geo
    W = cat.wire_arrays
    coils = cat.shape_arrays["gap_legs"][d.shape]
    gapped = (c.gap_total > 0) & (coils > 0)
    if not gapped.any():
        return np.zeros(len(d))
    i = np.nonzero(gapped)[0]              # the field is computed for designs with discrete gaps only
    w = d.wire[i]
    strands = np.where(W["litz"][w], W["strands"][w], 1.0)
    per_metre = b.turns_per_layer[i] * d.parallel[i] * strands / geo.window_breadth[i]
    out = np.zeros(len(d))
    out[i] = coils[i] * gap_field.fringing_geometry_factor(
        geo.leg_perimeter[i], geo.bobbin_wall[i] + b.keepout[i], W["outer_diameter"][w], b.layers[i], per_metre,
        c.gap_total[i] / coils[i], d.gaps[i], geo.gap_window_height[i])
    return out


@dataclass(frozen=True)
class WindingShape:
    """What the AC resistance factor of each design's winding depends on besides frequency."""

    litz: np.ndarray
    strand: np.ndarray         # strand (solid: wire) copper diameter [m]
    porosity: np.ndarray       # copper width along a layer over its breadth, within (0, 1]
    layers: np.ndarray         # layers (of wires)
    strand_layers: np.ndarray  # layers of strands (litz: layers x sqrt(strands))


def winding_shape(ctx: Context, d: Designs, b: Build) -> WindingShape:
    W, geo = ctx.catalog.wire_arrays, b.geo
    w, par = d.wire, d.parallel.astype(float)
    od = W["outer_diameter"][w]
    litz = W["litz"][w]
    d_s, n_s = W["strand_diameter"][w], W["strands"][w]
    # porosity of a layer: copper width along the layer over its breadth
    breadth = np.where(b.ring, np.pi * 2 * np.maximum(geo.window_height - od / 2, od), geo.window_breadth)
    # (held within (0, 1]: a layer cannot hold more copper than its breadth, nor less than a trace)
    eta = np.clip(b.turns_per_layer * par * np.where(litz, np.sqrt(n_s) * d_s, d_s) / breadth, 1e-3, 1.0)
    return WindingShape(litz, d_s, eta, b.layers, np.where(litz, b.layers * np.sqrt(n_s), b.layers))


def resistance_factor(ctx: Context, ws: WindingShape, frequencies, temperature_c):
    """R_ac / R_dc of each design's winding at ``frequencies`` (n, H) [Hz] and ``temperature_c`` [C]:
    Dowell for solid wire, strand-level litz factor for litz.  Returns (factor (n, H), resistivity)."""
    cu = ctx.catalog.copper
    rho = winding.copper_resistivity(temperature_c, cu.resistivity_ohm_m_20c, cu.tempco_per_k)
    delta = winding.skin_depth(frequencies, rho)
    litz, solid = ws.litz, ~ws.litz
    fr = np.empty_like(delta)
    fr[litz] = winding.litz_factor(ws.strand[litz, None], delta[litz], ws.strand_layers[litz, None],
                                   ws.porosity[litz, None])
    fr[solid] = winding.dowell_factor(winding.round_wire_dowell_x(ws.strand[solid, None], delta[solid],
                                                                  ws.porosity[solid, None]), ws.layers[solid, None])
    return fr, rho, delta


def ac_factors(ctx: Context, d: Designs, b: Build, c: Circuit, lc: LineCycle) -> AcFactors:
    """Dowell (solid wire) or strand-level litz factor, and the gaps' fringing loss, at three temperatures.

    The fringing loss of harmonic n is ``rho G Gamma(d/delta_n) F_n^2`` with the peak MMF across one
    leg's gaps ``F_n = N I_n,pk share / legs`` (models.gap_field).
    """
    n = len(d)
    t_nodes = ctx.spec.limits.ambient_c + np.array(TEMPERATURE_NODES_K)
    ws = winding_shape(ctx, d, b)
    geometry_factor = _fringing_geometry(ctx, d, b, c)
    coils = np.maximum(ctx.catalog.shape_arrays["gap_legs"][d.shape], 1)
    mmf_sq = (c.turns * c.gap_share / coils)[:, None, None] ** 2 * 2 * lc.harmonics_ms   # peak, per harmonic
    nodes = np.empty((n, len(ctx.ops), 3))
    fringing = np.zeros((n, len(ctx.ops), 3))
    fringed = np.nonzero(geometry_factor > 0)[0]
    for k, t in enumerate(t_nodes):
        fr, rho, delta = resistance_factor(ctx, ws, d.f_sw[:, None] * ctx.harmonics, t)
        nodes[:, :, k] = (fr[:, None, :] * lc.harmonics_ms).sum(axis=-1)
        if fringed.size:
            gamma = gap_field.round_wire_transverse_factor(ws.strand[fringed, None] / delta[fringed])
            fringing[fringed, :, k] = gap_field.fringing_winding_loss(
                geometry_factor[fringed, None], mmf_sq[fringed], gamma[:, None, :], rho)
    return AcFactors(t_nodes, nodes, fringing)


def _conductances(ctx: Context, d: Designs, b: Build):
    """Winding-surface, core-surface and winding-core conductances of the two-node network [W/K].

    Winding: a slab of the winding's build over its outer surface, heat generated evenly, cooled
    outside (``thermal.winding_conductivity_w_mk``).  Core: a slab as thick as the leg (sqrt Ae)
    over the core's outer surface (the material's conductivity).  Coupling: the bobbin wall (or
    coating) between the first layer and the leg (``thermal.bobbin_conductivity_w_mk``).
    """
    th, geo = ctx.spec.thermal, b.geo
    M, S = ctx.catalog.material_arrays, ctx.catalog.shape_arrays
    legs = S["winding_legs"][d.shape]
    outer_turn = geometry.mean_turn_length(geo, b.keepout + b.depth)
    g_w = thermal.slab_conductance(th.winding_conductivity_w_mk, outer_turn * geo.window_breadth * legs,
                                   np.maximum(b.depth, 1e-4))
    box = geo.core_box
    core_area = 2 * (box[:, 0] * box[:, 1] + box[:, 0] * box[:, 2] + box[:, 1] * box[:, 2])
    g_c = thermal.slab_conductance(M.thermal_conductivity[d.material], core_area, np.sqrt(b.ae))
    g_x = th.bobbin_conductivity_w_mk * geo.leg_perimeter * geo.window_breadth * legs / np.maximum(
        geo.bobbin_wall + b.keepout, 5e-4)
    return g_w, g_c, g_x


@dataclass(frozen=True)
class _Terms:
    """What the Newton steps need, per design and operating point (arrays (n, n_ops))."""

    core_ref: np.ndarray
    core_gap: np.ndarray
    i2: np.ndarray
    r20: np.ndarray
    box: tuple
    conductances: tuple


def _losses(ctx: Context, m, t: _Terms, ac: AcFactors, sel, t_w, t_c):
    """Winding and core loss at temperatures ``t_w``, ``t_c`` and their slopes in those temperatures."""
    M, alpha_cu = ctx.catalog.material_arrays, ctx.catalog.copper.tempco_per_k
    rows = sel[0]
    ref, c1, c2 = M.loss_temp_ref[m][rows], M.loss_temp_c1[m][rows], M.loss_temp_c2[m][rows]
    a_t = _lagrange3(t_w, ac.t_nodes, ac.nodes[sel])
    r_t = t.r20[sel] * (1 + alpha_cu * (t_w - 20.0))
    p_w = r_t * (t.i2[sel] + a_t) + _lagrange3(t_w, ac.t_nodes, ac.fringing[sel])
    dp_w = (t.r20[sel] * alpha_cu * (t.i2[sel] + a_t) + r_t * _lagrange3_slope(t_w, ac.t_nodes, ac.nodes[sel])
            + _lagrange3_slope(t_w, ac.t_nodes, ac.fringing[sel]))
    p_c = t.core_ref[sel] * core_loss.temperature_factor(t_c, ref, c1, c2) + t.core_gap[sel]
    dp_c = t.core_ref[sel] * core_loss.temperature_factor_slope(t_c, ref, c1, c2)
    return p_w, dp_w, p_c, dp_c


def _rises(ctx: Context, t: _Terms, sel, p_w, p_c):
    """Winding and core hot spots over the surface: the fixed spec value, or the two-node network."""
    fixed = ctx.spec.thermal.internal_rise_k
    if fixed is not None:
        return np.full(p_w.shape, fixed), np.full(p_w.shape, fixed)
    g_w, g_c, g_x = (g[sel] for g in t.conductances)
    return thermal.two_node_rises(p_w, p_c, g_w, g_c, g_x)


def _newton(ctx: Context, d: Designs, t: _Terms, ac: AcFactors):
    """Surface rise and internal rises per design and operating point, and whether a stable balance was reached."""
    spec, m = ctx.spec, d.material
    n, n_ops = len(d), len(ctx.ops)
    amb = spec.limits.ambient_c
    every = np.nonzero(np.ones((n, n_ops), dtype=bool))
    # starting guess: the loss at a 30 K rise spread with a typical 12 W/(m2 K) of convection plus
    # radiation (only a start; the Newton steps below settle the balance)
    p_w, _, p_c, _ = _losses(ctx, m, t, ac, every, amb + 30.0, amb + 30.0)
    area = _exposed_area(spec, tuple(x[every] for x in t.box))
    dt = np.clip((p_w + p_c) / (12.0 * area), 1.0, 1500.0).reshape(n, n_ops)
    rise_w, rise_c = (np.clip(r, 0.0, 2000.0).reshape(n, n_ops) for r in _rises(ctx, t, every, p_w, p_c))
    converged = np.zeros((n, n_ops), dtype=bool)
    stable = np.zeros((n, n_ops), dtype=bool)
    active = every
    hopeless = HOPELESS_RISE * (spec.limits.hot_spot_max_c - amb)
    for step in range(NEWTON_STEPS):
        # Newton on dissipation(dT) - loss(dT) = 0, only where not yet converged, with the internal
        # rises taken from the previous step.  The loss slope in the denominator makes it converge in
        # a few steps; its floor (a fifth of the dissipation slope) keeps each step moving up towards
        # the first, stable, crossing from below.
        x = dt[active]
        p_w, dp_w, p_c, dp_c = _losses(ctx, m, t, ac, active, amb + x + rise_w[active], amb + x + rise_c[active])
        loss, dloss = p_w + p_c, dp_w + dp_c
        p, dp = dissipation(spec, tuple(b[active] for b in t.box), x)
        new = np.clip(x - (p - loss) / np.maximum(dp - dloss, 0.2 * dp), 0.0, 2000.0)
        new_w, new_c = (np.clip(r, 0.0, 2000.0) for r in _rises(ctx, t, active, p_w, p_c))
        settled = (np.abs(new - x) < 0.01) & (np.abs(new_w - rise_w[active]) < 0.01) & (
            np.abs(new_c - rise_c[active]) < 0.01)
        # past the runaway rise, or far past the allowed rise after SETTLE_STEPS, there is nothing left
        # to settle: stop iterating those (reported as runaway, see heat_balance)
        done = settled | (new >= RUNAWAY_RISE_K) | ((step >= SETTLE_STEPS) & (new + np.maximum(new_w, new_c) >= hopeless))
        dt[active], rise_w[active], rise_c[active] = new, new_w, new_c
        hit = (active[0][settled], active[1][settled])
        converged[hit] = True
        stable[hit] = (dp > dloss)[settled]       # dissipation rises faster than loss: a stable balance
        active = (active[0][~done], active[1][~done])
        if active[0].size == 0:
            break
    return dt, rise_w, rise_c, converged, stable


def heat_balance(ctx: Context, d: Designs, b: Build, lc: LineCycle, ac: AcFactors) -> HeatBalance:
    """Settle the temperature of every design and operating point; losses at that temperature."""
    spec, M = ctx.spec, ctx.catalog.material_arrays
    m, n, n_ops = d.material, len(d), len(ctx.ops)
    edges = np.sort(b.size, axis=1)        # the part stands on its largest face: height = smallest edge
    box = tuple(np.broadcast_to(edges[:, i, None], (n, n_ops)) for i in (2, 1, 0))
    terms = _Terms(lc.per_op["core_ref"], lc.per_op["core_gap"], lc.per_op["i_line_rms"] ** 2,
                   np.broadcast_to(b.r_dc20[:, None], (n, n_ops)), box,
                   tuple(np.broadcast_to(g[:, None], (n, n_ops)) for g in _conductances(ctx, d, b)))
    dt, rise_w, rise_c, converged, stable = _newton(ctx, d, terms, ac)
    # no converged, stable balance, or one above RUNAWAY_RISE_K: thermal runaway
    runaway = ~converged | ~stable | (dt >= RUNAWAY_RISE_K)
    t_surface = spec.limits.ambient_c + dt
    t_w, t_c = t_surface + rise_w, t_surface + rise_c
    r_dc = b.r_dc20[:, None] * (1 + ctx.catalog.copper.tempco_per_k * (t_w - 20.0))
    loss_factor = core_loss.temperature_factor(t_c, M.loss_temp_ref[m, None], M.loss_temp_c1[m, None],
                                               M.loss_temp_c2[m, None])
    core = lc.per_op["core_ref"] * loss_factor
    wdc = r_dc * lc.per_op["i_line_rms"] ** 2
    wac = r_dc * _lagrange3(t_w, ac.t_nodes, ac.nodes)
    fringing = _lagrange3(t_w, ac.t_nodes, ac.fringing)
    gap = lc.per_op["core_gap"]
    return HeatBalance(t_surface=t_surface, t_winding=t_w, t_core=t_c, t_hot=np.maximum(t_w, t_c), runaway=runaway,
                       core=core, core_line=lc.per_op["core_line_ref"] * loss_factor, core_gap=gap, winding_dc=wdc,
                       winding_ac=wac, winding_fringing=fringing, switching=lc.per_op["switching"],
                       total=core + gap + wdc + wac + fringing)
