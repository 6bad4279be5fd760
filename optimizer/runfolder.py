"""The run folder: everything a search writes, each file replaced atomically (temporary name, then rename).

Layout::

    RUN_DIR/
      spec.toml          copy of the spec as given
      catalog.json       the catalog entries the search could use, and the whole catalog's hash
      run.json           settings and metadata (versions, seed, command line, times, stop reason)
      pareto.csv         feasible non-dominated designs (columns of `fluxfront evaluate`)
      history.csv        one row per generation, appended
      evaluated/         optional (--keep-all): every design evaluated, Parquet parts of at least
                         KEEP_ALL_ROWS rows each (a bounded number of files per run)
      checkpoint.npz     state after the last completed chunk of generations: arrays and a JSON
                         entry (counters, random-generator states); resume starts here
      run.log            log
"""
from __future__ import annotations

import fcntl
import io
import json
import os
import platform
import sys
from importlib import metadata
from pathlib import Path

import pandas as pd

from fluxfront.catalog import Catalog
from fluxfront.errors import InputError
from fluxfront.files import remove_stale_temporaries, write_atomic

from .space import DesignSpace

LIBRARIES = ("numpy", "scipy", "pymoo", "pandas", "matplotlib", "joblib", "pydantic")


def library_versions() -> dict[str, str]:
    out = {"python": platform.python_version()}
    for name in ("fluxfront",) + LIBRARIES:
        try:
            out[name] = metadata.version(name)
        except metadata.PackageNotFoundError:
            out[name] = "not installed"
    return out


def catalog_used(catalog: Catalog, space: DesignSpace) -> dict:
    """The entries the search can reach, with the whole catalog's content hash."""
    mats = sorted({int(i) for i in space.pair_material})
    shapes = sorted({int(i) for i in space.pair_shape})
    names = (list(catalog.materials), list(catalog.shapes), list(catalog.wires))
    return {
        "catalog_sha256": catalog.content_hash(),
        "sources": catalog.sources,
        "materials": {names[0][i]: catalog.materials[names[0][i]].model_dump(by_alias=True) for i in mats},
        "shapes": {names[1][i]: catalog.shapes[names[1][i]].model_dump() for i in shapes},
        "families": {k: v.model_dump() for k, v in catalog.families.items()},
        "wires": {names[2][i]: catalog.wires[names[2][i]].__dict__ for i in space.wires.tolist()},
        "copper": catalog.copper.model_dump(),
        "costs": catalog.costs.model_dump(),
    }


class FolderBusy(InputError):
    """Another process works in this run folder (one line, exit code 2)."""


class RunFolder:
    def __init__(self, path):
        self.path = Path(path)
        self._lock = None

    def lock(self) -> None:
        """Hold the folder's lock until the process ends (or unlock); a second process is refused."""
        fh = open(self.file(".lock"), "a+", encoding="utf-8")
        try:
            fcntl.flock(fh.fileno(), fcntl.LOCK_EX | fcntl.LOCK_NB)
        except OSError:
            fh.seek(0)
            other = fh.read().strip() or "?"
            fh.close()
            raise FolderBusy(f"{self.path}: another fluxfront process (pid {other}) is working in this folder; "
                             "wait for it to end or stop it, then resume") from None
        fh.seek(0)
        fh.truncate()
        fh.write(str(os.getpid()))
        fh.flush()
        self._lock = fh
        remove_stale_temporaries(self.path)     # left by a process killed while writing

    def unlock(self) -> None:
        if self._lock is not None:
            self._lock.close()
            self._lock = None

    def file(self, name: str) -> Path:
        return self.path / name

    def write_json(self, name: str, data: dict) -> None:
        write_atomic(self.file(name), json.dumps(data, indent=1, default=str) + "\n")

    def read_json(self, name: str) -> dict:
        return json.loads(self.file(name).read_text())

    def write_csv(self, name: str, frame: pd.DataFrame) -> None:
        write_atomic(self.file(name), frame.to_csv(index=False))

    def write_parquet(self, name: str, frame: pd.DataFrame) -> None:
        buf = io.BytesIO()
        frame.to_parquet(buf, index=False)
        write_atomic(self.file(name), buf.getvalue())

    def append_history(self, rows: list[dict]) -> None:
        """Append generation rows to history.csv (header on a new file); flushed to disk."""
        if not rows:
            return
        path = self.file("history.csv")
        new = not path.is_file() or path.stat().st_size == 0
        with open(path, "a", encoding="utf-8") as fh:
            fh.write(pd.DataFrame(rows).to_csv(index=False, header=new))
            fh.flush()
            os.fsync(fh.fileno())

    def hypervolume_trace(self) -> list[float]:
        """The hypervolume column of history.csv (empty when there is none yet)."""
        path = self.file("history.csv")
        if not path.is_file() or path.stat().st_size == 0:
            return []
        return pd.read_csv(path)["hypervolume"].tolist()

    def trim_history(self, generation: int) -> None:
        """Keep the header and the whole rows up to ``generation``: rows written after the checkpoint a
        resume starts from, and a row torn by a kill in the middle of an append, go."""
        path = self.file("history.csv")
        if not path.is_file():
            return
        lines = path.read_text(encoding="utf-8", errors="replace").splitlines()
        if not lines:
            return
        header, width = lines[0], lines[0].count(",")
        keep = [header] if header.startswith("generation,") else []
        for line in lines[1:] if keep else []:
            first = line.split(",", 1)[0]
            if line.count(",") == width and first.isdigit() and int(first) <= generation:
                keep.append(line)
        write_atomic(path, "\n".join(keep) + ("\n" if keep else ""))


def command_line() -> str:
    return " ".join([Path(sys.argv[0]).name] + sys.argv[1:])
