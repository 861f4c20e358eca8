"""The wake one lifting surface sheds: a free vortex lattice, optionally turned into particles.

Each step the surface's shedding row (its trailing edge) releases a new row
of wake nodes; the ring between that row and the previous one carries the
surface's strip circulation at shedding time, so the lattice holds the shed
(spanwise) vorticity -- the change of bound circulation in time -- and the
trailed (streamwise) vorticity -- its change along the span (Katz & Plotkin
2001, *Low-Speed Aerodynamics*, 2nd ed., ch. 13).

Storage: ``rows`` (R, n + 1, 3), newest (at the trailing edge) first; ring
k lies between rows k and k + 1 with circulation ``gamma[k]``. With the
particle model, rings older than ``near_wake_steps`` are converted into
vortex particles with strength alpha = Gamma (B - A) placed at each net
segment's midpoint, and the lattice's far end is left open with ``tail``
holding the circulation of the last converted ring, so the vortex lines
continue into the particles. Core radii grow with age as
r_c = sqrt(r_0^2 + 4 a delta nu age), a = 1.25643 (Squire 1965, Aeronaut.
Q. 16; Lamb--Oseen constant), with a fixed eddy-viscosity factor delta, or
delta = 1 + a_1 |Gamma|/nu from each segment's circulation (Bhagwat &
Leishman 2000, see :meth:`WakeSettings.growth_factor`).

The spanwise segments of the attached row (at the shedding row) get a
vanishing core: they lie on the surface's trailing-edge closure, which the
circulation solve treats as a singular line and the wake motion gives the
same vanishing core, and the two must cancel exactly when the circulation
is steady. The vorticity they carry takes the ordinary core once the row
is released.
"""

from __future__ import annotations

import copy
from dataclasses import dataclass

import numpy as np

from ..induction.elements import Filaments, Particles
from ..induction.smoothing import LAMB_OSEEN_ALPHA
from .vortex_lattice import carries_circulation, lattice_filaments, lattice_segments

ATTACHED_CORE_FRACTION = 1e-6  # attached row's core radius / core_radius: a singular line in effect

# Kinematic viscosity of air at ISA sea level [m^2/s] (ISO 2533:1975 standard atmosphere,
# from memory): the one default of the case's [fluid] and of WakeSettings.
SEA_LEVEL_KINEMATIC_VISCOSITY = 1.4607e-5
#: Relative margin on ``max_age``: a wake's age is a sum of time steps, so a row exactly
#: ``max_age`` old (the step divides it) must not be kept or dropped by round-off (ours).
AGE_MARGIN = 1e-9


@dataclass(frozen=True)
class WakeSettings:
    """How wakes are stored and moved.

    Parameters
    ----------
    model : {"filaments", "particles"}
        Keep the whole wake as a vortex lattice, or convert rings older than
        ``near_wake_steps`` into particles.
    motion : {"free", "frozen"}
        Free: nodes and particles move with the local velocity (freestream
        plus everything induced). Frozen: they move with the freestream.
    core : str
        Filament core model (:data:`wakes.induction.smoothing.CORE_MODELS`).
    core_radius : float
        Initial core radius r_0 [m]; also the smallest particle radius.
    core_growth : float
        Eddy-viscosity factor delta in the core growth law (1: laminar), used
        when ``core_eddy_factor`` is 0.
    core_eddy_factor : float
        a_1 of delta = 1 + a_1 |Gamma|/nu, delta from each segment's
        circulation (0: delta = ``core_growth``); see :meth:`growth_factor`.
    viscosity : float
        Kinematic viscosity nu [m^2/s].
    particle_kernel : str
        Particle smoothing kernel.
    particle_overlap : float
        Particle radius as a multiple of the length of the segment it
        replaces (at least ``core_radius``).
    near_wake_steps : int
        Rings kept as filaments before conversion (particle model).
    stretching : str
        Particle stretching scheme (:data:`wakes.vortex.dynamics.STRETCHING_SCHEMES`).
    max_age : float
        Wake older than this [s] is removed (inf: kept).
    cores_at_surfaces : bool
        False: the lifting surfaces see the wake filaments as singular
        lines, as Prandtl's and Weissinger's models assume (needed when
        spanwise panels are finer than the core, e.g. at an elliptic tip);
        the cores then only regularize the wake's own motion. True: the
        surfaces see the cores too (a blade passing a tip vortex meets its
        finite core).
    """

    model: str = "filaments"
    motion: str = "free"
    core: str = "lamb-oseen"
    core_radius: float = 0.05
    core_growth: float = 1.0
    core_eddy_factor: float = 0.0
    viscosity: float = SEA_LEVEL_KINEMATIC_VISCOSITY
    particle_kernel: str = "gaussian"
    particle_overlap: float = 1.3
    near_wake_steps: int = 8
    stretching: str = "transposed"
    max_age: float = float("inf")
    cores_at_surfaces: bool = False

    def too_old(self, age):
        """Whether wake of ``age`` [s] (float or array) is past ``max_age``.

        An age within ``AGE_MARGIN`` (relative) of ``max_age`` counts as
        equal and is kept, whatever the round-off of the summed time steps.

        Examples
        --------
        >>> WakeSettings(max_age=0.3).too_old(0.1 + 0.1 + 0.1)   # 0.30000000000000004
        False
        """
        return age > self.max_age * (1.0 + AGE_MARGIN)

    @property
    def attached_core_radius(self) -> float:
        """Core radius [m] of the attached row and of the surface's trailing-edge closure."""
        return ATTACHED_CORE_FRACTION * self.core_radius

    def growth_factor(self, circulation=None) -> np.ndarray | float:
        """Eddy-viscosity factor delta of vortices of the given circulation [m^2/s].

        delta = 1 + a_1 |Gamma|/nu with a_1 = ``core_eddy_factor`` (the form of
        Squire 1965, Aeronaut. Q. 16, with a_1 fitted to rotor tip vortices by
        Bhagwat & Leishman 2000, J. American Helicopter Soc. 45(3), about
        6.5e-5 there; value from memory); ``core_growth`` when a_1 is 0 or no
        circulation is given.

        Examples
        --------
        >>> from wakes.aero.wake import WakeSettings
        >>> s = WakeSettings(core_eddy_factor=1e-4, viscosity=1.5e-5)
        >>> float(s.growth_factor(1.5))     # Gamma/nu = 1e5
        11.0
        >>> WakeSettings(core_growth=3.0).growth_factor(1.5)
        3.0
        """
        if self.core_eddy_factor == 0.0 or circulation is None:
            return self.core_growth
        return 1.0 + self.core_eddy_factor * np.abs(np.asarray(circulation, dtype=np.float64)) / self.viscosity

    def core_at_age(self, age: np.ndarray, circulation=None) -> np.ndarray:
        """Core radius [m] of vorticity of the given ``age`` [s] (Squire's growth law).

        r_c = sqrt(r_0^2 + 4 alpha delta nu age), alpha = 1.25643 (Lamb-Oseen),
        delta from :meth:`growth_factor` of ``circulation`` [m^2/s] (broadcast
        against ``age``; taken as the vortex's circulation over its whole age).
        """
        age = np.maximum(np.asarray(age, dtype=np.float64), 0.0)
        return np.sqrt(self.core_radius ** 2
                       + 4.0 * LAMB_OSEEN_ALPHA * self.growth_factor(circulation) * self.viscosity * age)

    def lattice_cores(self, ages: np.ndarray, attached: np.ndarray, circulation: np.ndarray) -> np.ndarray:
        """Core radii [m] (K,) of lattice segments of ages [s] (K,) and circulations (K,);
        segments flagged ``attached`` (K,) get :attr:`attached_core_radius`."""
        return np.where(attached, self.attached_core_radius, self.core_at_age(ages, circulation))


def lattice_ages(rows: np.ndarray, gamma: np.ndarray, row_age: np.ndarray, *, after=None):
    """Nodes, segments, circulations, ages and attached flags of a wake lattice.

    Parameters
    ----------
    rows : ndarray, shape (R, n + 1, 3)
        Node rows, newest first [m].
    gamma : ndarray, shape (R - 1, n)
        Ring circulations [m^2/s].
    row_age : ndarray, shape (R,)
        Age of each row [s]; a streamwise segment has the mean age of its rows.
    after : ndarray, shape (n,), optional
        Circulation beyond the oldest row (an open lattice).

    Returns
    -------
    nodes (R (n + 1), 3), segments (K, 2), circulation (K,), age (K,) [s] and
    attached (K,) bool: the spanwise segments of row 0, at the shedding row.
    """
    row_age = np.asarray(row_age, dtype=np.float64)
    marked = row_age.copy()
    marked[0] = np.nan                          # row 0's spanwise segments: the attached row
    nodes, seg, circ, age = lattice_segments(rows, gamma, after=after, span_core=marked,
                                             stream_core=0.5 * (row_age[:-1] + row_age[1:]))
    attached = np.isnan(age)
    return nodes, seg, circ, np.where(attached, 0.0, age), attached


class WakeSheet:
    """The wake of one lifting surface.

    Parameters
    ----------
    te_nodes : ndarray, shape (n + 1, 3)
        The surface's shedding row at the start [m].
    time : float
        Start time [s].
    settings : WakeSettings
        Storage and motion options.
    """

    def __init__(self, te_nodes: np.ndarray, time: float, settings: WakeSettings):
        self.settings = settings
        te = np.asarray(te_nodes, dtype=np.float64)
        self.n_span = te.shape[0] - 1
        self.rows = te[None].copy()
        self.row_time = np.array([float(time)])
        self.gamma = np.zeros((0, self.n_span))
        self.tail = np.zeros(self.n_span)
        self.positions = np.zeros((0, 3))
        self.strengths = np.zeros((0, 3))
        self.radii = np.zeros(0)
        self.birth = np.zeros(0)

    # ------------------------------------------------------------------ views
    @property
    def node_count(self) -> int:
        return self.rows.shape[0] * self.rows.shape[1]

    @property
    def particle_count(self) -> int:
        return self.positions.shape[0]

    def filaments(self, time: float, *, singular: bool = False) -> Filaments:
        """The lattice as filaments at ``time`` [s], cores grown to each row's age (or singular)."""
        if singular:
            return lattice_filaments(self.rows, self.gamma, core="singular", core_radius=1.0,
                                     after=self.tail)
        nodes, seg, circ, age, attached = lattice_ages(self.rows, self.gamma, time - self.row_time,
                                                       after=self.tail)
        scale = max(np.max(np.abs(self.gamma), initial=0.0), np.max(np.abs(self.tail), initial=0.0))
        keep = carries_circulation(circ, scale)
        rc = self.settings.lattice_cores(age[keep], attached[keep], circ[keep])
        return Filaments(nodes, seg[keep], circ[keep], rc, core=self.settings.core)

    def particles(self) -> Particles:
        """The converted far wake as particles."""
        return Particles(self.positions, self.strengths, self.radii, kernel=self.settings.particle_kernel)

    def sources(self, time: float, *, at_surfaces: bool = False) -> list:
        """Every vortex element of this wake, for :func:`wakes.induce`.

        With ``at_surfaces`` the filaments are singular unless
        ``settings.cores_at_surfaces``; particles keep their kernel.
        """
        out = [self.filaments(time, singular=at_surfaces and not self.settings.cores_at_surfaces)]
        if self.particle_count:
            out.append(self.particles())
        return out

    # ---------------------------------------------------------------- updates
    def state(self) -> np.ndarray:
        """What the wake's motion changes, stacked: nodes (R (n + 1)), particle positions (P)
        and particle strengths (P), shape (R (n + 1) + 2 P, 3) [m], [m], [m^3/s]."""
        return np.vstack([self.rows.reshape(-1, 3), self.positions, self.strengths])

    def placed(self, state: np.ndarray) -> WakeSheet:
        """A copy of this wake at ``state`` (as :meth:`state`), for a stage of a time step."""
        other = copy.copy(self)
        other._put(state)
        return other

    def rates(self, node_velocity: np.ndarray, particle_velocity: np.ndarray,
              particle_stretching: np.ndarray | None) -> np.ndarray:
        """d(state)/dt from the velocity at the nodes (R (n + 1), 3) and particles (P, 3) [m/s] and
        d alpha/dt (P, 3) [m^3/s^2] (None: no stretching)."""
        stretch = np.zeros_like(self.strengths) if particle_stretching is None else particle_stretching
        return np.vstack([node_velocity, particle_velocity, stretch])

    def settle(self, state: np.ndarray) -> None:
        """Take ``state`` (as :meth:`state`) at the end of a time step."""
        self._put(np.array(state, dtype=np.float64))

    def _put(self, state: np.ndarray) -> None:
        k, p = self.rows.shape[0] * self.rows.shape[1], self.particle_count
        self.rows = state[:k].reshape(self.rows.shape)
        self.positions, self.strengths = state[k:k + p], state[k + p:k + 2 * p]

    def shed(self, te_nodes: np.ndarray, strip_gamma: np.ndarray, time: float) -> None:
        """Attach a new row at the shedding row ``te_nodes`` (n + 1, 3) at ``time`` [s].

        The new ring between it and the previous (already moved) row gets
        the circulation ``strip_gamma`` (n,) the surface had when it was shed.
        """
        self.rows = np.concatenate([np.asarray(te_nodes, dtype=np.float64)[None], self.rows])
        self.row_time = np.concatenate([[float(time)], self.row_time])
        self.gamma = np.concatenate([np.asarray(strip_gamma, dtype=np.float64)[None], self.gamma])

    def age_out(self, time: float) -> None:
        """Convert old rings to particles (particle model) and drop wake older than ``max_age``."""
        s = self.settings
        if s.model == "particles":
            while self.gamma.shape[0] > s.near_wake_steps:
                self._convert_oldest_ring(time)
        if np.isfinite(s.max_age):
            while self.gamma.shape[0] > 0 and s.too_old(time - self.row_time[-1]):
                self._drop_oldest_ring()
            keep = ~s.too_old(time - self.birth)
            if not keep.all():
                self.positions, self.strengths = self.positions[keep], self.strengths[keep]
                self.radii, self.birth = self.radii[keep], self.birth[keep]

    def _convert_oldest_ring(self, time: float) -> None:
        """Turn the oldest ring's net segments into particles; leave the lattice open."""
        last = self.rows[-2:]
        nodes, seg, circ, _ = lattice_segments(last, self.gamma[-1:], after=self.tail)
        # keep the far row's spanwise segments and the streamwise ones: the
        # near row's spanwise segments stay in the lattice.
        far_row = (seg[:, 0] >= last.shape[1]) & (seg[:, 1] >= last.shape[1])
        streamwise = (seg[:, 0] < last.shape[1]) != (seg[:, 1] < last.shape[1])
        scale = max(np.max(np.abs(self.gamma[-1]), initial=0.0), np.max(np.abs(self.tail), initial=0.0))
        take = (far_row | streamwise) & carries_circulation(circ, scale)
        a, b = nodes[seg[take, 0]], nodes[seg[take, 1]]
        length = np.linalg.norm(b - a, axis=1)
        born = 0.5 * (self.row_time[-1] + self.row_time[-2])
        s = self.settings
        radius = np.maximum(s.core_at_age(np.full(length.shape, time - born), circ[take]),
                            s.particle_overlap * length)
        self.positions = np.vstack([self.positions, 0.5 * (a + b)])
        self.strengths = np.vstack([self.strengths, circ[take, None] * (b - a)])
        self.radii = np.concatenate([self.radii, radius])
        self.birth = np.concatenate([self.birth, np.full(length.shape, born)])
        self.tail = self.gamma[-1].copy()
        self._pop_oldest()

    def _drop_oldest_ring(self) -> None:
        """Remove the oldest ring and close the lattice there."""
        self.tail = np.zeros(self.n_span)
        self._pop_oldest()

    def _pop_oldest(self) -> None:
        self.rows = self.rows[:-1]
        self.row_time = self.row_time[:-1]
        self.gamma = self.gamma[:-1]
