"""Atomic file writes: a failed run never leaves a half-written file over a good one."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path


def write_atomic(path: Path | str, data: str | bytes) -> None:
    """Write ``data`` (text as UTF-8, or bytes) through a temporary file and a rename.

    The temporary file sits in the target folder, so ``os.replace`` is atomic; on any error it
    is removed and the previous file stays as it was.
    """
    p = Path(path)
    p.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=p.parent, prefix=f".{p.name}.", suffix=".tmp")
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data.encode("utf-8") if isinstance(data, str) else data)
        os.replace(tmp, p)
    except BaseException:
        if os.path.exists(tmp):
            os.unlink(tmp)
        raise
