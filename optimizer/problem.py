"""The search contract: encoded designs X -> objectives F (minimised) and constraints G (<= 0 when met)."""
from __future__ import annotations

from pymoo.core.duplicate import DefaultDuplicateElimination
from pymoo.core.problem import Problem
from pymoo.core.repair import Repair

from fluxfront.evaluator import CONSTRAINTS, OBJECTIVES

from .space import N_VAR, DesignSpace


class InductorProblem(Problem):
    """pymoo problem over the encoded design space; evaluation happens outside (ask/tell loop)."""

    def __init__(self, space: DesignSpace):
        super().__init__(n_var=N_VAR, n_obj=len(OBJECTIVES), n_ieq_constr=len(CONSTRAINTS),
                         xl=space.lower, xu=space.upper)
        self.space = space


class SnapToDesigns(Repair):
    """Replace every offspring by the encoded point of the design it decodes to.

    Rounding integers and catalog indices here keeps the population free of copies that differ
    only below the rounding, so that pymoo's plain distance check finds the true duplicates.
    """

    def _do(self, problem, X, **kwargs):
        return problem.space.canonical(X)


def duplicate_check() -> DefaultDuplicateElimination:
    """Two encoded rows are duplicates when equal after the snap (distance below 1e-9)."""
    return DefaultDuplicateElimination(epsilon=1e-9)


