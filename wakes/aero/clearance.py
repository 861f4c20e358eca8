"""Whether two bodies of a case overlap: the surfaces they sweep, as triangles, and their contact.

A wing occupies its planform: the surface between its leading and trailing
edges at the spanwise nodes of its lattice. A rotor occupies the cone its
blades sweep in a revolution, from the hub centre to the tip (the hub is
solid too), tilted by the precone. Two bodies overlap when these surfaces
cross or touch: a blade would strike the wing, or two lifting surfaces
would share bound vortices, which the model cannot represent.

The test is exact for the triangles (up to ``tol``): two triangles meet
when an edge of one pierces the other, or their distance (the least of the
vertex-to-triangle and edge-to-edge distances) is at most ``tol``.
Triangle pairs whose bounding boxes are apart are skipped first.
"""

from __future__ import annotations

import numpy as np

from .geometry import WingPlanform, rotation_matrix, station_etas
from .kinematics import hub_frame

DISC_AZIMUTHS = 48      # sides of the polygon that stands for a rotor disc's rim
DISC_RINGS = 8          # rings of triangles from the hub centre to the tip
CONTACT_TOLERANCE = 1e-6  # bodies closer than this times their largest size touch (our choice)


def wing_triangles(planform: WingPlanform, *, n_span: int, spacing: str, position, orientation_deg
                   ) -> np.ndarray:
    """The planform of a wing as triangles, global frame, shape (2 n_span, 3, 3) [m].

    Leading and trailing edges at the lattice's spanwise nodes.
    """
    eta = station_etas(n_span, spacing)
    rot = rotation_matrix(orientation_deg)
    qc = planform.quarter_chord(eta)
    c = planform.chord(eta, planform.symmetric)[:, None]
    t = planform.chord_direction(eta)
    le = (qc - 0.25 * c * t) @ rot.T + np.asarray(position, dtype=np.float64)
    te = (qc + 0.75 * c * t) @ rot.T + np.asarray(position, dtype=np.float64)
    return _strip_triangles(le, te)


def disc_triangles(*, hub, axis, radius: float, precone_deg: float) -> np.ndarray:
    """The cone swept by a rotor's blades, hub centre to tip, global frame, shape (M, 3, 3) [m]."""
    a, e0, e90 = hub_frame(axis)
    psi = np.linspace(0.0, 2.0 * np.pi, DISC_AZIMUTHS + 1)
    beta = np.radians(precone_deg)
    # unit vectors along the coned blade at each azimuth, shape (DISC_AZIMUTHS + 1, 3)
    along = np.cos(beta) * (np.cos(psi)[:, None] * e0 + np.sin(psi)[:, None] * e90) + np.sin(beta) * a
    hub = np.asarray(hub, dtype=np.float64)
    r = np.linspace(0.0, radius, DISC_RINGS + 1)
    rings = hub + r[:, None, None] * along[None, :, :]            # (rings, azimuths + 1, 3)
    fan = np.stack([rings[0, :-1], rings[1, :-1], rings[1, 1:]], axis=1)
    out = [fan] + [_strip_triangles(rings[k], rings[k + 1]) for k in range(1, DISC_RINGS)]
    return np.concatenate(out)


def _strip_triangles(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Two triangles per quad of two polylines ``a``, ``b`` of equal length, shape (2 (n - 1), 3, 3)."""
    t1 = np.stack([a[:-1], b[:-1], b[1:]], axis=1)
    t2 = np.stack([a[:-1], b[1:], a[1:]], axis=1)
    return np.concatenate([t1, t2])


def contact_point(tri_a: np.ndarray, tri_b: np.ndarray, tol: float | None = None) -> np.ndarray | None:
    """A point where two triangle sets cross or come within ``tol``, or None if they are apart.

    Parameters
    ----------
    tri_a, tri_b : ndarray, shape (N, 3, 3) and (M, 3, 3)
        Triangles [m].
    tol : float, optional
        Contact distance [m]; default ``CONTACT_TOLERANCE`` times the
        largest extent of the two sets.

    Returns
    -------
    ndarray of shape (3,) or None
        A point of the contact (a vertex of the first triangle pair that meets).
    """
    if tol is None:
        both = np.concatenate([tri_a.reshape(-1, 3), tri_b.reshape(-1, 3)])
        tol = CONTACT_TOLERANCE * float(np.max(np.ptp(both, axis=0)))
    lo_a, hi_a = tri_a.min(axis=1) - tol, tri_a.max(axis=1) + tol
    lo_b, hi_b = tri_b.min(axis=1), tri_b.max(axis=1)
    if (lo_a.min(axis=0) > hi_b.max(axis=0)).any() or (hi_a.max(axis=0) < lo_b.min(axis=0)).any():
        return None
    near = np.all((lo_a[:, None, :] <= hi_b[None, :, :]) & (hi_a[:, None, :] >= lo_b[None, :, :]), axis=2)
    ia, ib = np.nonzero(near)
    if ia.size == 0:
        return None
    A, B = tri_a[ia], tri_b[ib]
    meet = _pierces(A, B) | _pierces(B, A) | (_triangle_distance(A, B) <= tol)
    if not meet.any():
        return None
    k = int(np.flatnonzero(meet)[0])
    return 0.5 * (A[k].mean(axis=0) + B[k].mean(axis=0))


def _pierces(A: np.ndarray, B: np.ndarray) -> np.ndarray:
    """Whether an edge of triangle A[k] passes through the inside of triangle B[k], shape (K,)."""
    out = np.zeros(A.shape[0], dtype=bool)
    e1, e2 = B[:, 1] - B[:, 0], B[:, 2] - B[:, 0]
    n = np.cross(e1, e2)
    nn = np.einsum("ij,ij->i", n, n)
    for i, j in ((0, 1), (1, 2), (2, 0)):
        p, q = A[:, i], A[:, j]
        dp = np.einsum("ij,ij->i", p - B[:, 0], n)
        dq = np.einsum("ij,ij->i", q - B[:, 0], n)
        crosses = (dp * dq < 0.0) & (nn > 0.0)
        with np.errstate(divide="ignore", invalid="ignore"):
            s = dp / (dp - dq)
            x = p + s[:, None] * (q - p) - B[:, 0]
            # barycentric coordinates of x in B
            u = np.einsum("ij,ij->i", np.cross(x, e2), n) / nn
            v = np.einsum("ij,ij->i", np.cross(e1, x), n) / nn
        out |= crosses & (u >= 0.0) & (v >= 0.0) & (u + v <= 1.0)
    return out


def _triangle_distance(A: np.ndarray, B: np.ndarray) -> np.ndarray:
    """Least distance between triangles A[k] and B[k] that do not pierce each other, shape (K,) [m]."""
    d = np.full(A.shape[0], np.inf)
    for i in range(3):
        d = np.minimum(d, _point_triangle_distance(A[:, i], B))
        d = np.minimum(d, _point_triangle_distance(B[:, i], A))
        for j in range(3):
            d = np.minimum(d, _segment_distance(A[:, i], A[:, (i + 1) % 3], B[:, j], B[:, (j + 1) % 3]))
    return d


def _point_triangle_distance(p: np.ndarray, T: np.ndarray) -> np.ndarray:
    """Distance from points p[k] to the plane region of triangles T[k] when the foot falls inside
    them, else inf (edges are covered by the segment distances), shape (K,) [m]."""
    a, e1, e2 = T[:, 0], T[:, 1] - T[:, 0], T[:, 2] - T[:, 0]
    n = np.cross(e1, e2)
    nn = np.einsum("ij,ij->i", n, n)
    x = p - a
    with np.errstate(divide="ignore", invalid="ignore"):
        u = np.einsum("ij,ij->i", np.cross(x, e2), n) / nn
        v = np.einsum("ij,ij->i", np.cross(e1, x), n) / nn
        h = np.abs(np.einsum("ij,ij->i", x, n)) / np.sqrt(nn)
    inside = (nn > 0.0) & (u >= 0.0) & (v >= 0.0) & (u + v <= 1.0)
    return np.where(inside, h, np.inf)


def _segment_distance(p1: np.ndarray, q1: np.ndarray, p2: np.ndarray, q2: np.ndarray) -> np.ndarray:
    """Least distance between segments p1[k]q1[k] and p2[k]q2[k], shape (K,) [m].

    Closest points of two segments (Ericson 2005, Real-Time Collision
    Detection, section 5.1.9), with degenerate segments as points.
    """
    d1, d2, r = q1 - p1, q2 - p2, p1 - p2
    a = np.einsum("ij,ij->i", d1, d1)
    e = np.einsum("ij,ij->i", d2, d2)
    f = np.einsum("ij,ij->i", d2, r)
    c = np.einsum("ij,ij->i", d1, r)
    b = np.einsum("ij,ij->i", d1, d2)
    denom = a * e - b * b
    with np.errstate(divide="ignore", invalid="ignore"):
        s = np.where(denom > 1e-300, np.clip((b * f - c * e) / denom, 0.0, 1.0), 0.0)
        t = np.where(e > 0.0, (b * s + f) / e, 0.0)
        s = np.where(t < 0.0, np.where(a > 0.0, np.clip(-c / a, 0.0, 1.0), 0.0), s)
        s = np.where(t > 1.0, np.where(a > 0.0, np.clip((b - c) / a, 0.0, 1.0), 0.0), s)
    t = np.clip(t, 0.0, 1.0)
    gap = (p1 + s[:, None] * d1) - (p2 + t[:, None] * d2)
    return np.sqrt(np.einsum("ij,ij->i", gap, gap))
