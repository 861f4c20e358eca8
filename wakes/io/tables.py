"""Reading and writing the CSV tables of ``wakes``: polar tables in, results out.

Input tables are small numeric CSV files with a header row; every problem is
reported as a :class:`wakes.errors.CaseError` that names the file, the column
and what is accepted. Output tables are pandas DataFrames written with a
fixed float format so runs can be compared with ``diff``.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd

from ..errors import CaseError

FLOAT_FORMAT = "%.10g"


def read_numeric_table(path, required: tuple[str, ...], *, what: str = "table") -> dict[str, np.ndarray]:
    """Read a numeric CSV table with a header row.

    Parameters
    ----------
    path : str or Path
        CSV file; lines starting with ``#`` are comments.
    required : tuple of str
        Column names that must be present (others are ignored).
    what : str
        What the table is, for messages (e.g. ``"polar table"``).

    Returns
    -------
    dict of str to ndarray
        One float64 array per required column, all of the same length.

    Raises
    ------
    wakes.errors.CaseError
        If the file is missing or unreadable, a required column is missing,
        the table is empty or a value is not a finite number.
    """
    p = Path(path)
    if not p.is_file():
        raise CaseError(f"{what} file '{p}' not found")
    try:
        frame = pd.read_csv(p, comment="#", skipinitialspace=True)
    except (pd.errors.ParserError, pd.errors.EmptyDataError, UnicodeDecodeError) as exc:
        first = str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
        raise CaseError(f"{what} '{p}': cannot read it as CSV ({first})") from None
    frame.columns = [str(c).strip() for c in frame.columns]
    missing = [c for c in required if c not in frame.columns]
    if missing:
        raise CaseError(f"{what} '{p}': missing column(s) {', '.join(missing)}; "
                        f"the header must name {', '.join(required)} "
                        f"(found {', '.join(frame.columns) or 'none'})")
    if len(frame) == 0:
        raise CaseError(f"{what} '{p}': no data rows")
    out = {}
    for c in required:
        col = pd.to_numeric(frame[c], errors="coerce").to_numpy(dtype=np.float64)
        bad = ~np.isfinite(col)
        if bad.any():
            row = int(np.argmax(bad))
            raise CaseError(f"{what} '{p}': column {c} must hold finite numbers; "
                            f"data row {row + 1} has {frame[c].iloc[row]!r}")
        out[c] = col
    return out


def write_table(frame: pd.DataFrame, path) -> None:
    """Write a results DataFrame as CSV (no index, ``FLOAT_FORMAT`` floats)."""
    frame.to_csv(path, index=False, float_format=FLOAT_FORMAT)


def write_json(data: dict, path) -> None:
    """Write a strict JSON document (two-space indent).

    Infinite floats are written as the strings ``"inf"``/``"-inf"`` and NaN
    as ``null``, so any JSON reader accepts the file.
    """
    with open(path, "w", encoding="utf-8") as fh:
        json.dump(_jsonable(data), fh, indent=2, allow_nan=False)
        fh.write("\n")


def _jsonable(x):
    """Convert numpy scalars, arrays and non-finite floats inside ``x`` to JSON values."""
    if isinstance(x, dict):
        return {str(k): _jsonable(v) for k, v in x.items()}
    if isinstance(x, (list, tuple)):
        return [_jsonable(v) for v in x]
    if isinstance(x, np.ndarray):
        return _jsonable(x.tolist())
    if isinstance(x, np.generic):
        x = x.item()
    if isinstance(x, float) and not np.isfinite(x):
        return None if np.isnan(x) else ("inf" if x > 0 else "-inf")
    return x
