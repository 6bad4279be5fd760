"""Resuming and extending a run from its folder alone: settings, spec and catalog snapshot, checkpoint.

Trust boundary: a run folder is read as data.  Its settings are validated like command-line
options (a scheduler address stored there is never contacted: give ``--scheduler`` again), its
catalog is the snapshot the run started with (``catalog.json``), its checkpoint holds arrays and
JSON only.  A ``--catalog`` override must agree with the snapshot; one that differs is refused,
naming the entries that differ.
"""
from __future__ import annotations

import json
import math
from dataclasses import asdict, fields
from datetime import datetime, timezone
from pathlib import Path

from fluxfront.catalog import Catalog, CatalogError, catalog_from_snapshot, load_catalog
from fluxfront.design.spec import load_spec
from fluxfront.errors import InputError

from . import state as checkpoint
from .run import Outcome, Settings, attach_log, resume_state
from .runfolder import RunFolder, catalog_used
from .space import DesignSpace

SETTING_RULES = {
    "seed": (int, lambda v: v >= 0, "a whole number >= 0"),
    "population": (int, lambda v: v >= 2, "a whole number >= 2"),
    "generations": (int, lambda v: v >= 1, "a whole number >= 1, or null"),
    "hours": ((int, float), lambda v: math.isfinite(v) and v > 0, "a positive number of hours, or null"),
    "stagnation": (int, lambda v: v >= 1, "a whole number >= 1, or null"),
    "jobs": (int, lambda v: v == -1 or v >= 1, "-1 or a positive whole number"),
    "scheduler": (str, lambda v: True, "a text, or null"),
    "keep_all": (bool, lambda v: True, "true or false"),
    "min_chunk": (int, lambda v: v >= 1, "a whole number >= 1"),
}
OPTIONAL = {"generations", "hours", "stagnation", "scheduler"}


def read_settings(folder: RunFolder, key: str = "settings") -> tuple[dict, Settings]:
    """run.json and its settings, each field checked; one-line InputError otherwise."""
    path = folder.file("run.json")
    try:
        meta = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError(f"{folder.path}: not a run folder (no run.json); a run stopped before its first "
                         "checkpoint cannot be resumed: remove the folder and start the run again") from None
    except (OSError, UnicodeDecodeError, json.JSONDecodeError):
        raise InputError(f"{path}: not readable JSON; the run folder is damaged") from None
    raw = meta.get(key) if isinstance(meta, dict) else None
    if not isinstance(raw, dict):
        raise InputError(f"{path}: no '{key}' object; the run folder is damaged")
    clean = {}
    for f in fields(Settings):
        value = raw.get(f.name, getattr(Settings(), f.name))
        kind, ok, expected = SETTING_RULES[f.name]
        if value is None and f.name in OPTIONAL:
            clean[f.name] = None
            continue
        if not isinstance(value, kind) or (kind is int and isinstance(value, bool)) or not ok(value):
            raise InputError(f"{path}: {key}.{f.name} = {value!r}: expected {expected}")
        clean[f.name] = value
    unknown = sorted(set(raw) - {f.name for f in fields(Settings)})
    if unknown:
        raise InputError(f"{path}: {key}.{unknown[0]}: unknown setting; expected {', '.join(SETTING_RULES)}")
    return meta, Settings(**clean)


def snapshot_catalog(folder: RunFolder) -> Catalog:
    """The catalog the run started with."""
    path = folder.file("catalog.json")
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError(f"{path}: missing; the run folder is damaged") from None
    except (OSError, UnicodeDecodeError, json.JSONDecodeError):
        raise InputError(f"{path}: not readable JSON; the run folder is damaged") from None
    return catalog_from_snapshot(data, path)


def check_override(folder: RunFolder, spec, snapshot: Catalog, catalog_dirs) -> None:
    """Refuse a --catalog override whose entries differ from the run's snapshot (one line, the ids)."""
    if not catalog_dirs:
        return
    other = load_catalog(list(catalog_dirs))
    try:
        mine = catalog_used(snapshot, DesignSpace.from_spec(spec, snapshot))
        theirs = catalog_used(other, DesignSpace.from_spec(spec, other))
    except (InputError, CatalogError):
        raise InputError("--catalog: the override does not hold the entries this run searches") from None
    differ = [f"{kind} {key}" for kind in ("materials", "shapes", "wires", "families")
              for key in sorted(set(mine[kind]) | set(theirs[kind])) if mine[kind].get(key) != theirs[kind].get(key)]
    differ += [kind for kind in ("copper", "costs") if mine[kind] != theirs[kind]]
    if differ:
        raise InputError(f"--catalog: differs from the run's catalog snapshot in {', '.join(differ[:6])}"
                         f"{' ...' if len(differ) > 6 else ''}; a run keeps the catalog it started with "
                         "(start a new run to use the changed entries)")


def resume(run_dir, catalog_dirs=(), quiet: bool = False, more_generations: int | None = None,
           more_hours: float | None = None, scheduler: str | None = None) -> Outcome:
    """Continue a stopped or killed run from its checkpoint; optionally extend its budget.

    An extension counts from where the run stands: ``more_generations`` sets the generation budget
    to the checkpoint's generation plus N (a time or stagnation rule no longer stops it),
    ``more_hours`` adds hours to the time spent so far.  run.json keeps the original settings and
    records each extension and the settings in force.
    """
    folder = RunFolder(Path(run_dir))
    meta, settings = read_settings(folder)
    folder.lock()
    try:
        if "effective_settings" in meta:
            _, settings = read_settings(folder, "effective_settings")
        spec, _ = load_spec(folder.file("spec.toml"))
        catalog = snapshot_catalog(folder)
        check_override(folder, spec, catalog, catalog_dirs)
        settings.scheduler = scheduler
        progress = checkpoint.load(folder.path)
        extended = more_generations is not None or more_hours is not None
        if more_generations is not None:
            settings.generations = progress.generation + more_generations
            settings.hours = settings.stagnation = None
        if more_hours is not None:
            settings.hours = progress.elapsed_s / 3600 + more_hours
            settings.generations, settings.stagnation = None, None
        attach_log(folder)
        now = datetime.now(timezone.utc).isoformat(timespec="seconds")
        meta["resumed"] = meta.get("resumed", []) + [now]
        if extended:
            meta["extensions"] = meta.get("extensions", []) + [{"time": now, "more_generations": more_generations,
                                                                "more_hours": more_hours}]
            meta["effective_settings"] = asdict(settings)
        folder.write_json("run.json", meta)
        return resume_state(folder, spec, catalog, settings, extended, quiet, progress)
    finally:
        folder.unlock()
