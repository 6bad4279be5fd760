"""NSGA-II on arrays: constrained tournament, SBX crossover, polynomial mutation, rank-and-crowding survival.

Every operator works on a whole island at once (rows = designs) with an explicit numpy Generator,
so a run's random stream is data that a checkpoint can hold.  Non-dominated sorting is pymoo's;
the rest is small enough to keep here, vectorized.

Constraint handling (Deb's rules): a feasible design beats an infeasible one; two infeasible
designs compare by total violation; two feasible ones by front rank, then crowding distance.

References
----------
K. Deb et al., "A fast and elitist multiobjective genetic algorithm: NSGA-II", IEEE Trans.
Evolutionary Computation 6(2), 2002 (crowding distance, constrained tournament, SBX and polynomial
mutation as used there).
"""
from __future__ import annotations

import numpy as np
from pymoo.util.nds.non_dominated_sorting import NonDominatedSorting

CROSSOVER_PROB = 0.9     # pairs that cross at all
CROSSOVER_ETA = 5.0      # SBX distribution index (wide steps suit catalog indices and turn counts)
MUTATION_ETA = 5.0       # polynomial mutation distribution index
MUTATION_RATE = 0.3      # probability per variable


def violation(G: np.ndarray) -> np.ndarray:
    """Total constraint violation of each row (0 when feasible)."""
    return np.maximum(G, 0.0).sum(axis=1)


def crowding_distance(F: np.ndarray) -> np.ndarray:
    """Crowding distance of each row of one front (inf at the extremes of every objective)."""
    n, m = F.shape
    if n <= 2:
        return np.full(n, np.inf)
    dist = np.zeros(n)
    for j in range(m):
        order = np.argsort(F[:, j], kind="stable")
        span = F[order[-1], j] - F[order[0], j]
        dist[order[0]] = dist[order[-1]] = np.inf
        if span > 0:
            dist[order[1:-1]] += (F[order[2:], j] - F[order[:-2], j]) / span
    return dist


def rank_and_crowding(F: np.ndarray, G: np.ndarray):
    """Rank (0 = best; infeasible designs after every feasible front, by violation) and crowding."""
    n = len(F)
    cv = violation(G)
    feasible = np.nonzero(cv <= 0)[0]
    rank = np.empty(n)
    crowd = np.zeros(n)
    if feasible.size:
        fronts = NonDominatedSorting().do(F[feasible])
        for r, front in enumerate(fronts):
            rows = feasible[np.asarray(front, dtype=int)]
            rank[rows] = r
            crowd[rows] = crowding_distance(F[rows])
        worst = len(fronts)
    else:
        worst = 0
    infeasible = np.nonzero(cv > 0)[0]
    # infeasible designs rank behind every feasible one, in order of violation
    rank[infeasible] = worst + np.argsort(np.argsort(cv[infeasible], kind="stable"), kind="stable")
    return rank, crowd


INFEASIBLE_SHARE = 0.2   # survivor slots kept for the least-violating infeasible designs


def survive(F: np.ndarray, G: np.ndarray, size: int, infeasible_share: float = INFEASIBLE_SHARE) -> np.ndarray:
    """Indices of the ``size`` rows kept: by rank, then crowding (largest first), with a share of the
    slots for the infeasible designs closest to feasibility.

    Feasible pockets of an inductor design space are small and far apart (a few turns or a core
    size away); a population of feasible designs only would settle in the first pocket it finds.
    The designs at the edge of the limits are the bridges to the next pocket, so a share of them
    survives (the share is taken only when there are more feasible designs than slots).
    """
    rank, crowd = rank_and_crowding(F, G)
    order = np.lexsort((-crowd, rank))
    infeasible = violation(G) > 0
    reserve = min(int(infeasible_share * size), int(infeasible.sum()))
    feasible_first = order[~infeasible[order]][: size - reserve]
    rest = order[~np.isin(order, feasible_first)][: size - len(feasible_first)]
    return np.sort(np.concatenate([feasible_first, rest]))


def tournament(rank: np.ndarray, crowd: np.ndarray, count: int, rng: np.random.Generator) -> np.ndarray:
    """``count`` parents by binary tournaments: lower rank wins, then larger crowding, then a coin."""
    a, b = rng.integers(0, len(rank), size=(2, count))
    coin = rng.random(count) < 0.5
    a_wins = (rank[a] < rank[b]) | ((rank[a] == rank[b]) & ((crowd[a] > crowd[b]) | ((crowd[a] == crowd[b]) & coin)))
    return np.where(a_wins, a, b)


def sbx(p1: np.ndarray, p2: np.ndarray, lower, upper, rng: np.random.Generator,
        eta: float = CROSSOVER_ETA, prob: float = CROSSOVER_PROB) -> tuple[np.ndarray, np.ndarray]:
    """Simulated binary crossover of parent rows ``p1``, ``p2`` within bounds (bounded variant)."""
    n, v = p1.shape
    cross = (rng.random((n, 1)) < prob) & (rng.random((n, v)) < 0.5) & (np.abs(p1 - p2) > 1e-14)
    y1, y2 = np.minimum(p1, p2), np.maximum(p1, p2)
    span = np.where(y2 - y1 > 1e-14, y2 - y1, 1.0)
    u = rng.random((n, v))

    def child(beta_bound):
        alpha = 2.0 - beta_bound ** -(eta + 1.0)
        bq = np.where(u <= 1.0 / alpha, (u * alpha) ** (1.0 / (eta + 1.0)),
                      (1.0 / (2.0 - u * alpha)) ** (1.0 / (eta + 1.0)))
        return bq

    beta_lo = 1.0 + 2.0 * (y1 - lower) / span
    beta_hi = 1.0 + 2.0 * (upper - y2) / span
    c1 = 0.5 * (y1 + y2 - child(beta_lo) * (y2 - y1))
    c2 = 0.5 * (y1 + y2 + child(beta_hi) * (y2 - y1))
    swap = rng.random((n, v)) < 0.5
    c1, c2 = np.where(swap, c2, c1), np.where(swap, c1, c2)
    c1 = np.clip(np.where(cross, c1, p1), lower, upper)
    c2 = np.clip(np.where(cross, c2, p2), lower, upper)
    return c1, c2


def polynomial_mutation(x: np.ndarray, lower, upper, rng: np.random.Generator, eta: float = MUTATION_ETA,
                        rate: float = MUTATION_RATE) -> np.ndarray:
    """Polynomial mutation of each variable with probability ``rate`` (bounded variant)."""
    span = upper - lower
    mutate = rng.random(x.shape) < rate
    d1, d2 = (x - lower) / span, (upper - x) / span
    u = rng.random(x.shape)
    power = 1.0 / (eta + 1.0)
    low_side = 2.0 * u + (1.0 - 2.0 * u) * (1.0 - d1) ** (eta + 1.0)
    high_side = 2.0 * (1.0 - u) + 2.0 * (u - 0.5) * (1.0 - d2) ** (eta + 1.0)
    delta = np.where(u < 0.5, low_side**power - 1.0, 1.0 - high_side**power)
    return np.clip(np.where(mutate, x + delta * span, x), lower, upper)


def first_occurrence(rows: np.ndarray) -> np.ndarray:
    """Whether each row is the first of its value in ``rows`` (rows compare as numbers).

    A stable lexicographic sort groups equal rows in their original order.  Not ``np.unique(axis=0)``:
    its comparison of structured rows turns a Ctrl-C that arrives during the call into a TypeError,
    and the run could then no longer stop cleanly.
    """
    rows = np.asarray(rows, dtype=float)
    if len(rows) == 0:
        return np.zeros(0, dtype=bool)
    order = np.lexsort(rows.T[::-1])
    ranked = rows[order]
    starts = np.concatenate([[True], np.any(ranked[1:] != ranked[:-1], axis=1)])
    first = np.empty(len(rows), dtype=bool)
    first[order] = starts
    return first


def unique_new(X: np.ndarray, existing: np.ndarray) -> np.ndarray:
    """Which rows of ``X`` (snapped designs) are neither in ``existing`` nor repeated earlier in X."""
    X = np.asarray(X, dtype=float)
    existing = np.asarray(existing, dtype=float).reshape(-1, X.shape[1])
    return first_occurrence(np.vstack([existing, X]))[len(existing):]
