"""Stage 7, the price: bill of materials and labour of each design, with its parts."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from fluxfront.models import cost

from .build import Build
from .context import Context
from .designs import Designs


@dataclass(frozen=True)
class Price:
    total: np.ndarray
    parts: dict[str, np.ndarray]   # cost_core, cost_copper, cost_labour, cost_parts, cost_core_work
    core_mass: np.ndarray          # [kg]


def price(ctx: Context, d: Designs, b: Build) -> Price:
    """Core and copper mass times price, labour per turn (more through a ring), parts, core work.

    Core work: every discrete gap of every stacked core is ground (or spaced), every cut ribbon core
    is cut, lapped and banded.
    """
    cat = ctx.catalog
    M, c = cat.material_arrays, cat.costs
    m, N, par = d.material, d.turns.astype(float), d.parallel.astype(float)
    litz = cat.wire_arrays["litz"][d.wire]
    core_mass = b.ve * M.density[m]
    price_cu = c.copper_price_per_kg * np.where(litz, c.litz_price_factor, 1.0)
    labour = np.where(b.ring, c.labour_per_turn_ring, c.labour_per_turn)
    ground = np.where(d.gap > 0, d.gaps * cat.shape_arrays["gap_legs"][d.shape], 0)
    work = d.stack * (ground * c.gap_grinding_per_gap + np.where(M.tape_wound[m], c.cut_and_band_per_core, 0.0))
    total = cost.inductor_cost(core_mass, M.price_per_kg[m], b.copper_mass, price_cu, N, par, labour,
                               d.stack, c.part_cost_per_core, c.assembly_cost, work)
    parts = {"cost_core": core_mass * M.price_per_kg[m], "cost_copper": b.copper_mass * price_cu,
             "cost_labour": N * par * labour, "cost_core_work": work,
             "cost_parts": d.stack * c.part_cost_per_core + c.assembly_cost}
    return Price(total, parts, core_mass)
