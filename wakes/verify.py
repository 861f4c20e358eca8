"""The classical checks a user runs to convince themselves the numbers are right.

Each check computes a quantity with the library's own machinery and compares
it with a closed form or a published value, naming the source. The table is
what ``wakes verify`` prints; :func:`run_checks` returns it for notebooks.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd

from . import exact
from .induction.api import induce
from .induction.elements import Filaments, Particles


@dataclass(frozen=True)
class CheckResult:
    """One row of the verification table."""

    quantity: str
    computed: float
    reference: float
    source: str
    tolerance: float

    @property
    def error(self) -> float:
        """Relative error |computed - reference| / |reference|."""
        return abs(self.computed - self.reference) / abs(self.reference)

    @property
    def passed(self) -> bool:
        return self.error <= self.tolerance


def _ring_polyline(n: int, radius: float = 1.0) -> np.ndarray:
    t = np.linspace(0.0, 2.0 * np.pi, n, endpoint=False)
    return np.column_stack([radius * np.cos(t), radius * np.sin(t), np.zeros(n)])


def check_ring_field() -> list[CheckResult]:
    """A 1024-segment polyline ring against Lamb's elliptic-integral field."""
    ring = Filaments.from_polyline(_ring_polyline(1024), 1.0, 1e-3, closed=True, core="singular")
    point = np.array([[0.5, 0.0, 0.5]])
    u = induce(ring, point)[0]
    ref = exact.ring_velocity(point, 1.0, 1.0)[0]
    src = "Lamb 1932, Hydrodynamics §161 (elliptic integrals)"
    return [CheckResult("ring field u_r at (0.5, 0.5), R = Γ = 1 [m/s]", u[0], ref[0], src, 1e-5),
            CheckResult("ring field u_z at (0.5, 0.5), R = Γ = 1 [m/s]", u[2], ref[2], src, 1e-5)]


def check_segment_law() -> list[CheckResult]:
    """One straight segment against its worked value."""
    seg = Filaments.from_polyline([[0.0, 0.0, 0.0], [1.0, 0.0, 0.0]], 1.0, 1e-3, core="singular")
    u = induce(seg, [[0.5, 1.0, 0.0]])[0]
    return [CheckResult("segment (0,0,0)→(1,0,0), Γ = 1: u_z at (0.5, 1, 0) [m/s]", u[2],
                        0.07117625, "Katz & Plotkin 2001, Low-Speed Aerodynamics (derived value)",
                        1e-7)]


def check_particle_ring_speed() -> list[CheckResult]:
    """Self-induced speed of one circle of Gaussian particles, R/σ = 10."""
    radius, gamma, sigma = 1.0, 1.0, 0.1
    n = int(math.ceil(2 * math.pi * radius / (0.25 * sigma)))   # spacing σ/4
    pts = _ring_polyline(n, radius)
    tangent = np.column_stack([-pts[:, 1], pts[:, 0], np.zeros(n)]) / radius
    alpha = gamma * 2 * math.pi * radius / n * tangent
    ring = Particles(pts, alpha, sigma, kernel="gaussian")
    speed = induce(ring, pts)[:, 2].mean()
    ref = exact.ring_speed_particles(radius, gamma, sigma, "gaussian")
    return [CheckResult("ring of Gaussian particles, R/σ = 10: speed [m/s]", speed, ref,
                        "thin-ring formula with the kernel's constant -1.0579658 "
                        "(derived from Saffman 1970)", 0.01)]


def check_lamb_oseen() -> list[CheckResult]:
    """A long Lamb–Oseen-cored filament against the Lamb–Oseen vortex."""
    gamma, nu, t = 2.0, 1.5e-5, 40.0
    r_peak, v_peak = exact.lamb_oseen_peak(gamma, nu, t)
    # the core model's r_c is the peak radius: r_c^2 = 1.25643 * 4 nu t
    line = Filaments.from_polyline([[0, 0, -1e3], [0, 0, 1e3]], gamma, r_peak, core="lamb-oseen")
    r = np.array([0.5 * r_peak, r_peak, 3.0 * r_peak])
    u = induce(line, np.column_stack([r, 0 * r, 0 * r]))[:, 1]
    ref = exact.lamb_oseen_velocity(r, gamma, nu, t)
    src = "Lamb-Oseen vortex; peak constant from Devenport et al. 1996, J. Fluid Mech. 312"
    return [CheckResult(f"Lamb-Oseen swirl at r = {k}·r_peak [m/s]", ui, ri, src, 1e-4)
            for k, ui, ri in zip((0.5, 1.0, 3.0), u, ref)] + [
        CheckResult("Lamb-Oseen peak swirl [m/s]", u[1], v_peak, src, 1e-4)]


CHECKS: dict[str, Callable[[], list[CheckResult]]] = {
    "ring-field": check_ring_field,
    "segment": check_segment_law,
    "ring-speed": check_particle_ring_speed,
    "lamb-oseen": check_lamb_oseen,
}


def run_checks(names=None) -> pd.DataFrame:
    """Run the classical checks and return their table.

    Parameters
    ----------
    names : iterable of str, optional
        Subset of :data:`CHECKS` to run; all by default.

    Returns
    -------
    pandas.DataFrame
        Columns ``quantity, computed, reference, source, error, passed``;
        ``error`` is relative.

    Examples
    --------
    >>> from wakes.verify import run_checks
    >>> bool(run_checks(["segment"])["passed"].all())
    True
    """
    rows = []
    for name in (CHECKS if names is None else names):
        for r in CHECKS[name]():
            rows.append(dict(quantity=r.quantity, computed=r.computed, reference=r.reference,
                             source=r.source, error=r.error, passed=r.passed))
    return pd.DataFrame(rows)
