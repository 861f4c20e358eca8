"""Vortex elements: particles and filaments as validated structure-of-arrays.

Both classes check and convert their inputs once, at construction, into
float64 C-contiguous arrays; the induction kernels then trust them.
Instances are immutable in spirit: the arrays are marked read-only, and the
``with_*`` methods return new objects.
"""

from __future__ import annotations

import numpy as np

from .._validate import as_float_array, choice, per_element
from ..errors import InputError
from .smoothing import CORE_MODELS, PARTICLE_KERNELS


def _frozen(a: np.ndarray) -> np.ndarray:
    a.setflags(write=False)
    return a


class Particles:
    """Regularized vortex particles (vortex blobs).

    Parameters
    ----------
    positions : array_like, shape (N, 3)
        Particle positions x_q [m].
    strengths : array_like, shape (N, 3)
        Vector strengths alpha_q = omega_q * vol_q [m^3/s].
    radii : float or array_like, shape (N,)
        Smoothing radii sigma_q [m], positive (any positive value for the
        singular kernel, where it is carried but unused).
    kernel : {"gaussian", "winckelmans-leonard", "rosenhead-moore", "singular"}
        Smoothing kernel; see :mod:`wakes.induction.smoothing`.

    Raises
    ------
    wakes.WakesError
        On a wrong shape, a non-finite value, a non-positive radius or an
        unknown kernel name; the message names the argument and the index.

    Examples
    --------
    >>> import numpy as np, wakes
    >>> p = wakes.Particles(np.zeros((1, 3)), [[0.0, 0.0, 1e-3]], 0.01)
    >>> p.count
    1
    """

    def __init__(self, positions, strengths, radii, kernel: str = "gaussian"):
        self.kernel = choice("kernel", kernel, PARTICLE_KERNELS)
        self.positions = _frozen(as_float_array("positions", positions, (None, 3)))
        n = self.positions.shape[0]
        self.strengths = _frozen(as_float_array("strengths", strengths, (n, 3)))
        self.radii = _frozen(per_element("radii", radii, n, positive=True))

    @property
    def count(self) -> int:
        """Number of particles N."""
        return self.positions.shape[0]

    def __len__(self) -> int:
        return self.count

    def __repr__(self) -> str:
        return f"Particles(N={self.count}, kernel={self.kernel!r})"

    def replace(self, *, positions=None, strengths=None, radii=None, kernel=None) -> Particles:
        """Return a copy with some fields replaced (each re-validated)."""
        return Particles(self.positions if positions is None else positions,
                         self.strengths if strengths is None else strengths,
                         self.radii if radii is None else radii,
                         self.kernel if kernel is None else kernel)


class Filaments:
    """Vortex filaments: straight segments joining shared nodes.

    Parameters
    ----------
    nodes : array_like, shape (M, 3)
        Node positions [m].
    segments : array_like of int, shape (K, 2)
        Start and end node index of each segment; circulation is positive
        in the start-to-end sense by the right-hand rule.
    circulation : float or array_like, shape (K,)
        Circulation Gamma of each segment [m^2/s].
    core_radius : float or array_like, shape (K,)
        Core radius r_c of each segment [m], positive (carried but unused
        by the singular core).
    core : {"lamb-oseen", "vatistas2", "scully", "rankine", "singular"}
        Core model; see :mod:`wakes.induction.smoothing`.

    Examples
    --------
    >>> import wakes
    >>> f = wakes.Filaments.from_polyline([[0, 0, 0], [1, 0, 0]], 1.0, 0.01)
    >>> f.segment_count
    1
    """

    def __init__(self, nodes, segments, circulation, core_radius, core: str = "lamb-oseen"):
        self.core = choice("core", core, CORE_MODELS)
        self.nodes = _frozen(as_float_array("nodes", nodes, (None, 3)))
        seg = np.asarray(segments)
        if seg.size == 0:
            seg = seg.reshape(0, 2)
        if seg.ndim != 2 or seg.shape[1] != 2:
            raise InputError(f"segments must have shape (K, 2); got {seg.shape}")
        if not (np.issubdtype(seg.dtype, np.integer)):
            if np.issubdtype(seg.dtype, np.floating) and np.all(np.isfinite(seg)) \
                    and np.all(seg == np.round(seg)):
                seg = seg.astype(np.int64)
            else:
                raise InputError(f"segments must hold integer node indices; got dtype {seg.dtype}")
        seg = np.ascontiguousarray(seg, dtype=np.int64)
        m = self.nodes.shape[0]
        bad = (seg < 0) | (seg >= m)
        if bad.any():
            k, e = (int(i) for i in np.argwhere(bad)[0])
            raise InputError(f"segments must index nodes 0..{m - 1}; "
                             f"segments[{k}, {e}] = {seg[k, e]}")
        self.segments = _frozen(seg)
        k = seg.shape[0]
        self.circulation = _frozen(per_element("circulation", circulation, k))
        self.core_radius = _frozen(per_element("core_radius", core_radius, k, positive=True))

    @classmethod
    def from_polyline(cls, points, circulation, core_radius, closed: bool = False,
                      core: str = "lamb-oseen") -> Filaments:
        """Build one filament from a polyline of points.

        Parameters
        ----------
        points : array_like, shape (P, 3)
            Vertices in order [m]; P >= 2 (P >= 3 if ``closed``).
        circulation : float or array_like, shape (K,)
            Circulation [m^2/s], K = P - 1 open or P closed.
        core_radius : float or array_like, shape (K,)
            Core radius [m].
        closed : bool
            Join the last point back to the first.
        core : str
            Core model name.
        """
        pts = as_float_array("points", points, (None, 3))
        p = pts.shape[0]
        need = 3 if closed else 2
        if p < need:
            raise InputError(f"points must hold at least {need} vertices for a "
                             f"{'closed' if closed else 'open'} polyline; got {p}")
        idx = np.arange(p, dtype=np.int64)
        ends = np.roll(idx, -1) if closed else idx[1:]
        seg = np.stack([idx[: len(ends)], ends], axis=1)
        return cls(pts, seg, circulation, core_radius, core=core)

    @property
    def segment_count(self) -> int:
        """Number of segments K."""
        return self.segments.shape[0]

    def __len__(self) -> int:
        return self.segment_count

    def __repr__(self) -> str:
        return f"Filaments(nodes={self.nodes.shape[0]}, segments={self.segment_count}, core={self.core!r})"

    def endpoints(self) -> tuple[np.ndarray, np.ndarray]:
        """Start and end points of every segment, each shape (K, 3) [m]."""
        return self.nodes[self.segments[:, 0]], self.nodes[self.segments[:, 1]]

    def replace(self, *, nodes=None, circulation=None, core_radius=None, core=None) -> Filaments:
        """Return a copy with some fields replaced (each re-validated)."""
        return Filaments(self.nodes if nodes is None else nodes, self.segments,
                         self.circulation if circulation is None else circulation,
                         self.core_radius if core_radius is None else core_radius,
                         self.core if core is None else core)
