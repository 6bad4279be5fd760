"""Work on joblib worker processes or a Dask cluster: whole islands for a chunk of generations, or
chunks of one large batch of designs (the reference sample, the final sweep, re-evaluations).

Islands go to workers whole (shared out by their budgets): a worker asks, evaluates and tells for
several generations and sends back only its islands and what they evaluated, so the processes
spend their time evaluating, not exchanging.  A large batch is split into chunks of at least
``min_chunk`` designs.  Every design is computed independently with fixed-order sums and every
island has its own random stream, so results are bit-identical whatever the backend or the
number of workers.
"""
from __future__ import annotations

import contextlib
import ctypes
import os
import signal
import sys
from dataclasses import replace

import numpy as np
from joblib import Parallel, cpu_count, delayed, parallel_config

from fluxfront.design.context import Context
from fluxfront.design.designs import Designs
from fluxfront.design.evaluator import Evaluation, concat_evaluations
from fluxfront.design.tolerance import TolerantContext, evaluate_tolerant, tolerant_context
from fluxfront.errors import InputError

from .islands import Evaluated, Island, evolve
from .space import DesignSpace

MIN_CHUNK = 2000  # about 40 ms of evaluation on one core: below that, process start-up and pickling dominate


def die_with_parent() -> None:
    """Ask Linux to end this worker process when its parent dies (even by kill -9); elsewhere nothing.

    Called at the start of every task a worker runs (idempotent, a few microseconds).
    """
    if sys.platform.startswith("linux"):
        try:
            libc = ctypes.CDLL(None, use_errno=True)
            libc.prctl(1, signal.SIGTERM)          # PR_SET_PDEATHSIG
            if os.getppid() == 1:                 # the parent is already gone
                os._exit(1)
        except (OSError, AttributeError):
            pass


def _evaluate_part(ctx: TolerantContext, designs: Designs) -> Evaluation:
    die_with_parent()
    return evaluate_tolerant(ctx, designs)


def _evolve_part(ctx, islands, spaces, first_generation, generations):
    die_with_parent()
    return evolve(ctx, islands, spaces, first_generation, generations)


def _balanced_groups(loads: list[int], workers: int) -> list[list[int]]:
    """Islands shared out so that every worker gets about the same number of designs per generation
    (largest first, each to the least loaded worker); the results do not depend on the sharing."""
    groups = [[] for _ in range(max(workers, 1))]
    totals = [0] * len(groups)
    for k in sorted(range(len(loads)), key=lambda i: -loads[i]):
        w = totals.index(min(totals))
        groups[w].append(k)
        totals[w] += loads[k]
    return [sorted(g) for g in groups if g]


class PopulationEvaluator:
    """Callable: Designs -> Evaluation, on ``jobs`` local processes or through a Dask scheduler.

    Parameters
    ----------
    ctx : prepared evaluation context with its tolerance corners (one batch per corner)
    jobs : worker processes (-1: all cores)
    scheduler : None, "local" (start a local Dask cluster) or a Dask scheduler address
    min_chunk : smallest chunk worth sending to a worker
    """

    def __init__(self, ctx: TolerantContext | Context, jobs: int = -1, scheduler: str | None = None,
                 min_chunk: int = MIN_CHUNK):
        self.ctx = ctx if isinstance(ctx, TolerantContext) else tolerant_context(ctx)
        self.jobs, self.scheduler, self.min_chunk = jobs, scheduler, min_chunk
        self._client = None
        self._stack = contextlib.ExitStack()
        self._parallel = None

    def __enter__(self):
        if self.scheduler is not None:
            try:  # Dask is an optional extra: imported only when a scheduler is asked for
                from dask.distributed import Client, LocalCluster
            except ImportError:
                raise InputError("--scheduler needs Dask: pip install 'fluxfront[cluster]'") from None
            if self.scheduler == "local":
                n = None if self.jobs in (-1, None) else self.jobs
                cluster = self._stack.enter_context(LocalCluster(n_workers=n, threads_per_worker=1, processes=True,
                                                                 dashboard_address=None))
                self._client = self._stack.enter_context(Client(cluster))
            else:
                try:
                    self._client = self._stack.enter_context(Client(self.scheduler, timeout="20s"))
                except (OSError, TimeoutError, ValueError) as exc:
                    raise InputError(f"--scheduler {self.scheduler!r}: cannot reach a Dask scheduler ({exc})") from None
            self._stack.enter_context(parallel_config(backend="dask"))
            self._parallel = self._stack.enter_context(Parallel(n_jobs=-1))
        elif self.jobs != 1:
            self._parallel = self._stack.enter_context(Parallel(n_jobs=self.jobs))
        return self

    def __exit__(self, *exc):
        self._stack.close()
        return False

    @property
    def workers(self) -> int:
        if self._client is not None:
            return max(len(self._client.scheduler_info().get("workers", {})), 1)
        if self._parallel is None:
            return 1
        return cpu_count() if self.jobs in (-1, None) else max(self.jobs, 1)

    def run(self, ctx: TolerantContext, islands: list[Island], spaces: list[DesignSpace], first_generation: int,
            generations: int) -> tuple[list[Island], list[Evaluated]]:
        """Evolve every island ``generations`` generations, islands shared out over the workers."""
        groups = _balanced_groups([isl.offspring for isl in islands], min(self.workers, len(islands)))
        if self._parallel is None or len(groups) <= 1:
            return evolve(ctx, islands, spaces, first_generation, generations)
        results = self._parallel(delayed(_evolve_part)(ctx, [islands[i] for i in g], [spaces[i] for i in g],
                                                       first_generation, generations) for g in groups)
        out, records = list(islands), []
        for g, (done, recs) in zip(groups, results):
            for local, k in enumerate(g):
                out[k] = done[local]
            records += [replace(r, island=g[r.island]) for r in recs]
        return out, records

    def __call__(self, designs: Designs) -> Evaluation:
        n = len(designs)
        chunks = int(min(self.workers, max(n // self.min_chunk, 1)))
        if chunks <= 1 or self._parallel is None:
            return evaluate_tolerant(self.ctx, designs)
        edges = np.linspace(0, n, chunks + 1).astype(int)
        parts = self._parallel(delayed(_evaluate_part)(self.ctx, designs.take(slice(a, b)))
                               for a, b in zip(edges[:-1], edges[1:]))
        return concat_evaluations(list(parts))
