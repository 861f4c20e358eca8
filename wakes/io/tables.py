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
from .atomic import write_text

FLOAT_FORMAT = "%.10g"


MAX_TABLE_BYTES = 16 * 2 ** 20   # largest input table read [B]; a polar or points file is far smaller
MAX_TABLE_ROWS = 100_000


def read_numeric_table(path, required: tuple[str, ...], *, what: str = "table",
                       with_lines: bool = False) -> dict[str, np.ndarray]:
    """Read a numeric CSV table with a header row.

    The file is read defensively: at most ``MAX_TABLE_BYTES`` bytes and
    ``MAX_TABLE_ROWS`` rows, UTF-8 text, every data line with as many
    comma-separated fields as the header and a finite number in every
    required column; a problem names the line of the file.

    Parameters
    ----------
    path : str or Path
        CSV file; text from ``#`` to the end of a line is a comment.
    required : tuple of str
        Column names that must be present (others are ignored).
    what : str
        What the table is, for messages (e.g. ``"polar table"``).
    with_lines : bool
        Also return ``"line"``: the file line number of every row.

    Returns
    -------
    dict of str to ndarray
        One float64 array per required column, all of the same length.

    Raises
    ------
    wakes.errors.CaseError
        If the file is missing, too large or unreadable, a required column is
        missing, the table is empty or a line is malformed or holds a value
        that is not a finite number.
    """
    p = Path(path)
    if not p.is_file():
        raise CaseError(f"{what} file '{p}' not found")
    size = p.stat().st_size
    if size > MAX_TABLE_BYTES:
        raise CaseError(f"{what} '{p}': {size:,} bytes is too large; at most "
                        f"{MAX_TABLE_BYTES:,} bytes are read")
    try:
        text = p.read_bytes().decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise CaseError(f"{what} '{p}': not UTF-8 text ({exc.reason} at byte {exc.start})") from None
    except OSError as exc:
        raise CaseError(f"{what} '{p}': cannot read it ({exc.strerror})") from None
    header, rows, lines = None, [], []
    for number, raw in enumerate(text.splitlines(), start=1):
        line = raw.split("#", 1)[0].strip()
        if not line:
            continue
        fields_ = [f.strip() for f in line.split(",")]
        if header is None:
            header = fields_
            continue
        if len(fields_) != len(header):
            raise CaseError(f"{what} '{p}', line {number}: {len(fields_)} fields where the header "
                            f"has {len(header)} ({raw.strip()[:60]!r})")
        rows.append(fields_)
        lines.append(number)
        if len(rows) > MAX_TABLE_ROWS:
            raise CaseError(f"{what} '{p}': more than {MAX_TABLE_ROWS:,} data rows")
    header = header or []
    missing = [c for c in required if c not in header]
    if missing:
        raise CaseError(f"{what} '{p}': missing column(s) {', '.join(missing)}; "
                        f"the header must name {', '.join(required)} "
                        f"(found {', '.join(header) or 'none'})")
    if not rows:
        raise CaseError(f"{what} '{p}': no data rows")
    out = {}
    for c in required:
        j = header.index(c)
        col = np.empty(len(rows))
        for i, r in enumerate(rows):
            try:
                col[i] = float(r[j])
            except ValueError:
                col[i] = np.nan
            if not np.isfinite(col[i]):
                raise CaseError(f"{what} '{p}', line {lines[i]}: column {c} must hold finite "
                                f"numbers; data row {i + 1} has {r[j][:40]!r}")
        out[c] = col
    if with_lines:
        out["line"] = np.asarray(lines, dtype=np.int64)
    return out


def write_table(frame: pd.DataFrame, path) -> None:
    """Write a results DataFrame as CSV (no index, ``FLOAT_FORMAT`` floats), atomically."""
    write_text(path, frame.to_csv(index=False, float_format=FLOAT_FORMAT))


def write_json(data: dict, path) -> None:
    """Write a strict JSON document (two-space indent).

    Infinite floats are written as the strings ``"inf"``/``"-inf"`` and NaN
    as ``null``, so any JSON reader accepts the file. Written atomically.
    """
    write_text(path, json.dumps(_jsonable(data), indent=2, allow_nan=False) + "\n")


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
