"""Influence matrices of lifting surfaces, reused while surfaces keep their relative geometry.

The influence of the bound rings of surface s at the evaluation (and load)
points of surface q is one block of the system matrix. A block depends only
on where those rings and points lie relative to each other: if since it
was computed both have moved together by one rigid motion x -> R x + c
(a rotor's blades turning about the hub, or nothing moving at all), the
block's velocities are the cached ones turned by R. Only blocks whose
geometry changed otherwise (a turning blade and a fixed wing) are summed
again, through :func:`wakes.aero.vortex_lattice.influence_matrix`.

The rigid motion is found by the Kabsch least-squares fit (Kabsch 1976,
Acta Cryst. A32) and accepted when it reproduces every point to within
``RIGID_TOLERANCE`` of the block's size; the cached block is kept in its
original frame, so roundoff does not build up.

With a ground plane (:mod:`wakes.aero.ground`) every block also holds the
influence of the source rings' mirror images, cached the same way: the
image of a rotor turning about an axis normal to the ground turns rigidly
with it.
"""

from __future__ import annotations

import numpy as np

from .ground import GroundPlane
from .vortex_lattice import influence_matrix

RIGID_TOLERANCE = 1e-10  # largest misfit of a rigid motion, relative to the block's extent


def rigid_motion(before: np.ndarray, after: np.ndarray) -> np.ndarray | None:
    """Rotation R (3, 3) with after = R before + c for point sets (P, 3), or None if none fits.

    Parameters
    ----------
    before, after : ndarray, shape (P, 3)
        The same material points at two instants [m].

    Returns
    -------
    ndarray, shape (3, 3), or None
        The proper rotation (det +1) of the best rigid fit, when it maps
        every point to within ``RIGID_TOLERANCE`` times the set's extent.
    """
    c0, c1 = before.mean(axis=0), after.mean(axis=0)
    p0, p1 = before - c0, after - c1
    u, _, vt = np.linalg.svd(p0.T @ p1)
    d = np.sign(np.linalg.det(vt.T @ u.T)) or 1.0
    rot = vt.T @ np.diag([1.0, 1.0, d]) @ u.T
    extent = max(float(np.max(np.abs(p0))), 1e-300)
    misfit = float(np.max(np.abs(p0 @ rot.T - p1)))
    return rot if misfit <= RIGID_TOLERANCE * extent else None


class RigidInfluenceCache:
    """Influence matrices of all surfaces, block by block, reused under rigid motion.

    Call :meth:`get` every step; it returns the same array objects as the
    step before when nothing moved (so factorizations keyed on them stay
    valid).

    Parameters
    ----------
    ground : GroundPlane or None
        A ground whose images of the rings add to every block, or none.
    """

    def __init__(self, ground: GroundPlane | None = None):
        self._blocks = {}
        self._last = None
        self.ground = ground

    def get(self, surfaces, eval_points: np.ndarray, load_points: np.ndarray):
        """Influence of every ring at the evaluation and load points.

        Parameters
        ----------
        surfaces : list of LiftingSurface
            In the order of the unknowns.
        eval_points : ndarray, shape (M, 3)
            Every surface's evaluation points, stacked in surface order.
        load_points : ndarray, shape (L, 3)
            Bound-segment load points of the vortex-lattice surfaces, stacked
            in surface order (may be empty).

        Returns
        -------
        aic : ndarray, shape (M, 3, N)
        aic_load : ndarray, shape (L, 3, N), or None when L = 0
        """
        targets, k_eval, k_load = [], 0, 0
        for q in surfaces:
            n = q.n_unknowns
            pts = [eval_points[k_eval:k_eval + n]]
            k_eval += n
            if not q.lifting_line:
                pts.append(load_points[k_load:k_load + n])
                k_load += n
            targets.append(np.vstack(pts))
        columns, changed = [], False
        for s in surfaces:
            rows = []
            for q, tgt in zip(surfaces, targets):
                block, moved = self._block(s, q, tgt)
                if self.ground is not None:
                    image, image_moved = self._block(_MirroredRings(s, self.ground), q, tgt)
                    block, moved = block + image, moved or image_moved
                rows.append(block)
                changed |= moved
            columns.append(rows)
        if not changed and self._last is not None:
            return self._last
        n_unk = [s.n_unknowns for s in surfaces]
        eval_rows, load_rows = [], []
        for qi, q in enumerate(surfaces):
            full = np.concatenate([columns[si][qi] for si in range(len(surfaces))], axis=2)
            eval_rows.append(full[:n_unk[qi]])
            if not q.lifting_line:
                load_rows.append(full[n_unk[qi]:])
        aic = np.ascontiguousarray(np.concatenate(eval_rows, axis=0))
        aic_load = np.ascontiguousarray(np.concatenate(load_rows, axis=0)) if load_rows else None
        self._last = (aic, aic_load)
        return self._last

    def rotated_blocks(self) -> dict:
        """The blocks last obtained by rotating an earlier one, for a checkpoint.

        Returns
        -------
        dict
            ``{(source name, target name): (ref_points, ref_block,
            last_points, last_block)}``; the arrays are the cache's own (not
            copies). Blocks computed directly are left out: recomputing them
            gives the same bits.
        """
        return {key: entry for key, entry in self._blocks.items() if entry[0] is not entry[2]}

    def restore_blocks(self, blocks: dict) -> None:
        """Put blocks from :meth:`rotated_blocks` (e.g. read from a checkpoint) back."""
        self._blocks.update(blocks)

    def _block(self, source, target_surface, targets: np.ndarray):
        """Block of ``source``'s rings at ``targets``; True if it differs from last step's."""
        key = (source.name, target_surface.name)
        points = np.vstack([source.corners.reshape(-1, 3), targets])
        cached = self._blocks.get(key)
        if cached is not None and cached[0].shape == points.shape:
            ref_points, ref_block, last_points, last_block = cached
            if np.array_equal(points, last_points):
                return last_block, False
            rot = rigid_motion(ref_points, points)
            if rot is not None:
                block = np.einsum("ab,ibk->iak", rot, ref_block)
                self._blocks[key] = (ref_points, ref_block, points, block)
                return block, True
        block = influence_matrix([source], targets)
        if isinstance(source, _MirroredRings):
            block = -block
        self._blocks[key] = (points, block, points, block)
        return block, True


class _MirroredRings:
    """The mirror images of a surface's rings, for :func:`influence_matrix`; the image of a
    ring has the opposite circulation about its mirrored corners, which the caller applies."""

    def __init__(self, surface, ground: GroundPlane):
        self.name = f"{surface.name} (ground image)"
        self.n_chord, self.n_span = surface.n_chord, surface.n_span
        self.corners = ground.reflect_points(surface.corners)
