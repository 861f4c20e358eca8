"""Size, memory and run time of a case, estimated without running it.

``wakes check`` prints these so a user sees, before a long run, how big the
wake will grow. The wake size follows from the bookkeeping of the time
loop (one wake row shed per step and surface, rows removed after
``max_age``, rotor sheets condensed into a few trailers after
``rollup_age``); memory counts the arrays that grow with the wake; run
time counts the Biot–Savart pairs each step of a direct summation
evaluates (:func:`step_pairs`), weighs them by the cost of the case's core
law, adds a fixed cost per step and surface, and divides by the pair rate
of a small yardstick timed on this machine when the estimate is made
(:func:`measure_pair_rate`). ``benchmarks/estimates.py`` runs every bundled
case and template and records estimate against measured time.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass

import numpy as np

from .aero.bodies import BODY_MODELS
from .aero.rotor import blade_turn_deg
from .case import Case
from .induction.api import induce
from .induction.elements import Filaments

# Bytes held per wake element during a step: a filament segment keeps two
# node coordinates, an index pair, circulation and core (about 80 B) and the
# node velocities of the free-wake update; a particle keeps position,
# strength, radius, velocity and the 3x3 velocity gradient (~200 B). Doubled
# for the copies the time loop makes of source lists (counted from the arrays
# in wakes.induction.elements and wakes.simulate).
BYTES_PER_SEGMENT = 2 * 120
BYTES_PER_PARTICLE = 2 * 200
BASE_MEMORY_MB = 150.0    # interpreter, numpy, numba and pandas at start (measured: 120-160 MB)
GRADIENT_WORK = 3.0       # a particle's velocity and gradient: about three velocity evaluations
# Cost of one pair of each filament core law relative to the yardstick's (vatistas2), from
# their pair rates on one core (direct sum, 2,000 segments on 1,000 random targets, measured
# 2026-12-05 on the machine of benchmarks/RESULTS.md: singular 405, rankine 413, scully 414,
# vatistas2 337, lamb-oseen 52 million pairs/s; the exponential dominates lamb-oseen).
CORE_COST = {"singular": 0.83, "rankine": 0.82, "scully": 0.81, "vatistas2": 1.0, "lamb-oseen": 6.5}
YARDSTICK_CORE = "vatistas2"
# Work of a step besides the wake sums (the circulation solve, polar look-ups, loads, wake
# bookkeeping), per lifting surface, in yardstick pairs: 4 ms at 3.3e8 pairs/s. Fitted once to
# the per-step times of the bundled cases and templates (2-9 ms per step and surface on the
# machine of benchmarks/RESULTS.md); the same value for every case.
STEP_OVERHEAD_PAIRS = 1.3e6


def influence_matrix_bytes(unknowns: int) -> int:
    """Memory [B] of the influence matrices of ``unknowns`` bound circulations.

    Three float64 components for every (point, unknown) pair, at the
    evaluation points and again at the load points (as many of each as
    there are unknowns).
    """
    return 3 * 8 * 2 * unknowns ** 2


def peak_bytes(segments: int, particles: int, unknowns: int) -> int:
    """Peak memory [B] of a step with this many wake segments, particles and unknowns.

    The same accounting as :func:`estimate_case`.
    """
    return int(BASE_MEMORY_MB * 1e6 + segments * BYTES_PER_SEGMENT + particles * BYTES_PER_PARTICLE
               + influence_matrix_bytes(unknowns))


@dataclass(frozen=True)
class Estimate:
    """What a run of a case is expected to cost.

    Attributes
    ----------
    steps : int
        Time steps.
    dt_s : float
        Time step [s].
    surfaces : int
        Lifting surfaces (one per wing half-lattice or per rotor blade).
    bound_unknowns : int
        Bound-circulation unknowns solved each step.
    final_segments, final_particles : int
        Wake filament segments and particles at the end of the run.
    peak_elements : int
        Largest wake size during the run.
    memory_mb : float
        Peak memory of the run [MB], order of magnitude.
    pair_evaluations : float
        Biot–Savart pairs of a direct summation over the whole run.
    pair_rate_per_s : float
        Pairs per second of the yardstick measured on this machine (direct
        sum, the ``vatistas2`` core, with this process's numba threads).
    run_time_s : float
        Estimated wall time [s] with direct summation at the yardstick's
        rate (so with the same numba threads as the yardstick); a
        treecode (``[wake] induction``) is faster on large wakes.
    step_times_s : ndarray, shape (steps,)
        Estimated wall time [s] of every step (their sum is ``run_time_s``),
        what the progress bar's time left is scaled from.
    """

    steps: int
    dt_s: float
    surfaces: int
    bound_unknowns: int
    final_segments: int
    final_particles: int
    peak_elements: int
    memory_mb: float
    pair_evaluations: float
    pair_rate_per_s: float
    run_time_s: float
    step_times_s: np.ndarray

    def table(self) -> list[tuple[str, str]]:
        """Rows (quantity, value) for printing."""
        return [("time steps", f"{self.steps} of {self.dt_s:.4g} s"),
                ("lifting surfaces", str(self.surfaces)),
                ("bound unknowns", str(self.bound_unknowns)),
                ("final wake", f"{self.final_segments:,} segments, {self.final_particles:,} particles"),
                ("memory", f"about {self.memory_mb:,.0f} MB"),
                ("Biot-Savart pairs", f"{self.pair_evaluations:.3g} (direct sum)"),
                ("run time", f"about {duration(self.run_time_s)} (direct sum; "
                             f"yardstick {self.pair_rate_per_s:.3g} pairs/s measured here)")]


def duration(s: float) -> str:
    """A time in words for the terminal: seconds, minutes or hours."""
    if s < 90:
        return f"{s:.0f} s"
    if s < 5400:
        return f"{s / 60:.0f} min"
    return f"{s / 3600:.1f} h"


def _rows_kept(spec, case: Case, steps: int) -> np.ndarray:
    """Wake rows of one surface after each step, shape (steps,)."""
    dt = case.time.dt
    rows = np.arange(1, steps + 1, dtype=np.float64)
    max_age = case.wake.max_age
    if hasattr(spec, "wake_revolutions"):
        max_age = min(max_age, spec.wake_revolutions * 60.0 / spec.rpm)
    if math.isfinite(max_age):
        rows = np.minimum(rows, math.floor(max_age / dt) + 2)
    return rows


def wake_sizes(case: Case) -> tuple[np.ndarray, np.ndarray]:
    """Wake segments and particles after every step, summed over surfaces.

    Parameters
    ----------
    case : Case
        A resolved case (:func:`wakes.case.load_case`).

    Returns
    -------
    segments, particles : ndarray of int, shape (steps,)

    Examples
    --------
    >>> from wakes.case import load_case
    >>> seg, par = wake_sizes(load_case("cases/survey-glider.toml"))
    >>> len(seg), bool(seg[-1] > seg[0])     # one entry per step; the wake grows
    (70, True)
    """

    seg, par, _ = _wake_counts(case)
    return seg, par


def _wake_counts(case: Case) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Wake segments, particles and filament nodes after every step, summed over surfaces."""
    steps = case.time.steps
    seg = np.zeros(steps)
    par = np.zeros(steps)
    nodes = np.zeros(steps)
    near = case.wake.near_wake_steps if case.wake.model == "particles" else None
    for spec in case.bodies:
        body = BODY_MODELS[spec.type](spec, case)
        for s in body.surfaces(0.0):
            n = s.te_nodes.shape[0] - 1
            rows = _rows_kept(spec, case, steps)
            rollup = getattr(spec, "rollup_age", float("inf"))
            if math.isfinite(rollup):      # rotor blade: sheet rows, then b trailers per row
                per_step = blade_turn_deg(spec.rpm, case.time.dt)
                sheet = np.minimum(rows, max(1, math.ceil(rollup / per_step)) + 1)
                far = rows - sheet
                b = spec.inboard_trailers + 1
                seg += (sheet * n + np.maximum(sheet - 1, 0) * (n + 1)
                        + far * (b - 1) + far * b)
                nodes += sheet * (n + 1) + far * b
            elif near is not None:         # particle wake behind near_wake_steps filament rings
                fil = np.minimum(rows, near + 1)
                seg += fil * n + np.maximum(fil - 1, 0) * (n + 1)
                par += (rows - fil) * (2 * n + 1)
                nodes += fil * (n + 1)
            else:
                seg += rows * n + np.maximum(rows - 1, 0) * (n + 1)
                nodes += rows * (n + 1)
    return seg.astype(np.int64), par.astype(np.int64), nodes.astype(np.int64)


def step_pairs(case: Case) -> np.ndarray:
    """Biot–Savart pairs each step evaluates, in units of a filament pair, shape (steps,).

    Step k starts with the wake of the steps before it. The lifting
    surfaces' evaluation points (and a vortex lattice's load points) see
    the wake; in a free wake every filament node sees the wake and the
    surfaces' own filaments, and every particle sees them with the velocity
    gradient (about three times the work of a velocity). A ground doubles
    every source (its mirror images).

    Examples
    --------
    >>> from wakes.case import load_case
    >>> pairs = step_pairs(load_case("cases/survey-glider.toml"))
    >>> len(pairs), bool(pairs[0] == 0), bool(pairs[-1] > pairs[10])   # no wake at step 0; it grows
    (70, True, True)
    """
    seg, par, nodes = (np.concatenate([[0], a[:-1]]).astype(np.float64) for a in _wake_counts(case))
    targets = 0
    surface_segments = 0
    for spec in case.bodies:
        for s in BODY_MODELS[spec.type](spec, case).surfaces(0.0):
            targets += s.n_unknowns * (1 if s.lifting_line else 2)
            surface_segments += 2 * s.n_unknowns + s.te_nodes.shape[0]
    images = 2.0 if case.ground.point is not None else 1.0
    pairs = targets * (seg + par) * images
    if case.wake.motion == "free":
        sources = (seg + par + surface_segments) * images
        pairs += nodes * sources + GRADIENT_WORK * par * sources
    return pairs


def remaining_time(step_costs, done: int, elapsed_s: float) -> float:
    """Time [s] left in a run, from its cost per step and the speed measured so far.

    The steps' costs (any unit, e.g. :func:`step_pairs` plus a fixed cost
    per step) tell how the work is spread over the run; the time the first
    ``done`` steps took gives the time of one unit of cost on this machine
    now. A rotor's wake grows, so its later steps cost more: a straight
    line through the steps done would promise too early an end.

    Parameters
    ----------
    step_costs : array_like, shape (steps,)
        Cost of every step of the run.
    done : int
        Steps done.
    elapsed_s : float
        Wall time [s] those steps took.

    Examples
    --------
    Steps that cost 1, 2, 3, 4: the first two took 3 s (1 s a unit), the
    two left cost 7 units:

    >>> remaining_time([1, 2, 3, 4], 2, 3.0)
    7.0
    """
    costs = np.asarray(step_costs, dtype=np.float64)
    spent = float(costs[:done].sum())
    if done <= 0 or spent <= 0.0:
        return float("nan")
    return elapsed_s / spent * float(costs[done:].sum())


def step_costs(case: Case) -> np.ndarray:
    """Cost of every step in yardstick pairs (:func:`measure_pair_rate`), shape (steps,).

    The step's pairs (:func:`step_pairs`) at the cost of the case's core
    law (``CORE_COST``; particle pairs are counted at the same cost, a
    rough figure), plus ``STEP_OVERHEAD_PAIRS`` per lifting surface.

    Examples
    --------
    >>> from wakes.case import load_case
    >>> costs = step_costs(load_case("cases/drone-lift-rotor.toml"))
    >>> bool(costs[-1] > 2 * costs[5])     # a rotor's wake grows: late steps cost more
    True
    """
    surfaces = sum(len(BODY_MODELS[spec.type](spec, case).surfaces(0.0)) for spec in case.bodies)
    return step_pairs(case) * CORE_COST[case.wake.core] + STEP_OVERHEAD_PAIRS * surfaces


def measure_pair_rate(n: int = 600) -> float:
    """Pairs per second of the yardstick: :func:`wakes.induce`, direct sum, on this machine.

    Times ``n`` filament segments (``vatistas2`` core, between random
    points of a unit cube) acting on ``n`` targets after one warm-up call
    (which also loads or compiles the kernel); the best of three.
    """

    rng = np.random.default_rng(7)
    nodes = rng.random((n + 1, 3))
    seg = np.stack([np.arange(n), np.arange(1, n + 1)], axis=1)
    fil = Filaments(nodes, seg, np.ones(n), 0.01, core=YARDSTICK_CORE)
    targets = rng.random((n, 3))
    induce([fil], targets, method="direct")
    best = float("inf")
    for _ in range(3):
        start = time.perf_counter()
        induce([fil], targets, method="direct")
        best = min(best, time.perf_counter() - start)
    return n * n / max(best, 1e-9)


def estimate_case(case: Case, *, pair_rate: float | None = None) -> Estimate:
    """Estimate wake size, memory and run time of a case without running it.

    Parameters
    ----------
    case : Case
        A resolved case (:func:`wakes.case.load_case`).
    pair_rate : float, optional
        Yardstick pairs per second; measured with :func:`measure_pair_rate`
        when not given.

    Returns
    -------
    Estimate

    Examples
    --------
    >>> from wakes.case import load_case
    >>> est = estimate_case(load_case("cases/survey-glider.toml"), pair_rate=1e8)
    >>> est.final_segments > 0 and est.run_time_s > 0
    True
    """

    seg, par = wake_sizes(case)
    surfaces = []
    for spec in case.bodies:
        surfaces += BODY_MODELS[spec.type](spec, case).surfaces(0.0)
    unknowns = sum(s.n_unknowns for s in surfaces)
    rate = pair_rate if pair_rate is not None else measure_pair_rate()
    step_times = step_costs(case) / rate
    total = seg + par
    peak = int(total.max()) if len(total) else 0
    memory = (BASE_MEMORY_MB + (int(seg.max()) * BYTES_PER_SEGMENT
                                + int(par.max()) * BYTES_PER_PARTICLE) / 1e6
              + influence_matrix_bytes(unknowns) / 1e6)
    return Estimate(steps=case.time.steps, dt_s=case.time.dt, surfaces=len(surfaces),
                    bound_unknowns=unknowns, final_segments=int(seg[-1]), final_particles=int(par[-1]),
                    peak_elements=peak, memory_mb=memory, pair_evaluations=float(step_pairs(case).sum()),
                    pair_rate_per_s=rate, run_time_s=float(step_times.sum()), step_times_s=step_times)
