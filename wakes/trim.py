"""Trim a rotor: the collective and cyclic pitch that give target revolution-averaged loads.

A rotor of a case is trimmed when the figures its runs report over the
last revolution (``summary.json``: thrust, hub moments, in-plane forces...)
meet targets within tolerances. :func:`trim_rotor` finds the controls, case
keys of the rotor in degrees (:data:`TRIM_CONTROLS`: ``collective``,
``cyclic_cos`` theta_1c, ``cyclic_sin`` theta_1s), by Newton iterations on
those figures, one control per target:

1. run the case as given: figures f(x_0) at the controls x_0;
2. the Jacobian J = df/dx by forward differences, one run per control,
   each moved by ``step_deg``;
3. the Newton step dx = -J^-1 (f - target), shortened to at most
   ``max_change_deg`` on any control and kept inside the controls' accepted
   ranges; run at x + dx;
4. Broyden's update of J from the step and the change of f (Broyden 1965,
   Math. Comp. 19), instead of new differences; repeat 3-4 until every
   target is met or ``max_iterations`` steps are done.

Each run is a full run of the case (its steps, its wake), so the figures
are those the trimmed run reports; they change smoothly with the controls
as long as the run settles (a run whose loads are still changing, see the
plausibility warning ``loads-not-settled``, makes trimming to a tight
tolerance meaningless). Default tolerances (our choice): forces 0.5 % of
the thrust scale T_s (the thrust target, or else the first run's thrust),
moments 0.5 % of T_s R.

A case file asks for a trim in a rotor's ``[bodies.NAME.trim]`` table
(:class:`wakes.case.specs.TrimSpec`: thrust, roll and pitch moment targets);
``wakes run`` then trims every such rotor (:func:`trim_case`), writes the
trimmed case's run and records each trim in ``summary.json`` under
``"trim"``. :func:`wakes.run.run_case` and the points of a sweep run the
controls as written.

A rigid, hingeless rotor has no flapping to trim: its hub moments are what
a trim to zero moments removes. Failure to trim raises
:class:`wakes.errors.TrimError` naming each target missed, its residual and
the controls reached.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from .case import Case
from .case.specs import RotorSpec
from .errors import InputError, TrimError
from .run import run_case
from .simulate import Run

#: The controls a trim can move: case keys of a rotor [deg].
TRIM_CONTROLS = ("collective", "cyclic_cos", "cyclic_sin")
#: Default relative tolerance of a force target (of the thrust scale) and a moment target (of it times R).
FORCE_TOLERANCE = 5e-3
MOMENT_TOLERANCE = 5e-3


@dataclass
class TrimResult:
    """A trimmed rotor.

    Attributes
    ----------
    controls : dict
        The trimmed controls [deg] by case key.
    figures : dict
        The targets' figures of the trimmed run, by summary key.
    residuals : dict
        Figure minus target, by summary key.
    tolerances : dict
        The tolerance each residual met, by summary key.
    iterations : int
        Newton steps taken (0: the case as given was trimmed).
    runs : int
        Runs made, the Jacobian's included.
    history : list of dict
        Every run: ``{"controls": {...}, "figures": {...}}`` in order.
    case : wakes.case.Case
        The case with the trimmed controls.
    run : wakes.simulate.Run
        The run of that case.
    """

    controls: dict
    figures: dict
    residuals: dict
    tolerances: dict
    iterations: int
    runs: int
    history: list
    case: Case
    run: Run

    def summary(self) -> dict:
        """The trim as plain data for ``summary.json``."""
        return {"controls_deg": dict(self.controls), "figures": dict(self.figures),
                "residuals": dict(self.residuals), "tolerances": dict(self.tolerances),
                "iterations": self.iterations, "runs": self.runs}


def _rotor(case: Case, body: str) -> RotorSpec:
    try:
        spec = case.body(body)
    except KeyError:
        raise InputError(f"trim: no body {body!r} in the case (bodies: "
                         f"{', '.join(b.name for b in case.bodies)})") from None
    if not isinstance(spec, RotorSpec):
        raise InputError(f"trim: body {body!r} is a {spec.type}; only a rotor can be trimmed")
    return spec


def _limits(name: str) -> tuple[float, float]:
    meta = next(f.metadata for f in dataclasses.fields(RotorSpec) if f.name == name)
    return float(meta["minimum"]), float(meta["maximum"])


def with_controls(case: Case, body: str, controls: dict) -> Case:
    """``case`` with the rotor ``body``'s controls (case keys [deg]) set to ``controls``."""
    spec = dataclasses.replace(_rotor(case, body), **{k: float(v) for k, v in controls.items()})
    return dataclasses.replace(case, bodies=tuple(spec if b.name == body else b for b in case.bodies))


def default_tolerances(targets: dict, scale_thrust: float, radius: float) -> dict:
    """Tolerance of each target (module notes): forces (``_N``) and moments (``_Nm``) from the
    thrust scale; any other figure 0.5 % of its target (at least 1e-6).

    Examples
    --------
    >>> default_tolerances({"thrust_N": 10.0, "pitch_moment_Nm": 0.0, "CT": 0.01}, 10.0, 0.5)
    {'thrust_N': 0.05, 'pitch_moment_Nm': 0.025, 'CT': 5e-05}
    """
    out = {}
    for key, target in targets.items():
        if key.endswith("_Nm"):
            out[key] = MOMENT_TOLERANCE * abs(scale_thrust) * radius
        elif key.endswith("_N"):
            out[key] = FORCE_TOLERANCE * abs(scale_thrust)
        else:
            out[key] = max(FORCE_TOLERANCE * abs(target), 1e-6)
    return out


def trim_rotor(case: Case, body: str, targets: dict, controls=None, *, tolerances: dict | None = None,
               max_iterations: int = 8, step_deg: float = 0.5, max_change_deg: float = 3.0,
               progress=None) -> TrimResult:
    """Find the controls of rotor ``body`` that make its figures meet ``targets`` (module notes).

    Parameters
    ----------
    case : wakes.case.Case
        The case; its controls are the starting point.
    body : str
        The rotor to trim.
    targets : dict
        Summary key -> target value, e.g. ``{"thrust_N": 10.0,
        "roll_moment_Nm": 0.0, "pitch_moment_Nm": 0.0}``; any finite
        figure of the rotor's ``summary.json`` entry.
    controls : sequence of str, optional
        As many of :data:`TRIM_CONTROLS` as there are targets; by default
        the first ones (``collective`` for one target).
    tolerances : dict, optional
        Summary key -> largest accepted |figure - target|; defaults by
        :func:`default_tolerances`.
    max_iterations : int
        Newton steps at most.
    step_deg : float
        Control step of the finite differences [deg].
    max_change_deg : float
        Largest change of any control in one Newton step [deg].
    progress : callable, optional
        Called after every run as ``progress(run_index, what, controls,
        residuals)``, ``what`` one of "start", "jacobian", "step".

    Returns
    -------
    TrimResult

    Raises
    ------
    wakes.errors.InputError
        An unknown body, control or target, or as many controls as targets not given.
    wakes.errors.TrimError
        The targets were not met within ``max_iterations`` steps: the
        message names each target missed, its residual and tolerance, and
        the controls reached (a control held at the end of its range is
        named as such).
    """
    spec = _rotor(case, body)
    if not targets:
        raise InputError("trim: give at least one target, e.g. {'thrust_N': 10.0}")
    controls = list(TRIM_CONTROLS[:len(targets)] if controls is None else controls)
    unknown = [c for c in controls if c not in TRIM_CONTROLS]
    if unknown or len(set(controls)) != len(controls):
        raise InputError(f"trim: controls must be distinct names of {', '.join(TRIM_CONTROLS)}; got {controls}")
    if len(controls) != len(targets):
        raise InputError(f"trim: {len(targets)} targets ({', '.join(targets)}) need as many controls; "
                         f"got {len(controls)} ({', '.join(controls)})")
    if not (max_iterations >= 0 and step_deg > 0.0 and max_change_deg > 0.0):
        raise InputError("trim: max_iterations must be >= 0, step_deg and max_change_deg positive")
    keys = list(targets)
    goal = np.array([float(targets[k]) for k in keys])
    lo, hi = np.array([_limits(c) for c in controls]).T
    history = []

    def evaluate(x, what):
        trial = with_controls(case, body, dict(zip(controls, x)))
        run = run_case(trial, use_cluster=False)
        figures = run.summary["bodies"][body]
        missing = [k for k in keys if not np.isfinite(figures.get(k, np.nan))]
        if missing:
            raise InputError(f"trim: target {missing[0]!r} is not a finite figure of {body}'s summary "
                             f"(figures: {', '.join(k for k, v in figures.items() if isinstance(v, float))})")
        f = np.array([float(figures[k]) for k in keys])
        history.append({"controls": dict(zip(controls, map(float, x))), "figures": dict(zip(keys, map(float, f)))})
        if progress is not None:
            progress(len(history), what, history[-1]["controls"], dict(zip(keys, map(float, f - goal))))
        return f, trial, run

    x = np.array([float(getattr(spec, c)) for c in controls])
    f, trial, run = evaluate(x, "start")
    thrust = float(targets.get("thrust_N", run.summary["bodies"][body]["thrust_N"]))
    tol = np.array([(tolerances or {}).get(k, v) for k, v in
                    default_tolerances(targets, thrust, spec.radius).items()])
    iterations = 0
    jac = None
    while np.any(np.abs(f - goal) > tol):
        if iterations >= max_iterations:
            raise TrimError(_failure(body, keys, f - goal, tol, controls, x, lo, hi, iterations))
        if jac is None:
            jac = np.empty((len(keys), len(controls)))
            for j in range(len(controls)):
                h = step_deg if x[j] + step_deg <= hi[j] else -step_deg
                xj = x.copy()
                xj[j] += h
                jac[:, j] = (evaluate(xj, "jacobian")[0] - f) / h
        try:
            dx = np.linalg.solve(jac, goal - f)
        except np.linalg.LinAlgError:
            raise TrimError(f"trim of {body}: the figures {', '.join(keys)} do not change independently "
                            f"with the controls {', '.join(controls)} (singular Jacobian); choose other "
                            "controls or targets") from None
        dx *= min(1.0, max_change_deg / max(float(np.max(np.abs(dx))), 1e-300))
        x_new = np.clip(x + dx, lo, hi)
        f_new, trial, run = evaluate(x_new, "step")
        step, change = x_new - x, f_new - f
        if float(step @ step) > 0.0:
            jac = jac + np.outer(change - jac @ step, step) / float(step @ step)   # Broyden 1965
        x, f = x_new, f_new
        iterations += 1
    residual = f - goal
    return TrimResult(controls=dict(zip(controls, map(float, x))), figures=dict(zip(keys, map(float, f))),
                      residuals=dict(zip(keys, map(float, residual))), tolerances=dict(zip(keys, map(float, tol))),
                      iterations=iterations, runs=len(history), history=history, case=trial, run=run)


def _failure(body, keys, residual, tol, controls, x, lo, hi, iterations) -> str:
    missed = [f"{k} off by {r:.4g} (tolerance {t:.3g})" for k, r, t in zip(keys, residual, tol) if abs(r) > t]
    held = [f"{c} = {v:g} deg{' (at the end of its range)' if v <= a or v >= b else ''}"
            for c, v, a, b in zip(controls, x, lo, hi)]
    return (f"trim of {body} did not converge in {iterations} steps: {'; '.join(missed)}; controls reached: "
            f"{', '.join(held)}. A target may be out of the rotor's reach with these controls, or the "
            "loads may not settle (run longer)")


def trim_case(case: Case, progress=None) -> tuple[Case, dict, Run | None]:
    """Trim every rotor of ``case`` whose ``[bodies.NAME.trim]`` table gives targets, one after another.

    Parameters
    ----------
    case : wakes.case.Case
    progress : callable, optional
        ``progress(body, run_index, what, controls, residuals)`` after every run (see
        :func:`trim_rotor`).

    Returns
    -------
    case : wakes.case.Case
        The case with every trimmed rotor's controls.
    trims : dict
        Body name -> :meth:`TrimResult.summary` (empty: nothing to trim).
    run : wakes.simulate.Run or None
        The last trim's run of the returned case (None without a trim).

    Raises
    ------
    wakes.errors.TrimError
        A rotor's targets were not met (see :func:`trim_rotor`).

    Examples
    --------
    >>> from wakes.case import load_case
    >>> trimmed, trims, run = trim_case(load_case("cases/survey-glider.toml"))
    >>> trims, run is None
    ({}, True)
    """
    trims, run = {}, None
    for spec in case.bodies:
        targets = spec.trim.targets() if isinstance(spec, RotorSpec) else {}
        if not targets:
            continue
        report = None if progress is None else (lambda *a, _name=spec.name: progress(_name, *a))
        result = trim_rotor(case, spec.name, targets, max_iterations=spec.trim.max_iterations, progress=report)
        case, run = result.case, result.run
        trims[spec.name] = result.summary()
    return case, trims, run

