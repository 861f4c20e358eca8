"""The time loop: bodies shed wakes, circulation is solved, loads are recorded.

One step at time t (:meth:`TimeLoop.step`, driven by :func:`wakes.run.run_case`):

1. the bodies place their lifting surfaces at t;
2. the wakes induce velocity at the surfaces' evaluation points, where the
   onset flow is the freestream plus its gust, if any (:mod:`wakes.aero.gust`);
3. the bound circulation is solved (:mod:`wakes.aero.lifting_line`);
4. loads and coefficients of every body make a row of the loads table;
5. the wake nodes and particles move (free: local velocity; frozen:
   freestream and gust) by one step of Heun's second-order method
   (:mod:`wakes.aero.wake_motion`), particles stretch, and each surface
   sheds a new row at its trailing edge carrying the circulation it had at t;
6. old wake is converted to particles or removed.

Every induced velocity comes from :func:`wakes.induce`.
"""

from __future__ import annotations

import inspect
import subprocess
import time as _time
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from ._version import __version__
from .aero.bodies import BODY_MODELS
from .aero.ground import with_ground
from .aero.influence_cache import RigidInfluenceCache
from .aero.lifting_line import LinearCache, SolverSettings, solve_circulation
from .aero.loads import strip_loads, trefftz_induced_drag
from .aero.plausibility import body_polar_limits, check_run
from .aero.vortex_lattice import surface_filaments
from .aero.wake import WakeSettings
from .aero.wake_motion import march
from .budget import MemoryBudgetError
from .case import Case
from .errors import NumericalError, WakesError
from .induction.api import induce
from .induction.elements import Particles
from .io.atomic import write_text
from .io.checkpoint import LoopState
from .io.tables import write_json, write_table
from .vortex.dynamics import stretching_rate
from .watchdog import RunControl, Watchdog


def _revision() -> str | None:
    """The git commit of the package source, or None outside a git checkout."""
    try:
        out = subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=Path(__file__).parent,
                             capture_output=True, text=True, timeout=5)
    except (OSError, subprocess.SubprocessError):
        return None
    if out.returncode != 0:
        return None
    return out.stdout.strip() or None


@dataclass
class Run:
    """The result of a run.

    Attributes
    ----------
    case : Case
        The resolved case that was run.
    loads : pandas.DataFrame
        One row per step and body: ``step``, ``time_s``, ``body``, forces
        [N] and coefficients, solver ``iterations`` and ``residual``, wake
        element counts.
    sections : pandas.DataFrame
        Spanwise distribution of every body at the last step.
    summary : dict
        ``{"bodies": {name: {...}}, "case": {...}, "version": ..., "run": {...}}``.
    wake : dict
        Final wake of every surface: ``{surface: list of Filaments/Particles}``.
    wall_time_s : float
        Run time [s].
    status : str
        How the run ended: "finished"; "interrupted" (a stop request, e.g.
        SIGINT or SIGTERM, at the end of a step); "unstable" (the watchdog
        found non-finite values, a runaway wake speed or a circulation
        solve that did not converge); "memory" (the wake outgrew the memory
        budget); "failed" (another error a user can cause). Anything but
        "finished" happens only with ``RunControl(keep_partial=True)``.
    message : str
        Why the run stopped early ("" when finished): step, time, element,
        likely cause and remedy.
    resume_state : wakes.io.checkpoint.LoopState or None
        The last good state to go on from when the run stopped early: for an
        unstable run the start of the step before the failing one (the
        failing step's starting state already came from a bad move), else
        the start of the step that did not finish.
    stop_signal : int or None
        The signal that stopped an interrupted run (set by
        :func:`wakes.run.run_guarded`).
    tables : dict
        Extra result tables of the bodies, ``{file name: DataFrame}``
        (a rotor's ``tip_vortex.csv``), written beside the others.
    wake_step : int
        The step whose starting wake ``wake`` is (the last step for a
        finished run, the step to resume from for a partial one).
    wake_time_s : float
        The time of that wake [s].
    placed_surfaces : list
        The bodies' lifting surfaces at ``wake_time_s`` as the loop left
        them (flapping blades at their flap angles), drawn with the wake.
    """

    case: Case
    loads: pd.DataFrame
    sections: pd.DataFrame
    summary: dict
    wake: dict = field(repr=False)
    wall_time_s: float = 0.0
    status: str = "finished"
    message: str = ""
    resume_state: LoopState | None = field(default=None, repr=False)
    stop_signal: int | None = None
    tables: dict = field(default_factory=dict, repr=False)
    wake_step: int = 0
    wake_time_s: float = 0.0
    placed_surfaces: list = field(default_factory=list, repr=False)

    def surfaces(self, time: float) -> list:
        """The lifting surfaces of every body at ``time`` [s] (built again from the case: flapping
        blades at their starting angle; :attr:`placed_surfaces` has them as the run left them)."""
        return [s for spec in self.case.bodies for s in BODY_MODELS[spec.type](spec, self.case).surfaces(time)]

    def write(self, out_dir) -> list[Path]:
        """Write the run folder: loads.csv, sections.csv, summary.json, case.toml and the wake.

        Returns the paths written. The folder is created if needed.
        """
        out = Path(out_dir)
        out.mkdir(parents=True, exist_ok=True)
        paths = [out / "loads.csv", out / "sections.csv", out / "summary.json", out / "case.toml"]
        write_table(self.loads, paths[0])
        write_table(self.sections, paths[1])
        write_json(self.summary, paths[2])
        revision = self.summary["run"].get("revision")
        header = (f"Resolved case written by wakes {__version__}"
                  + (f" (revision {revision})" if revision else "")
                  + f"; every default filled in.\nSource: {self.case.source}"
                  + "".join(f"\nSet on the command line: {t}" for t in self.case.settings))
        write_text(paths[3], self.case.to_toml(header, relative_to=out))   # file paths: relative
        seg, par = wake_tables(self.wake) if self.case.output.wake else (pd.DataFrame(), pd.DataFrame())
        for name, table in (("wake_segments.csv", seg), ("wake_particles.csv", par)):
            if len(table):
                write_table(table, out / name)
                paths.append(out / name)
            elif (out / name).exists():  # left by an earlier run in this folder
                (out / name).unlink()
        for name, table in self.tables.items():
            write_table(table, out / name)
            paths.append(out / name)
        return paths


def wake_tables(wake: dict) -> tuple[pd.DataFrame, pd.DataFrame]:
    """The final wake as two tables: filament segments and particles."""
    segs, parts = [], []
    for name, sources in wake.items():
        for s in sources:
            if isinstance(s, Particles):
                p, a = s.positions, s.strengths
                parts.append(pd.DataFrame({"surface": name, "x_m": p[:, 0], "y_m": p[:, 1],
                                           "z_m": p[:, 2], "alpha_x_m3_s": a[:, 0],
                                           "alpha_y_m3_s": a[:, 1], "alpha_z_m3_s": a[:, 2],
                                           "radius_m": s.radii}))
            else:
                a, b = s.endpoints()
                segs.append(pd.DataFrame({"surface": name, "x0_m": a[:, 0], "y0_m": a[:, 1],
                                          "z0_m": a[:, 2], "x1_m": b[:, 0], "y1_m": b[:, 1],
                                          "z1_m": b[:, 2], "gamma_m2_s": s.circulation,
                                          "core_radius_m": s.core_radius}))
    empty = pd.DataFrame()
    return (pd.concat(segs, ignore_index=True) if segs else empty,
            pd.concat(parts, ignore_index=True) if parts else empty)


def wake_settings(case: Case) -> WakeSettings:
    """The wake options of a case."""
    w = case.wake
    return WakeSettings(model=w.model, motion=w.motion, core=w.core, core_radius=w.core_radius,
                        core_growth=w.core_growth, core_eddy_factor=w.core_eddy_factor,
                        viscosity=case.fluid.kinematic_viscosity,
                        particle_kernel=w.particle_kernel, particle_overlap=w.particle_overlap,
                        near_wake_steps=w.near_wake_steps, stretching=w.stretching,
                        max_age=w.max_age,
                        cores_at_surfaces=w.cores_at_surfaces)


class TimeLoop:
    """The state of one run of a case and the step that advances it.

    Built from a resolved case; owns the bodies, their wakes, the bound
    circulation of the last two steps, the rows of the loads table done so
    far and the caches of influence matrices. :meth:`step` runs one time
    step at the loop's own time; :meth:`run` drives the steps, calling the
    ``control`` (:class:`wakes.watchdog.RunControl`) for checkpoints,
    snapshots and stop requests and the :class:`wakes.watchdog.Watchdog`
    for every check, and returns a :class:`Run`.

    Parameters
    ----------
    case : Case
        The resolved case.
    control : wakes.watchdog.RunControl, optional
        Default: no checkpoints, a failed check raises.
    cluster : object, optional
        Something with ``inducer(wake_elements)`` returning the function
        that computes induced velocities for a wake of that size (keyword
        arguments of :func:`wakes.induce`), e.g.
        :class:`wakes.cluster.WakeCluster`; default: this process only.
    """

    def __init__(self, case: Case, control: RunControl | None = None, cluster=None):
        self.case = case
        self.bodies = [BODY_MODELS[spec.type](spec, case) for spec in case.bodies]
        self.settings = wake_settings(case)
        self.solver = SolverSettings(case.solver.tolerance, case.solver.max_iterations,
                                     case.solver.relaxation)
        self.v_inf = case.freestream.vector()
        self.gust = case.gust()
        self.rho, self.dt, self.steps = case.fluid.density, case.time.dt, case.time.steps
        self.method = {"method": case.wake.induction, "tolerance": case.wake.induction_tolerance}
        self.cluster = cluster
        self.induce = induce
        self.ground = case.ground.plane()
        self.cache = RigidInfluenceCache(self.ground)
        self.linear = LinearCache()
        self.control = control if control is not None else RunControl()
        layout = [(b, b.surfaces(0.0)) for b in self.bodies]
        self.wakes = [b.new_wake(s, 0.0, self.settings) for b, ss in layout for s in ss]
        self.gamma = np.zeros(sum(s.n_unknowns for _, ss in layout for s in ss))
        self.gamma_prev = None
        self.rows: list = []
        self.strips: list = []
        self.origin = (0, 0.0)
        self.first = 0
        self.watch = Watchdog.for_surfaces(self.v_inf, [s for _, ss in layout for s in ss],
                                           self.control.max_memory, wake=case.wake)

    def resume(self, state: LoopState) -> None:
        """Go on from ``state`` (read from a checkpoint) instead of step 0."""
        state.restore(self.wakes, self.cache, self.bodies)
        self.origin, self.first = state.origin, state.step
        self.gamma, self.gamma_prev, self.rows = state.gamma, state.gamma_prev, list(state.done_rows())

    def time_of(self, step: int) -> float:
        """The time [s] at the start of ``step``."""
        return self.origin[1] + (step - self.origin[0]) * self.dt

    def capture(self, step: int, time: float) -> LoopState:
        """The loop's state at the start of ``step``, to go back to or to write."""
        return LoopState.capture(step, time, self.origin, self.wakes, self.gamma, self.gamma_prev,
                                 self.rows, self.cache, self.bodies)

    def run(self, progress=None) -> Run:
        """Run the steps left; see :func:`wakes.run.run_case` for ``progress`` and the result."""
        started = _time.perf_counter()
        control, steps = self.control, self.steps
        report = _progress_reporter(progress)
        status, message, good, wake_time = "finished", "", None, None
        start = start_strips = previous = previous_strips = None
        t = 0.0
        try:
            for step in range(self.first, steps):
                t = self.time_of(step)
                previous, previous_strips = start, start_strips
                start, start_strips = self.capture(step, t), self.strips
                good, done_strips = start, start_strips
                self.watch.check_memory(step, t, self.wakes)
                if control.snapshot_due(step, steps):
                    control.snapshot(step, t, [e for w in self.wakes for e in w.sources(t)],
                                     [s for b in self.bodies for s in b.surfaces(t)])
                self.induce = (induce if self.cluster is None
                               else self.cluster.inducer(_wake_size(self.rows)))
                self.step(step, t)
                if progress is not None:
                    report(step + 1, steps, (self.rows[-1]["wake_segments"],
                                             self.rows[-1]["wake_particles"]))
                done = step + 1
                if done < steps and (control.stop_requested or control.checkpoint_due(done)):
                    good = self.capture(done, self.time_of(done))
                    if control.save is not None:
                        control.save(good)
                    if control.stop_requested:
                        status, message = "interrupted", f"stopped after step {step} (t = {t:.6g} s)"
                        wake_time = good.time
                        break
        except WakesError as exc:
            status = ("unstable" if isinstance(exc, NumericalError)
                      else "memory" if isinstance(exc, MemoryBudgetError) else "failed")
            if not control.keep_partial or good is None or (status == "failed" and not good.n_rows):
                raise  # nothing done worth keeping
            message = str(exc)
            if status == "unstable" and previous is not None and good is start:
                # The failing step's numbers came from its starting state, the product of the
                # previous step's move: go back to the start of that step, whose checks passed.
                good, done_strips = previous, previous_strips
                message += (f"; the last good state is the start of step {good.step} "
                            f"(t = {good.time:.6g} s)")
            good.restore(self.wakes, bodies=self.bodies)
            self.rows, self.strips, wake_time = good.done_rows(), done_strips, good.time
            t = self.rows[-1]["time_s"] if self.rows else good.time
        bodies = self.bodies
        steps_done = len(self.rows) // max(len(bodies), 1)
        layout = [(b, b.surfaces(t)) for b in bodies]
        surfaces = [s for _, ss in layout for s in ss]
        run = _assemble(self.case, bodies, layout, self.rows, self.strips, self.wakes, surfaces, t,
                        t if wake_time is None else wake_time, started, steps_done)
        run.status, run.message = status, message
        run.wake_step = steps - 1 if status == "finished" else good.step
        run.wake_time_s = t if wake_time is None else wake_time
        run.placed_surfaces = [s for b in bodies for s in b.surfaces(run.wake_time_s)]
        run.resume_state = good if status != "finished" else None
        run.summary.update(run_status(run, steps_done))
        run.summary["warnings"] = plausibility_warnings(run, bodies)
        return run

    def step(self, step: int, t: float) -> None:
        """One step at time ``t``: solve, append the loads rows, move and shed the wakes.

        Sets :attr:`strips` (the step's strip loads), :attr:`gamma` and
        :attr:`gamma_prev`. Wakes are changed only by replacing their
        arrays, after every check.
        """
        bodies, wakes, v_inf, ground = self.bodies, self.wakes, self.v_inf, self.ground
        layout = [(b, b.surfaces(t)) for b in bodies]
        surfaces = [s for _, ss in layout for s in ss]
        eval_pts = np.vstack([s.eval_points() for s in surfaces])
        vlm = [s for s in surfaces if not s.lifting_line]
        load_pts = (np.vstack([s.bound_midpoints().reshape(-1, 3) for s in vlm]) if vlm
                    else np.zeros((0, 3)))
        wake_src = [e for w in wakes for e in w.sources(t, at_surfaces=True)]
        v_wake = self.induce(with_ground(wake_src, ground), np.vstack([eval_pts, load_pts]),
                             **self.method)
        motion_eval = np.vstack([s.velocity_of(s.eval_points()) for s in surfaces])
        onset = undisturbed_flow(v_inf, self.gust, eval_pts, t) - motion_eval + v_wake[:eval_pts.shape[0]]
        aic, aic_load = self.cache.get(surfaces, eval_pts, load_pts)
        sol = solve_circulation(surfaces, aic, onset, self.gamma, self.solver, step=step, time=t,
                                linear_cache=self.linear)
        self.watch.check_circulation(step, t, surfaces, sol.gamma)
        gamma = np.concatenate([g.ravel() for g in sol.gamma])

        strips = _strip_loads(surfaces, sol, gamma, aic_load, v_wake[eval_pts.shape[0]:], v_inf,
                              self.gamma_prev, self.dt, self.rho, self.gust, t)
        drags = _trefftz(layout, strips, v_inf, self.rho)
        k = 0
        n_seg = sum(e.segment_count for e in wake_src if not isinstance(e, Particles))
        n_par = sum(e.count for e in wake_src if isinstance(e, Particles))
        for body, ss in layout:
            mine = strips[k:k + len(ss)]
            row = {"step": step, "time_s": t, "body": body.name}
            row.update(body.loads_row(mine, sum(drags[k:k + len(ss)])))
            row.update({"iterations": sol.iterations, "residual": sol.residual,
                        "wake_segments": n_seg, "wake_particles": n_par})
            self.rows.append(row)
            k += len(ss)
        if step < self.steps - 1:
            prev = None
            if self.gamma_prev is not None:
                ends = np.cumsum([0] + [g.size for g in sol.gamma])
                prev = [self.gamma_prev[a:b].reshape(g.shape) for g, a, b in zip(sol.gamma, ends[:-1], ends[1:])]
            new_surfaces = _advance_wakes(wakes, bodies, surfaces, sol.gamma, prev, self.settings, v_inf,
                                          self.dt, t, self.method, self.watch, step, ground, self.induce,
                                          self.gust)
            for w, s, g in zip(wakes, new_surfaces, sol.gamma):
                w.shed(s.te_nodes, g[-1], t + self.dt)
                w.age_out(t + self.dt)
        self.strips, self.gamma = strips, gamma
        self.gamma_prev = gamma


def _wake_size(rows) -> int:
    """Wake elements (segments + particles) after the last step done."""
    return int(rows[-1]["wake_segments"] + rows[-1]["wake_particles"]) if rows else 0


def _progress_reporter(progress):
    """``progress`` as a callable of (step, steps, wake), whether it takes the wake or not."""
    if progress is None:
        return None
    try:
        inspect.signature(progress).bind(0, 0, (0, 0))
    except TypeError:
        return lambda step, steps, wake: progress(step, steps)
    except ValueError:   # no signature to inspect (some builtins): the documented three arguments
        pass
    return progress


#: ``summary.json`` ``status`` of each :attr:`Run.status`.
SUMMARY_STATUS = {"finished": "finished", "interrupted": "stopped", "memory": "over-budget",
                  "unstable": "diverged", "failed": "failed"}


def run_status(run: Run, steps_done: int) -> dict:
    """The ``status``, ``reason``, ``last_step`` and ``resume`` entries of ``summary.json``.

    ``status`` is "finished", "stopped" (a signal), "over-budget" (memory),
    "diverged" (the watchdog) or "failed"; ``last_step`` the index of the last
    step whose loads are in the tables (-1 when none); ``resume`` says whether
    and from which step the run can go on. In memory no checkpoint exists yet,
    so ``resume.possible`` is false here; :func:`wakes.run.run_guarded`, which
    writes the checkpoint, sets it.
    """
    finished = run.status == "finished"
    return {"status": SUMMARY_STATUS.get(run.status, "failed"),
            "reason": "all steps done" if finished else run.message,
            "last_step": steps_done - 1,
            "resume": {"possible": False,
                       "from_step": None if finished else run.resume_state.step,
                       "how": None}}


def plausibility_warnings(run: Run, bodies) -> list[dict]:
    """``summary.json`` ``warnings``: :func:`wakes.aero.plausibility.check_run` on the run's tables
    (empty when no loads were computed)."""
    if not len(run.loads):
        return []
    flags = check_run(run.summary, run.loads, run.sections, run.case, body_polar_limits(bodies))
    return [f.as_dict() for f in flags]


def _assemble(case, bodies, layout, rows, strips, wakes, surfaces, t, wake_time, started,
              steps_done) -> Run:
    """The run's tables and summary: loads rows, the strips of the last step done (at ``t``)
    and the wakes as they are at ``wake_time``."""
    steps, dt = case.time.steps, case.time.dt
    loads = pd.DataFrame(rows)
    k = 0
    tables = []
    for body, ss in layout if strips else ():
        tables.append(body.section_table(strips[k:k + len(ss)]))
        k += len(ss)
    sections = pd.concat(tables, ignore_index=True) if tables else pd.DataFrame()
    summary = {"bodies": {b.name: b.summary(loads) for b in bodies} if rows else {},
               "case": case.to_dict(), "version": __version__,
               "run": {"steps": steps, "steps_done": steps_done, "dt_s": dt, "final_time_s": t,
                       "wall_time_s": _time.perf_counter() - started, "revision": _revision()}}
    final_wake = {s.name: w.sources(wake_time) for s, w in zip(surfaces, wakes)}
    wall = _time.perf_counter() - started
    summary["run"]["wall_time_s"] = wall
    extra = {}
    for b in bodies if rows else ():
        for name, table in b.tables().items():  # bodies' tables of one name share a file
            extra[name] = pd.concat([extra[name], table], ignore_index=True) if name in extra else table
    return Run(case, loads, sections, summary, final_wake, wall, tables=extra)


def undisturbed_flow(v_inf: np.ndarray, gust, points: np.ndarray, time: float) -> np.ndarray:
    """The flow without the bodies and their wakes at ``points`` (M, 3) at ``time`` [s]: the
    freestream ``v_inf`` (3,) plus the ``gust``'s velocity (:class:`wakes.aero.gust.Gust`, or
    None), shape (M, 3) [m/s]."""
    points = np.asarray(points, dtype=np.float64).reshape(-1, 3)
    return v_inf + (np.zeros_like(points) if gust is None else gust.velocity(points, time))


def _strip_loads(surfaces, sol, gamma, aic_load, v_wake_load, v_inf, gamma_prev, dt, rho, gust=None, t=0.0):
    """Strip loads of every surface from a converged solution at time ``t`` [s], in the onset flow
    of the freestream ``v_inf`` and the ``gust`` (none by default)."""
    out = []
    k_eval = 0
    k_load = 0
    k_unk = 0
    for si, s in enumerate(surfaces):
        m = s.n_unknowns
        g_prev = None if gamma_prev is None else gamma_prev[k_unk:k_unk + m]
        onset_sec = undisturbed_flow(v_inf, gust, s.section_points, t) - s.velocity_of(s.section_points)
        if s.lifting_line:
            sl = slice(k_eval, k_eval + m)
            v_load = sol.velocity[sl].reshape(1, s.n_span, 3)
            out.append(strip_loads(s, sol.gamma[si], g_prev, dt, v_load, onset_sec, rho,
                                   ll_alpha=sol.alpha[sl], ll_cl=sol.cl[sl], ll_cd=sol.cd[sl]))
        else:
            pts = s.bound_midpoints().reshape(-1, 3)
            v = (undisturbed_flow(v_inf, gust, pts, t) - s.velocity_of(pts) + v_wake_load[k_load:k_load + m]
                 + np.einsum("ikn,n->ik", aic_load[k_load:k_load + m], gamma))
            out.append(strip_loads(s, sol.gamma[si], g_prev, dt, v.reshape(s.n_chord, s.n_span, 3),
                                   onset_sec, rho))
            k_load += m
        k_eval += m
        k_unk += m
    return out


def _trefftz(layout, strips, v_inf, rho):
    """Trefftz-plane induced drag of each surface (zero for bodies that do not take part)."""
    flat = [(body, s) for body, ss in layout for s in ss]
    take = [i for i, (body, _) in enumerate(flat) if body.trefftz]
    drags = [0.0] * len(flat)
    if take:
        groups = [(flat[i][1].te_nodes, strips[i].gamma, flat[i][1].section_fraction) for i in take]
        for i, d in zip(take, trefftz_induced_drag(groups, v_inf, rho)):
            drags[i] = d
    return drags


def _advance_wakes(wakes, bodies, surfaces, gammas, gammas_prev, settings, v_inf, dt, t, method, watch=None,
                   step=0, ground=None, induce=induce, gust=None) -> list:
    """Move every wake node and particle one step (free or frozen), stretching particles.

    One step of :func:`wakes.aero.wake_motion.march` (Heun's method): the
    second stage places the ``bodies`` at t + dt with their circulation
    ``gammas`` (per surface) extrapolated linearly through ``gammas_prev``
    (the previous step's, or None: held). ``method`` holds the keyword
    arguments ``method`` and ``tolerance`` of :func:`wakes.induce`.
    ``watch`` (:class:`wakes.watchdog.Watchdog`) checks every stage's
    velocities before anything moves. A ``ground``
    (:class:`wakes.aero.ground.GroundPlane`) adds the images of every
    element. ``induce`` is the function that sums the velocities (the
    engine's, or a cluster's for a large wake). A ``gust``
    (:class:`wakes.aero.gust.Gust`) carries the wake too, free or frozen:
    it is part of the onset flow. Returns the surfaces at t + dt.
    """
    placed = {t: surfaces}

    def surfaces_at(time):
        if time not in placed:
            placed[time] = [s for b in bodies for s in b.surfaces(time)]
        return placed[time]

    def gammas_at(time):
        if gammas_prev is None or time == t:
            return gammas
        return [g + (time - t) / dt * (g - g0) for g, g0 in zip(gammas, gammas_prev)]

    def velocities(time, trial):
        nodes = np.vstack([w.rows.reshape(-1, 3) for w in trial])
        parts = [w.positions for w in trial]
        n_par = sum(p.shape[0] for p in parts)
        u_nodes = undisturbed_flow(v_inf, gust, nodes, time)
        u_par = undisturbed_flow(v_inf, gust, np.vstack(parts) if n_par else np.zeros((0, 3)), time)
        stretch = None
        if settings.motion == "free":
            src = [surface_filaments(s, g, core=settings.core, core_radius=settings.core_radius,
                                     te_core_radius=settings.attached_core_radius)
                   for s, g in zip(surfaces_at(time), gammas_at(time))]
            src = with_ground(src + [e for w in trial for e in w.sources(time)], ground)
            u_nodes += induce(src, nodes, **method)
            if n_par:
                vel, grad = induce(src, np.vstack(parts), gradient=True, **method)
                u_par += vel
                alpha = np.vstack([w.strengths for w in trial])
                stretch = stretching_rate(settings.stretching, alpha, grad)
        if stretch is not None and not np.isfinite(stretch).all():
            u_par = np.where(np.isfinite(stretch), u_par, np.nan)   # reported as a non-finite particle
        return u_nodes, u_par, stretch

    def shedding(time):
        return [(s.te_nodes, g[-1]) for s, g in zip(surfaces_at(time), gammas)]

    def check(time, u_nodes, u_par):
        if watch is not None:
            watch.check_velocities(step, time, wakes, [s.name for s in surfaces], u_nodes, u_par)
        elif not (np.isfinite(u_nodes).all() and np.isfinite(u_par).all()):
            raise NumericalError(f"the wake velocity is not finite at t = {time:.6g} s; likely cause: a "
                                 "time step too large for the wake spacing or a core radius too small "
                                 "([time] dt, [wake] core_radius)")

    march(wakes, t, dt, velocities, shedding=shedding, check=check)
    return surfaces_at(t + dt)
