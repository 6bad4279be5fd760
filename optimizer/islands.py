"""Islands: one NSGA-II population per material, each with its own random stream, evolved on arrays.

An island is plain data (``Island``: encoded rows, objectives, constraints and the state of its
random generator), so a checkpoint is arrays and JSON and a worker process can own whole islands
for several generations: ``evolve`` asks, evaluates and tells locally and returns the islands and
what they evaluated.  Each island's evolution depends only on its own stream and its own designs,
so the result is the same whatever process runs it and however islands are shared out.
"""
from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from fluxfront.design.designs import Designs
from fluxfront.design.tolerance import TolerantContext, evaluate_tolerant

from . import operators
from .space import DesignSpace

RETRIES = 3   # rounds of new offspring when duplicates thin out a generation's batch


@dataclass(frozen=True)
class Island:
    """One material's population (arrays of one row per design) and its random stream."""

    material: int                 # catalog material number
    X: np.ndarray                 # (P, V) encoded rows, snapped to designs, in the island's numbering
    F: np.ndarray                 # (P, 3)
    G: np.ndarray                 # (P, C)
    rng_state: dict               # numpy bit generator state (JSON-safe)
    offspring: int                # designs to evaluate per generation (its budget)
    size: int                     # population kept by survival

    def generator(self) -> np.random.Generator:
        g = np.random.Generator(np.random.PCG64())
        g.bit_generator.state = self.rng_state
        return g


@dataclass(frozen=True)
class Evaluated:
    """What one island evaluated in one generation: rows in the island's numbering."""

    island: int
    generation: int
    X: np.ndarray
    F: np.ndarray
    G: np.ndarray
    feasible: np.ndarray


def search_contract(ctx: TolerantContext, spaces: list[DesignSpace], rows: list[np.ndarray]):
    """The search contract: encoded rows X -> objectives F (minimised) and constraints G (met when <= 0).

    F is volume, loss and cost (``Context.objectives``); G holds ``design.evaluator.CONSTRAINTS``, each
    at its worst tolerance corner when the spec's tolerances are on.  The rows of several spaces
    (islands) are evaluated as one batch -- a design's numbers do not depend on its batch -- and
    returned per space as (F, G, feasible).
    """
    sizes = [len(x) for x in rows]
    if sum(sizes) == 0:
        return [(np.zeros((0, 3)), np.zeros((0, 0)), np.zeros(0, dtype=bool)) for _ in rows]
    ev = evaluate_tolerant(ctx, Designs.concat([sp.decode(x) for sp, x in zip(spaces, rows) if len(x)]))
    edges = np.cumsum([0] + sizes)
    return [(ev.objectives[a:b], ev.constraints[a:b], ev.feasible[a:b]) for a, b in zip(edges[:-1], edges[1:])]


def new_island(material: int, space: DesignSpace, size: int, seed_seq: np.random.SeedSequence) -> Island:
    """An island whose first population is drawn uniformly (evaluated at its first generation)."""
    rng = np.random.Generator(np.random.PCG64(seed_seq))
    X = space.canonical(space.sample(rng, size))
    X = X[operators.unique_new(X, np.zeros((0, X.shape[1])))]
    empty = np.zeros((0, 3)), np.zeros((0, 0))
    return Island(material, X, empty[0], empty[1], rng.bit_generator.state, size, size)


def seeded_island(material: int, space: DesignSpace, size: int, seed_seq: np.random.SeedSequence,
                  X: np.ndarray, F: np.ndarray, G: np.ndarray) -> Island:
    """An island whose first population is the best of already evaluated rows (whole-space numbering)
    that fall in its space: the reference sample is not spent twice.  Random draws if none fall in."""
    local = {int(g): i for i, g in enumerate(space.pair_global)} if space.pair_global is not None else None
    pair = np.rint(X[:, 0]).astype(int)
    mine = np.array([local is None or p in local for p in pair]) & (X[:, 6] >= space.lower[6]) & (
        X[:, 6] <= space.upper[6])
    if not mine.any():
        return new_island(material, space, size, seed_seq)
    rows = X[mine].copy()
    if local is not None:
        rows[:, 0] = [local[int(p)] for p in pair[mine]]
    keep = operators.survive(F[mine], G[mine], size)
    rng = np.random.Generator(np.random.PCG64(seed_seq))
    return Island(material, rows[keep], F[mine][keep], G[mine][keep], rng.bit_generator.state, size, size)


def _offspring(island: Island, space: DesignSpace, rng: np.random.Generator) -> np.ndarray:
    """New, distinct encoded rows bred from the island's population (or its first draw)."""
    if len(island.F) == 0:                     # not yet evaluated: the first draw is the batch
        return island.X
    rank, crowd = operators.rank_and_crowding(island.F, island.G)
    known = island.X
    out = np.zeros((0, island.X.shape[1]))
    for _ in range(RETRIES):
        need = island.offspring - len(out)
        if need <= 0:
            break
        pairs = (need + 1) // 2
        parents = operators.tournament(rank, crowd, 2 * pairs, rng)
        c1, c2 = operators.sbx(island.X[parents[:pairs]], island.X[parents[pairs:]], space.lower, space.upper, rng)
        kids = operators.polynomial_mutation(np.vstack([c1, c2])[:need], space.lower, space.upper, rng)
        kids = space.canonical(kids)
        kids = kids[operators.unique_new(kids, np.vstack([known, out]))]
        out = np.vstack([out, kids])
    return out


def evolve(ctx: TolerantContext, islands: list[Island], spaces: list[DesignSpace], first_generation: int,
           generations: int) -> tuple[list[Island], list[Evaluated]]:
    """Run ``generations`` generations of each island: breed, evaluate (all islands' offspring of a
    generation as one batch), survive."""
    records = []
    islands = list(islands)
    for g in range(generations):
        rngs = [island.generator() for island in islands]
        kids = [_offspring(island, space, rng) for island, space, rng in zip(islands, spaces, rngs)]
        results = search_contract(ctx, spaces, kids)
        for k, (island, rng, x, (f_kids, g_kids, ok)) in enumerate(zip(islands, rngs, kids, results)):
            if len(x):
                records.append(Evaluated(k, first_generation + g, x, f_kids, g_kids, ok))
                if len(island.F) == 0:
                    X, F, G = x, f_kids, g_kids
                else:
                    X, F, G = np.vstack([island.X, x]), np.vstack([island.F, f_kids]), np.vstack([island.G, g_kids])
                keep = operators.survive(F, G, island.size)
                island = replace(island, X=X[keep], F=F[keep], G=G[keep])
            islands[k] = replace(island, rng_state=rng.bit_generator.state)
    return islands, records
