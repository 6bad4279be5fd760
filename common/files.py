"""Writing files so that a crash never leaves a half-written one: write a temporary name, then rename."""
from __future__ import annotations

import os
import tempfile
from pathlib import Path


def write_atomic(path, data: str | bytes) -> Path:
    """Write ``data`` to ``path`` atomically (same-folder temporary file, fsync, rename)."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp")
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data.encode("utf-8") if isinstance(data, str) else data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path
