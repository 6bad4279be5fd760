"""Designs that survive their tolerances: worst-case corners and the Monte Carlo yield.

Five tolerances span a box around the nominal design (``spec.tolerance``): the gap (+-), the
permeability (+-), the Steinmetz k (+), the ambient (+) and the line voltage (sagged).

Which corners matter: a higher k or a hotter ambient makes every limit worse or leaves it alone
(more heat: hotter parts and a lower saturation flux; no effect on ripple, fill or DCM), so both
sit at their upper end in every corner.  The gap, the permeability and the line sag pull against
each other through temperature: a short gap (or a high permeability) raises the flux at a given
current and the DC-bias core loss, a long one raises the ripple, its AC and fringing loss; a
sagged line raises the current (saturation, copper loss) but lowers the ripple ratio.  So the
evaluated set is nominal plus the 2 x 2 x 2 corners of gap, permeability and sag with k and
ambient high: 9 evaluations instead of 33.  ``tests/test_tolerance.py`` checks on random designs
that the worst of every limit over this set equals the worst over all 2^5 corners;
``tolerance.corners = "all"`` evaluates every corner where a user's models or data might break it.

The gap tolerance applies to each ground gap: ``max(gap_mm, gap_percent x gap)`` per gap, in the
same direction on every gap of the core (the worst case).
"""
from __future__ import annotations

import itertools
from dataclasses import dataclass, replace

import numpy as np

from .context import Context, prepare
from .designs import Designs
from .evaluator import CONSTRAINTS, Evaluation, evaluate


@dataclass(frozen=True)
class Corner:
    """One corner of the tolerance box: -1, 0 or +1 per tolerance (k, ambient, sag: 0 or +1)."""

    name: str
    gap: int
    mu: int
    k: int
    ambient: int
    sag: int


NOMINAL = Corner("nominal", 0, 0, 0, 0, 0)


def _name(gap, mu, k, amb, sag) -> str:
    parts = ["short gap" if gap < 0 else "long gap", "low permeability" if mu < 0 else "high permeability"]
    parts += ["high k"] * k + ["hot ambient"] * amb + ["line sagged"] * sag
    return ", ".join(parts)


SELECTED = (NOMINAL,) + tuple(Corner(_name(gap, mu, 1, 1, sag), gap, mu, 1, 1, sag)
                              for gap, mu, sag in itertools.product((-1, 1), (-1, 1), (0, 1)))


def all_corners() -> tuple[Corner, ...]:
    """Nominal and every one of the 2^5 corners of the box."""
    out = [NOMINAL]
    for gap, mu, k, amb, sag in itertools.product((-1, 1), (-1, 1), (0, 1), (0, 1), (0, 1)):
        out.append(Corner(_name(gap, mu, k, amb, sag), gap, mu, k, amb, sag))
    return tuple(out)


def gap_deviation(designs: Designs, catalog, tol) -> np.ndarray:
    """Worst-case deviation of the total gap [m]: every ground gap off in the same direction."""
    legs = np.maximum(catalog.shape_arrays["gap_legs"][designs.shape], 1)
    count = legs * designs.gaps
    each = designs.gap / count
    return np.where(designs.gap > 0, count * np.maximum(tol.gap_mm * 1e-3, tol.gap_percent / 100 * each), 0.0)


def operating_context(ctx: Context, ambient_rise: float, sag: float) -> Context:
    """The context with a hotter ambient and every operating point's voltage times ``sag``."""
    spec = ctx.spec
    if ambient_rise == 0 and sag == 1:
        return ctx
    limits = spec.limits.model_copy(update={"ambient_c": spec.limits.ambient_c + ambient_rise})
    ops = [op.model_copy(update={"v_rms": op.v_rms * sag}) for op in spec.operating_point]
    return prepare(spec.model_copy(update={"limits": limits, "operating_point": ops}), ctx.catalog)


def perturbed(designs: Designs, catalog, tol, gap_sign, mu_sign, k_sign) -> Designs:
    """The designs as built at a corner: gap, permeability and loss coefficient off nominal.

    The signs are -1, 0 or +1 at a corner, or per-design arrays of fractions of the tolerance
    (Monte Carlo parts)."""
    n = len(designs)
    gap = np.maximum(designs.gap + gap_sign * gap_deviation(designs, catalog, tol), 0.0)
    return replace(designs, gap=gap, mu_scale=designs.mu_factor * (1 + mu_sign * tol.permeability_percent / 100),
                   k_scale=designs.k_factor * (1 + k_sign * tol.steinmetz_k_percent / 100) * np.ones(n))


@dataclass(frozen=True)
class TolerantContext:
    """A nominal context and the operating contexts of the corners it evaluates."""

    nominal: Context
    corners: tuple[Corner, ...]
    operating: tuple[Context, ...]     # one per corner

    @property
    def enabled(self) -> bool:
        return len(self.corners) > 1

    @property
    def spec(self):
        return self.nominal.spec

    @property
    def catalog(self):
        return self.nominal.catalog

    @property
    def objectives(self) -> tuple[str, str, str]:
        return self.nominal.objectives


def tolerant_context(ctx: Context, corners: str | None = None, always: bool = False) -> TolerantContext:
    """The corners the spec asks for: none when its tolerance section is off, unless ``always``
    (the build sheet shows every corner of a design from any run)."""
    tol = ctx.spec.tolerance
    if not (tol.enabled or always):
        return TolerantContext(ctx, (NOMINAL,), (ctx,))
    chosen = all_corners() if (corners or tol.corners) == "all" else SELECTED
    cache = {}
    for c in chosen:
        key = (c.ambient, c.sag)
        if key not in cache:
            cache[key] = operating_context(ctx, c.ambient * tol.ambient_k, tol.line_sag if c.sag else 1.0)
    return TolerantContext(ctx, chosen, tuple(cache[(c.ambient, c.sag)] for c in chosen))


def evaluate_corners(tc: TolerantContext, designs: Designs) -> list[Evaluation]:
    """Every corner's evaluation of the population, nominal first; each corner one batch."""
    tol = tc.nominal.spec.tolerance
    return [evaluate(op_ctx, perturbed(designs, tc.nominal.catalog, tol, c.gap, c.mu, c.k))
            for c, op_ctx in zip(tc.corners, tc.operating)]


def evaluate_tolerant(tc: TolerantContext, designs: Designs) -> Evaluation:
    """Nominal figures, constraints at their own worst corner, objectives as the spec asks.

    Adds figures ``robust`` (every constraint met at every corner), ``worst_margin`` (the largest
    normalized constraint over all corners) and ``worst_limit`` / ``worst_corner`` (which limit at
    which corner), and the nominal constraints as ``nominal_g_<name>``.
    """
    if not tc.enabled:
        return evaluate(tc.nominal, designs)
    evs = evaluate_corners(tc, designs)
    g = np.stack([ev.constraints for ev in evs])                 # (corners, n, constraints)
    worst = g.max(axis=0)
    nominal = evs[0]
    figures = dict(nominal.figures)
    flat = g.transpose(1, 0, 2).reshape(len(designs), -1)        # (n, corners x constraints)
    at = flat.argmax(axis=1)
    figures.update({
        "robust": np.all(worst <= 0, axis=1),
        "worst_margin": flat.max(axis=1),
        "worst_limit": np.array(CONSTRAINTS)[at % len(CONSTRAINTS)],
        "worst_corner": np.array([c.name for c in tc.corners])[at // len(CONSTRAINTS)],
        **{f"nominal_g_{name}": nominal.constraints[:, i] for i, name in enumerate(CONSTRAINTS)},
    })
    objectives = nominal.objectives
    if tc.nominal.spec.tolerance.objectives == "worst":
        objectives = np.stack([ev.objectives for ev in evs]).max(axis=0)
    return Evaluation(designs, objectives, worst, figures, nominal.per_op, nominal.samples)


@dataclass(frozen=True)
class YieldEstimate:
    """Monte Carlo yield of one design over the spec's tolerance distributions."""

    samples: int
    seed: int
    share: float                     # share of the parts that meet every limit
    failing: dict[str, float]        # per limit: share of the parts that violate it
    most_failing: str | None         # the limit that fails most (None: none fails)


AMBIENT_STEP_K = 0.25    # ambient and line sag are drawn on these steps so that parts share contexts
SAG_STEP = 0.0025


def _unit_draws(rng, n, distribution, one_sided):
    """Deviations in units of the tolerance: uniform over the box, or normal with the tolerance as 3 sigma."""
    if distribution == "uniform":
        return rng.uniform(0.0, 1.0, n) if one_sided else rng.uniform(-1.0, 1.0, n)
    z = rng.standard_normal(n) / 3.0
    return np.abs(z) if one_sided else z


def monte_carlo_yield(ctx: Context, design: Designs, samples: int | None = None, seed: int = 0) -> YieldEstimate:
    """Share of parts built from ``design`` (one row) that meet every limit, seeded and reproducible.

    Each part draws its own gap, permeability and k deviation (per-part fields of ``Designs``) and
    its own ambient and line sag (rounded to ``AMBIENT_STEP_K`` and ``SAG_STEP`` so that parts with
    the same operating conditions are evaluated as one batch).
    """
    tol = ctx.spec.tolerance
    n = samples or tol.yield_samples
    rng = np.random.default_rng([seed, 7])
    e_gap, e_mu = (_unit_draws(rng, n, tol.distribution, False) for _ in range(2))
    e_k, e_amb, e_sag = (_unit_draws(rng, n, tol.distribution, True) for _ in range(3))
    # each part is a corner of its own: per-part signs scaled by the draws (a calibrated design's
    # own permeability and loss factors are kept, as at the corners)
    parts = perturbed(design.take(np.zeros(n, dtype=int)), ctx.catalog, tol, e_gap, e_mu, e_k)
    ambient = np.round(e_amb * tol.ambient_k / AMBIENT_STEP_K) * AMBIENT_STEP_K
    sag = 1 - np.round(e_sag * (1 - tol.line_sag) / SAG_STEP) * SAG_STEP
    g = np.empty((n, len(CONSTRAINTS)))
    keys = np.column_stack([ambient, sag])
    for key in np.unique(keys, axis=0):
        idx = np.nonzero(np.all(keys == key, axis=1))[0]
        g[idx] = evaluate(operating_context(ctx, float(key[0]), float(key[1])), parts.take(idx)).constraints
    fails = g > 0
    failing = dict(zip(CONSTRAINTS, fails.mean(axis=0).tolist()))
    worst = max(failing, key=failing.get)
    return YieldEstimate(n, seed, float(np.mean(~fails.any(axis=1))), failing, worst if failing[worst] > 0 else None)
