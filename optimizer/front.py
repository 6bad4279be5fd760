"""The Pareto front: archive of non-dominated feasible designs, hypervolume, knee, representatives."""
from __future__ import annotations

import numpy as np
from pymoo.indicators.hv import HV
from pymoo.util.nds.non_dominated_sorting import NonDominatedSorting


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
    """Every feasible non-dominated design seen so far (encoded X and objectives F), unique by X."""

    def __init__(self, n_var: int, n_obj: int):
        self.X = np.zeros((0, n_var))
        self.F = np.zeros((0, n_obj))

    def update(self, X: np.ndarray, F: np.ndarray, feasible: np.ndarray) -> None:
        X = np.vstack([self.X, X[feasible]])
        F = np.vstack([self.F, F[feasible]])
        _, first = np.unique(X, axis=0, return_index=True)
        first = np.sort(first)
        X, F = X[first], F[first]
        keep = np.sort(non_dominated(F))
        self.X, self.F = X[keep], F[keep]
        order = np.lexsort(self.F.T[::-1])      # rows by volume, then loss, then cost: stable files
        self.X, self.F = self.X[order], self.F[order]

    def __len__(self) -> int:
        return len(self.F)
