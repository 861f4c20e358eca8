"""Wake snapshots as VTK XML PolyData (``.vtp``) and ParaView collections (``.pvd``).

Particles are written as points (one vertex cell each) with point arrays
``strength`` (3 components, m^3/s), ``strength_magnitude`` and ``radius`` (m);
filaments as two-point lines over their nodes with cell arrays
``circulation`` (m^2/s) and ``core_radius`` (m); lifting surfaces (wings,
blades) as quadrilateral panels over their ring corners with cell arrays
``surface`` (index of the surface in the list written), ``normal`` and
``area`` (m^2). Arrays are stored inline,
base64-encoded little-endian binary with a UInt64 byte-count header, as the
VTK XML format specifies; ParaView and the ``vtk`` package read them.
"""

from __future__ import annotations

import base64
import os
from pathlib import Path
from xml.sax.saxutils import quoteattr

import numpy as np

from ..induction.elements import Filaments, Particles
from . import atomic

_VTK_TYPES = {np.dtype(np.float64): "Float64", np.dtype(np.int64): "Int64"}


def _data_array(name: str | None, values: np.ndarray, components: int = 1) -> str:
    arr = np.ascontiguousarray(values)
    arr = arr.astype(arr.dtype.newbyteorder("<"), copy=False)
    raw = arr.tobytes()
    payload = base64.b64encode(np.uint64(len(raw)).astype("<u8").tobytes() + raw).decode("ascii")
    name_attr = f" Name={quoteattr(name)}" if name else ""
    return (f'<DataArray type="{_VTK_TYPES[arr.dtype]}"{name_attr} '
            f'NumberOfComponents="{components}" format="binary">{payload}</DataArray>')


def _polydata(points: np.ndarray, cell_kind: str, connectivity: np.ndarray,
              offsets: np.ndarray, point_arrays: dict, cell_arrays: dict) -> str:
    n_cells = offsets.shape[0]
    counts = {"Verts": 0, "Lines": 0, "Polys": 0}
    counts[cell_kind] = n_cells

    def arrays(table):
        return "".join(_data_array(k, v, 1 if v.ndim == 1 else v.shape[1]) for k, v in table.items())

    return ('<?xml version="1.0"?>\n'
            '<VTKFile type="PolyData" version="1.0" byte_order="LittleEndian" '
            'header_type="UInt64">\n<PolyData>\n'
            f'<Piece NumberOfPoints="{points.shape[0]}" NumberOfVerts="{counts["Verts"]}" '
            f'NumberOfLines="{counts["Lines"]}" NumberOfStrips="0" NumberOfPolys="{counts["Polys"]}">\n'
            f"<PointData>{arrays(point_arrays)}</PointData>\n"
            f"<CellData>{arrays(cell_arrays)}</CellData>\n"
            f"<Points>{_data_array(None, points, 3)}</Points>\n"
            f"<{cell_kind}>{_data_array('connectivity', connectivity)}"
            f"{_data_array('offsets', offsets)}</{cell_kind}>\n"
            "</Piece>\n</PolyData>\n</VTKFile>\n")


def write_particles(path: str | os.PathLike, particles: Particles) -> Path:
    """Write particles to a ``.vtp`` file (atomically) and return its path.

    Parameters
    ----------
    path : path-like
        Output file, conventionally ending in ``.vtp``.
    particles : Particles
        Positions (N, 3) m, strengths (N, 3) m^3/s, radii (N,) m.
    """
    n = particles.count
    idx = np.arange(n, dtype=np.int64)
    text = _polydata(particles.positions, "Verts", idx, idx + 1,
                     {"strength": particles.strengths,
                      "strength_magnitude": np.linalg.norm(particles.strengths, axis=1),
                      "radius": particles.radii}, {})
    return atomic.write_text(path, text)


def write_filaments(path: str | os.PathLike, filaments: Filaments) -> Path:
    """Write filament segments to a ``.vtp`` file (atomically) as two-point lines.

    Parameters
    ----------
    path : path-like
        Output file, conventionally ending in ``.vtp``.
    filaments : Filaments
        Nodes (M, 3) m; segments (K, 2); circulation and core radius per
        segment, written as cell arrays.
    """
    k = filaments.segment_count
    text = _polydata(filaments.nodes, "Lines", filaments.segments.reshape(-1),
                     2 * np.arange(1, k + 1, dtype=np.int64),
                     {}, {"circulation": filaments.circulation,
                          "core_radius": filaments.core_radius})
    return atomic.write_text(path, text)


def write_surfaces(path: str | os.PathLike, surfaces) -> Path:
    """Write lifting surfaces to a ``.vtp`` file (atomically) as quadrilateral panels.

    Parameters
    ----------
    path : path-like
        Output file, conventionally ending in ``.vtp``.
    surfaces : list of wakes.aero.geometry.LiftingSurface
        Each surface's ring corners (n_chord + 1, n_span + 1, 3) [m] become
        n_chord x n_span panels, with cell arrays ``surface`` (its index in
        ``surfaces``), ``normal`` and ``area`` [m^2].
    """
    points, quads, index, normals, areas = [], [], [], [], []
    offset = 0
    for k, s in enumerate(surfaces):
        nc, ns = s.n_chord, s.n_span
        points.append(s.corners.reshape(-1, 3))
        i, j = np.meshgrid(np.arange(nc), np.arange(ns), indexing="ij")
        node = offset + i * (ns + 1) + j                   # corner (i, j) of every panel
        quads.append(np.stack([node, node + 1, node + ns + 2, node + ns + 1], axis=-1).reshape(-1, 4))
        index.append(np.full(nc * ns, k, dtype=np.int64))
        normals.append(s.normals.reshape(-1, 3))
        areas.append(s.areas.reshape(-1))
        offset += (nc + 1) * (ns + 1)
    n = sum(q.shape[0] for q in quads)
    text = _polydata(np.vstack(points) if points else np.zeros((0, 3)), "Polys",
                     np.concatenate(quads).reshape(-1).astype(np.int64) if quads else np.zeros(0, np.int64),
                     4 * np.arange(1, n + 1, dtype=np.int64), {},
                     {"surface": np.concatenate(index) if index else np.zeros(0, np.int64),
                      "normal": np.vstack(normals) if normals else np.zeros((0, 3)),
                      "area": np.concatenate(areas).astype(np.float64) if areas else np.zeros(0)})
    return atomic.write_text(path, text)


def write_collection(path: str | os.PathLike, entries) -> Path:
    """Write a ParaView ``.pvd`` collection over time (atomically).

    Parameters
    ----------
    path : path-like
        The ``.pvd`` file.
    entries : iterable of (float, path-like)
        Simulated time [s] and snapshot file; paths are written relative to
        the collection's folder so the run folder can be moved.
    """
    path = Path(path)
    lines = ['<?xml version="1.0"?>',
             '<VTKFile type="Collection" version="1.0" byte_order="LittleEndian">',
             "<Collection>"]
    for time, file in entries:
        rel = os.path.relpath(Path(file), path.parent)
        lines.append(f'<DataSet timestep="{float(time)!r}" part="0" file={quoteattr(rel)}/>')
    lines += ["</Collection>", "</VTKFile>", ""]
    return atomic.write_text(path, "\n".join(lines))
