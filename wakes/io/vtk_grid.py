"""A rectangular grid of points as a VTK XML StructuredGrid (``.vts``) for ParaView.

Used for probe planes: an (na, nb) grid of points with point arrays such
as the induced velocity. Arrays are stored as in :mod:`wakes.io.vtk`
(inline base64 binary, UInt64 header).
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np

from . import atomic
from .vtk import _data_array


def write_structured_grid(path: str | os.PathLike, points: np.ndarray, point_arrays: dict) -> Path:
    """Write an (na, nb) grid of points and its point arrays to a ``.vts`` file (atomically).

    Parameters
    ----------
    path : path-like
        Output file, conventionally ending in ``.vts``.
    points : ndarray, shape (na, nb, 3)
        Grid points [m]; index a runs fastest in the file.
    point_arrays : dict of str to ndarray
        Arrays of shape (na, nb) or (na, nb, k).

    Examples
    --------
    >>> import tempfile, numpy as np, pathlib
    >>> pts = np.zeros((2, 3, 3)); pts[..., 0] = np.arange(2)[:, None]; pts[..., 1] = np.arange(3)
    >>> write_structured_grid(pathlib.Path(tempfile.mkdtemp()) / "g.vts", pts, {}).suffix
    '.vts'
    """
    pts = np.asarray(points, dtype=np.float64)
    na, nb = pts.shape[:2]

    def flat(a):  # VTK order: first index fastest
        a = np.asarray(a, dtype=np.float64)
        return np.ascontiguousarray(a.swapaxes(0, 1).reshape(na * nb, *a.shape[2:]))

    arrays = "".join(_data_array(k, flat(v), 1 if np.ndim(v) == 2 else np.shape(v)[2])
                     for k, v in point_arrays.items())
    extent = f"0 {na - 1} 0 {nb - 1} 0 0"
    text = ('<?xml version="1.0"?>\n'
            '<VTKFile type="StructuredGrid" version="1.0" byte_order="LittleEndian" '
            'header_type="UInt64">\n'
            f'<StructuredGrid WholeExtent="{extent}">\n<Piece Extent="{extent}">\n'
            f"<PointData>{arrays}</PointData>\n<CellData></CellData>\n"
            f"<Points>{_data_array(None, flat(pts), 3)}</Points>\n"
            "</Piece>\n</StructuredGrid>\n</VTKFile>\n")
    return atomic.write_text(path, text)
