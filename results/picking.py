"""Picking designs from a front: by row, by knee, or by limits and a rule."""
from __future__ import annotations

import numpy as np
import pandas as pd

from fluxfront.design.evaluator import INDUCTOR_OBJECTIVES
from fluxfront.errors import InputError
from fluxfront.optimizer.front import knee_index

PICK_RULES = ("knee", "volume", "loss", "cost")


def pick_rows(front: pd.DataFrame, row=None, knee=False, max_volume_cm3=None, max_loss_w=None, max_cost=None,
              by="knee", objectives=INDUCTOR_OBJECTIVES) -> list[int]:
    """Row numbers of the front chosen by row, by knee, or by limits then the rule ``by``.

    ``by``: knee (balanced, see optimizer.front.knee_index), volume, loss or cost (smallest).
    """
    if len(front) == 0:
        raise InputError("pareto.csv: the front is empty; there is nothing to pick (the run found no feasible design)")
    if row is not None:
        if not 0 <= row < len(front):
            raise InputError(f"--row = {row}: expected a row number from 0 to {len(front) - 1}")
        return [row]
    values = front[list(objectives)].to_numpy()
    if knee:
        return [knee_index(values)]
    ok = np.ones(len(front), dtype=bool)
    for col, lim in zip(objectives, (max_volume_cm3, max_loss_w, max_cost)):
        if lim is not None:
            ok &= front[col].to_numpy() <= lim
    if not ok.any():
        raise InputError("no design on the front meets the limits; the front spans volume "
                         f"{front.volume_cm3.min():.1f}-{front.volume_cm3.max():.1f} cm3, loss "
                         f"{front.total_loss_w.min():.2f}-{front.total_loss_w.max():.2f} W, cost "
                         f"{front.cost.min():.2f}-{front.cost.max():.2f}")
    idx = np.nonzero(ok)[0]
    if by == "knee":
        return [int(idx[knee_index(values[idx])])]
    col = {"volume": 0, "loss": 1, "cost": 2}[by]
    return [int(idx[np.argmin(values[idx, col])])]
