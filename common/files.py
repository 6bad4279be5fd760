"""Writing files so that a crash never leaves a half-written one: write a temporary name, then rename."""
from __future__ import annotations

import os
import tempfile
from pathlib import Path


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def remove_stale_temporaries(folder) -> int:
    """Delete temporary files a killed process left behind in ``folder`` and below (ours: ``.NAME.*.tmp``)."""
    count = 0
    for tmp in Path(folder).rglob(".*.tmp"):
        tmp.unlink(missing_ok=True)
        count += 1
    return count


def write_atomic(path, data: str | bytes) -> Path:
    """Write ``data`` to ``path`` atomically (same-folder temporary file, fsync, rename)."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp")
    try:
        os.fchmod(fd, 0o666 & ~_umask())     # readable by colleagues, as any file the user writes
        with os.fdopen(fd, "wb") as fh:
            fh.write(data.encode("utf-8") if isinstance(data, str) else data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path
