"""The search state and its checkpoint: arrays and JSON in one ``.npz`` file, never code.

``checkpoint.npz`` holds the islands' populations, the archive and the unflushed ``--keep-all``
rows as arrays, and one text entry ``meta``: JSON with the counters, each island's
random-generator state and budget, and the shapes the arrays must have.  One file, replaced
atomically, so a kill can never leave arrays and counters from different generations.  Loading
checks every field and shape and refuses anything else with one line (``CheckpointError``): a
checkpoint is data, read with ``allow_pickle=False``.
"""
from __future__ import annotations

import io
import json
import zipfile
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from fluxfront.files import write_atomic

from .front import ParetoArchive
from .islands import Island

FORMAT = "fluxfront-checkpoint-2"


class CheckpointError(ValueError):
    """A checkpoint that is missing, truncated, of another format or inconsistent."""


@dataclass
class State:
    """Everything the loop needs to continue."""

    islands: list[Island]
    archive: ParetoArchive
    reference: np.ndarray
    generation: int = 0
    evaluations: int = 0
    elapsed_s: float = 0.0
    polished: ParetoArchive | None = None                # the archive after the final local sweep
    sweep_evaluations: int = 0                           # designs the final sweep evaluated
    violation: dict = field(default_factory=dict)        # last chunk: mean violation per constraint
    violated_share: dict = field(default_factory=dict)
    kept: np.ndarray | None = None                       # --keep-all rows not yet in a Parquet part
    parts: int = 0                                       # Parquet parts written so far


def save(folder: Path, state: State) -> None:
    """Write checkpoint.npz (arrays and the JSON ``meta`` entry) atomically."""
    arrays = {"archive_X": state.archive.X, "archive_F": state.archive.F, "archive_tag": state.archive.tag,
              "reference": state.reference, "kept": np.zeros((0, 0)) if state.kept is None else state.kept}
    if state.polished is not None:
        arrays.update({"polished_X": state.polished.X, "polished_F": state.polished.F,
                       "polished_tag": state.polished.tag})
    for k, isl in enumerate(state.islands):
        arrays.update({f"island{k}_X": isl.X, f"island{k}_F": isl.F, f"island{k}_G": isl.G})
    meta = {"format": FORMAT, "generation": state.generation, "evaluations": state.evaluations,
            "elapsed_s": state.elapsed_s, "sweep_evaluations": state.sweep_evaluations, "violation": state.violation,
            "violated_share": state.violated_share, "parts": state.parts,
            "islands": [{"material": isl.material, "offspring": isl.offspring, "size": isl.size,
                         "rng_state": isl.rng_state} for isl in state.islands],
            "shapes": {k: list(v.shape) for k, v in arrays.items()}}
    buf = io.BytesIO()
    np.savez(buf, meta=np.array(json.dumps(meta)), **arrays)
    write_atomic(folder / "checkpoint.npz", buf.getvalue())


def _expect(cond: bool, path: Path, what: str) -> None:
    if not cond:
        raise CheckpointError(f"{path}: {what}; the checkpoint is damaged (restart the run, or resume an intact copy)")


def _rng_state(raw, path: Path) -> dict:
    _expect(isinstance(raw, dict) and raw.get("bit_generator") == "PCG64", path, "a random-generator state is not PCG64")
    try:
        g = np.random.Generator(np.random.PCG64())
        g.bit_generator.state = raw
    except (TypeError, ValueError, KeyError):
        raise CheckpointError(f"{path}: an island's random-generator state is not valid") from None
    return g.bit_generator.state


def load(folder: Path) -> State:
    """Read and check a checkpoint; raises CheckpointError with one line on anything unexpected."""
    npath = jpath = folder / "checkpoint.npz"
    try:
        with np.load(npath, allow_pickle=False) as data:
            text = str(data["meta"]) if "meta" in data.files else ""
            arrays = {k: np.asarray(data[k], dtype=float) for k in data.files if k != "meta"}
    except FileNotFoundError:
        raise CheckpointError(f"{npath}: missing") from None
    except (OSError, ValueError, TypeError, zipfile.BadZipFile, EOFError) as exc:
        raise CheckpointError(f"{npath}: not a readable array file ({exc.__class__.__name__})") from None
    try:
        meta = json.loads(text)
    except json.JSONDecodeError:
        raise CheckpointError(f"{npath}: its meta entry is not JSON") from None
    _expect(isinstance(meta, dict) and meta.get("format") == FORMAT, jpath, f"not a {FORMAT} file")
    shapes = meta.get("shapes")
    _expect(isinstance(shapes, dict) and set(shapes) == set(arrays), npath, "its arrays do not match its meta entry")
    for k, shape in shapes.items():
        _expect(list(arrays[k].shape) == shape and np.all(np.isfinite(arrays[k])), npath, f"array {k} is wrong")
    for key, kind in (("generation", int), ("evaluations", int), ("elapsed_s", (int, float)), ("parts", int),
                      ("sweep_evaluations", int)):
        _expect(isinstance(meta.get(key), kind) and not isinstance(meta.get(key), bool) and meta[key] >= 0,
                jpath, f"field {key} is not a non-negative number")
    islands = []
    for k, raw in enumerate(meta.get("islands") or []):
        _expect(isinstance(raw, dict) and all(isinstance(raw.get(f), int) and not isinstance(raw.get(f), bool)
                                              for f in ("material", "offspring", "size"))
                and raw["offspring"] > 0 and raw["size"] > 0 and f"island{k}_X" in arrays, jpath,
                f"island {k} is incomplete")
        islands.append(Island(raw["material"], arrays[f"island{k}_X"], arrays[f"island{k}_F"].reshape(-1, 3)
                              if arrays[f"island{k}_F"].size else np.zeros((0, 3)),
                              arrays[f"island{k}_G"], _rng_state(raw.get("rng_state"), jpath), raw["offspring"],
                              raw["size"]))
    _expect(len(islands) > 0, jpath, "no islands")
    kept = arrays["kept"]
    archive, polished = (_archive(arrays, name, npath) for name in ("archive", "polished"))
    _expect(archive is not None, npath, "no archive")
    return State(islands, archive, arrays["reference"], meta["generation"], meta["evaluations"],
                 float(meta["elapsed_s"]), polished, meta["sweep_evaluations"], dict(meta.get("violation") or {}),
                 dict(meta.get("violated_share") or {}), kept if kept.size else None, meta["parts"])


def _archive(arrays: dict, name: str, path: Path) -> ParetoArchive | None:
    if f"{name}_X" not in arrays:
        return None
    X, F, tag = arrays[f"{name}_X"], arrays[f"{name}_F"], arrays[f"{name}_tag"]
    _expect(X.ndim == 2 and len(X) == len(tag) and F.size == 3 * len(X), path, f"{name} arrays disagree")
    return ParetoArchive(X.shape[1], 3, X, F.reshape(-1, 3), tag.astype(int))
