"""Atomic file writes: a killed run never leaves a truncated file behind.

Each writer puts its bytes in a temporary file beside the target, flushes
it to disk and renames it over the target; a rename within one folder is
atomic on POSIX and Windows file systems.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path


def write_bytes(path: str | os.PathLike, data: bytes) -> Path:
    """Write ``data`` to ``path`` atomically and return the path."""
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException as exc:
        if os.path.exists(tmp):
            os.unlink(tmp)
        if isinstance(exc, OSError) and exc.filename is None and exc.errno is not None:
            raise OSError(exc.errno, exc.strerror, str(path)) from None   # name the file not written
        raise
    return path


def write_text(path: str | os.PathLike, text: str) -> Path:
    """Write UTF-8 ``text`` to ``path`` atomically and return the path."""
    return write_bytes(path, text.encode("utf-8"))
