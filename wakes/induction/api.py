"""Front end of the induction engine: velocity and velocity gradient of vortex elements.

Everything in ``wakes`` that needs an induced velocity calls :func:`induce`;
nothing else sums Biot--Savart. The engine knows nothing of clusters:
:func:`wakes.cluster.induce` (exported as ``wakes.induce``) adds a Dask
``client`` in front of it.
"""

from __future__ import annotations

import numpy as np

from .._validate import as_float_array, choice
from ..errors import InputError
from . import direct, tree, tree_params
from .elements import Filaments, Particles
from .smoothing import CORE_MODELS, PARTICLE_KERNELS

METHODS = ("direct", "tree", "auto")


def as_source_list(sources) -> list:
    if isinstance(sources, (Particles, Filaments)):
        return [sources]
    if isinstance(sources, (list, tuple)):
        for k, s in enumerate(sources):
            if not isinstance(s, (Particles, Filaments)):
                raise InputError(f"sources[{k}] must be a wakes.Particles or wakes.Filaments; "
                                 f"got {type(s).__name__}")
        return list(sources)
    raise InputError("sources must be a wakes.Particles, a wakes.Filaments or a list of them; "
                     f"got {type(sources).__name__}")


def induce(sources, targets, *, gradient: bool = False, method: str = "direct",
           tolerance: float = 1e-6):
    """Velocity (and its gradient) induced by vortex elements at target points.

    Parameters
    ----------
    sources : Particles, Filaments or list of them
        The vortex elements; a list sums their contributions.
    targets : array_like, shape (M, 3)
        Points where the velocity is wanted [m].
    gradient : bool, default False
        Also return the velocity gradient.
    method : {"direct", "tree", "auto"}
        Summation method. "direct" sums every pair. "tree" uses the
        treecode (:mod:`wakes.induction.tree`) to the requested
        ``tolerance``; a source set with fewer than
        ``tree_params.MIN_TREE_SOURCES`` (256) elements, or a tolerance
        below ``tree_params.MIN_TREE_TOLERANCE`` (1e-10), is summed
        directly instead (exactly). "auto" is "direct" below the measured
        break-even number of source-target pairs for the tolerance
        (``tree_params.auto_crossover_pairs``: 2e7 at 1e-4, 2e8 at 1e-6)
        and "tree" above.
    tolerance : float, default 1e-6
        For "tree" and "auto": the relative L2 error of the velocity aimed
        at (the gradient's is at most ten times it), 0 < tolerance < 1.
        It is met for targets among or near the sources; at targets far
        from all sources where the field is a small residual of cancelling
        contributions the error is of the same absolute size, so larger
        relative to that residual.

    Returns
    -------
    velocity : ndarray, shape (M, 3)
        Induced velocity [m/s].
    grad : ndarray, shape (M, 3, 3)
        Only when ``gradient`` is True: ``grad[i, j, k] = du_j/dx_k`` at
        target i [1/s].

    Notes
    -----
    Particles use the regularized Biot--Savart law of their kernel
    (Winckelmans & Leonard 1993); the singular kernel skips a target that
    coincides with a source. Segments use the straight-segment law times
    their core factor (Katz & Plotkin 2001; Vatistas et al. 1991); a target
    on a singular segment's line gets nothing from that segment.

    The public :func:`wakes.induce` calls this and holds the example.
    """
    src = as_source_list(sources)
    tgt = as_float_array("targets", targets, (None, 3))
    choice("method", method, METHODS)
    tol = tree_params.check_tolerance(tolerance)
    if not isinstance(gradient, (bool, np.bool_)):
        raise InputError(f"gradient must be True or False; got {gradient!r}")
    m = tgt.shape[0]
    counts = [s.count if isinstance(s, Particles) else s.segment_count for s in src]
    use_tree = tree_params.use_tree(method, counts, m, tol)
    tree_params.check_memory(m, counts, bool(gradient), use_tree, tol)
    if use_tree:
        vel, grad = tree.tree_induce(tgt, _tree_sets(src), bool(gradient), tol)
        return (vel, grad) if gradient else vel
    vel = np.zeros((m, 3))
    grad = np.zeros((m, 3, 3) if gradient else (0, 3, 3))
    if m:
        tx, ty, tz = (np.ascontiguousarray(tgt[:, k]) for k in range(3))
        for s in src:
            _add_direct(s, tx, ty, tz, bool(gradient), vel, grad)
    return (vel, grad) if gradient else vel


def _tree_sets(src) -> list:
    """The non-empty source sets as the treecode's plain-array records."""
    sets = []
    for s in src:
        if isinstance(s, Particles):
            if s.count:
                sets.append(tree.ParticleSet(s.positions, s.strengths, s.radii,
                                             PARTICLE_KERNELS[s.kernel].code))
        elif s.segment_count:
            pa, pb = s.endpoints()
            sets.append(tree.SegmentSet(pa, pb, s.circulation, s.core_radius,
                                        CORE_MODELS[s.core].code))
    return sets


def _add_direct(s, tx, ty, tz, gradient, vel, grad) -> None:
    """Add one source set's contribution by direct summation."""
    if isinstance(s, Particles):
        if s.count == 0:
            return
        p, a = s.positions, s.strengths
        direct.particles_direct(tx, ty, tz,
                                np.ascontiguousarray(p[:, 0]), np.ascontiguousarray(p[:, 1]),
                                np.ascontiguousarray(p[:, 2]), np.ascontiguousarray(a[:, 0]),
                                np.ascontiguousarray(a[:, 1]), np.ascontiguousarray(a[:, 2]),
                                s.radii * s.radii, PARTICLE_KERNELS[s.kernel].code,
                                gradient, vel, grad)
    else:
        if s.segment_count == 0:
            return
        pa, pb = s.endpoints()
        direct.segments_direct(tx, ty, tz,
                               np.ascontiguousarray(pa[:, 0]), np.ascontiguousarray(pa[:, 1]),
                               np.ascontiguousarray(pa[:, 2]), np.ascontiguousarray(pb[:, 0]),
                               np.ascontiguousarray(pb[:, 1]), np.ascontiguousarray(pb[:, 2]),
                               s.circulation, s.core_radius * s.core_radius,
                               CORE_MODELS[s.core].code, gradient, vel, grad)
