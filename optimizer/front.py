"""The Pareto front: archive of non-dominated feasible designs, hypervolume, knee, representatives."""
from __future__ import annotations

import numpy as np
from pymoo.indicators.hv import HV
from pymoo.util.nds.non_dominated_sorting import NonDominatedSorting

from .operators import first_occurrence


def non_dominated(F: np.ndarray) -> np.ndarray:
    """Indices of the rows of F (minimised) that no other row dominates."""
    if len(F) == 0:
        return np.zeros(0, dtype=int)
    return np.asarray(NonDominatedSorting().do(F, only_non_dominated_front=True), dtype=int)


def hypervolume(F: np.ndarray, reference: np.ndarray) -> float:
    """Hypervolume of F against ``reference``, in units of the box [0, reference] (so 0..1).

    Objectives are divided by the reference point first, which fixes a scale for the run; points
    that do not dominate the reference add nothing (pymoo's HV indicator).
    """
    if len(F) == 0:
        return 0.0
    scaled = np.asarray(F, dtype=float) / reference
    return float(HV(ref_point=np.ones(len(reference)))(scaled))


def knee_index(F: np.ndarray) -> int:
    """The balanced design of a front: closest to the ideal point after normalising each objective.

    Each objective is scaled to 0..1 over the front (0 at its best value); the knee is the point
    with the smallest Euclidean distance to the origin (compromise programming with equal
    weights).  Ties go to the lowest row, so the choice is stable for a fixed front.
    """
    F = np.asarray(F, dtype=float)
    lo, hi = F.min(axis=0), F.max(axis=0)
    z = (F - lo) / np.where(hi > lo, hi - lo, 1.0)
    return int(np.argmin(np.sqrt((z**2).sum(axis=1))))


class ParetoArchive:
    """Every feasible non-dominated design seen so far: encoded X, objectives F and the island that
    found it (``tag``), unique by X, rows ordered by volume, then loss, then cost."""

    def __init__(self, n_var: int, n_obj: int, X=None, F=None, tag=None):
        self.X = np.zeros((0, n_var)) if X is None else np.asarray(X, dtype=float)
        self.F = np.zeros((0, n_obj)) if F is None else np.asarray(F, dtype=float)
        self.tag = np.zeros(len(self.X), dtype=int) if tag is None else np.asarray(tag, dtype=int)

    def update(self, X: np.ndarray, F: np.ndarray, feasible: np.ndarray, tag=None) -> bool:
        """Merge the feasible rows; returns whether the archive changed."""
        tag = np.zeros(len(X), dtype=int) if tag is None else np.broadcast_to(np.asarray(tag, dtype=int), len(X))
        if not np.any(feasible):
            return False
        before = self.X
        X = np.vstack([self.X, X[feasible]])
        F = np.vstack([self.F, F[feasible]])
        tags = np.concatenate([self.tag, tag[feasible]])
        first = np.flatnonzero(first_occurrence(X))
        X, F, tags = X[first], F[first], tags[first]
        keep = np.sort(non_dominated(F))
        X, F, tags = X[keep], F[keep], tags[keep]
        order = np.lexsort(F.T[::-1])      # rows by volume, then loss, then cost: stable files
        self.X, self.F, self.tag = X[order], F[order], tags[order]
        return not (before.shape == self.X.shape and np.array_equal(before, self.X))

    def contributions(self, reference: np.ndarray, islands: int) -> np.ndarray:
        """Hypervolume each island's points add that no other island's points cover (>= 0)."""
        total = hypervolume(self.F, reference)
        return np.array([max(total - hypervolume(self.F[self.tag != k], reference), 0.0) for k in range(islands)])

    def __len__(self) -> int:
        return len(self.F)
