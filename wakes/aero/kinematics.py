"""Rigid rotation of a body about a fixed hub axis: angles, rotated vectors, material velocity.

A rotating body (rotor, propeller, turbine) turns about the unit axis ``a``
through the hub point ``h`` at the signed rate ``omega`` [rad/s]: positive
is a right-handed rotation about ``a`` (counter-clockwise seen from the
+axis side). A material point x of the body moves with

    u(x) = omega a x (x - h),

and the velocity a blade section meets is the freestream minus u plus what
all wakes and other blades induce there (assembled by the time loop,
:mod:`wakes.simulate`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


def rotate_about(vectors: np.ndarray, axis: np.ndarray, angle: float) -> np.ndarray:
    """Rotate ``vectors`` (..., 3) by ``angle`` [rad] right-handedly about the unit ``axis`` (3,).

    Rodrigues' formula: v cos t + (a x v) sin t + a (a . v)(1 - cos t).
    """
    v = np.asarray(vectors, dtype=np.float64)
    a = np.asarray(axis, dtype=np.float64)
    c, s = np.cos(angle), np.sin(angle)
    return v * c + np.cross(a, v) * s + np.multiply.outer(v @ a, a) * (1.0 - c)


def hub_frame(axis) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Unit vectors (a, e0, e90) of a hub frame with rotation axis ``axis``.

    ``e0`` is the azimuth-zero direction: global +x projected on the disc
    plane, or global +z where the axis lies along x (a propeller or turbine
    facing along x has its azimuth zero pointing up). ``e90 = a x e0``, so
    the azimuth increases right-handedly about ``a``.
    """
    a = np.asarray(axis, dtype=np.float64)
    a = a / np.linalg.norm(a)
    for ref in (np.array([1.0, 0.0, 0.0]), np.array([0.0, 0.0, 1.0])):
        e0 = ref - (ref @ a) * a
        if np.linalg.norm(e0) > 1e-6:
            break
    e0 /= np.linalg.norm(e0)
    return a, e0, np.cross(a, e0)


@dataclass(frozen=True)
class RigidRotation:
    """Rotation about a fixed axis at a constant rate.

    Parameters
    ----------
    hub : ndarray, shape (3,)
        A point on the axis [m], global frame.
    axis : ndarray, shape (3,)
        Unit rotation axis.
    omega : float
        Signed rotation rate about ``axis`` [rad/s] (negative: clockwise
        seen from the +axis side).

    Examples
    --------
    >>> import numpy as np
    >>> spin = RigidRotation(np.zeros(3), np.array([0.0, 0.0, 1.0]), 10.0)
    >>> spin.velocity(np.array([[1.0, 0.0, 0.0]])).round(12).tolist()
    [[0.0, 10.0, 0.0]]
    """

    hub: np.ndarray
    axis: np.ndarray
    omega: float

    def angle(self, time: float) -> float:
        """Angle turned [rad] after ``time`` [s], signed about ``axis``."""
        return self.omega * time

    def velocity(self, points: np.ndarray) -> np.ndarray:
        """Velocity [m/s] of material points (M, 3) of the rotating body."""
        return self.omega * np.cross(self.axis, np.asarray(points, dtype=np.float64) - self.hub)

    def place(self, points: np.ndarray, time: float) -> np.ndarray:
        """Where body points given at time 0 (M, 3) are at ``time`` [s]."""
        rel = np.asarray(points, dtype=np.float64) - self.hub
        return self.hub + rotate_about(rel, self.axis, self.angle(time))
