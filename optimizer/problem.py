"""The search contract: encoded designs X -> objectives F (minimised) and constraints G (<= 0 when met)."""
from __future__ import annotations

import numpy as np
from pymoo.core.duplicate import DuplicateElimination
from pymoo.core.problem import Problem
from pymoo.core.repair import Repair

from fluxfront.design.evaluator import CONSTRAINTS, INDUCTOR_OBJECTIVES

from .space import N_VAR, DesignSpace


class InductorProblem(Problem):
    """pymoo problem over the encoded design space; evaluation happens outside (ask/tell loop)."""

    def __init__(self, space: DesignSpace):
        super().__init__(n_var=N_VAR, n_obj=len(INDUCTOR_OBJECTIVES), n_ieq_constr=len(CONSTRAINTS),
                         xl=space.lower, xu=space.upper)
        self.space = space


class SnapToDesigns(Repair):
    """Replace every offspring by the encoded point of the design it decodes to.

    Rounding integers and catalog indices here keeps the population free of copies that differ
    only below the rounding, so that pymoo's plain distance check finds the true duplicates.
    """

    def _do(self, problem, X, **kwargs):
        return problem.space.canonical(X)


class SnappedDuplicates(DuplicateElimination):
    """Two encoded rows are duplicates when they are equal after the snap to designs.

    Snapped rows of the same design are bit-identical, so a hash set finds duplicates in linear
    time; pymoo's default builds a full distance matrix (benchmarks/encoding_choice.py measures both).
    A row is a duplicate of an earlier row of the same population, or of any row of ``other``.
    """

    def _do(self, pop, other, is_duplicate):
        keys = [row.tobytes() for row in np.ascontiguousarray(pop.get("X"), dtype=float)]
        if other is None:
            seen = set()
            for i, key in enumerate(keys):
                if key in seen:
                    is_duplicate[i] = True
                seen.add(key)
        else:
            seen = {row.tobytes() for row in np.ascontiguousarray(other.get("X"), dtype=float)}
            is_duplicate |= np.fromiter((k in seen for k in keys), dtype=bool, count=len(keys))
        return is_duplicate


def duplicate_check() -> SnappedDuplicates:
    return SnappedDuplicates()


