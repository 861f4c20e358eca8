"""Watching a run: stop it politely when it goes unstable, outgrows memory or is interrupted.

:class:`Watchdog` checks every step of :class:`wakes.simulate.TimeLoop`:

* the bound circulation and the wake velocities are finite;
* no wake node or particle moves faster than ``SPEED_FACTOR`` times the
  flow's speed scale (the freestream or the fastest surface point, e.g. a
  blade tip) -- induced speeds of a regularized wake stay of the order of
  that scale, so a far larger one means the wake is blowing up;
* the lifting-line iteration converges (the solver raises otherwise);
* the wake stays within the memory budget (:mod:`wakes.budget`).

A failed check raises :class:`UnstableRunError` or
:class:`~wakes.budget.MemoryBudgetError` naming the step, the time, the
body and element, the likely cause and the remedy. :class:`RunControl`
tells the loop how to react: raise (library default) or hand back the last
good state so the caller writes a checkpoint and the outputs so far.

Signals: :meth:`RunControl.catch_signals` turns SIGINT and SIGTERM into a
request to stop at the end of the current step.
"""

from __future__ import annotations

import contextlib
import signal

import numpy as np

from .budget import budget_bytes
from .errors import MemoryBudgetError, UnstableRunError
from .estimate import peak_bytes

SPEED_FACTOR = 50.0   # largest wake speed accepted / flow speed scale (our choice, generous)



def remedy_for(wake=None) -> str:
    """The changes of the case that may cure a wake blowing up, only those that apply to it.

    Parameters
    ----------
    wake : wakes.case.WakeSpec, optional
        The run's ``[wake]`` settings (its ``model`` and ``max_age``); None
        names the changes that apply to any run.

    Examples
    --------
    >>> from wakes.case.specs import WakeSpec
    >>> remedy_for(WakeSpec(model="particles", max_age=2.0))
    'a smaller [time] dt, a larger [wake] core_radius, a larger [wake] particle_overlap or a shorter [wake] max_age'
    """
    changes = ["a smaller [time] dt", "a larger [wake] core_radius"]
    model = getattr(wake, "model", None)
    if model == "particles":
        changes.append("a larger [wake] particle_overlap")
    max_age = getattr(wake, "max_age", float("inf"))
    changes.append("a finite [wake] max_age (older wake removed)" if max_age == float("inf")
                   else "a shorter [wake] max_age")
    if model == "filaments":
        changes.append('[wake] model = "particles"')
    return ", ".join(changes[:-1]) + " or " + changes[-1]


class Watchdog:
    """Checks of one run.

    Parameters
    ----------
    speed_scale : float
        The flow's speed scale [m/s] (freestream or fastest surface point).
    unknowns : int
        Number of bound circulations (for the memory budget).
    max_memory : int, optional
        Budget [B]; default: the memory available when the run starts.
    remedy : str, optional
        The remedy an instability message names (:func:`remedy_for` the
        run's ``[wake]``); default: the changes that apply to any run.
    """

    def __init__(self, speed_scale: float, unknowns: int = 0, max_memory: int | None = None,
                 remedy: str | None = None):
        self.remedy = remedy_for() if remedy is None else remedy
        self.speed_scale = float(speed_scale)
        self.speed_limit = SPEED_FACTOR * self.speed_scale
        self.unknowns = int(unknowns)
        self.budget, self.budget_source = budget_bytes(max_memory)

    @classmethod
    def for_surfaces(cls, v_inf: np.ndarray, surfaces, max_memory: int | None = None,
                     wake=None) -> Watchdog:
        """A watchdog scaled on the freestream and the surfaces' own motion at the start.

        ``wake`` (the run's ``[wake]`` settings) chooses the remedy named (:func:`remedy_for`).
        """
        speeds = [float(np.linalg.norm(v_inf))]
        for s in surfaces:
            v = s.velocity_of(s.eval_points())
            if v.size:
                speeds.append(float(np.max(np.linalg.norm(v, axis=1))))
        scale = max(speeds)
        if not scale > 0.0:
            scale = 1.0
        return cls(scale, sum(s.n_unknowns for s in surfaces), max_memory, remedy_for(wake))

    def check_circulation(self, step: int, time: float, surfaces, gammas) -> None:
        """Every surface's circulation is finite."""
        for s, g in zip(surfaces, gammas):
            bad = ~np.isfinite(np.asarray(g))
            if bad.any():
                k = int(np.flatnonzero(bad.ravel())[0])
                raise UnstableRunError(
                    f"step {step} (t = {time:.6g} s): the bound circulation of surface "
                    f"'{s.name}' is not finite at strip {k % s.n_span}; likely cause: the wake "
                    f"blew up next to the surface; remedy: {self.remedy}")

    def check_velocities(self, step: int, time: float, wakes, names, u_nodes, u_par) -> None:
        """Wake velocities (nodes stacked wake by wake, then particles) are finite and bounded."""
        for what, u, counts in (("node", u_nodes, [w.node_count for w in wakes]),
                                ("particle", u_par, [w.particle_count for w in wakes])):
            if len(u) == 0:
                continue
            speed = np.sqrt(np.einsum("ij,ij->i", u, u))
            bad = ~(speed <= self.speed_limit)   # also catches nan
            if not bad.any():
                continue
            i = int(np.flatnonzero(bad)[0]) if not np.isfinite(speed).all() else int(np.argmax(speed))
            owner = int(np.searchsorted(np.cumsum(counts), i, side="right"))
            local = i - (int(np.sum(counts[:owner])) if owner else 0)
            value = speed[i]
            shown = "not finite" if not np.isfinite(value) else (
                f"{value:.4g} m/s, {value / self.speed_scale:.3g} times the flow's speed scale "
                f"{self.speed_scale:.4g} m/s (limit {SPEED_FACTOR:g} times)")
            raise UnstableRunError(
                f"step {step} (t = {time:.6g} s): the speed of wake {what} {local} of surface "
                f"'{names[owner]}' is {shown}; likely cause: the time step is too large for the "
                f"wake spacing or the vortex cores are too small, so the wake is blowing up; "
                f"remedy: {self.remedy}")

    def check_memory(self, step: int, time: float, wakes) -> None:
        """The wake still fits the memory budget."""
        if self.budget is None:
            return
        segments = sum(2 * w.node_count for w in wakes)   # a lattice has about two segments a node
        particles = sum(w.particle_count for w in wakes)
        elements = segments + particles
        need = peak_bytes(segments, particles, self.unknowns)
        if need > self.budget:
            raise MemoryBudgetError(
                f"step {step} (t = {time:.6g} s): the wake has grown to about {elements:,} "
                f"elements, needing about {need / 2 ** 30:.3g} GiB, beyond {self.budget_source} "
                f"({self.budget / 2 ** 30:.3g} GiB); remedy: set [wake] max_age to trim old "
                "wake, use [wake] model = \"particles\", fewer steps, or raise --max-memory")


class RunControl:
    """How the time loop reacts to a failed check, a signal and a due checkpoint.

    Parameters
    ----------
    checkpoint_every : int
        Write a checkpoint after every this many steps (0: never).
    save : callable, optional
        ``save(state)`` writes a :class:`wakes.io.checkpoint.LoopState`;
        needed for checkpoints.
    keep_partial : bool
        False (library default): a failed check raises. True: the loop stops
        and returns a partial :class:`wakes.simulate.Run` whose ``status``
        says why and whose ``resume_state`` is the last good state.
    max_memory : int, optional
        Memory budget [B] of the watchdog.
    snapshot_every : int
        Hand the wake to ``snapshot`` at the start of every step that is a
        multiple of this (0: never; the final wake is the caller's).
    snapshot : callable, optional
        ``snapshot(step, time, sources, surfaces)`` with the wake's
        Filaments and Particles and the bodies' lifting surfaces at that
        step's time [s], e.g.
        :meth:`wakes.io.snapshots.WakeSnapshots.write`.
    """

    def __init__(self, *, checkpoint_every: int = 0, save=None, keep_partial: bool = False,
                 max_memory: int | None = None, snapshot_every: int = 0, snapshot=None):
        self.checkpoint_every = int(checkpoint_every)
        self.save = save
        self.keep_partial = keep_partial
        self.max_memory = max_memory
        self.snapshot_every = int(snapshot_every)
        self.snapshot = snapshot
        self.stop_signal: int | None = None

    @property
    def stop_requested(self) -> bool:
        return self.stop_signal is not None

    def checkpoint_due(self, steps_done: int) -> bool:
        """Whether a checkpoint is due after ``steps_done`` steps."""
        return (self.save is not None and self.checkpoint_every > 0
                and steps_done % self.checkpoint_every == 0)

    def snapshot_due(self, step: int, steps: int) -> bool:
        """Whether the wake at the start of ``step`` is wanted as a snapshot.

        The last step's wake is the run's final wake, written with the
        outputs, so it is never due here.
        """
        return (self.snapshot is not None and self.snapshot_every > 0 and step < steps - 1
                and step % self.snapshot_every == 0)

    @contextlib.contextmanager
    def catch_signals(self):
        """Within the block, SIGINT and SIGTERM ask the loop to stop after the current step.

        A second signal of either kind stops at once (KeyboardInterrupt).
        """
        def handler(signum, frame):
            if self.stop_signal is not None:
                raise KeyboardInterrupt
            self.stop_signal = signum

        old = {s: signal.signal(s, handler) for s in (signal.SIGINT, signal.SIGTERM)}
        try:
            yield self
        finally:
            for s, h in old.items():
                signal.signal(s, h)


EXIT_UNSTABLE = 3      # the watchdog stopped an unstable run (checkpoint and outputs so far written)
EXIT_MEMORY = 4        # the run would exceed, or has outgrown, the memory budget
EXIT_FAILED = 2        # another error a user can cause met during the run (checkpoint written)


def exit_status(run) -> int:
    """The ``wakes run`` exit status of a run: 0 finished, 128 + signal when interrupted."""
    if run.status == "finished":
        return 0
    if run.status == "interrupted":
        return 128 + int(run.stop_signal or signal.SIGINT)
    return {"unstable": EXIT_UNSTABLE, "memory": EXIT_MEMORY}.get(run.status, EXIT_FAILED)
