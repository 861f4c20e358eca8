"""Vortex-ring lattices: from ring circulations to filament segments, and influence matrices.

A lattice is ``R`` rows of ``n + 1`` nodes, rows ordered upstream to
downstream; ring (k, j) joins nodes (k, j), (k, j+1), (k+1, j+1), (k+1, j)
and carries circulation G[k, j], positive when its upstream side points to
+j (so a positive ring on a wing lifts). Adjacent rings share sides, so the
lattice is stored as segments with net circulation (Katz & Plotkin 2001,
*Low-Speed Aerodynamics*, 2nd ed., ch. 12):

* spanwise segment of row k, node j to j+1:  G[k, j] - G[k-1, j];
* streamwise segment of column i, row k to k+1:  G[k, i-1] - G[k, i];

with G[-1] = ``before`` and G[R-1] = ``after`` (zero for a closed lattice),
and G[k, -1] = G[k, n] = 0 at the lattice's side edges.

Velocities are computed only through :func:`wakes.induce`.
"""

from __future__ import annotations

import numpy as np

from ..induction.api import induce
from ..induction.elements import Filaments

# Segments shorter than this fraction of the lattice size are dropped: the
# straight-segment law is undefined for zero length (an elliptic wing's tip).
_MIN_SEGMENT_FRACTION = 1e-12


def lattice_segments(rows: np.ndarray, gamma: np.ndarray, *, before=None, after=None,
                     span_core=None, stream_core=None):
    """Nodes, segments, net circulations and core radii of a ring lattice.

    Parameters
    ----------
    rows : ndarray, shape (R, n + 1, 3)
        Node rows, upstream first [m].
    gamma : ndarray, shape (R - 1, n)
        Ring circulations [m^2/s].
    before, after : ndarray, shape (n,), optional
        Circulation of the (absent) rings upstream of row 0 and downstream
        of row R - 1; zero by default (closed rings).
    span_core : ndarray, shape (R,), optional
        Core radius of each row's spanwise segments [m]; ones if omitted.
    stream_core : ndarray, shape (R - 1,), optional
        Core radius of the streamwise segments between rows k and k + 1
        [m]; ones if omitted.

    Returns
    -------
    nodes : ndarray, shape (R (n + 1), 3)
    segments : ndarray of int64, shape (K, 2)
    circulation : ndarray, shape (K,)
    core : ndarray, shape (K,)
    """
    r, m, _ = rows.shape
    n = m - 1
    zero = np.zeros(n)
    before = zero if before is None else np.asarray(before, dtype=np.float64)
    after = zero if after is None else np.asarray(after, dtype=np.float64)
    span_core = np.ones(r) if span_core is None else np.asarray(span_core, dtype=np.float64)
    stream_core = np.ones(r - 1) if stream_core is None else np.asarray(stream_core, dtype=np.float64)
    g_ext = np.vstack([before[None, :], gamma.reshape(r - 1, n), after[None, :]])  # (R + 1, n)
    idx = np.arange(r * m, dtype=np.int64).reshape(r, m)
    # spanwise: row k, node j -> j + 1
    span_seg = np.stack([idx[:, :-1].ravel(), idx[:, 1:].ravel()], axis=1)
    span_circ = (g_ext[1:] - g_ext[:-1]).ravel()
    span_rc = np.repeat(span_core, n)
    # streamwise: column i, row k -> k + 1
    if r > 1:
        g_pad = np.zeros((r - 1, n + 2))
        g_pad[:, 1:-1] = gamma.reshape(r - 1, n)
        stream_seg = np.stack([idx[:-1, :].ravel(), idx[1:, :].ravel()], axis=1)
        stream_circ = (g_pad[:, :-1] - g_pad[:, 1:]).ravel()
        seg = np.vstack([span_seg, stream_seg])
        circ = np.concatenate([span_circ, stream_circ])
        core = np.concatenate([span_rc, np.repeat(stream_core, m)])
    else:
        seg, circ, core = span_seg, span_circ, span_rc
    nodes = rows.reshape(-1, 3)
    length2 = np.sum((nodes[seg[:, 1]] - nodes[seg[:, 0]]) ** 2, axis=1)
    scale2 = max(float(np.max(np.ptp(nodes, axis=0))) ** 2, 1e-300)
    keep = length2 > (_MIN_SEGMENT_FRACTION ** 2) * scale2
    return nodes, seg[keep], circ[keep], core[keep]


NEGLIGIBLE_CIRCULATION = 1e-12
"""Relative size below which a segment's net circulation is round-off.

A net segment circulation is a difference of two ring circulations; where the
two are equal in exact arithmetic the difference is a few ulps, about 1e-16 of
the larger. Segments with ``|Gamma| <= NEGLIGIBLE_CIRCULATION * scale`` (scale:
the largest ring circulation of the lattice) are dropped; all others are kept.
The threshold sits four decades above round-off and far below any circulation a
solve resolves, so the kept set is the same on every machine."""


def carries_circulation(circ, scale):
    """Mask (K,) of the segments whose net circulation ``circ`` [m^2/s] is not round-off.

    Parameters
    ----------
    circ : array_like, shape (K,)
        Net segment circulations [m^2/s].
    scale : float
        The largest ring circulation of the lattice [m^2/s].

    Examples
    --------
    >>> carries_circulation([1.0, 1e-16, -0.5, 0.0], 1.0).tolist()
    [True, False, True, False]
    """
    return np.abs(np.asarray(circ, dtype=np.float64)) > NEGLIGIBLE_CIRCULATION * float(scale)


def lattice_filaments(rows, gamma, *, core: str, core_radius, stream_core=None, before=None,
                      after=None, drop_zero: bool = True) -> Filaments:
    """A ring lattice as :class:`wakes.Filaments` (see :func:`lattice_segments`).

    ``core_radius`` is a scalar or one value per row (shape (R,)) for the
    spanwise segments; ``stream_core`` (R - 1,) for the streamwise ones
    defaults to the mean of the two rows. Segments with exactly zero net
    circulation (round-off, see :func:`carries_circulation`) are dropped when ``drop_zero``.
    """
    rows = np.asarray(rows, dtype=np.float64)
    rc = np.broadcast_to(np.asarray(core_radius, dtype=np.float64), (rows.shape[0],))
    sc = 0.5 * (rc[:-1] + rc[1:]) if stream_core is None else np.asarray(stream_core, dtype=np.float64)
    nodes, seg, circ, rcs = lattice_segments(rows, gamma, before=before, after=after,
                                             span_core=rc, stream_core=sc)
    if drop_zero:
        scale = max(float(np.max(np.abs(g), initial=0.0)) for g in (gamma, before, after) if g is not None)
        keep = carries_circulation(circ, scale)
        seg, circ, rcs = seg[keep], circ[keep], rcs[keep]
    return Filaments(nodes, seg, circ, rcs, core=core)


def surface_filaments(surface, gamma, *, core: str, core_radius: float,
                      te_core_radius: float | None = None) -> Filaments:
    """The closed vortex rings of one lifting surface with circulations ``gamma`` (n_chord, n_span).

    ``te_core_radius`` (default ``core_radius``) is the core of the
    shedding-row segments, which coincide with the wake's attached row.
    """
    rows = surface.n_chord + 1
    span_core = np.full(rows, float(core_radius))
    if te_core_radius is not None:
        span_core[-1] = te_core_radius
    return lattice_filaments(surface.corners, np.asarray(gamma, dtype=np.float64).reshape(
        surface.n_chord, surface.n_span), core=core, core_radius=span_core,
        stream_core=np.full(rows - 1, float(core_radius)))


def influence_matrix(surfaces, targets: np.ndarray, *, method: str = "direct") -> np.ndarray:
    """Velocity at ``targets`` per unit circulation of every ring of ``surfaces``.

    Parameters
    ----------
    surfaces : list of LiftingSurface
        Their rings, in order, are the columns (row-major over chord, span).
    targets : ndarray, shape (M, 3)
        Points [m].
    method : str
        Summation method passed to :func:`wakes.induce`.

    Returns
    -------
    ndarray, shape (M, 3, N)
        ``A[:, :, k]`` is the velocity [m/s per m^2/s] of ring k with unit
        circulation, its sides singular lines (Prandtl's and Weissinger's
        models); a target on a side's line gets nothing from that side.
    """
    targets = np.ascontiguousarray(targets, dtype=np.float64)
    cols = []
    for s in surfaces:
        for r in range(s.n_chord):
            for j in range(s.n_span):
                quad = s.corners[r:r + 2, j:j + 2]
                ring = lattice_filaments(quad, np.ones((1, 1)), core="singular", core_radius=1.0)
                cols.append(induce(ring, targets, method=method))
    return np.stack(cols, axis=2)
