"""Freestream gusts: a velocity field frozen in the flow and carried with it.

A gust of amplitude ŵ along a unit vector d normal to the freestream V adds
to the onset flow

    u_g(p, t) = ŵ f(ξ) d,    ξ(p, t) = x_up + |V| (t - t_a) - e_V · p,

e_V = V/|V|. ξ is the distance the gust front has travelled past the point
p: the front is the plane normal to the freestream that reaches the most
upstream point of the bodies, e_V · p = x_up, at the arrival time t_a, and
moves downstream at the freestream speed (a gust frozen in the flow,
w_g(x - Vt)). The profile f is zero ahead of the front (ξ <= 0) and

* sharp-edged: f = 1 for 0 < ξ < g (g the gust length; without one the
  gust stays on: a step, as Küssner's function assumes);
* one-minus-cosine: f = (1 - cos(2π ξ/g))/2 for 0 < ξ < g.

A velocity normal to the freestream that depends on the distance along it
only is divergence-free, and its vorticity is carried with the flow without
change, so the frozen gust is an exact solution of Euler's equations in the
uniform stream. The time loop adds it to the onset flow at the surfaces'
evaluation and load points and to the velocity that carries the wake
(:mod:`wakes.simulate`); nothing below this module knows it.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

GUST_SHAPES = ("none", "sharp-edged", "one-minus-cosine")
"""Gust profiles along the freestream ("none": no gust)."""


@dataclass(frozen=True)
class Gust:
    """A gust frozen in the freestream.

    Parameters
    ----------
    shape : {"sharp-edged", "one-minus-cosine"}
        The profile along the freestream.
    amplitude : float
        Gust velocity ŵ [m/s] (the peak of a one-minus-cosine gust), along ``direction``.
    length : float
        Gust length g along the freestream [m]; ``inf`` for a sharp-edged
        gust that stays on.
    direction : ndarray, shape (3,)
        Unit vector of the gust velocity, normal to the freestream.
    freestream : ndarray, shape (3,)
        The freestream velocity V [m/s], nonzero.
    upstream : float
        e_V · p of the point the front reaches at ``arrival`` [m].
    arrival : float
        Time t_a the front reaches that point [s].
    """

    shape: str
    amplitude: float
    length: float
    direction: np.ndarray
    freestream: np.ndarray
    upstream: float
    arrival: float

    @property
    def speed(self) -> float:
        """Freestream speed |V| [m/s]."""
        return float(np.linalg.norm(self.freestream))

    def travelled(self, points: np.ndarray, time: float) -> np.ndarray:
        """ξ: distance [m] the front has travelled past each of ``points`` (M, 3) at ``time`` [s], shape (M,).

        Examples
        --------
        >>> g = Gust("sharp-edged", 1.0, math.inf, np.array([0.0, 0, 1]), np.array([10.0, 0, 0]), -0.25, 0.0)
        >>> g.travelled(np.array([[-0.25, 0, 0], [0.75, 0, 0]]), 0.1).tolist()
        [1.0, 0.0]
        """
        heading = self.freestream / self.speed
        front = self.upstream + self.speed * (time - self.arrival)
        return front - np.asarray(points, dtype=np.float64) @ heading

    def profile(self, travelled: np.ndarray) -> np.ndarray:
        """f(ξ): the gust velocity over its amplitude at the distances ``travelled`` [m] past the front.

        Examples
        --------
        >>> g = Gust("one-minus-cosine", 1.0, 4.0, np.array([0.0, 0, 1]), np.array([10.0, 0, 0]), 0.0, 0.0)
        >>> g.profile(np.array([-1.0, 1.0, 2.0, 4.0])).round(12).tolist()
        [0.0, 0.5, 1.0, 0.0]
        """
        xi = np.asarray(travelled, dtype=np.float64)
        inside = (xi > 0.0) & (xi < self.length)
        if self.shape == "sharp-edged":
            return inside.astype(np.float64)
        return np.where(inside, 0.5 * (1.0 - np.cos(2.0 * math.pi * xi / self.length)), 0.0)

    def velocity(self, points: np.ndarray, time: float) -> np.ndarray:
        """Gust velocity [m/s] at ``points`` (M, 3) [m] at ``time`` [s], shape (M, 3)."""
        f = self.profile(self.travelled(points, time))
        return (self.amplitude * f)[:, None] * self.direction[None, :]

    def passed(self, downstream: float) -> float:
        """Time [s] the gust's end passes the plane e_V · p = ``downstream`` [m] (inf: never)."""
        return self.arrival + (downstream - self.upstream + self.length) / self.speed


def upward_normal(freestream: np.ndarray) -> np.ndarray | None:
    """The unit vector normal to ``freestream`` (3,) in its vertical plane, pointing up (+z side);
    None when the freestream is vertical.

    Examples
    --------
    >>> v = upward_normal(np.array([10.0, 0.0, 10.0]))     # 45 deg from below
    >>> (v * 2 ** 0.5).round(12).tolist()
    [-1.0, 0.0, 1.0]
    """
    e = np.asarray(freestream, dtype=np.float64)
    e = e / np.linalg.norm(e)
    up = np.array([0.0, 0.0, 1.0]) - e[2] * e
    norm = float(np.linalg.norm(up))
    return None if norm < 1e-9 else up / norm
