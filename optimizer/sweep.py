"""The final local sweep: one step in every variable around each archive member, until nothing improves.

A genetic search samples the neighbourhood of its best designs only by chance; a front of a few
hundred designs has a few thousand neighbours, cheap to evaluate all.  Repeated while the archive
changes, at most ``ROUNDS`` times.
"""
from __future__ import annotations

import numpy as np

from .operators import unique_new
from .space import DesignSpace
from .state import State

ROUNDS = 3


def neighbours(space: DesignSpace, X: np.ndarray) -> np.ndarray:
    """Every design one step away from a row of X in one variable (snapped, inside the bounds)."""
    steps = []
    for j in range(X.shape[1]):
        for sign in (-1.0, 1.0):
            moved = X.copy()
            moved[:, j] += sign
            inside = (moved[:, j] >= space.lower[j]) & (moved[:, j] <= space.upper[j])
            steps.append(moved[inside])
    return space.canonical(np.vstack(steps)) if steps else np.zeros((0, X.shape[1]))


def local_sweep(space: DesignSpace, state: State, evaluator) -> tuple[int, int]:
    """Sweep the neighbourhoods of ``state.polished`` (a copy of the archive the search goes on with);
    returns (members added, designs evaluated)."""
    archive = state.polished
    tried = np.zeros((0, space.lower.size))
    spent = added = 0
    for _ in range(ROUNDS):
        if len(archive) == 0:
            break
        cand = neighbours(space, archive.X)
        cand = cand[unique_new(cand, np.vstack([archive.X, tried]))]
        if len(cand) == 0:
            break
        ev = evaluator(space.decode(cand))
        spent += len(cand)
        tried = np.vstack([tried, cand])
        before = archive.X
        if not archive.update(cand, ev.objectives, ev.feasible, _island_of(space, state, cand, 0)):
            break
        added += int(unique_new(archive.X, before).sum())
    return added, spent


def _island_of(space: DesignSpace, state: State, X: np.ndarray, default: int) -> np.ndarray:
    """Island number of each global row: the island that holds its material."""
    materials = [isl.material for isl in state.islands]
    mat = space.pair_material[np.rint(X[:, 0]).astype(int)]
    return np.array([materials.index(m) if m in materials else default for m in mat])
