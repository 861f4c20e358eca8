"""Geometry of lifting surfaces: spanwise laws, stations, section frames, ring lattices.

Frames
------
The global frame is right-handed with z up. A wing is described in its body
frame: x along the root chord from leading to trailing edge (downstream), y
along the span to the right (looking forward), z up. Its body frame is placed
in the global frame by a position (the root quarter-chord point) and a
rotation (:func:`rotation_matrix`).

Lattice
-------
Every lifting surface, wing or (later) rotor blade, becomes a
:class:`LiftingSurface`: a grid of vortex rings, ``n_chord`` chordwise by
``n_span`` spanwise. Row 0 of ring corners lies on the quarter chord of the
first chordwise panel (the bound vortex); each later row a panel further
aft; the last row is the shedding row where the wake attaches. Following
Katz & Plotkin (2001, *Low-Speed Aerodynamics*, 2nd ed., ch. 12-13), a
vortex-lattice surface puts its shedding row a quarter panel behind the
trailing edge and its collocation points at three quarters of each panel;
a lifting line (one chordwise panel) sheds at the trailing edge itself and
is solved at its quarter-chord section points with sectional polars.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from ..errors import InputError

DISTRIBUTION_LAWS = ("constant", "linear", "elliptic", "table")
SPACINGS = ("cosine", "uniform")
_AREA_SAMPLES = 20001  # trapezoid samples over the span for planform area (relative error < 1e-6)


@dataclass(frozen=True)
class Distribution:
    """A quantity along the span, as a function of eta = 2y/b.

    Parameters
    ----------
    law : {"constant", "linear", "elliptic", "table"}
        constant: ``value``; linear: ``root + (tip - root)|eta|``;
        elliptic: ``root sqrt(1 - eta^2)``; table: piecewise linear through
        (``eta``, ``values``).
    value, root, tip : float
        Parameters of the laws (units of the quantity).
    eta, values : tuple of float
        Table points; ``eta`` strictly increasing.

    Notes
    -----
    The laws are symmetric in eta. A table is read at |eta| for a symmetric
    wing (it must span 0..1) and at eta for a full-span one (-1..1).
    """

    law: str
    value: float = 0.0
    root: float = 0.0
    tip: float = 0.0
    eta: tuple = ()
    values: tuple = ()

    @classmethod
    def constant(cls, value: float) -> Distribution:
        """A constant value along the span."""
        return cls("constant", value=float(value))

    def __call__(self, eta, symmetric: bool = True) -> np.ndarray:
        """Evaluate at span positions ``eta`` (array, -1..1)."""
        eta = np.asarray(eta, dtype=np.float64)
        a = np.abs(eta)
        if self.law == "constant":
            return np.full_like(eta, self.value)
        if self.law == "linear":
            return self.root + (self.tip - self.root) * a
        if self.law == "elliptic":
            return self.root * np.sqrt(np.clip(1.0 - eta * eta, 0.0, None))
        x = a if symmetric else eta
        return np.interp(x, np.asarray(self.eta), np.asarray(self.values))

    def problem(self, symmetric: bool) -> str | None:
        """Why this distribution is malformed, or None if it is fine."""
        if self.law not in DISTRIBUTION_LAWS:
            return f"law must be one of {', '.join(map(repr, DISTRIBUTION_LAWS))}; got {self.law!r}"
        if self.law != "table":
            return None
        e = np.asarray(self.eta, dtype=np.float64)
        v = np.asarray(self.values, dtype=np.float64)
        if e.ndim != 1 or e.shape != v.shape or e.shape[0] < 2:
            return "a table needs lists 'eta' and 'values' of the same length, at least 2"
        if (np.diff(e) <= 0).any():
            return f"table 'eta' must increase strictly; got {list(self.eta)}"
        lo = 0.0 if symmetric else -1.0
        if abs(e[0] - lo) > 1e-12 or abs(e[-1] - 1.0) > 1e-12:
            side = "0 to 1 (symmetric wing)" if symmetric else "-1 to 1 (full-span wing)"
            return f"table 'eta' must run from {side}; got {e[0]:g} to {e[-1]:g}"
        return None

    def minimum(self, symmetric: bool) -> float:
        """Smallest value over the span (the elliptic tip zero is excluded)."""
        if self.law == "constant":
            return self.value
        if self.law == "linear":
            return min(self.root, self.tip)
        if self.law == "elliptic":
            return self.root
        return float(np.min(self.values))


def station_etas(n_panels: int, spacing: str) -> np.ndarray:
    """Spanwise node positions eta_i, i = 0..n_panels, from -1 (left tip) to 1.

    ``cosine`` spacing eta = -cos(pi i/n) clusters nodes at the tips, where
    the loading changes fastest; ``uniform`` spaces them evenly.
    """
    i = np.arange(n_panels + 1, dtype=np.float64)
    if spacing == "cosine":
        eta = -np.cos(np.pi * i / n_panels)
        eta[[0, -1]] = -1.0, 1.0
        return eta
    if spacing == "uniform":
        return -1.0 + 2.0 * i / n_panels
    raise InputError(f"spacing must be one of {', '.join(map(repr, SPACINGS))}; got {spacing!r}")


def section_etas(n_panels: int, spacing: str) -> np.ndarray:
    """Span position of each strip's section point, shape (n_panels,).

    Uniform spacing: the strip's middle. Cosine spacing: eta = -cos(pi (i +
    1/2)/n), the midpoint in the angle variable, which makes the discrete
    downwash of an elliptic loading exactly uniform and the lifting line's
    induced drag converge as 1/n^2 rather than 1/n (the collocation of
    Multhopp's and Glauert's series solutions).
    """
    if spacing == "cosine":
        return -np.cos(np.pi * (np.arange(n_panels) + 0.5) / n_panels)
    eta = station_etas(n_panels, spacing)
    return 0.5 * (eta[1:] + eta[:-1])


def rotation_matrix(angles_deg) -> np.ndarray:
    """Rotation about the global x, then y, then z axis by ``angles_deg`` (degrees).

    Returns R (3, 3) with global = R @ body. A positive y angle lowers +x,
    so for a wing (x downstream) it raises the leading edge (nose up).
    """
    ax, ay, az = np.radians(np.asarray(angles_deg, dtype=np.float64))
    cx, sx, cy, sy, cz, sz = np.cos(ax), np.sin(ax), np.cos(ay), np.sin(ay), np.cos(az), np.sin(az)
    rx = np.array([[1, 0, 0], [0, cx, -sx], [0, sx, cx]])
    ry = np.array([[cy, 0, sy], [0, 1, 0], [-sy, 0, cy]])
    rz = np.array([[cz, -sz, 0], [sz, cz, 0], [0, 0, 1]])
    return rz @ ry @ rx


def _unit(v: np.ndarray) -> np.ndarray:
    return v / np.linalg.norm(v, axis=-1, keepdims=True)


@dataclass
class LiftingSurface:
    """One lifting surface at one instant, in the global frame.

    Attributes
    ----------
    name : str
        Label, e.g. ``"wing"`` or ``"rotor/blade 2"``.
    corners : ndarray, shape (n_chord + 1, n_span + 1, 3)
        Ring corners [m]; row 0 is the leading bound vortex, the last row
        is the shedding row (``te_nodes``).
    collocation : ndarray, shape (n_chord, n_span, 3)
        Vortex-lattice collocation points [m] (ring centres).
    normals : ndarray, shape (n_chord, n_span, 3)
        Unit panel normals (up for a wing).
    areas : ndarray, shape (n_chord, n_span)
        Ring panel areas [m^2].
    section_points : ndarray, shape (n_span, 3)
        Section points on the leading bound segments (quarter chord) [m].
    section_fraction : ndarray, shape (n_span,)
        Where along its strip (0: left node, 1: right node) each section
        point, collocation point and load point lies.
    section_chord : ndarray, shape (n_span,)
        Chord of each strip [m].
    chord_dir, section_normal : ndarray, shape (n_span, 3)
        Unit vectors of each strip's section plane: leading to trailing
        edge, and normal (chord_dir x span direction).
    span_vector : ndarray, shape (n_span, 3)
        Bound segment of each strip, left node to right node [m].
    section_eta : ndarray, shape (n_span,)
        Span coordinate of each strip (eta = 2y/b for a wing).
    lifting_line : bool
        True: one chordwise panel solved at ``section_points`` with polars;
        False: vortex lattice, flow tangency at ``collocation``.
    polars : SectionPolars
        Section polars (lift for a lifting line, profile drag for both).
    motion : callable or None
        ``motion(points (M, 3)) -> (M, 3)`` velocity of the surface's
        material points [m/s]; None for a surface at rest.
    """

    name: str
    corners: np.ndarray
    collocation: np.ndarray
    normals: np.ndarray
    areas: np.ndarray
    section_points: np.ndarray
    section_chord: np.ndarray
    chord_dir: np.ndarray
    section_normal: np.ndarray
    span_vector: np.ndarray
    section_eta: np.ndarray
    section_fraction: np.ndarray
    lifting_line: bool
    polars: object
    motion: Callable | None = field(default=None)

    @property
    def n_chord(self) -> int:
        return self.corners.shape[0] - 1

    @property
    def n_span(self) -> int:
        return self.corners.shape[1] - 1

    @property
    def te_nodes(self) -> np.ndarray:
        """Shedding-row nodes, shape (n_span + 1, 3) [m]."""
        return self.corners[-1]

    @property
    def n_unknowns(self) -> int:
        return self.n_chord * self.n_span

    def eval_points(self) -> np.ndarray:
        """Where each ring's equation is posed, shape (n_chord * n_span, 3)."""
        if self.lifting_line:
            return self.section_points.copy()
        return self.collocation.reshape(-1, 3)

    def bound_midpoints(self) -> np.ndarray:
        """Load points on the spanwise bound segments of every ring row, shape (n_chord, n_span, 3).

        Each lies at its strip's ``section_fraction`` along the segment.
        """
        c = self.corners[:-1]
        f = self.section_fraction[None, :, None]
        return (1.0 - f) * c[:, :-1] + f * c[:, 1:]

    def bound_vectors(self) -> np.ndarray:
        """Spanwise bound segments of every ring row, left to right, shape (n_chord, n_span, 3)."""
        c = self.corners[:-1]
        return c[:, 1:] - c[:, :-1]

    def velocity_of(self, points: np.ndarray) -> np.ndarray:
        """Velocity of the surface at material ``points`` (M, 3) [m/s]."""
        if self.motion is None:
            return np.zeros_like(points)
        return self.motion(points)


def build_surface(name: str, qc_nodes, chord_nodes, chord_dir_nodes, section_eta,
                  chord_mid, chord_dir_mid, *, n_chord: int, lifting_line: bool,
                  polars, section_fraction=None, motion=None) -> LiftingSurface:
    """Build the ring lattice of a surface from its sections.

    Parameters
    ----------
    name : str
        Label of the surface.
    qc_nodes : array_like, shape (n + 1, 3)
        Quarter-chord points at the spanwise nodes [m], global frame.
    chord_nodes : array_like, shape (n + 1,)
        Chord at the nodes [m] (zero allowed at a tip).
    chord_dir_nodes : array_like, shape (n + 1, 3)
        Unit chord direction (leading to trailing edge) at the nodes.
    section_eta : array_like, shape (n,)
        Span coordinate of each strip's section.
    chord_mid : array_like, shape (n,)
        Chord of each strip, taken at its section [m].
    chord_dir_mid : array_like, shape (n, 3)
        Unit chord direction of each strip at its section.
    n_chord : int
        Chordwise panels (1 for a lifting line).
    lifting_line : bool
        Lifting line (True) or vortex lattice (False).
    polars : SectionPolars
        Polars of the n strips.
    section_fraction : array_like, shape (n,), optional
        Where along each strip its section lies (0: left node, 1: right
        node); 0.5 if omitted.
    motion : callable, optional
        Velocity of material points of the surface (see :class:`LiftingSurface`).
    """
    qc = np.asarray(qc_nodes, dtype=np.float64)
    c = np.asarray(chord_nodes, dtype=np.float64)
    t = _unit(np.asarray(chord_dir_nodes, dtype=np.float64))
    te_shift = 0.0 if lifting_line else 0.25
    # chordwise fraction of each corner row, measured from the leading edge
    n_span = qc.shape[0] - 1
    frac = np.full(n_span, 0.5) if section_fraction is None else np.asarray(section_fraction, dtype=np.float64)
    xi = np.append((np.arange(n_chord) + 0.25) / n_chord, 1.0 + te_shift / n_chord)
    le = qc - 0.25 * c[:, None] * t
    corners = le[None, :, :] + xi[:, None, None] * (c[:, None] * t)[None, :, :]
    f = frac[None, :, None]
    collocation = 0.5 * ((1 - f) * (corners[:-1, :-1] + corners[1:, :-1]) + f * (corners[:-1, 1:] + corners[1:, 1:]))
    d1 = corners[1:, 1:] - corners[:-1, :-1]
    d2 = corners[:-1, 1:] - corners[1:, :-1]
    cross = np.cross(d1, d2)
    areas = 0.5 * np.linalg.norm(cross, axis=-1)
    normals = cross / np.maximum(2.0 * areas, 1e-300)[..., None]
    span_vec = qc[1:] - qc[:-1]
    t_mid = _unit(np.asarray(chord_dir_mid, dtype=np.float64))
    n_mid = _unit(np.cross(t_mid, span_vec))
    return LiftingSurface(name=name, corners=np.ascontiguousarray(corners),
                          collocation=np.ascontiguousarray(collocation), normals=normals,
                          areas=areas, section_points=(1 - frac[:, None]) * qc[:-1] + frac[:, None] * qc[1:],
                          section_chord=np.asarray(chord_mid, dtype=np.float64), chord_dir=t_mid,
                          section_normal=n_mid, span_vector=span_vec,
                          section_eta=np.asarray(section_eta, dtype=np.float64),
                          section_fraction=frac, lifting_line=lifting_line, polars=polars, motion=motion)


@dataclass(frozen=True)
class WingPlanform:
    """A wing's planform and section angles as spanwise laws (body frame).

    Parameters
    ----------
    span : float
        Tip-to-tip span b, projected on the body y axis [m].
    chord : Distribution
        Chord [m].
    twist : Distribution
        Section incidence relative to the body x axis [deg], nose up positive.
    sweep : Distribution
        Sweep of the quarter-chord line [deg], tips aft positive.
    dihedral : Distribution
        Dihedral of the quarter-chord line [deg], tips up positive.
    symmetric : bool
        Tables given on the right half (eta 0..1) and mirrored.
    """

    span: float
    chord: Distribution
    twist: Distribution = Distribution.constant(0.0)
    sweep: Distribution = Distribution.constant(0.0)
    dihedral: Distribution = Distribution.constant(0.0)
    symmetric: bool = True

    def quarter_chord(self, eta: np.ndarray) -> np.ndarray:
        """Quarter-chord points at ``eta`` in the body frame, shape (len(eta), 3) [m].

        x and z follow from integrating tan(sweep) and tan(dihedral) outward
        from the root along |y|.
        """
        eta = np.asarray(eta, dtype=np.float64)
        half = 0.5 * self.span
        out = np.zeros((eta.shape[0], 3))
        out[:, 1] = eta * half
        grid = np.linspace(0.0, 1.0, 2001)
        for side in (1.0, -1.0):
            sel = eta * side >= 0
            g = side * grid
            for axis, law in ((0, self.sweep), (2, self.dihedral)):
                slope = np.tan(np.radians(law(g, self.symmetric)))
                cum = np.concatenate([[0.0], np.cumsum(0.5 * (slope[1:] + slope[:-1]) * np.diff(grid))])
                out[sel, axis] = np.interp(np.abs(eta[sel]), grid, cum) * half
        return out

    def chord_direction(self, eta: np.ndarray) -> np.ndarray:
        """Unit chord direction (leading to trailing edge) at ``eta``, body frame, shape (len(eta), 3)."""
        th = np.radians(self.twist(eta, self.symmetric))
        return np.stack([np.cos(th), np.zeros_like(th), -np.sin(th)], axis=1)

    def area(self) -> float:
        """Planform area S = integral of chord over the span [m^2]."""
        eta = np.linspace(-1.0, 1.0, _AREA_SAMPLES)
        c = self.chord(eta, self.symmetric)
        return float(np.sum(0.5 * (c[1:] + c[:-1]) * np.diff(eta)) * 0.5 * self.span)

    def mean_aerodynamic_chord(self) -> tuple[float, np.ndarray]:
        """The mean aerodynamic chord and the pitching-moment reference point (body frame).

        Returns
        -------
        mac : float
            c_bar = (1/S) integral of c^2 over the span [m].
        point : ndarray, shape (3,)
            (1/S) integral of c r_qc over the span, r_qc the quarter-chord
            line [m]: the chord-weighted mean of the quarter-chord line. On
            a symmetric wing whose quarter-chord line is straight on each
            side (linear sweep and dihedral laws of constant angle) it is the
            quarter-chord point of the mean aerodynamic chord, moved to the
            plane of symmetry.

        Examples
        --------
        >>> p = WingPlanform(4.0, Distribution("linear", root=1.0, tip=0.5), sweep=Distribution.constant(45.0))
        >>> mac, point = p.mean_aerodynamic_chord()
        >>> round(mac, 4), [round(float(v), 4) for v in point]   # 2/3 c_r (1 + t + t^2)/(1 + t); y_mac 8/9 m
        (0.7778, [0.8889, 0.0, 0.0])
        """
        eta = np.linspace(-1.0, 1.0, _AREA_SAMPLES)
        c = self.chord(eta, self.symmetric)
        dy = np.diff(eta) * 0.5 * self.span

        def integral(f):
            return np.sum(0.5 * (f[1:] + f[:-1]) * (dy if f.ndim == 1 else dy[:, None]), axis=0)

        area = float(integral(c))
        point = integral(c[:, None] * self.quarter_chord(eta)) / area
        if self.symmetric:
            point[1] = 0.0      # on the plane of symmetry (the sum leaves round-off)
        return float(integral(c * c)) / area, point


def wing_surface(name: str, planform: WingPlanform, *, n_span: int, spacing: str, n_chord: int,
                 lifting_line: bool, polars, position=(0.0, 0.0, 0.0),
                 orientation_deg=(0.0, 0.0, 0.0)) -> LiftingSurface:
    """The ring lattice of a wing placed in the global frame.

    Parameters
    ----------
    name : str
        Label of the surface.
    planform : WingPlanform
        Span, chord, twist, sweep, dihedral.
    n_span : int
        Spanwise panels over the full span.
    spacing : {"cosine", "uniform"}
        Spanwise node spacing (:func:`station_etas`).
    n_chord : int
        Chordwise panels (1 for a lifting line).
    lifting_line : bool
        Lifting line or vortex lattice.
    polars : SectionPolars
        Polars of the n_span strips.
    position : array_like, shape (3,)
        Global position of the body origin (root quarter chord) [m].
    orientation_deg : array_like, shape (3,)
        Rotation of the body frame (:func:`rotation_matrix`) [deg].
    """
    eta = station_etas(n_span, spacing)
    eta_mid = section_etas(n_span, spacing)
    fraction = (eta_mid - eta[:-1]) / (eta[1:] - eta[:-1])
    rot = rotation_matrix(orientation_deg)
    pos = np.asarray(position, dtype=np.float64)
    qc = planform.quarter_chord(eta) @ rot.T + pos
    t_nodes = planform.chord_direction(eta) @ rot.T
    t_mid = planform.chord_direction(eta_mid) @ rot.T
    return build_surface(name, qc, planform.chord(eta, planform.symmetric), t_nodes, eta_mid,
                         planform.chord(eta_mid, planform.symmetric), t_mid,
                         n_chord=n_chord, lifting_line=lifting_line, polars=polars,
                         section_fraction=fraction)
