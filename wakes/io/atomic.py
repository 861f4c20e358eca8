"""Atomic file writes: a killed run never leaves a truncated file behind.

Each writer puts its bytes in a temporary file beside the target, flushes
it to disk and renames it over the target; a rename within one folder is
atomic on POSIX and Windows file systems. The temporary file is created
with mode 0666 less the process's umask, as ``open()`` creates a file, so
the renamed file has the permissions a user expects (0644 under umask
022; the ``tempfile`` default 0600 would hide a shared run from
colleagues).
"""

from __future__ import annotations

import os
import secrets
from pathlib import Path

FILE_MODE = 0o666          # asked of the system; the umask takes its bits away
_FLAGS = os.O_WRONLY | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0)
PART_SUFFIX = ".part"      # temporary files are ".NAME.RANDOM.part" beside NAME


def _create_temporary(path: Path) -> tuple[int, str]:
    """A new temporary file beside ``path``: its descriptor and name."""
    while True:
        tmp = str(path.parent / f".{path.name}.{secrets.token_hex(4)}{PART_SUFFIX}")
        try:
            return os.open(tmp, _FLAGS, FILE_MODE), tmp
        except FileExistsError:   # another writer drew the same name: draw again
            continue


def write_bytes(path: str | os.PathLike, data: bytes) -> Path:
    """Write ``data`` to ``path`` atomically and return the path.

    Examples
    --------
    >>> import os, stat, tempfile
    >>> old = os.umask(0o022)
    >>> p = write_bytes(os.path.join(tempfile.mkdtemp(), "a.txt"), b"hello")
    >>> _ = os.umask(old)
    >>> oct(stat.S_IMODE(p.stat().st_mode)), p.read_bytes()
    ('0o644', b'hello')
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = None
    try:
        fd, tmp = _create_temporary(path)
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException as exc:
        if tmp is not None and os.path.exists(tmp):
            os.unlink(tmp)
        if isinstance(exc, OSError) and exc.filename is None and exc.errno is not None:
            raise OSError(exc.errno, exc.strerror, str(path)) from None   # name the file not written
        raise
    return path


def write_text(path: str | os.PathLike, text: str) -> Path:
    """Write UTF-8 ``text`` to ``path`` atomically and return the path."""
    return write_bytes(path, text.encode("utf-8"))
