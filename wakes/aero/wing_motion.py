"""Prescribed harmonic pitch and plunge of a wing: rigid placement of its surface in time.

A wing in harmonic motion plunges along its body z axis (up positive) and
pitches about an axis along its span (nose up positive), in the convention
of Theodorsen (1935, NACA Report 496) with the plunge taken up instead of
down:

    z(t) = h0 sin(omega t),    theta(t) = theta0 sin(omega t + phi).

Both start from their mean position at t = 0 with their full velocity (a
sudden start of the motion); the lift becomes periodic after a few periods.
The surface's material points move with v = z' e_z + theta' e_y x (p - a(t)),
a(t) a point of the pitch axis; the circulation solve and the loads see the
flow relative to them through :attr:`LiftingSurface.motion`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .geometry import LiftingSurface


def axis_rotation(axis: np.ndarray, angle: float) -> np.ndarray:
    """Rotation matrix (3, 3) by ``angle`` [rad] about the unit vector ``axis`` (right hand).

    Examples
    --------
    >>> r = axis_rotation(np.array([0.0, 1.0, 0.0]), np.pi / 2)
    >>> (r @ [1.0, 0.0, 0.0]).round(12).tolist()     # nose-up pitch sends the trailing edge down
    [0.0, 0.0, -1.0]
    """
    k = np.asarray(axis, dtype=np.float64)
    kx = np.array([[0.0, -k[2], k[1]], [k[2], 0.0, -k[0]], [-k[1], k[0], 0.0]])
    return np.eye(3) + math.sin(angle) * kx + (1.0 - math.cos(angle)) * (kx @ kx)


@dataclass(frozen=True)
class HarmonicMotion:
    """Harmonic pitch and plunge of a rigid wing.

    Parameters
    ----------
    plunge : float
        Plunge amplitude h0 [m], along ``up``.
    pitch : float
        Pitch amplitude theta0 [rad], nose up about ``span_axis``.
    frequency : float
        Frequency f [Hz], omega = 2 pi f.
    pitch_lead : float
        Phase phi by which the pitch leads the plunge [rad].
    axis_point : ndarray, shape (3,)
        A point of the pitch axis at the mean position [m].
    span_axis, up : ndarray, shape (3,)
        Unit vectors of the wing's body y (pitch axis) and z (plunge) axes.
    """

    plunge: float
    pitch: float
    frequency: float
    pitch_lead: float
    axis_point: np.ndarray
    span_axis: np.ndarray
    up: np.ndarray

    @property
    def omega(self) -> float:
        """Circular frequency [rad/s]."""
        return 2.0 * math.pi * self.frequency

    def state(self, time: float) -> tuple[float, float, float, float]:
        """Plunge z [m], its rate [m/s], pitch theta [rad] and its rate [rad/s] at ``time`` [s].

        Examples
        --------
        >>> m = HarmonicMotion(0.1, 0.0, 1.0, 0.0, np.zeros(3), np.array([0.0, 1, 0]), np.array([0.0, 0, 1]))
        >>> [round(v, 12) for v in m.state(0.25)]      # a quarter period: top of the stroke
        [0.1, 0.0, 0.0, 0.0]
        """
        w = self.omega
        z, dz = self.plunge * math.sin(w * time), self.plunge * w * math.cos(w * time)
        phase = w * time + self.pitch_lead
        th, dth = self.pitch * math.sin(phase), self.pitch * w * math.cos(phase)
        return z, dz, th, dth

    def place(self, surface: LiftingSurface, time: float) -> LiftingSurface:
        """``surface`` (at the mean position) moved to ``time`` [s], with its material velocity."""
        z, dz, th, dth = self.state(time)
        rot = axis_rotation(self.span_axis, th)
        pivot = self.axis_point + z * self.up

        def moved(points):
            return (np.asarray(points) - self.axis_point) @ rot.T + pivot

        def turned(vectors):
            return np.asarray(vectors) @ rot.T

        lin, ang = dz * self.up, dth * self.span_axis

        def velocity(points):
            return lin + np.cross(ang, np.asarray(points, dtype=np.float64) - pivot)

        s = surface
        return LiftingSurface(name=s.name, corners=moved(s.corners), collocation=moved(s.collocation),
                              normals=turned(s.normals), areas=s.areas,
                              section_points=moved(s.section_points), section_chord=s.section_chord,
                              chord_dir=turned(s.chord_dir), section_normal=turned(s.section_normal),
                              span_vector=turned(s.span_vector), section_eta=s.section_eta,
                              section_fraction=s.section_fraction, lifting_line=s.lifting_line,
                              polars=s.polars, motion=velocity)

    def largest_speed(self, points: np.ndarray) -> float:
        """A bound on the speed of the material ``points`` (M, 3) over a period [m/s].

        The plunge speed plus the pitch speed of the point farthest from the
        axis, largest over 64 instants of a period (the sum bounds every
        point's speed; the sampling may miss its peak by 0.2 % at most, as
        cos(π/64) > 0.998).
        """
        p = np.asarray(points, dtype=np.float64) - self.axis_point
        r_perp = p - np.outer(p @ self.span_axis, self.span_axis)
        arm = float(np.max(np.linalg.norm(r_perp, axis=1), initial=0.0))
        t = np.arange(64) / (64 * self.frequency) if self.frequency > 0 else np.zeros(1)
        w = self.omega
        return float(np.max(np.abs(self.plunge * w * np.cos(w * t))
                            + arm * np.abs(self.pitch * w * np.cos(w * t + self.pitch_lead))))
