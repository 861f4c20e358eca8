"""Coercion and checking of user arrays and command-line paths at the public boundary.

Every function here raises :class:`wakes.errors.InputError` with a message
that names the argument, the offending index or value and what is accepted.
Kernels downstream trust what passes through here.
"""

from __future__ import annotations

import os
import stat
from pathlib import Path

import numpy as np

from .errors import InputError


def _first_bad(mask: np.ndarray) -> tuple:
    """Index tuple of the first True entry of ``mask``."""
    return tuple(int(i) for i in np.argwhere(mask)[0])


def _fmt_index(idx: tuple) -> str:
    return "[" + ", ".join(str(i) for i in idx) + "]"


def as_float_array(name: str, value, shape: tuple) -> np.ndarray:
    """Return ``value`` as a C-contiguous float64 array of ``shape``.

    ``shape`` entries that are ``None`` accept any length. Nothing is
    reshaped or broadcast: a wrong shape is an error.
    """
    try:
        arr = np.asarray(value, dtype=np.float64)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{name} must be an array of real numbers with shape "
                         f"{_shape_text(shape)}; could not convert it ({exc})") from None
    if arr.ndim != len(shape) or any(s is not None and s != a for s, a in zip(shape, arr.shape)):
        raise InputError(f"{name} must have shape {_shape_text(shape)}; got {arr.shape}")
    bad = ~np.isfinite(arr)
    if bad.any():
        idx = _first_bad(bad)
        raise InputError(f"{name} must be finite; {name}{_fmt_index(idx)} = {arr[idx]}")
    return np.ascontiguousarray(arr) if arr.ndim else arr


def per_element(name: str, value, n: int, *, positive: bool = False,
                nonnegative: bool = False) -> np.ndarray:
    """Return a float64 array of length ``n`` from a scalar or an (n,) array."""
    try:
        arr = np.asarray(value, dtype=np.float64)
    except (TypeError, ValueError) as exc:
        raise InputError(f"{name} must be a real number or an array of shape ({n},); "
                         f"could not convert it ({exc})") from None
    if arr.ndim == 0:
        arr = np.full(n, float(arr))
        scalar = True
    elif arr.shape == (n,):
        scalar = False
    else:
        raise InputError(f"{name} must be a scalar or have shape ({n},); got {arr.shape}")
    where = (lambda i: f"{name} = {arr[i]}") if scalar else (lambda i: f"{name}[{i}] = {arr[i]}")
    bad = ~np.isfinite(arr)
    if bad.any():
        i = int(np.argmax(bad))
        raise InputError(f"{name} must be finite; {where(i)}")
    if positive and (arr <= 0).any():
        i = int(np.argmax(arr <= 0))
        raise InputError(f"{name} must be positive; {where(i)}")
    if nonnegative and (arr < 0).any():
        i = int(np.argmax(arr < 0))
        raise InputError(f"{name} must be zero or positive; {where(i)}")
    return np.ascontiguousarray(arr)


def choice(name: str, value, accepted) -> str:
    """Check that ``value`` is one of the ``accepted`` names."""
    accepted = list(accepted)
    if not isinstance(value, str) or value not in accepted:
        raise InputError(f"{name} must be one of {', '.join(repr(a) for a in accepted)}; "
                         f"got {value!r}")
    return value


def positive_scalar(name: str, value, *, allow_zero: bool = False) -> float:
    """Return ``value`` as a finite float that is positive (or zero if allowed)."""
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be a real number; got {value!r}") from None
    if not np.isfinite(x) or x < 0 or (x == 0 and not allow_zero):
        what = "zero or positive" if allow_zero else "positive"
        raise InputError(f"{name} must be finite and {what}; got {value!r}")
    return x


def _shape_text(shape: tuple) -> str:
    return "(" + ", ".join("N" if s is None else str(s) for s in shape) + ("," if len(shape) == 1 else "") + ")"


def _os_words(exc: BaseException) -> str:
    return getattr(exc, "strerror", None) or str(exc) or type(exc).__name__


def _existing(option: str, value) -> tuple[str, os.stat_result | None]:
    """The path text of ``value`` and its status, or None where nothing exists there.

    Raises
    ------
    wakes.errors.InputError
        For an empty path, a NUL character, or a path the system refuses to look at.
    """
    text = os.fspath(value)
    if not text or "\0" in text:
        raise InputError(f"{option} {text!r}: not a usable path (empty or holding a NUL character)")
    try:
        return text, Path(text).stat()
    except (FileNotFoundError, NotADirectoryError):
        return text, None
    except (OSError, ValueError) as exc:
        raise InputError(f"{option} {text}: cannot use this path ({_os_words(exc)})") from None


def writable_path(option: str, value, *, folder: bool) -> Path:
    """Check that a command-line output path can be created or written, before any work.

    Nothing is created. The path must be text without a NUL character,
    its names not too long for the file system; its nearest existing
    ancestor must be a folder this process may write in; the path itself,
    if it exists, must be a folder (``folder``) or not be one (a file).

    Parameters
    ----------
    option : str
        The option named in messages, e.g. ``"--out"``.
    value : str or path-like
        The path given.
    folder : bool
        Whether the path is a folder to write into (else a file).

    Returns
    -------
    Path

    Raises
    ------
    wakes.errors.InputError
        Naming the option, the path and what is wrong with it.
    """
    text, info = _existing(option, value)
    path = Path(text)
    if info is not None:
        if folder and not stat.S_ISDIR(info.st_mode):
            raise InputError(f"{option} {text}: exists and is not a folder")
        if not folder and stat.S_ISDIR(info.st_mode):
            raise InputError(f"{option} {text}: is a folder; give a file name")
    ancestor = path.parent if info is not None else path
    while True:
        try:
            a_info = ancestor.stat()
            break
        except (FileNotFoundError, NotADirectoryError):
            if ancestor.parent == ancestor:
                raise InputError(f"{option} {text}: no part of this path exists") from None
            ancestor = ancestor.parent
        except (OSError, ValueError) as exc:
            raise InputError(f"{option} {text}: cannot use this path ({_os_words(exc)})") from None
    if not stat.S_ISDIR(a_info.st_mode):
        raise InputError(f"{option} {text}: {ancestor} is a file, so nothing can be created inside it")
    if not os.access(ancestor, os.W_OK | os.X_OK):
        raise InputError(f"{option} {text}: no permission to write in {ancestor}")
    limit = _name_max(ancestor)
    for part in path.parts:
        if len(os.fsencode(part)) > limit:
            raise InputError(f"{option} {text[:60]}...: the name {part[:40]}... is longer than the "
                             f"{limit} bytes a file name may have here")
    return path


def readable_file(option: str, value, *, what: str = "file") -> Path:
    """Check that a command-line input path is a regular file this process may read.

    Raises
    ------
    wakes.errors.InputError
        Naming the option, the path and what is wrong with it.
    """
    text, info = _existing(option, value)
    if info is None:
        raise InputError(f"{option} {text}: {what} not found")
    if stat.S_ISDIR(info.st_mode):
        raise InputError(f"{option} {text}: is a folder; give the {what}")
    if not stat.S_ISREG(info.st_mode):
        raise InputError(f"{option} {text}: is not a regular file; give the {what}")
    if not os.access(text, os.R_OK):
        raise InputError(f"{option} {text}: no permission to read it")
    return Path(text)


def _name_max(folder: Path) -> int:
    """Longest file name [bytes] the file system of ``folder`` takes (255 where unknown)."""
    try:
        return int(os.pathconf(folder, "PC_NAME_MAX"))
    except (OSError, ValueError, AttributeError):
        return 255
