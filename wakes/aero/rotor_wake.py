"""A rotor blade's wake: a resolved vortex sheet, then a tip vortex and inboard trailers.

Behind a rotor blade the trailed vortex sheet rolls up into a concentrated
tip vortex that carries the peak bound circulation, while the inboard sheet
of opposite sense stays weak and spread (Leishman 2006, *Principles of
Helicopter Aerodynamics*, 2nd ed., ch. 10). This wake keeps

* a near wake: the wing's free vortex lattice (:mod:`wakes.aero.wake`) of
  the last ``rollup_steps`` rings behind the blade (one revolution by
  default), every trailed and shed filament free and resolved, so the
  sheet rolls up by itself; open at its old end;
* a far wake: each older row gathered into a tip vortex -- at the
  circulation centroid of the row's nodes outboard of the loading peak
  (Betz's roll-up rule), carrying the peak circulation with its sign -- and
  ``inboard_trailers`` trailers, each gathering the inboard nodes of an
  equal length of the row at their centroid, with a core at least that
  length (the spread sheet it stands for). The peak is taken on the tip's
  side of the loading (:func:`tip_peak`), so a loading that changes sign
  along the blade (a windmilling propeller, a turbine root) rolls up with
  the tip part's sign, and each trailer's sign is that of what it gathers.
  Each trailer is an open polyline; the far wake carries no shed vorticity
  between its rows, so a change of loading in time leaves it without its
  spanwise counterpart (exact in steady flight).

In axial flow (hover, climb, axial wind) the inboard trailers move along
the axis with the local flow and keep their radius relative to their row's
tip vortex: left free, a concentrated trailer of opposite sense pairs with
the tip vortex and both wander off (a spread sheet does not). In any other
flow every node is free.

Every node moves with the local velocity (the time loop's
:mod:`wakes.aero.wake_motion`, Heun's second-order method); core radii grow with age
(Squire's law, :meth:`WakeSettings.core_at_age`). Far wake older than
``settings.max_age`` is removed: the wake below is then missing, which in
hover lowers the inflow at the disc by about 1 - L/sqrt(L^2 + R_w^2) for a
wake column of length L and radius R_w (the field of a semi-infinite
vortex cylinder on its axis), and for a turbine raises the power.

Rigid far wake (optional, ``free_age``): far wake older than ``free_age``
moves rigidly, every node with the mean velocity of the tip vortex over
the last free revolution (its axial part in axial flow). A truncated
helical wake's oldest turns behave like a stack of coaxial vortex rings:
the end turn expands and slows while the turns above pass inside it
(leapfrogging), so a hover wake kept free to its end re-expands and piles
up below the rotor, and its loads move with how much wake is kept. Held
rigid past two revolutions, the pile-up does not form: in the hover
validation case (10 deg steps, roll-up at 360 deg) doubling the kept wake
from 6 to 12 revolutions changes C_T by 0.8 % (3.0 % when all free).

Soft end: over the last ``fade_age`` before ``max_age`` the far wake's
circulation falls linearly to zero. Cut abruptly, the wake's open end
rolls up like the edge of a vortex ring, stalls and piles up below the
rotor, where it wanders from step to step, and each removed segment takes
its full circulation with it; both make the blade loads jitter. A fade
over two revolutions brings the largest revolution-to-revolution change
of a blade's thrust in the hover validation case from 1.8 % to under 1 %.
The faded wake acts about like an abrupt cut ``fade_age / 2`` earlier.

Start-up drift: after an impulsive start in hover the first wake lies in
the rotor plane, where the next blade cuts through it before the inflow
has built up. With a ``startup`` drift the wake nodes also move along
-axis at the momentum-theory hover inflow sqrt(T/(2 rho A)), T estimated
from the latest shed circulation as rho B Omega sum Gamma r dr, fading
linearly to zero over ``startup.duration``; wake shed during that time is
gone once the wake is cut (``max_age``) before the end of the run, so the
final state does not depend on it directly.

Node storage for the time loop: ``rows`` stacks the near rows
(R_n, n + 1, 3) and then the far rows (R_f, b, 3), b = inboard_trailers +
1 with the tip vortex last, newest first, as one (K, 3) array;
:meth:`RolledUpWake.sources` returns the near sheet and the far trailers as
two :class:`wakes.Filaments`.
"""

from __future__ import annotations

import copy
from dataclasses import dataclass

import numpy as np
import pandas as pd

from ..induction.elements import Filaments
from .kinematics import rotate_about
from .vortex_lattice import carries_circulation
from .wake import AGE_MARGIN, WakeSettings, lattice_ages


def tip_peak(strips: np.ndarray) -> int:
    """The strip (index, root to tip) of the loading peak the tip vortex rolls up from.

    It is the extremum of the tip's own sign over the run of strips next to
    the tip that keep that sign (Betz's roll-up per side of the peak): with
    loading of one sign it is the largest; where the loading changes sign
    along the blade (a windmilling propeller, a turbine root) the tip vortex
    takes the outboard part's sign, whatever the sum of the row.

    Examples
    --------
    >>> tip_peak(np.array([0.5, 1.0, 0.2, -0.4, -0.7, -0.3]))
    4
    """
    g = np.asarray(strips, dtype=np.float64)
    live = np.flatnonzero(carries_circulation(g, np.max(np.abs(g), initial=0.0)))
    if not live.size:
        return g.size - 1
    last = int(live[-1])
    sign = 1.0 if g[last] > 0.0 else -1.0
    first = last
    while first > 0 and sign * g[first - 1] > 0.0:
        first -= 1
    return first + int(np.argmax(sign * g[first:last + 1]))


def rollup_labels(nodes: np.ndarray, strips: np.ndarray, inboard_trailers: int,
                  tip_last: bool) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Which trailer each node of a wake row rolls up into, and the circulation it trails.

    Parameters are those of :func:`condense_row`. Returns ``label`` (n + 1,)
    int, the trailer of each node (tip vortex ``inboard_trailers``; -1: not
    followed, the inboard nodes when ``inboard_trailers`` is 0), ``trailed``
    (n + 1,) [m^2/s], the net circulation of each node's streamwise line,
    G_{j-1} - G_j in the row's own node order (positive along the wake from
    younger to older rows), and ``spread`` (b,) [m], the length of row each
    inboard trailer gathers (zero for the tip vortex).
    """
    g = np.asarray(strips, dtype=np.float64)
    trailed = np.concatenate([[0.0], g]) - np.concatenate([g, [0.0]])
    if not tip_last:  # label the mirror row (root to tip), then turn the labels back
        label, _, spread = rollup_labels(nodes[::-1], -g[::-1], inboard_trailers, True)
        return label[::-1].copy(), trailed, spread
    peak = tip_peak(g)
    length = np.concatenate([[0.0], np.cumsum(np.linalg.norm(np.diff(nodes, axis=0), axis=1))])
    label = np.full(nodes.shape[0], inboard_trailers)
    spread = np.zeros(inboard_trailers + 1)
    if inboard_trailers:
        piece = max(length[peak], 1e-300) / inboard_trailers
        label[:peak + 1] = np.minimum((length[:peak + 1] / piece).astype(np.int64), inboard_trailers - 1)
        spread[:-1] = piece
    else:
        label[:peak + 1] = -1  # inboard vorticity is not followed
    return label, trailed, spread


def condense_row(nodes: np.ndarray, strips: np.ndarray, inboard_trailers: int,
                 tip_last: bool) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Gather one wake row's trailed vorticity into a tip vortex and inboard trailers.

    Parameters
    ----------
    nodes : ndarray, shape (n + 1, 3)
        The row's nodes [m], in the blade's node order.
    strips : ndarray, shape (n,)
        Circulation of the rings beside the row [m^2/s].
    inboard_trailers : int
        Trailers the part inboard of the peak (:func:`tip_peak`) is cut
        into (0: none).
    tip_last : bool
        True when the last node is at the tip (root-to-tip node order).

    Returns
    -------
    points : ndarray, shape (b, 3)
        Trailer positions [m], b = inboard_trailers + 1, tip vortex last:
        the centroid of each group's trailed circulation of the group's own
        sign (Betz's roll-up rule).
    strengths : ndarray, shape (b,)
        Trailed circulation each gathers, positive along the wake from
        younger to older rows [m^2/s]; the tip vortex carries the peak
        strip circulation, with its sign. With inboard trailers they sum
        to zero: every trailed line is followed.
    spread : ndarray, shape (b,)
        Length of row each inboard trailer gathers [m] (zero for the tip
        vortex): the sheet it stands for was that wide, and it becomes the
        trailer's smallest core radius.
    """
    label, trailed, spread = rollup_labels(nodes, strips, inboard_trailers, tip_last)
    b = inboard_trailers + 1
    points = np.empty((b, 3))
    strengths = np.zeros(b)
    root_first = nodes if tip_last else nodes[::-1]
    for k in range(b):
        sel = np.flatnonzero(label == k)
        if not sel.size:  # fewer nodes than trailers: an empty trailer sits on its neighbour
            points[k] = points[k - 1] if k else root_first[0]
            continue
        t = trailed[sel]
        strengths[k] = t.sum()
        w = np.maximum(np.sign(strengths[k]) * t, 0.0)
        points[k] = (w @ nodes[sel]) / w.sum() if w.sum() > 0.0 else nodes[sel].mean(axis=0)
    return points, strengths, spread


@dataclass(frozen=True)
class StartupDrift:
    """A fading axial drift of a lift rotor's wake after an impulsive start.

    Parameters
    ----------
    hub : ndarray, shape (3,)
        Hub centre [m].
    axis : ndarray, shape (3,)
        Unit thrust axis; the drift is along -axis.
    omega : float
        Rotation rate [rad/s].
    blades : int
        Number of blades.
    radius : float
        Tip radius [m].
    duration : float
        Time over which the drift fades to zero [s].
    """

    hub: np.ndarray
    axis: np.ndarray
    omega: float
    blades: int
    radius: float
    duration: float

    def velocity(self, time: float, te_nodes: np.ndarray, strip_gamma: np.ndarray) -> np.ndarray:
        """Drift velocity (3,) [m/s] at ``time`` from the blade's latest strips (n,)."""
        fade = 1.0 - time / self.duration
        if fade <= 0.0:
            return np.zeros(3)
        rel = te_nodes - self.hub
        r = np.linalg.norm(rel - np.outer(rel @ self.axis, self.axis), axis=1)
        moment = float(np.sum(strip_gamma * 0.5 * (r[1:] + r[:-1]) * np.abs(np.diff(r))))
        thrust_over_rho = self.blades * self.omega * moment
        if thrust_over_rho <= 0.0:
            return np.zeros(3)
        return -fade * np.sqrt(thrust_over_rho / (2.0 * np.pi * self.radius ** 2)) * self.axis


class BladeSymmetry:
    """Keeps the wakes of a rotor's B blades B-fold symmetric about the hub axis.

    In axial flow (hover, climb, axial wind) the periodic solution is the
    same for every blade, turned by 2 pi k/B. The helical wake is unstable
    to modes that break that symmetry (tip vortices of neighbouring blades
    pairing; Widnall 1972, J. Fluid Mech. 54); roundoff seeds them.
    Averaging the blades' wakes in the rotating frame after each step keeps
    the symmetric solution, the one a periodic (relaxation) free-wake
    method finds.

    Parameters
    ----------
    hub : ndarray, shape (3,)
        Hub centre [m].
    axis : ndarray, shape (3,)
        Unit rotation axis.
    blades : int
        B.
    """

    def __init__(self, hub: np.ndarray, axis: np.ndarray, blades: int):
        self.hub = np.asarray(hub, dtype=np.float64)
        self.axis = np.asarray(axis, dtype=np.float64)
        self.blades = int(blades)
        self.wakes = []
        self._moved = 0

    def join(self, wake: RolledUpWake) -> None:
        """Register the next blade's wake (in blade order)."""
        self.wakes.append(wake)

    def moved(self) -> None:
        """Called by each wake after it moved; the last one of a step averages them all."""
        self._moved += 1
        if self._moved < len(self.wakes):
            return
        self._moved = 0
        for name in ("near", "far"):
            arrays = [getattr(w, name) for w in self.wakes]
            if any(a.shape != arrays[0].shape for a in arrays):
                return
            turns = [2.0 * np.pi * k / self.blades for k in range(len(arrays))]
            mean = sum(rotate_about(a - self.hub, self.axis, -t) for a, t in zip(arrays, turns)) / len(arrays)
            for w, t in zip(self.wakes, turns):
                setattr(w, name, self.hub + rotate_about(mean, self.axis, t))


class RolledUpWake:
    """The wake of one rotor blade: near vortex sheet, then free tip vortex and inboard trailers.

    Parameters
    ----------
    te_nodes : ndarray, shape (n + 1, 3)
        The blade's trailing-edge nodes at the start [m].
    time : float
        Start time [s].
    settings : WakeSettings
        Core model, core growth, max_age.
    rollup_steps : int
        Rings kept as a resolved sheet behind the blade (>= 1).
    inboard_trailers : int
        Trailers the inboard far wake is gathered into (0: not followed).
    tip_last : bool
        True when the blade's nodes run root to tip.
    hub, axis : ndarray, shape (3,)
        Hub centre [m] and unit rotor axis.
    axial_flow : bool
        The freestream is zero or along the axis: inboard trailers then
        move along the axis with the local flow and keep their radius
        relative to their row's tip vortex (module notes); otherwise they
        move freely.
    startup : StartupDrift or None
        Fading start-up drift of the nodes (module notes), or none.
    symmetry : BladeSymmetry or None
        The group that keeps the rotor's blade wakes symmetric, or none.
    fade_age : float
        Time over which the far wake's circulation falls to zero before
        ``settings.max_age`` [s] (module notes); 0: cut abruptly.
    free_age : float
        Far wake older than this [s] moves rigidly (module notes, "Rigid
        far wake"); inf: all free.
    period : float
        Time of one revolution [s] (needed with a finite ``free_age``).
    """

    particle_count = 0
    positions = np.zeros((0, 3))
    strengths = np.zeros((0, 3))

    def __init__(self, te_nodes: np.ndarray, time: float, settings: WakeSettings, *,
                 rollup_steps: int, inboard_trailers: int, tip_last: bool, hub: np.ndarray,
                 axis: np.ndarray, axial_flow: bool, startup: StartupDrift | None = None,
                 symmetry: BladeSymmetry | None = None, fade_age: float = 0.0,
                 free_age: float = float("inf"), period: float = float("inf")):
        self.settings = settings
        self.free_age = float(free_age)
        self.period = float(period)
        self.fade_age = float(fade_age)
        self.hub = np.asarray(hub, dtype=np.float64)
        self.axis = np.asarray(axis, dtype=np.float64)
        self.axial_flow = bool(axial_flow)
        self.rollup_steps = int(rollup_steps)
        self.inboard_trailers = int(inboard_trailers)
        self.tip_last = bool(tip_last)
        self.startup = startup
        self.symmetry = symmetry
        if symmetry is not None:
            symmetry.join(self)
        te = np.asarray(te_nodes, dtype=np.float64)
        self.n_span = te.shape[0] - 1
        self.near = te[None].copy()
        self.near_time = np.array([float(time)])
        self.near_gamma = np.zeros((0, self.n_span))
        b = self.inboard_trailers + 1
        self.far = np.zeros((0, b, 3))
        self.far_time = np.zeros(0)
        self.far_gamma = np.zeros((0, b))
        self.far_spread = np.zeros((0, b))
        self.far_ratio = np.zeros((0, b - 1))

    # ------------------------------------------------------------------ views
    @property
    def rows(self) -> np.ndarray:
        """Every node, near rows then far rows, newest first, shape (K, 3) [m]."""
        return np.vstack([self.near.reshape(-1, 3), self.far.reshape(-1, 3)])

    @property
    def node_count(self) -> int:
        return self.near.shape[0] * self.near.shape[1] + self.far.shape[0] * self.far.shape[1]

    def tip_vortex(self, time: float) -> tuple[np.ndarray, np.ndarray]:
        """The tip vortex from the trailing edge on: wake ages (R,) [s] and positions (R, 3) [m].

        In the sheet each row's tip-vortex point is the circulation centroid
        of its nodes outboard of the peak (as at roll-up), using the ring
        behind the row; in the far wake it is the tip trailer's node.
        """
        rings = self.near_gamma.shape[0]
        near = [condense_row(self.near[k], self.near_gamma[min(k, rings - 1)], 0, self.tip_last)[0][-1]
                for k in range(self.near.shape[0] - (1 if self.far.shape[0] else 0))] if rings else []
        points = np.vstack([np.reshape(near, (-1, 3)), self.far[:, -1]])
        times = np.concatenate([self.near_time[:len(near)], self.far_time])
        return time - times, points

    def filaments(self, time: float, *, singular: bool = False) -> list[Filaments]:
        """The near sheet and the far trailers at ``time`` [s], cores grown to each row's age."""
        s = self.settings
        core = "singular" if singular else s.core
        after = self.near_gamma[-1] if self.near_gamma.shape[0] else None  # open: trailers end here
        nodes, seg, circ, age, attached = lattice_ages(self.near, self.near_gamma, time - self.near_time,
                                                       after=after)
        keep = carries_circulation(circ, np.max(np.abs(self.near_gamma), initial=0.0))
        rcs = s.lattice_cores(age[keep], attached[keep], circ[keep])
        out = [Filaments(nodes, seg[keep], circ[keep], rcs, core=core)]
        if self.far_gamma.shape[0]:
            r, b = self.far.shape[:2]
            idx = np.arange(r * b).reshape(r, b)
            seg = np.stack([idx[:-1].ravel(), idx[1:].ravel()], axis=1)
            age = time - 0.5 * (self.far_time[:-1] + self.far_time[1:])
            rcs = np.maximum(s.core_at_age(age[:, None], self.far_gamma), self.far_spread[:-1]).ravel()
            keep = carries_circulation(self.far_gamma.ravel(), np.max(np.abs(self.far_gamma), initial=0.0))
            circ = (self.far_gamma * self._fade(age)[:, None]).ravel()
            out.append(Filaments(self.far.reshape(-1, 3), seg[keep], circ[keep], rcs[keep], core=core))
        return out

    def _fade(self, age: np.ndarray) -> np.ndarray:
        """Circulation factor (R,) of far-wake segments of age (R,) [s]: 1, falling to 0 at max_age."""
        if not self.fade_age > 0.0 or not np.isfinite(self.settings.max_age):
            return np.ones_like(age)
        return np.clip((self.settings.max_age - age) / self.fade_age, 0.0, 1.0)

    def sources(self, time: float, *, at_surfaces: bool = False) -> list:
        """Every vortex element of this wake, for :func:`wakes.induce`.

        With ``at_surfaces`` the filaments are singular unless
        ``settings.cores_at_surfaces`` (as :meth:`WakeSheet.sources`).
        """
        return self.filaments(time, singular=at_surfaces and not self.settings.cores_at_surfaces)

    # ---------------------------------------------------------------- updates
    def state(self) -> np.ndarray:
        """What the wake's motion changes: every node, near rows then far rows, shape (K, 3) [m]."""
        return self.rows

    def placed(self, state: np.ndarray) -> RolledUpWake:
        """A copy of this wake with its nodes at ``state`` (K, 3), for a stage of a time step."""
        other = copy.copy(self)
        other._put(state)
        return other

    def rates(self, node_velocity: np.ndarray, particle_velocity=None, particle_stretching=None) -> np.ndarray:
        """Node velocities (K, 3) [m/s] from the local flow at the nodes (K, 3): plus the start-up
        drift; in axial flow the inboard trailers keep only the axial part; far wake older than
        ``free_age`` moves with the last free revolution's mean tip-vortex velocity (module notes)."""
        k = self.near.shape[0] * self.near.shape[1]
        drift = np.zeros(3)
        if self.startup is not None and self.near_gamma.shape[0]:
            drift = self.startup.velocity(self.near_time[0], self.near[0], self.near_gamma[0])
        u_far = node_velocity[k:].reshape(self.far.shape).copy()
        if self.axial_flow:  # inboard trailers: axial motion only, radius follows the tip vortex
            u_far[:, :-1] = np.multiply.outer(u_far[:, :-1] @ self.axis, self.axis)
        if np.isfinite(self.free_age) and self.far.shape[0]:
            age = self.near_time[0] - self.far_time
            rigid = age > self.free_age * (1.0 + AGE_MARGIN)
            last = ~rigid & (age > self.free_age - self.period)
            if rigid.any() and last.any():
                v = u_far[last, -1].mean(axis=0)
                if self.axial_flow:
                    v = (v @ self.axis) * self.axis
                u_far[rigid] = v
        return np.vstack([node_velocity[:k], u_far.reshape(-1, 3)]) + drift

    def settle(self, state: np.ndarray) -> None:
        """Take the nodes ``state`` (K, 3) at the end of a time step; then in axial flow put the
        inboard trailers back at their radius relative to the tip vortex, and let the blade
        symmetry group average the blades' wakes."""
        self._put(np.array(state, dtype=np.float64))
        if self.axial_flow and self.inboard_trailers and self.far.shape[0]:
            radial, r = self._radial(self.far)
            scale = self.far_ratio * r[:, -1:] / np.maximum(r[:, :-1], 1e-300)
            self.far[:, :-1] += (scale - 1.0)[..., None] * radial[:, :-1]
        if self.symmetry is not None:
            self.symmetry.moved()

    def _put(self, state: np.ndarray) -> None:
        k = self.near.shape[0] * self.near.shape[1]
        self.near = state[:k].reshape(self.near.shape)
        self.far = state[k:].reshape(self.far.shape)

    def shed(self, te_nodes: np.ndarray, strip_gamma: np.ndarray, time: float) -> None:
        """Attach a new row at the trailing edge; its ring carries ``strip_gamma`` (n,)."""
        self.near = np.concatenate([np.asarray(te_nodes, dtype=np.float64)[None], self.near])
        self.near_time = np.concatenate([[float(time)], self.near_time])
        self.near_gamma = np.concatenate([np.asarray(strip_gamma, dtype=np.float64)[None],
                                          self.near_gamma])

    def age_out(self, time: float) -> None:
        """Roll up rings older than ``rollup_steps`` and drop far wake older than ``max_age``."""
        while self.near_gamma.shape[0] > self.rollup_steps:
            self._roll_up_oldest()
        while self.far_gamma.shape[0] and self.settings.too_old(time - self.far_time[-1]):
            self.far, self.far_time = self.far[:-1], self.far_time[:-1]
            self.far_gamma, self.far_spread = self.far_gamma[:-1], self.far_spread[:-1]
            self.far_ratio = self.far_ratio[:-1]
        if not self.far_gamma.shape[0]:
            self.far, self.far_time, self.far_spread = self.far[:0], self.far_time[:0], self.far_spread[:0]
            self.far_ratio = self.far_ratio[:0]

    def _radial(self, points: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Radial vectors from the axis (..., 3) [m] and their lengths (...) of ``points``."""
        rel = points - self.hub
        radial = rel - np.multiply.outer(rel @ self.axis, self.axis)
        return radial, np.linalg.norm(radial, axis=-1)

    def _roll_up_oldest(self) -> None:
        """Gather the oldest sheet ring into the far trailers."""
        g = self.near_gamma[-1]
        if not self.far.shape[0]:
            last, _, spread = condense_row(self.near[-1], g, self.inboard_trailers, self.tip_last)
            self.far, self.far_time, self.far_spread = last[None], self.near_time[-1:].copy(), spread[None]
            _, r = self._radial(last[None])
            self.far_ratio = r[:, :-1] / max(float(r[0, -1]), 1e-300)
        points, strengths, spread = condense_row(self.near[-2], g, self.inboard_trailers, self.tip_last)
        self.far = np.concatenate([points[None], self.far])
        self.far_time = np.concatenate([self.near_time[-2:-1], self.far_time])
        self.far_gamma = np.concatenate([strengths[None], self.far_gamma])
        self.far_spread = np.concatenate([spread[None], self.far_spread])
        _, r = self._radial(points[None])
        self.far_ratio = np.concatenate([r[:, :-1] / max(float(r[0, -1]), 1e-300), self.far_ratio])
        self.near, self.near_time, self.near_gamma = self.near[:-1], self.near_time[:-1], self.near_gamma[:-1]


def tip_vortex_table(name: str, samples: list, *, hub: np.ndarray, axis: np.ndarray, radius: float,
                     omega: float) -> pd.DataFrame:
    """The tip vortex's mean path against wake age, from samples taken over a revolution.

    Parameters
    ----------
    name : str
        Body name.
    samples : list of (ages (R,), points (R, 3))
        :meth:`RolledUpWake.tip_vortex` at successive steps [s], [m].
    hub, axis : ndarray, shape (3,)
        Hub centre [m] and unit axis.
    radius : float
        Rotor radius R [m].
    omega : float
        Rotation rate [rad/s] (turns wake age into degrees).

    Returns
    -------
    pandas.DataFrame
        ``body``, ``wake_age_deg``, ``r_over_R`` (distance from the axis /
        R, mean over the samples), ``r_over_R_std`` (its spread),
        ``axial_over_R`` (offset along the axis / R, negative downstream of
        a lift rotor), ``samples``: one row per wake age present in every
        sample.
    """
    rows = min(len(age) for age, _ in samples)
    rel = np.stack([p[:rows] for _, p in samples]) - hub
    axial = rel @ axis
    r = np.linalg.norm(rel - axial[..., None] * axis, axis=-1) / radius
    return pd.DataFrame({"body": name, "wake_age_deg": np.degrees(omega * samples[-1][0][:rows]),
                         "r_over_R": r.mean(axis=0), "r_over_R_std": r.std(axis=0),
                         "axial_over_R": axial.mean(axis=0) / radius, "samples": len(samples)})
