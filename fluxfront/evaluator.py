"""The evaluator: chains the models of ``models/`` over a whole population of designs.

``prepare(spec, catalog)`` computes once what does not depend on the design (line-cycle samples,
harmonic weights, core-loss shape integrals, switching energy); ``evaluate(context, designs)``
then works on arrays, chunk by chunk, and returns an ``Evaluation``.

Three facts keep the population work small, each exact within the CCM model:
* the ripple flux swing ``dB = v_in d / (N Ae f)`` does not depend on the inductance, so the
  line-cycle mean of the iGSE is ``(N Ae f)^-beta`` times a design-independent integral per
  operating point and Steinmetz band;
* the harmonic weights of a triangular ripple depend on the duty cycle only, so the ripple's
  harmonic content over the line cycle is one matrix product per operating point;
* temperature enters the losses only through the material's loss factor and the copper
  resistivity, so the heat balance is solved on per-design scalars, with the winding AC factor
  evaluated at three temperatures and interpolated (quadratic, error below 0.5 % over 150 K).
"""
from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from catalog import Catalog
from models import core_loss, cost, geometry, magnetics, switching, thermal, waveforms, winding

from .designs import Designs
from .spec import Spec

CONSTRAINTS = ("saturation", "ripple", "inductance_kept", "fill", "hot_spot", "material_temperature", "dcm")
OBJECTIVES = ("volume_cm3", "total_loss_w", "cost")
RUNAWAY_PENALTY = 10.0     # normalized violation given to a design whose heat balance diverges
DOES_NOT_FIT = 1e3         # normalized violation of a winding that cannot be laid out at all
TEMPERATURE_NODES_K = (0.0, 75.0, 150.0)  # above ambient: where the AC factor is evaluated


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
    switching_energy: float   # line-cycle mean energy per switching period [J]
    weight: float
    ripple_checked: bool


@dataclass(frozen=True)
class Context:
    spec: Spec
    catalog: Catalog
    ops: tuple[OperatingPoint, ...]
    harmonics: np.ndarray
    band_ki: np.ndarray       # (n_materials, n_bands)
    line_band: np.ndarray     # (n_materials,) band used for the line-frequency loop
    fringing: Callable  # gap fringing model chosen in the spec (magnetics.FRINGING_MODELS)


def prepare(spec: Spec, catalog: Catalog) -> Context:
    """Precompute everything that depends on the spec and the catalog but not on the designs."""
    theta = waveforms.line_angles(spec.model.samples_per_half_cycle)
    harmonics = np.arange(1, spec.model.harmonics + 1)
    M = catalog.material_arrays
    sw = spec.switching
    ops = []
    for op, weight in zip(spec.operating_point, spec.weights):
        power = spec.converter.power_w * op.load_fraction
        v_in, i_avg, duty, i_pk, i_rms = waveforms.pfc_line_cycle(
            op.v_rms, power, spec.converter.bus_v, spec.converter.efficiency, theta)
        vs = v_in * duty
        hmat = (vs**2)[:, None] * winding.triangle_harmonic_weights(duty, harmonics) / len(theta)
        # (v d)^beta (D^(1-alpha) + (1-D)^(1-alpha)), averaged over the line cycle, per band
        a, b = M.band_alpha[..., None], M.band_beta[..., None]
        shape = np.mean(vs**b * (duty ** (1 - a) + (1 - duty) ** (1 - a)), axis=-1)
        e_mean = 0.0
        if sw.enabled:
            e_mean = float(np.mean(switching.switching_energy(
                i_avg, spec.converter.bus_v, sw.e0_uj * 1e-6, sw.e1_uj_per_a * 1e-6, sw.e2_uj_per_a2 * 1e-6,
                sw.v_ref_v, sw.diode_uj * 1e-6)))
        ops.append(OperatingPoint(op.name or f"{op.v_rms:g} V, {op.load_fraction:g} load", op.v_rms, power,
                                  theta, v_in, i_avg, duty, i_pk, i_rms, vs, hmat, shape, e_mean, float(weight),
                                  op.ripple_checked))
    line_band, _ = core_loss.select_band(np.full(len(M.density), 2 * spec.converter.line_hz),
                                         M.band_f_min, M.band_f_max)
    return Context(spec, catalog, tuple(ops), harmonics,
                   core_loss.igse_ki(M.band_k, M.band_alpha, M.band_beta), line_band,
                   magnetics.FRINGING_MODELS[spec.model.fringing])


@dataclass
class Evaluation:
    """Results for a population (arrays of length n; per-operating-point arrays are (n, n_ops))."""

    designs: Designs
    objectives: np.ndarray            # (n, 3): volume [cm3], weighted total loss [W], cost
    constraints: np.ndarray           # (n, 7): normalized, <= 0 when met (order: CONSTRAINTS)
    figures: dict[str, np.ndarray]    # key figures, engineering units, named with their unit
    per_op: dict[str, np.ndarray]     # (n, n_ops), SI units
    samples: list[dict[str, np.ndarray]] = field(default_factory=list)  # per op, (n, S) arrays if kept

    @property
    def feasible(self) -> np.ndarray:
        return np.all(self.constraints <= 0, axis=1)


def _rowdot(a, b):
    """``a @ b`` for a (n, S) and b (S, H) with every row summed in the same order whatever n.

    einsum's own loops (not BLAS, whose blocking depends on the batch) keep a design's bits
    independent of the batch it is evaluated in; tests/test_evaluator.py checks it.
    """
    return np.einsum("ns,sh->nh", a, b)


def _weighted(per_op, weights):
    """Weighted sum over operating points, per design, in a fixed order."""
    return (per_op * weights).sum(axis=1)


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


def _dissipation(spec: Spec, area, height):
    """The thermal model chosen in the spec, as dt -> (power, derivative)."""
    th, amb = spec.thermal, spec.limits.ambient_c
    models = {
        "natural": lambda dt: thermal.natural_convection(dt, amb, area, height, th.emissivity),
        "forced": lambda dt: thermal.forced_convection(dt, amb, area, th.h_forced_w_m2k, th.emissivity),
        "empirical": lambda dt: thermal.empirical_dissipation(dt, area),
    }
    return models[th.model]


def _evaluate_chunk(ctx: Context, d: Designs, keep_samples: bool) -> Evaluation:
    spec, cat = ctx.spec, ctx.catalog
    M, W, S = cat.material_arrays, cat.wire_arrays, cat.shape_arrays
    lim = spec.limits
    n, m, w = len(d), d.material, d.wire
    N, f, par = d.turns.astype(float), d.f_sw, d.parallel.astype(float)

    # ---- geometry and winding layout ----------------------------------------------------------
    geo = cat.core_geometry(d.shape, d.stack)
    sf = M.stacking_factor[m]
    ae, ve = geo.ae * sf, geo.ve * sf                      # magnetic section and volume
    od, a_cu = W["outer_diameter"][w], W["copper_area"][w]
    legs = S["winding_legs"][d.shape]
    tpl, layers, build, fit = winding.bobbin_layout(N, par, od, geo.window_breadth, geo.window_height, legs)
    ring = S["family"][d.shape] == "T"
    if ring.any():
        hole = 2 * (geo.window_height[ring] + geo.bobbin_wall[ring])
        r = winding.ring_layout(N[ring], par[ring], od[ring], hole, geo.bobbin_wall[ring])
        tpl[ring], layers[ring], build[ring], fit[ring] = r
    laid = np.isfinite(layers)
    layers = np.where(laid, layers, np.ceil(N / legs))     # keep numbers finite where it cannot be laid
    build = layers * od
    fill = N * par * a_cu / geo.window_area
    mlt = geometry.mean_turn_length(geo, build / 2)
    wire_length = N * mlt                                  # of each parallel wire
    r_dc20 = cat.copper.resistivity_ohm_m_20c * wire_length / (par * a_cu)
    copper_mass = cat.copper.density_kg_m3 * a_cu * par * wire_length
    size = geometry.boxed_size(geo, build)
    volume, surface = geometry.box_volume_and_surface(size)

    # ---- magnetic circuit ---------------------------------------------------------------------
    dist = M.distributed_gap[m]
    gap_area = np.where(S["gap_legs"][d.shape] > 0, geo.gap_area, geo.ae)
    fringe = np.where(dist, 1.0, ctx.fringing(d.gap / np.maximum(S["gap_legs"][d.shape], 1), gap_area,
                                              geo.gap_window_height))
    l0 = np.where(dist, magnetics.powder_inductance(N, geo.le, ae, M.mu_initial[m]),
                  magnetics.gapped_inductance(N, geo.le, ae, M.mu_initial[m], d.gap, gap_area, fringe))
    ra, rb, rc = M.rolloff_a[m], M.rolloff_b[m], M.rolloff_c[m]
    n_over_le = N / geo.le

    pw = np.nonzero(dist)[0]  # powder designs: the bias-dependent terms are computed for these only

    def flux_density(current):
        """Core flux density at inductor current ``current`` [T] (per design)."""
        b = l0 * current / (N * ae)
        b[pw] = magnetics.powder_flux_density(n_over_le[pw] * current[pw], M.mu_initial[m][pw], ra[pw], rb[pw], rc[pw])
        return b

    def rolloff(current):
        """Permeability fraction kept at ``current`` [A], shape (n,) or (n, S); 1 for gapped cores."""
        out = np.ones(np.shape(current) if np.ndim(current) == 2 else (n,))
        cur = current[pw] if np.ndim(current) else current
        col = (slice(None), None) if out.ndim == 2 else (slice(None),)
        out[pw] = magnetics.powder_permeability_fraction(n_over_le[pw][col] * cur, ra[pw][col], rb[pw][col],
                                                         rc[pw][col])
        return out

    band, in_band = core_loss.select_band(f, M.band_f_min[m], M.band_f_max[m])
    k_i, alpha, beta = ctx.band_ki[m, band], M.band_alpha[m, band], M.band_beta[m, band]
    lb = ctx.line_band[m]
    hf_scale = k_i * f**alpha * (N * ae * f) ** (-beta) * ve

    # ---- line cycle at every operating point -------------------------------------------------
    n_ops = len(ctx.ops)
    per = {k: np.empty((n, n_ops)) for k in (
        "i_peak", "ripple_max", "ripple_ratio", "dcm_fraction", "b_peak", "b_line", "db_max", "kept_fraction",
        "core_ref", "core_line_ref", "i_line_rms", "ripple_ms", "switching", "inductance_at_peak")}
    harm = np.empty((n, n_ops, len(ctx.harmonics)))
    samples = []
    for j, op in enumerate(ctx.ops):
        frac = rolloff(np.broadcast_to(op.i_avg, (n, len(op.i_avg))))
        ripple = op.volt_seconds / ((l0 * f)[:, None] * frac)
        i_top = op.i_avg + 0.5 * ripple
        i_peak = i_top.max(axis=1)
        per["i_peak"][:, j] = i_peak
        per["ripple_max"][:, j] = ripple.max(axis=1)
        per["ripple_ratio"][:, j] = per["ripple_max"][:, j] / op.i_pk
        per["dcm_fraction"][:, j] = np.mean(0.5 * ripple > op.i_avg, axis=1)
        per["b_peak"][:, j] = flux_density(i_peak)
        per["b_line"][:, j] = flux_density(np.full(n, op.i_pk))
        per["db_max"][:, j] = op.volt_seconds.max() / (N * ae * f)
        kept = rolloff(i_peak)
        per["kept_fraction"][:, j] = kept
        per["inductance_at_peak"][:, j] = l0 * kept
        line_loop = core_loss.rectified_sine_loop(per["b_line"][:, j], spec.converter.line_hz, M.band_k[m, lb],
                                                  M.band_alpha[m, lb], M.band_beta[m, lb]) * ve
        per["core_ref"][:, j] = hf_scale * op.core_shape[m, band] + line_loop
        per["core_line_ref"][:, j] = line_loop
        per["i_line_rms"][:, j] = op.i_rms
        # ripple harmonics over the line cycle: (1/(L0 f))^2 * frac^-2 @ (v d)^2 w_n(D), summed
        # elementwise rather than by BLAS so that a design's result does not depend on its batch
        # gapped cores keep L0 over the cycle (frac = 1): their sum is the column sum, computed once
        weights = np.broadcast_to(op.harmonic_matrix.sum(axis=0), (n, len(ctx.harmonics))).copy()
        weights[pw] = _rowdot(frac[pw] ** -2, op.harmonic_matrix)
        harm[:, j, :] = weights / ((l0 * f) ** 2)[:, None]
        per["ripple_ms"][:, j] = harm[:, j, :].sum(axis=1)
        per["switching"][:, j] = switching.switching_loss(op.switching_energy, f)
        if keep_samples:
            db = op.volt_seconds / (N * ae * f)[:, None]
            # loss density at the material's reference temperature (the sheet's plots say so)
            pv = core_loss.igse_triangle(db, op.duty, f[:, None], M.band_k[m, band][:, None], alpha[:, None],
                                         beta[:, None])
            shape = ripple.shape
            samples.append({
                "angle_deg": np.broadcast_to(np.degrees(op.theta), shape), "v_in_v": np.broadcast_to(op.v_in, shape),
                "duty": np.broadcast_to(op.duty, shape), "i_avg_a": np.broadcast_to(op.i_avg, shape),
                "ripple_pp_a": ripple, "i_top_a": i_top, "inductance_uh": (l0[:, None] * frac) * 1e6,
                "b_avg_t": np.column_stack([flux_density(np.full(n, op.i_avg[k])) for k in range(shape[1])]),
                "b_top_t": np.column_stack([flux_density(i_top[:, k]) for k in range(shape[1])]),
                "b_ripple_pp_t": db, "core_loss_density_w_cm3_at_ref": pv * 1e-6})

    # ---- winding AC factor at three temperatures ---------------------------------------------
    t_nodes = lim.ambient_c + np.array(TEMPERATURE_NODES_K)
    litz = W["litz"][w]
    d_s, n_s = W["strand_diameter"][w], W["strands"][w]
    # porosity of a layer: copper width along the layer over its breadth
    breadth = np.where(ring, np.pi * 2 * np.maximum(geo.window_height - od / 2, od), geo.window_breadth)
    # (held within (0, 1]: a layer cannot hold more copper than its breadth, nor less than a trace)
    eta = np.clip(tpl * par * np.where(litz, np.sqrt(n_s) * d_s, d_s) / breadth, 1e-3, 1.0)
    strand_layers = np.where(litz, layers * np.sqrt(n_s), layers)
    ac_nodes = np.empty((n, n_ops, 3))
    for k, t in enumerate(t_nodes):
        delta = winding.skin_depth(f[:, None] * ctx.harmonics, winding.copper_resistivity(
            t, cat.copper.resistivity_ohm_m_20c, cat.copper.tempco_per_k))
        fr = np.empty_like(delta)
        fr[litz] = winding.litz_factor(d_s[litz, None], delta[litz], strand_layers[litz, None], eta[litz, None])
        solid = ~litz
        fr[solid] = winding.dowell_factor(winding.round_wire_dowell_x(d_s[solid, None], delta[solid], eta[solid, None]),
                                          layers[solid, None])
        ac_nodes[:, :, k] = (fr[:, None, :] * harm).sum(axis=-1)

    # ---- heat balance: Newton on dissipation(T) = loss(T), per design and operating point ------
    area, height = np.broadcast_to(surface[:, None], (n, n_ops)), np.broadcast_to(size.max(axis=1)[:, None], (n, n_ops))
    tf = lambda t, i: core_loss.temperature_factor(t, M.loss_temp_ref[m][i], M.loss_temp_c1[m][i],  # noqa: E731
                                                   M.loss_temp_c2[m][i])
    rise_int, alpha_cu = spec.thermal.internal_rise_k, cat.copper.tempco_per_k
    core_ref, i2, r20 = per["core_ref"], per["i_line_rms"] ** 2, np.broadcast_to(r_dc20[:, None], (n, n_ops))
    # starting guess: the loss at a 30 K rise spread with a typical 12 W/(m2 K) of convection plus
    # radiation (only a start; the Newton steps below settle the balance)
    t0 = lim.ambient_c + 30.0 + rise_int
    loss0 = core_ref * tf(t0, slice(None))[:, None] + r20 * (1 + alpha_cu * (t0 - 20.0)) * (
        i2 + _lagrange3(t0, t_nodes, ac_nodes))
    dt = np.clip(loss0 / (12.0 * area), 1.0, 1500.0)
    converged = np.zeros((n, n_ops), dtype=bool)
    active = np.nonzero(np.ones((n, n_ops), dtype=bool))
    slope = lambda t, i: core_loss.temperature_factor_slope(t, M.loss_temp_ref[m][i], M.loss_temp_c1[m][i],  # noqa: E731
                                                            M.loss_temp_c2[m][i])
    stable = np.zeros((n, n_ops), dtype=bool)
    for _ in range(60):
        # Newton on dissipation(dT) - loss(dT) = 0, only where not yet converged.  The loss slope in
        # the denominator makes it converge in a few steps; its floor (a fifth of the dissipation
        # slope) keeps each step moving up towards the first, stable, crossing from below.
        rows = active[0]
        x = dt[active]
        t_hot = lim.ambient_c + x + rise_int
        ac = _lagrange3(t_hot, t_nodes, ac_nodes[active])
        r_t = r20[active] * (1 + alpha_cu * (t_hot - 20.0))
        loss = core_ref[active] * tf(t_hot, rows) + r_t * (i2[active] + ac)
        dloss = (core_ref[active] * slope(t_hot, rows) + r20[active] * alpha_cu * (i2[active] + ac)
                 + r_t * _lagrange3_slope(t_hot, t_nodes, ac_nodes[active]))
        p, dp = _dissipation(spec, area[active], height[active])(x)
        new = np.clip(x - (p - loss) / np.maximum(dp - dloss, 0.2 * dp), 0.0, 2000.0)
        done = np.abs(new - x) < 0.01
        dt[active] = new
        hit = (active[0][done], active[1][done])
        converged[hit] = True
        stable[hit] = (dp > dloss)[done]          # dissipation rises faster than loss: a stable balance
        active = (active[0][~done], active[1][~done])
        if active[0].size == 0:
            break
    # no converged, stable balance, or one above a 1000 K rise (no insulation or core survives that):
    # thermal runaway
    runaway = ~converged | ~stable | (dt >= 1000.0)
    t_surface = lim.ambient_c + dt
    t_hot = t_surface + rise_int
    r_dc = r_dc20[:, None] * (1 + alpha_cu * (t_hot - 20.0))
    loss_factor = core_loss.temperature_factor(t_hot, M.loss_temp_ref[m, None], M.loss_temp_c1[m, None],
                                               M.loss_temp_c2[m, None])
    core = per["core_ref"] * loss_factor
    core_line = per["core_line_ref"] * loss_factor
    wdc = r_dc * per["i_line_rms"] ** 2
    wac = r_dc * _lagrange3(t_hot, t_nodes, ac_nodes)
    sw = per["switching"]
    total = core + wdc + wac + sw
    wts = np.array([op.weight for op in ctx.ops])

    # ---- constraints --------------------------------------------------------------------------
    b_sat = magnetics.saturation_flux_density(M.b_sat_25c[m, None], M.b_sat_tempco[m, None], t_hot)
    sat_ratio = per["b_peak"] / (lim.saturation_margin * b_sat)
    checked = np.array([op.ripple_checked for op in ctx.ops])
    ripple_worst = (per["ripple_ratio"][:, checked].max(axis=1) if checked.any() else np.zeros(n))
    kept = per["kept_fraction"].min(axis=1)
    t_worst = np.where(runaway.any(axis=1), np.inf, t_hot.max(axis=1))
    t_lim_mat = M.t_max[m]
    g = np.column_stack([
        sat_ratio.max(axis=1) - 1,
        ripple_worst / lim.ripple_pp_max_fraction - 1,
        lim.inductance_kept_min_fraction - kept,
        np.where(laid, np.maximum(fill / lim.fill_max, fit), DOES_NOT_FIT) - 1,
        np.where(np.isfinite(t_worst), (t_worst - lim.hot_spot_max_c) / (lim.hot_spot_max_c - lim.ambient_c),
                 RUNAWAY_PENALTY),
        np.where(np.isfinite(t_worst), (t_worst - t_lim_mat) / (t_lim_mat - lim.ambient_c), RUNAWAY_PENALTY),
        per["dcm_fraction"].max(axis=1) / lim.dcm_max_fraction - 1,
    ])
    g = np.minimum(g, DOES_NOT_FIT)

    core_mass = ve * M.density[m]
    price_cu = cat.costs.copper_price_per_kg * np.where(litz, cat.costs.litz_price_factor, 1.0)
    price = cost.inductor_cost(core_mass, M.price_per_kg[m], copper_mass, price_cu, N, par,
                               cat.costs.labour_per_turn, d.stack, cat.costs.part_cost_per_core,
                               cat.costs.assembly_cost)
    cost_parts = {"cost_core": core_mass * M.price_per_kg[m], "cost_copper": copper_mass * price_cu,
                  "cost_labour": N * par * cat.costs.labour_per_turn,
                  "cost_parts": d.stack * cat.costs.part_cost_per_core + cat.costs.assembly_cost}
    weighted_total = _weighted(total, wts)
    objectives = np.column_stack([volume * 1e6, weighted_total, price])
    i_l_rms = np.sqrt(per["i_line_rms"] ** 2 + per["ripple_ms"])
    figures = {
        "inductance_uh": l0 * 1e6,
        "inductance_at_peak_uh": per["inductance_at_peak"].min(axis=1) * 1e6,
        "i_peak_a": per["i_peak"].max(axis=1),
        "i_rms_a": i_l_rms.max(axis=1),
        "ripple_pp_max_a": per["ripple_max"].max(axis=1),
        "ripple_ratio": ripple_worst,
        "b_peak_t": per["b_peak"].max(axis=1),
        "b_sat_t": b_sat.min(axis=1),
        "saturation_ratio": sat_ratio.max(axis=1),
        "b_ripple_pp_max_t": per["db_max"].max(axis=1),
        "core_loss_w": _weighted(core, wts),
        "core_line_loss_w": _weighted(core_line, wts),
        "winding_dc_loss_w": _weighted(wdc, wts),
        "winding_ac_loss_w": _weighted(wac, wts),
        "switching_loss_w": _weighted(sw, wts),
        "total_loss_w": weighted_total,
        "temperature_c": t_hot.max(axis=1),          # where thermal_runaway: the last iterate, not a state
        "surface_temperature_c": t_surface.max(axis=1),
        "thermal_runaway": runaway.any(axis=1),
        "inductance_kept_fraction": kept,
        "dcm_fraction": per["dcm_fraction"].max(axis=1),
        "fill": fill,
        "winding_fit": np.where(laid, fit, DOES_NOT_FIT),
        "turns_per_layer": tpl,
        "layers": layers,
        "wire_length_m": wire_length * par,
        "r_dc_mohm_20c": r_dc20 * 1e3,
        "fringing_factor": fringe,
        "steinmetz_in_band": in_band,
        "volume_cm3": volume * 1e6,
        "surface_cm2": surface * 1e4,
        "core_mass_g": core_mass * 1e3,
        "copper_mass_g": copper_mass * 1e3,
        "mass_g": (core_mass + copper_mass) * 1e3,
        "cost": price,
        **cost_parts,
    }
    per_op = {"temperature_c": t_hot, "core_loss_w": core, "core_line_loss_w": core_line, "winding_dc_loss_w": wdc, "winding_ac_loss_w": wac,
              "switching_loss_w": sw, "total_loss_w": total, "b_peak_t": per["b_peak"], "b_sat_t": b_sat,
              "i_peak_a": per["i_peak"], "ripple_pp_max_a": per["ripple_max"], "dcm_fraction": per["dcm_fraction"],
              "inductance_at_peak_uh": per["inductance_at_peak"] * 1e6}
    return Evaluation(d, objectives, g, figures, per_op, samples)


def concat_evaluations(parts: list[Evaluation]) -> Evaluation:
    """Join evaluations of consecutive parts of a population into one."""
    if len(parts) == 1:
        return parts[0]
    cat = lambda xs: np.concatenate(xs, axis=0)  # noqa: E731
    designs = Designs.concat([p.designs for p in parts])
    samples = []
    if parts[0].samples:
        samples = [{k: cat([p.samples[j][k] for p in parts]) for k in parts[0].samples[j]}
                   for j in range(len(parts[0].samples))]
    return Evaluation(designs, cat([p.objectives for p in parts]), cat([p.constraints for p in parts]),
                      {k: cat([p.figures[k] for p in parts]) for k in parts[0].figures},
                      {k: cat([p.per_op[k] for p in parts]) for k in parts[0].per_op}, samples)


def evaluate(ctx: Context, designs: Designs, chunk: int = 4096, keep_samples: bool = False) -> Evaluation:
    """Evaluate a population in chunks of ``chunk`` designs (memory stays bounded for any size).

    The result does not depend on ``chunk``: every design is computed independently.
    """
    parts = [_evaluate_chunk(ctx, designs.take(slice(i, i + chunk)), keep_samples)
             for i in range(0, len(designs), chunk)]
    return concat_evaluations(parts)
