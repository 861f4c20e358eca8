"""A flat ground by the method of images: every vortex element mirrored in the plane.

The ground is the plane through the point p with the unit normal n pointing
into the air; M = I - 2 n n^T reflects a vector in it and
x -> x' = x - 2 ((x - p) . n) n a point. A vorticity field omega(x) together
with its image

    omega'(x) = -M omega(x')    (the mirror image of a pseudo-vector)

induces velocities u(x) + M u(x'), whose component along n vanishes on the
plane (the two are equal and opposite there): the plane is a stream surface,
an inviscid wall (Milne-Thomson 1968, *Theoretical Hydrodynamics*, 5th ed.,
image of a vortex in a plane). Componentwise, the image vorticity keeps the
component normal to the plane and reverses the components along it: a
vortex line parallel to the ground has an image of opposite sense, a vortex
line ending on the ground continues through it.

For a filament segment from node a to node b with circulation Gamma the
image runs from a' to b' with circulation -Gamma; a particle of strength
alpha at x has the image -M alpha at x'. A bound vortex ring of a lifting
surface mirrors the same way, so its image influence per unit circulation
is minus that of the ring with mirrored corners.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..induction.elements import Filaments, Particles


@dataclass(frozen=True)
class GroundPlane:
    """A flat ground.

    Parameters
    ----------
    point : ndarray, shape (3,)
        Any point of the plane [m], global frame.
    normal : ndarray, shape (3,)
        Normal from the ground into the air; normalized here.
    """

    point: np.ndarray
    normal: np.ndarray

    def __post_init__(self):
        n = np.asarray(self.normal, dtype=np.float64)
        object.__setattr__(self, "normal", n / np.linalg.norm(n))
        object.__setattr__(self, "point", np.asarray(self.point, dtype=np.float64))

    def height(self, points: np.ndarray) -> np.ndarray:
        """Signed distance above the plane [m] of points (..., 3)."""
        return (np.asarray(points, dtype=np.float64) - self.point) @ self.normal

    def reflect_points(self, points: np.ndarray) -> np.ndarray:
        """Mirror images (..., 3) of points (..., 3) [m]."""
        p = np.asarray(points, dtype=np.float64)
        return p - 2.0 * np.multiply.outer(self.height(p), self.normal)

    def reflect_vectors(self, vectors: np.ndarray) -> np.ndarray:
        """M v: vectors (..., 3) with their component along the normal reversed."""
        v = np.asarray(vectors, dtype=np.float64)
        return v - 2.0 * np.multiply.outer(v @ self.normal, self.normal)

    def image(self, element):
        """The image of one :class:`Filaments` or :class:`Particles` (module notes)."""
        if isinstance(element, Filaments):
            return element.replace(nodes=self.reflect_points(element.nodes),
                                   circulation=-element.circulation)
        if isinstance(element, Particles):
            return element.replace(positions=self.reflect_points(element.positions),
                                   strengths=-self.reflect_vectors(element.strengths))
        raise TypeError(f"no image for {type(element).__name__}")

    def with_images(self, elements: list) -> list:
        """``elements`` followed by the image of each non-empty one."""
        return list(elements) + [self.image(e) for e in elements if len(e)]


def with_ground(elements: list, ground: GroundPlane | None) -> list:
    """``elements`` and, if there is a ground, their images (:meth:`GroundPlane.with_images`)."""
    return elements if ground is None else ground.with_images(elements)
