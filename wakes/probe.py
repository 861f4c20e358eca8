"""Velocity from the saved wake of a finished run, at points or on a grid plane.

The final wake of a run folder (``wake_segments.csv``, ``wake_particles.csv``,
with the core model and particle kernel of its resolved case) is summed
with :func:`wakes.induce` at the points asked for. The tables give the
velocity the wake induces and the total with the freestream; the bound
vortices of the wings or blades are not part of the saved wake, so near a
surface the induced velocity lacks the surface's own contribution.

Output columns: ``x_m, y_m, z_m`` (point), ``u_ind_m_s, v_ind_m_s,
w_ind_m_s`` (wake-induced velocity), ``u_m_s, v_m_s, w_m_s`` (freestream
plus induced; a case's gust is not included) and ``speed_m_s``; planes add the in-plane indices ``i, j``.

Memory is bounded: the points are summed in chunks of
:data:`CHUNK_POINTS`, so the summation's own buffers do not grow with the
grid, and a request whose tables would need more than
:data:`MAX_PROBE_BYTES` (1 GiB, estimated at :data:`BYTES_PER_POINT` a
point) is refused with an :class:`wakes.errors.InputError` naming its size
and the limit, before anything is computed.
"""

from __future__ import annotations

import os
import re
from pathlib import Path

import numpy as np
import pandas as pd

from .case import FreestreamSpec
from .errors import InputError
from .induction.api import induce
from .io.runfolder import RunFolder, read_run
from .io.tables import read_numeric_table, write_table
from .io.vtk_grid import write_structured_grid

AXES = "xyz"
DEFAULT_GRID = (41, 41)
DEFAULT_MARGIN = 0.1     # default plane: the wake's extent plus 10 % on each side
CHUNK_POINTS = 65_536       # points summed at once
# A point's share of memory: the table's 13 float columns (104 B), its grid coordinates (24 B)
# and the VTK arrays (56 B), 184 B, rounded up for pandas' and the writers' copies (our estimate).
BYTES_PER_POINT = 256
MAX_PROBE_BYTES = 2 ** 30   # 1 GiB: about 4.2 million points
_PLANE = re.compile(r"^\s*([xyzXYZ])\s*=\s*([-+0-9.eE]+)\s*$")


def _freestream(case: dict) -> np.ndarray:
    fs = dict(case.get("freestream", {}))
    fs.pop("gust", None)      # the totals are the freestream's and the wake's, without a gust
    if fs.get("velocity") is not None:
        fs["velocity"] = tuple(fs["velocity"])
    return FreestreamSpec(**fs).vector()


def check_probe_size(points: int, what: str) -> None:
    """Refuse a probe of ``points`` points whose tables would exceed :data:`MAX_PROBE_BYTES`.

    Examples
    --------
    >>> check_probe_size(41 * 41, "grid 41x41")
    >>> try:
    ...     check_probe_size(5000 * 5000, "grid 5000x5000")
    ... except InputError as exc:
    ...     print(str(exc)[:70])
    grid 5000x5000 (25,000,000 points) needs about 6104 MB, above the prob
    """
    need = points * BYTES_PER_POINT
    if need > MAX_PROBE_BYTES:
        raise InputError(f"{what} ({points:,} points) needs about {need / 2 ** 20:.0f} MB, above the probe's "
                         f"limit of {MAX_PROBE_BYTES / 2 ** 20:.0f} MB ({MAX_PROBE_BYTES // BYTES_PER_POINT:,} "
                         f"points at about {BYTES_PER_POINT} B each); probe a smaller grid or split the region")


def _induce_in_chunks(sources, pts: np.ndarray) -> np.ndarray:
    out = np.empty_like(pts)
    for start in range(0, pts.shape[0], CHUNK_POINTS):
        out[start:start + CHUNK_POINTS] = induce(sources, pts[start:start + CHUNK_POINTS])
    return out


def velocity_at(run, points) -> pd.DataFrame:
    """Wake-induced and total velocity at points.

    Parameters
    ----------
    run : RunFolder or path-like
        A run folder (:func:`wakes.io.runfolder.read_run`).
    points : array_like, shape (M, 3)
        Points in the global frame [m].

    Returns
    -------
    pandas.DataFrame
        The columns of the module notes, one row per point.

    Raises
    ------
    wakes.errors.InputError
        If the run saved no wake, ``points`` is not (M, 3) finite numbers,
        or M points exceed the memory limit (:func:`check_probe_size`).

    Examples
    --------
    >>> table = velocity_at("glider-run", [[2.0, 0.0, 0.0]])
    >>> bool(table["w_ind_m_s"].iloc[0] < 0.0)   # downwash behind the lifting wing
    True
    """

    if not isinstance(run, RunFolder):
        run = read_run(run)
    pts = np.asarray(points, dtype=np.float64)
    if pts.ndim != 2 or pts.shape[1] != 3 or pts.shape[0] == 0:
        raise InputError(f"points must have shape (M, 3) with M >= 1; got shape {pts.shape}")
    check_probe_size(pts.shape[0], "the points")
    if not np.isfinite(pts).all():
        bad = int(np.argwhere(~np.isfinite(pts))[0, 0])
        raise InputError(f"points must be finite; points[{bad}] = {pts[bad].tolist()}")
    sources = run.wake_sources()
    if not sources:
        raise InputError(f"run folder {run.path} holds no wake (wake_segments.csv, wake_particles.csv); "
                         "run the case with [output] wake = true")
    u = _induce_in_chunks(sources, pts)
    total = u + _freestream(run.case)
    return pd.DataFrame({"x_m": pts[:, 0], "y_m": pts[:, 1], "z_m": pts[:, 2],
                         "u_ind_m_s": u[:, 0], "v_ind_m_s": u[:, 1], "w_ind_m_s": u[:, 2],
                         "u_m_s": total[:, 0], "v_m_s": total[:, 1], "w_m_s": total[:, 2],
                         "speed_m_s": np.linalg.norm(total, axis=1)})


def _check_out(path: Path, overwrite: bool) -> Path:
    if path.exists() and not overwrite:
        raise InputError(f"{path} exists; pass --overwrite to replace it or --out to write elsewhere")
    if not path.parent.is_dir():
        raise InputError(f"--out {path}: folder {path.parent} does not exist")
    return path


def probe_points(run_dir: str | os.PathLike, points_file: str | os.PathLike, *,
                 out: str | os.PathLike | None = None, overwrite: bool = False) -> pd.DataFrame:
    """Velocity at the points of a CSV file, written as CSV.

    Parameters
    ----------
    run_dir : path-like
        A run folder written by ``wakes run``.
    points_file : path-like
        CSV with columns ``x_m, y_m, z_m`` (others are ignored; ``#`` starts a comment).
    out : path-like, optional
        CSV to write (default: ``run_dir/probe_points.csv``).
    overwrite : bool
        Replace an existing output file.

    Returns
    -------
    pandas.DataFrame
        The table written (columns in the module notes).

    Examples
    --------
    >>> import pandas as pd
    >>> points = pd.DataFrame({"x_m": [2.0, 2.0], "y_m": [0.0, 1.0], "z_m": [0.0, 0.0]})
    >>> points.to_csv("points.csv", index=False)
    >>> table = probe_points("glider-run", "points.csv", overwrite=True)
    >>> len(table)
    2
    """
    run = read_run(run_dir)
    cols = read_numeric_table(points_file, ("x_m", "y_m", "z_m"), what="points file")
    target = _check_out(Path(out) if out is not None else run.path / "probe_points.csv", overwrite)
    table = velocity_at(run, np.stack([cols["x_m"], cols["y_m"], cols["z_m"]], axis=1))
    write_table(table, target)
    return table


def parse_plane(text: str) -> tuple[int, float]:
    """``"x=2.5"`` -> (0, 2.5): the normal axis index and its coordinate [m].

    Examples
    --------
    >>> parse_plane("y = -1")
    (1, -1.0)
    """
    m = _PLANE.match(str(text))
    if not m:
        raise InputError(f"--plane {text!r}: accepted is AXIS=VALUE with AXIS one of x, y, z "
                         "and VALUE in m, e.g. x=2.5")
    try:
        value = float(m.group(2))
    except ValueError:
        raise InputError(f"--plane {text!r}: {m.group(2)!r} is not a number") from None
    return AXES.index(m.group(1).lower()), value


def parse_extent(text: str) -> tuple[tuple[float, float], tuple[float, float]]:
    """``"-2:2,-1:1"`` -> ((-2, 2), (-1, 1)): the plane's ranges along its two in-plane axes [m].

    Examples
    --------
    >>> parse_extent("-2:2,0:1.5")
    ((-2.0, 2.0), (0.0, 1.5))
    """
    try:
        parts = [tuple(float(v) for v in p.split(":")) for p in str(text).split(",")]
    except ValueError:
        parts = []
    if len(parts) != 2 or any(len(p) != 2 for p in parts):
        raise InputError(f"--extent {text!r}: accepted is A0:A1,B0:B1 in m, e.g. -2:2,-1:1")
    return parts[0], parts[1]


def probe_plane(run_dir: str | os.PathLike, plane: str, *, extent=None, grid=DEFAULT_GRID,
                out: str | os.PathLike | None = None, overwrite: bool = False) -> pd.DataFrame:
    """Velocity on a rectangular grid in a plane normal to x, y or z; CSV and VTK (``.vts``).

    Parameters
    ----------
    run_dir : path-like
        A run folder written by ``wakes run``.
    plane : str
        ``"x=2.5"``: the plane normal to global x at x = 2.5 m (or y=, z=).
    extent : ((a0, a1), (b0, b1)) or str, optional
        Ranges along the two in-plane axes in x, y, z order (for ``x=``:
        y then z) [m]; default: the wake's extent plus 10 %. A string is
        read by :func:`parse_extent`.
    grid : (int, int)
        Points along the two in-plane axes, each at least 2.
    out : path-like, optional
        CSV to write (default: ``run_dir/probe_plane_x2.5.csv``); the
        ``.vts`` file goes beside it.
    overwrite : bool
        Replace existing output files.

    Returns
    -------
    pandas.DataFrame
        One row per grid point, with its indices ``i``, ``j``.

    Raises
    ------
    wakes.errors.InputError
        For a malformed plane, a grid of fewer than 2 x 2 points or beyond
        the memory limit (:func:`check_probe_size`), or a plane of zero size.

    Examples
    --------
    >>> table = probe_plane("glider-run", "x=3", extent="-2:2,-1:1", grid=(21, 11), overwrite=True)
    >>> len(table)
    231
    """

    normal, value = parse_plane(plane)
    na, nb = (int(g) for g in grid)
    if na < 2 or nb < 2:
        raise InputError(f"--grid {na}x{nb}: at least 2 points along each in-plane axis are needed")
    check_probe_size(na * nb, f"grid {na}x{nb}")
    inplane = [k for k in range(3) if k != normal]
    run = read_run(run_dir)
    if isinstance(extent, str):
        extent = parse_extent(extent)
    if extent is None:
        sources = run.wake_sources()
        if not sources:
            raise InputError(f"run folder {run.path} holds no wake; give --extent")
        pts = np.vstack([s.nodes if hasattr(s, "nodes") else s.positions for s in sources])
        lo, hi = pts.min(axis=0), pts.max(axis=0)
        pad = DEFAULT_MARGIN * (hi - lo)
        extent = tuple((float(lo[k] - pad[k]), float(hi[k] + pad[k])) for k in inplane)
    names = [AXES[k] for k in inplane]
    for name, (a0, a1) in zip(names, extent):
        if not (np.isfinite(a0) and np.isfinite(a1)) or a1 == a0:
            raise InputError(f"plane {plane}: the {name} range {a0:g}:{a1:g} has zero size; "
                             "give two different finite values, e.g. --extent -2:2,-1:1")
    stem = f"probe_plane_{AXES[normal]}{value:g}"
    csv = _check_out(Path(out) if out is not None else run.path / f"{stem}.csv", overwrite)
    vts = _check_out(csv.with_suffix(".vts"), overwrite)
    a = np.linspace(*extent[0], na)
    b = np.linspace(*extent[1], nb)
    grid_pts = np.empty((na, nb, 3))
    grid_pts[..., normal] = value
    grid_pts[..., inplane[0]] = a[:, None]
    grid_pts[..., inplane[1]] = b[None, :]
    table = velocity_at(run, grid_pts.reshape(-1, 3))
    ii, jj = np.meshgrid(np.arange(na), np.arange(nb), indexing="ij")
    table.insert(0, "j", jj.ravel())
    table.insert(0, "i", ii.ravel())
    write_table(table, csv)
    ind = table[["u_ind_m_s", "v_ind_m_s", "w_ind_m_s"]].to_numpy().reshape(na, nb, 3)
    tot = table[["u_m_s", "v_m_s", "w_m_s"]].to_numpy().reshape(na, nb, 3)
    write_structured_grid(vts, grid_pts, {"induced_velocity": ind, "velocity": tot,
                                          "speed": np.linalg.norm(tot, axis=2)})
    return table


__all__ = ["velocity_at", "probe_points", "probe_plane", "parse_plane", "parse_extent", "check_probe_size"]
