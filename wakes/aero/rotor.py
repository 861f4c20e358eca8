"""Rotor geometry: blades along the radius, the hub frame, and each blade as a lifting line.

Frames
------
The hub frame has its origin at the hub centre and the unit axis ``a``
along the thrust direction of a lift rotor or propeller; for a wind
turbine ``a`` points downwind (the direction of the thrust the wind puts
on the rotor). Azimuth zero is global +x projected on the disc plane (or
+z when the axis lies along x), see :func:`wakes.aero.kinematics.hub_frame`.
Blade 1 starts at the azimuth ``azimuth0``; the others follow at equal
spacing. ``spin = +1`` turns the blades right-handedly about ``a``
(counter-clockwise seen from the +axis side), ``spin = -1`` the other way.

A blade at position angle psi has the radial unit vector
e_r = cos psi e0 + sin psi e90, moves along m = spin (a x e_r), and with
precone beta its quarter-chord line runs along
e_s = cos beta e_r + sin beta a, at blade coordinate r (the distance from
the hub centre along the blade) from the root cut-out r_0 to the radius R.
The section at r has pitch theta(r) = collective + twist(r), the angle of
its chord line to the plane normal to e_s that contains m: the chord runs
from leading to trailing edge along

    t = -cos(theta) m - sin(theta) a',  a' = cos beta a - sin beta e_r,

so a positive pitch raises the leading edge towards +a and a positive
section lift pushes along +a.

Distributions (chord, twist) are given along the blade as functions of
eta = (r - r_0)/(R - r_0): 0 at the root cut-out, 1 at the tip.

Cyclic pitch
------------
The collective varies with the blade's azimuth psi as

    theta(r, psi) = collective + twist(r) + theta_1c cos psi + theta_1s sin psi,

the first-harmonic pitch law of helicopter practice (Johnson 1980,
*Helicopter Theory*, ch. 5). psi is measured in the direction of rotation
from the downstream direction: psi = 0 where the blade points along the
freestream's component in the disc plane (aft, towards the tail, in
edgewise flight), psi = 90 deg on the advancing side. Without a freestream
across the axis (hover, axial flight) psi = 0 is the hub frame's azimuth
zero ``e0``. So theta_1c > 0 raises the pitch of the aft blade and lowers
the front one, theta_1s > 0 raises the advancing blade and lowers the
retreating one, for either sense of rotation. Each blade pitches about
its quarter-chord line, where its section point (the lifting line) lies,
so the pitch rate moves no section point; the lifting line's sections are
quasi-steady in the pitch rate.

Flapping
--------
A rotor with a flap hinge (:mod:`wakes.aero.flap`) turns each blade as a
rigid body about the hinge axis e_r x a through the hinge point h + e e_r
(e the hinge offset, at most the root cut-out): at flap angle beta its
quarter-chord line runs from the hinge along e_s = cos beta e_r + sin beta
a, its chord directions follow (a' as above with beta), and its sections
move with the rotation plus the flap rate, beta' (e_r x a) x (x - h - e e_r),
so the onset flow, the circulation, the shed wake and the loads all see the
flapping. Blade coordinate r is still measured along the blade from the hub
centre (hub to hinge, then along the blade).

Every blade becomes one :class:`wakes.aero.geometry.LiftingSurface` with a
single chordwise panel (the nonlinear lifting line of
:mod:`wakes.aero.lifting_line`); its spanwise nodes run root to tip for
``spin = +1`` and tip to root for ``spin = -1`` (the mirror image), so the
ring circulation is positive when the blade pushes along +a either way.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from .geometry import Distribution, LiftingSurface, build_surface
from .kinematics import RigidRotation, hub_frame

BLADE_SPACINGS = ("cosine", "tip", "uniform")

DEG_PER_S_PER_RPM = 6.0   # 360 deg per revolution / 60 s per minute
AXIAL_FLOW_TOLERANCE = 1e-9  # freestream component across the axis / its magnitude, for "axial"


def blade_turn_deg(rpm: float, dt: float) -> float:
    """Angle [deg] a blade turns in one step of ``dt`` [s] at ``rpm``."""
    return DEG_PER_S_PER_RPM * rpm * dt


def dt_for_turn(turn_deg: float, rpm: float) -> float:
    """The step [s] in which a blade at ``rpm`` turns ``turn_deg`` [deg]."""
    return turn_deg / (DEG_PER_S_PER_RPM * rpm)


def is_axial_flow(v_inf, axis) -> bool:
    """Whether the freestream ``v_inf`` [m/s] runs along ``axis`` (or is zero: hover).

    True when its component across the axis is at most
    ``AXIAL_FLOW_TOLERANCE`` times its magnitude.
    """
    v = np.asarray(v_inf, dtype=np.float64)
    a = np.asarray(axis, dtype=np.float64)
    a = a / np.linalg.norm(a)
    return bool(np.linalg.norm(np.cross(v, a)) <= AXIAL_FLOW_TOLERANCE * np.linalg.norm(v))



def blade_stations(n_panels: int, spacing: str) -> tuple[np.ndarray, np.ndarray]:
    """Node and section positions along a blade, eta from 0 (root cut-out) to 1 (tip).

    Parameters
    ----------
    n_panels : int
        Panels (strips) along the blade.
    spacing : {"cosine", "tip", "uniform"}
        ``cosine``: eta = (1 - cos(pi i/n))/2, clustered at both ends, where
        the root and tip vortices leave the blade; ``tip``: eta =
        sin(pi i/(2n)), clustered at the tip only; ``uniform``: even.
        Section points lie at the middle of each strip in the angle
        variable of the cosine laws (as for the wing's cosine spacing).

    Returns
    -------
    nodes : ndarray, shape (n_panels + 1,)
    sections : ndarray, shape (n_panels,)
    """
    i = np.arange(n_panels + 1, dtype=np.float64)
    h = np.arange(n_panels, dtype=np.float64) + 0.5
    if spacing == "cosine":
        nodes = 0.5 * (1.0 - np.cos(np.pi * i / n_panels))
        sections = 0.5 * (1.0 - np.cos(np.pi * h / n_panels))
    elif spacing == "tip":
        nodes, sections = np.sin(0.5 * np.pi * i / n_panels), np.sin(0.5 * np.pi * h / n_panels)
    elif spacing == "uniform":
        nodes, sections = i / n_panels, h / n_panels
    else:
        raise InputError(f"spacing must be one of {', '.join(map(repr, BLADE_SPACINGS))}; got {spacing!r}")
    nodes[[0, -1]] = 0.0, 1.0
    return nodes, sections


@dataclass(frozen=True)
class RotorGeometry:
    """A rotor's blades and hub, with the rotation that carries them.

    Parameters
    ----------
    blades : int
        Number of blades B >= 1.
    radius : float
        Tip radius R, measured along the blade [m].
    root_cutout : float
        Blade coordinate r_0 where the lifting blade starts [m], 0 <= r_0 < R.
    chord : Distribution
        Chord [m] against eta (module notes).
    twist : Distribution
        Section pitch added to the collective [deg] against eta.
    collective : float
        Pitch of every section [deg] before twist.
    rpm : float
        Rotational speed [rev/min], positive.
    spin : int
        +1: right-handed about the axis; -1: the other way.
    hub : tuple of float
        Hub centre [m], global frame.
    axis : tuple of float
        Thrust direction (downwind for a turbine), any length but zero.
    precone : float
        Cone angle of the blades towards +axis [deg].
    azimuth0 : float
        Position angle of blade 1 at time zero [deg].
    panels : int
        Strips per blade.
    spacing : str
        Station spacing (:func:`blade_stations`).
    cyclic_cos, cyclic_sin : float
        Cyclic pitch theta_1c and theta_1s [deg] (module notes).
    hinge_offset : float
        Distance e of the blades' flap hinges from the hub centre along the
        radial line [m], at most ``root_cutout`` (used when the blades flap:
        :meth:`blade_surface` with ``flap``).
    downstream : tuple of float or None
        The freestream [m/s] (any vector) whose part across the axis sets
        the azimuth origin psi = 0; None or a freestream along the axis:
        the hub frame's ``e0``.
    """

    blades: int
    radius: float
    root_cutout: float
    chord: Distribution
    twist: Distribution
    collective: float
    rpm: float
    spin: int = 1
    hub: tuple = (0.0, 0.0, 0.0)
    axis: tuple = (0.0, 0.0, 1.0)
    precone: float = 0.0
    azimuth0: float = 0.0
    panels: int = 16
    spacing: str = "cosine"
    cyclic_cos: float = 0.0
    cyclic_sin: float = 0.0
    hinge_offset: float = 0.0
    downstream: tuple | None = None

    @property
    def omega(self) -> float:
        """Rotation rate |Omega| [rad/s]."""
        return 2.0 * np.pi * self.rpm / 60.0

    @property
    def period(self) -> float:
        """Time of one revolution [s]."""
        return 60.0 / self.rpm

    @property
    def disc_area(self) -> float:
        """pi R^2 [m^2]."""
        return np.pi * self.radius ** 2

    def frame(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Hub-frame unit vectors (a, e0, e90) in the global frame."""
        return hub_frame(self.axis)

    def rotation(self) -> RigidRotation:
        """The rigid rotation of the blades."""
        a = self.frame()[0]
        return RigidRotation(np.asarray(self.hub, dtype=np.float64), a, self.spin * self.omega)

    def blade_radii(self) -> tuple[np.ndarray, np.ndarray]:
        """Blade coordinate r [m] of the nodes (n + 1,) and sections (n,), root to tip."""
        nodes, sections = blade_stations(self.panels, self.spacing)
        span = self.radius - self.root_cutout
        return self.root_cutout + span * nodes, self.root_cutout + span * sections

    def mean_chord(self) -> float:
        """Chord averaged along the blade [m]."""
        eta = np.linspace(0.0, 1.0, 2001)
        c = self.chord(eta)
        return float(np.sum(0.5 * (c[1:] + c[:-1]) * np.diff(eta)))

    def solidity(self) -> float:
        """Thrust-weighted solidity B c_e/(pi R) with c_e = 3 int c r^2 dr / R^3 (Leishman 2006)."""
        r = np.linspace(self.root_cutout, self.radius, 2001)
        c = self.chord((r - self.root_cutout) / (self.radius - self.root_cutout))
        f = c * r * r
        c_e = 3.0 * float(np.sum(0.5 * (f[1:] + f[:-1]) * np.diff(r))) / self.radius ** 3
        return self.blades * c_e / (np.pi * self.radius)

    def blade_angle(self, blade: int, time: float) -> float:
        """Position angle of blade ``blade`` (0-based) at ``time`` [rad], right-handed about a."""
        return (np.radians(self.azimuth0) + 2.0 * np.pi * blade / self.blades
                + self.spin * self.omega * time)

    def rotor_frame(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Unit vectors (x_h, y_h, a) of the rotor frame in the global frame.

        ``x_h`` is the azimuth origin psi = 0 (module notes: downstream in
        edgewise flight), ``y_h = a x x_h`` and ``a`` the axis: a
        right-handed frame whatever the sense of rotation, so psi = 90 deg
        lies along +y_h for ``spin = +1`` and along -y_h for ``spin = -1``.
        """
        a, e0, _ = self.frame()
        x_h = e0
        if self.downstream is not None and not is_axial_flow(self.downstream, a):
            v = np.asarray(self.downstream, dtype=np.float64)
            x_h = v - (v @ a) * a
            x_h = x_h / np.linalg.norm(x_h)
        return x_h, np.cross(a, x_h), a

    def blade_azimuth(self, blade: int, time: float) -> float:
        """Azimuth psi of blade ``blade`` (0-based) at ``time`` [rad], from x_h in the sense of rotation."""
        x_h = self.rotor_frame()[0]
        _, e0, e90 = self.frame()
        origin = np.arctan2(x_h @ e90, x_h @ e0)   # position angle of x_h
        return float(np.mod(self.spin * (self.blade_angle(blade, time) - origin), 2.0 * np.pi))

    def azimuth_of(self, direction) -> np.ndarray:
        """Azimuth psi [rad] in [0, 2 pi) of blade directions ``direction`` (..., 3), global frame.

        Only the part of each direction in the disc plane counts (a coned
        blade's direction gives its azimuth).
        """
        x_h, y_h, _ = self.rotor_frame()
        d = np.asarray(direction, dtype=np.float64)
        return np.mod(np.arctan2(self.spin * (d @ y_h), d @ x_h), 2.0 * np.pi)

    def cyclic_at(self, psi):
        """theta_1c cos psi + theta_1s sin psi [deg] at azimuth ``psi`` [rad] (scalar or array).

        Exactly 0.0 without cyclic pitch, so the section angles are those of
        the collective and twist alone, to the last bit.
        """
        if self.cyclic_cos == 0.0 and self.cyclic_sin == 0.0:
            return 0.0 * np.asarray(psi, dtype=np.float64)
        return self.cyclic_cos * np.cos(psi) + self.cyclic_sin * np.sin(psi)

    def cyclic_pitch(self, blade: int, time: float) -> float:
        """The cyclic pitch [deg] of blade ``blade`` (0-based) at ``time`` [s] (:meth:`cyclic_at`)."""
        return float(self.cyclic_at(self.blade_azimuth(blade, time)))

    def radial_direction(self, blade: int, time: float) -> np.ndarray:
        """Unit radial direction e_r (3,) of blade ``blade`` (0-based) at ``time`` [s], in the disc plane."""
        a, e0, e90 = self.frame()
        psi = self.blade_angle(blade, time)
        return np.cos(psi) * e0 + np.sin(psi) * e90

    def flap_hinge(self, blade: int, time: float) -> tuple[np.ndarray, np.ndarray]:
        """Hinge point [m] and unit hinge axis e_r x a (turning the blade towards +a) of a blade, (3,) each."""
        e_r = self.radial_direction(blade, time)
        a = self.frame()[0]
        return np.asarray(self.hub, dtype=np.float64) + self.hinge_offset * e_r, np.cross(e_r, a)

    def blade_surface(self, blade: int, time: float, polars, name: str, flap=None) -> LiftingSurface:
        """Blade ``blade`` (0-based) at ``time`` [s] as a lifting-line surface, global frame.

        Its sections are pitched by collective, twist and the cyclic pitch
        at the blade's azimuth at ``time``. Without ``flap`` the blade is
        coned by ``precone`` about the hub centre and moves with the
        rotation; with ``flap = (beta, rate)`` [rad, rad/s] it is turned by
        beta about its flap hinge (:meth:`flap_hinge`) and its sections
        move with the rotation plus beta' (e_r x a) x (x - x_hinge).
        """
        a, e0, e90 = self.frame()
        psi = self.blade_angle(blade, time)
        e_r = np.cos(psi) * e0 + np.sin(psi) * e90
        m = self.spin * np.cross(a, e_r)
        beta = np.radians(self.precone) if flap is None else float(flap[0])
        e_s = np.cos(beta) * e_r + np.sin(beta) * a
        a_p = np.cos(beta) * a - np.sin(beta) * e_r
        r_nodes, r_sec = self.blade_radii()
        span = self.radius - self.root_cutout
        eta_nodes = (r_nodes - self.root_cutout) / span
        eta_sec = (r_sec - self.root_cutout) / span

        cyclic = self.cyclic_pitch(blade, time)

        def chord_dir(eta):
            th = np.radians(self.collective + self.twist(eta) + cyclic)
            return -np.cos(th)[:, None] * m - np.sin(th)[:, None] * a_p

        hub = np.asarray(self.hub, dtype=np.float64)
        motion = self.rotation().velocity
        if flap is None:
            qc = hub + r_nodes[:, None] * e_s
        else:
            hinge, hinge_axis = self.flap_hinge(blade, time)
            qc = hinge + (r_nodes - self.hinge_offset)[:, None] * e_s
            motion = _flapping_motion(self.rotation(), hinge, float(flap[1]) * hinge_axis)
        fraction = (r_sec - r_nodes[:-1]) / (r_nodes[1:] - r_nodes[:-1])
        c_nodes, t_nodes = self.chord(eta_nodes), chord_dir(eta_nodes)
        c_sec, t_sec, station = self.chord(eta_sec), chord_dir(eta_sec), r_sec / self.radius
        if self.spin < 0:  # mirror image: nodes tip to root
            qc, c_nodes, t_nodes = qc[::-1], c_nodes[::-1], t_nodes[::-1]
            c_sec, t_sec, station, fraction = c_sec[::-1], t_sec[::-1], station[::-1], 1.0 - fraction[::-1]
        return build_surface(name, qc, c_nodes, t_nodes, station, c_sec, t_sec, n_chord=1,
                             lifting_line=True, polars=polars, section_fraction=fraction,
                             motion=motion)

    def strip_radii(self) -> tuple[np.ndarray, np.ndarray]:
        """Section r [m] and strip width dr [m] of each strip, in the surface's node order."""
        r_nodes, r_sec = self.blade_radii()
        dr = np.diff(r_nodes)
        return (r_sec[::-1], dr[::-1]) if self.spin < 0 else (r_sec, dr)

    def pitch(self, eta) -> np.ndarray:
        """Section pitch collective + twist [deg] at eta, without the cyclic pitch."""
        return self.collective + self.twist(np.asarray(eta, dtype=np.float64))



def _flapping_motion(rotation: RigidRotation, hinge: np.ndarray, flap_rate_vector: np.ndarray):
    """Velocity of a flapping blade's points: the rotation's plus the flap rate vector x (x - hinge)."""

    def velocity(points):
        p = np.asarray(points, dtype=np.float64)
        return rotation.velocity(p) + np.cross(flap_rate_vector, p - hinge)

    return velocity
