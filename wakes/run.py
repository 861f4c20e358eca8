"""The one orchestrator: a case in, a run (and its folder) out.

Every way of running a case goes through here: ``wakes run`` (:mod:`wakes.cli`),
the Python API (:func:`run_case`, :func:`run_to_folder`) and every point of
a sweep (:func:`wakes.sweep.run_point`). :func:`run_case` builds the time
loop (:class:`wakes.simulate.TimeLoop`), hands it the cluster the case asks
for and drives it; :func:`run_guarded` adds what keeps work from being lost
(the memory budget checked before the run, checkpoints, wake snapshots,
SIGINT/SIGTERM as a request to stop after the step, partial outputs) and
writes the run folder.

A run folder holds (see the README for the columns)::

    case.toml            the resolved case, every default filled in; paths relative to the folder
    polars/              copies of the polar tables the case reads (the folder may be moved)
    summary.json         figures of every body, the case, version and revision; the run's
                         status, reason, last step and resume, and plausibility warnings
    loads.csv            one row per step and body
    sections.csv         span or radial distributions at the last step
    radial_loading.csv, tip_vortex.csv, disc_map.csv, blade_harmonics.csv    rotors: radial
                         loading averaged over the last revolution and the blades; the tip
                         vortex's path; every blade's sections at every step of that
                         revolution; harmonics of blade 1's loads over it
    loads.parquet, sections.parquet    the same tables, when pyarrow is installed
    wake_segments.csv, wake_particles.csv   the final wake as tables
    wake/filaments_NNNNNN.vtp, wake/particles_NNNNNN.vtp   VTK PolyData wake snapshots,
    wake/surfaces_NNNNNN.vtp  the wings' and blades' panels at the same times,
                         every [output] snapshot_every steps and at the end
    wake/filaments.pvd, wake/particles.pvd, wake/surfaces.pvd   ParaView collections over time
    checkpoints/         the state to resume from (while a run is unfinished)
    plots/*.png          figures (:mod:`wakes.plots`)
    manifest.txt         every file the run wrote: what ``--overwrite`` removes before a new run

:func:`wakes.io.runfolder.read_run` reads one back.
"""

from __future__ import annotations

import io
import math
import os
import signal
import threading
from pathlib import Path

from .budget import check_budget
from .case import Case, load_case
from .cluster import WakeCluster
from .errors import InputError
from .io import atomic
from .io import checkpoint as checkpoints
from .io.checkpoint import LoopState
from .io.runfolder import RUN_MARKERS, RunFolder, clear_run, copy_inputs, read_run, record_files  # noqa: F401
from .io.snapshots import WakeSnapshots
from .io.tables import write_json
from .plots import plot_run
from .simulate import Run, TimeLoop
from .watchdog import RunControl


def run_case(case: Case, *, progress=None, control: RunControl | None = None,
             resume: LoopState | None = None, client=None, use_cluster: bool = True) -> Run:
    """Run a resolved case in memory.

    Parameters
    ----------
    case : Case
        From :func:`wakes.case.load_case`.
    progress : callable, optional
        Called after every step as ``progress(step, steps, wake)`` with the
        steps done, the steps of the run and ``wake`` = (filament segments,
        particles) in the wake of the step just done; a callable taking two
        arguments is called as ``progress(step, steps)``.
    control : wakes.watchdog.RunControl, optional
        Checkpoints, stop requests (signals) and what a failed check does;
        default: no checkpoints, a failed check raises.
    resume : wakes.io.checkpoint.LoopState, optional
        Go on from this state (read from a checkpoint) instead of step 0.
    client : dask.distributed.Client, optional
        Workers that share the wake's induction once the wake holds
        ``[cluster] min_wake`` elements; by default the case's ``[cluster]
        scheduler``, if any.
    use_cluster : bool
        False runs in this process only, whatever the case says (a sweep's
        points, which already run on the workers).

    Returns
    -------
    wakes.simulate.Run
        Loads per step, final sections, summary and final wake. Nothing is
        written; call :meth:`~wakes.simulate.Run.write` or use
        :func:`run_to_folder`.

    With ``control.keep_partial`` a failed check or a stop request ends
    the loop early instead: the returned run holds the steps done, its
    ``status`` ("interrupted", "unstable", "memory" or "failed") and
    ``message`` say why, and ``resume_state`` is the state to go on from.

    Raises
    ------
    wakes.errors.NumericalError
        If a circulation solve does not converge or the wake blows up
        (:class:`wakes.errors.UnstableRunError`).
    wakes.errors.MemoryBudgetError
        If the wake outgrows the memory budget.
    wakes.errors.PolarRangeError
        If a section leaves its polar table.

    Examples
    --------
    >>> from wakes.case import load_case
    >>> run = run_case(load_case("cases/survey-glider.toml"))
    >>> run.status, len(run.loads)
    ('finished', 70)
    """
    cluster = WakeCluster.open(case.cluster, client) if use_cluster else None
    try:
        loop = TimeLoop(case, control, cluster)
        if resume is not None:
            loop.resume(resume)
        return loop.run(progress)
    finally:
        if cluster is not None:
            cluster.close()


def run_guarded(case: Case, out, *, write, progress=None, max_memory: int | None = None,
                resume: LoopState | None = None, use_cluster: bool = True) -> Run:
    """Run a case so that no work is lost: budget check, checkpoints, signals, partial outputs.

    Parameters
    ----------
    case : wakes.case.Case
        The resolved case.
    out : path-like
        The run folder (created); checkpoints go to ``out/checkpoints``,
        wake snapshots to ``out/wake`` every ``[output] snapshot_every`` steps.
    write : callable
        ``write(run, out)`` writes a (possibly partial) run's outputs.
    progress : callable, optional
        ``progress(step, steps)``.
    max_memory : int, optional
        Memory budget [B] (default: the memory available).
    resume : wakes.io.checkpoint.LoopState, optional
        State to go on from (:func:`wakes.io.checkpoint.prepare_resume`).
    use_cluster : bool
        False: this process only (a sweep's points).

    Returns
    -------
    wakes.simulate.Run
        Its ``status`` is "finished", "interrupted" (SIGINT/SIGTERM: the
        current step was finished), "unstable", "memory" or "failed"; in
        every case but "finished" the newest checkpoint holds the last good
        state, and the outputs of the steps done are written. A finished
        run's checkpoints are removed. ``summary.json`` (also when no step
        was done) holds ``status``, ``reason``, ``last_step`` and ``resume``
        (:func:`wakes.simulate.run_status`; here ``resume.possible`` is true
        whenever a checkpoint was left) and the plausibility ``warnings``.

    Raises
    ------
    wakes.errors.MemoryBudgetError
        Before the run, if its estimated peak memory exceeds the budget.
    """
    check_budget(case, max_memory)
    out = Path(out)
    case = copy_inputs(case, out)          # the folder runs and resumes wherever it is moved
    case_toml = case.to_toml(relative_to=out)

    def save(state):
        checkpoints.write_checkpoint(out, state, case_toml, case.source)

    # an earlier run's snapshots go when this run writes its first one, not before
    snapshots = WakeSnapshots(out, keep_before=0 if resume is None else resume.step, remove_now=False)
    control = RunControl(checkpoint_every=case.output.checkpoint_every, save=save,
                         keep_partial=True, max_memory=max_memory,
                         snapshot_every=case.output.snapshot_every, snapshot=snapshots.write)
    if threading.current_thread() is threading.main_thread():
        with control.catch_signals():
            run = run_case(case, progress=progress, control=control, resume=resume,
                           use_cluster=use_cluster)
    else:   # signal handlers can only be set in the main thread (a Dask worker's task)
        run = run_case(case, progress=progress, control=control, resume=resume,
                       use_cluster=use_cluster)
    run.stop_signal = control.stop_signal
    run.summary["case"] = case.to_dict(relative_to=out)   # as case.toml: paths relative to the folder
    if run.status not in ("finished", "interrupted") and run.resume_state is not None:
        save(run.resume_state)
    if run.status == "interrupted" and run.stop_signal is not None:
        run.summary["reason"] = f"signal {signal.Signals(run.stop_signal).name}: {run.message}"
    if run.resume_state is not None:   # a checkpoint of it is in out/checkpoints
        run.summary["resume"] = {"possible": True, "from_step": run.resume_state.step,
                                 "how": f"wakes run --resume {out}"}
    if len(run.loads):
        write(run, out)
    else:   # stopped before a step was done: no tables, but the status and the checkpoint
        write_json(run.summary, out / "summary.json")
        record_files(out, [out / "summary.json"])
    if run.status == "finished":
        checkpoints.remove_checkpoints(out)
    return run


def run_to_folder(case, out: str | os.PathLike, *, overwrite: bool = False, progress=None,
                  plots: bool = True, max_memory: int | None = None) -> Run:
    """Run a case and write its complete run folder.

    Parameters
    ----------
    case : Case or path-like
        A case (:func:`wakes.case.load_case`) or a case file.
    out : path-like
        The run folder; it must not hold files unless ``overwrite``.
    overwrite : bool
        Remove the files an earlier run wrote in ``out`` (and only those:
        :func:`wakes.io.runfolder.clear_run`) once the case is checked,
        before the run starts.
    progress : callable, optional
        ``progress(step, steps)`` (e.g. :class:`wakes.progress.ProgressBar`).
    plots : bool
        Draw the figures into ``out/plots`` (for a finished run).
    max_memory : int, optional
        Memory budget [B] (default: the memory available).

    Returns
    -------
    wakes.simulate.Run
        The run, already written. A run that stopped early (status other
        than "finished") leaves a checkpoint and its outputs so far.

    Raises
    ------
    wakes.errors.WakesError
        For a bad case or a results folder that would be overwritten; the
        folder is checked before the run starts.

    Examples
    --------
    >>> run = run_to_folder("cases/survey-glider.toml", "glider-run-2", plots=False)
    >>> sorted(run.summary["bodies"])
    ['wing']
    """
    out = check_new_folder(out, overwrite)
    if not isinstance(case, Case):
        case = load_case(case)
    check_budget(case, max_memory)
    if overwrite:
        clear_run(out, keep=case_inputs(case))
    return run_guarded(case, out, progress=progress, max_memory=max_memory,
                       write=lambda r, o: write_run(r, o, plots=plots and r.status == "finished"))


def check_new_folder(out: str | os.PathLike, overwrite: bool = False) -> Path:
    """Refuse a results folder that would overwrite files, unless ``overwrite``.

    Raises
    ------
    wakes.errors.InputError
        If ``out`` is a file, or a folder holding files and ``overwrite`` is false.
    """
    out = Path(out)
    if out.exists() and not out.is_dir():
        raise InputError(f"--out {out}: exists and is not a folder")
    if out.is_dir() and any(out.iterdir()) and not overwrite:
        raise InputError(f"--out {out}: folder exists and is not empty; choose a new folder "
                         "or pass --overwrite to replace the run in it")
    return out


def write_parquet(run, out: str | os.PathLike) -> list[Path]:
    """Parquet copies of loads and sections when pyarrow is installed; else nothing."""
    try:
        import pyarrow  # noqa: F401  (only whether it is there)
    except ImportError:
        return []
    out = Path(out)
    paths = [out / "loads.parquet", out / "sections.parquet"]
    for frame, path in ((run.loads, paths[0]), (run.sections, paths[1])):
        buf = io.BytesIO()                 # written atomically, as every other file of a run
        frame.to_parquet(buf, index=False)
        atomic.write_bytes(path, buf.getvalue())
    return paths


def write_run(run, out: str | os.PathLike, *, plots: bool = True) -> list[Path]:
    """Write a finished (or partial) :class:`wakes.simulate.Run` as a run folder; return the paths.

    The run's final wake is added to the snapshots in ``out/wake`` (those a
    run wrote as it went, :class:`wakes.io.snapshots.WakeSnapshots`, up to
    the final wake's step are kept; any later ones are removed).
    """
    out = Path(out)
    paths = run.write(out)
    sources = [e for elements in run.wake.values() for e in elements]
    snapshots = WakeSnapshots(out, keep_before=run.wake_step)
    paths += (snapshots.write(run.wake_step, run.wake_time_s, sources, run.placed_surfaces)
              + write_parquet(run, out))
    if plots:
        paths += plot_run(out, overwrite=True)
    record_files(out, paths)
    return paths


def case_inputs(case: Case) -> list[Path]:
    """The files a case reads (its polar tables)."""
    return [Path(b.airfoil.polar) for b in case.bodies if b.airfoil.polar is not None]


def split_unit(key: str) -> tuple[str, str]:
    """A summary key's quantity name without its unit suffix, and the unit.

    Examples
    --------
    >>> split_unit("thrust_N"), split_unit("CT")
    (('thrust', 'N'), ('CT', ''))
    """
    for suffix, unit in (("_Nm", "N m"), ("_N", "N"), ("_W", "W"), ("_m2_s", "m^2/s"), ("_m", "m"),
                         ("_s", "s"), ("_deg", "deg")):
        if key.endswith(suffix):
            return key[: -len(suffix)], unit
    return key, ""


def result_table(summary: dict) -> str:
    """A compact table of every body's figures from ``summary.json``.

    Examples
    --------
    >>> print(result_table({"bodies": {"wing": {"CL": 0.5, "lift_N": 12.0}}}))
    body  quantity  value  unit
    wing  CL        0.5
    wing  lift      12     N
    """
    rows = [("body", "quantity", "value", "unit")]
    for name, figures in summary.get("bodies", {}).items():
        for key, value in figures.items():
            if not isinstance(value, (int, float)) or isinstance(value, bool):
                continue
            q, unit = split_unit(key)
            text = "-" if isinstance(value, float) and math.isnan(value) else f"{value:.5g}"
            rows.append((name, q, text, unit))
    widths = [max(len(r[i]) for r in rows) for i in range(4)]
    return "\n".join("  ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip() for r in rows)


def warning_lines(summary: dict) -> list[str]:
    """The plausibility warnings of ``summary.json`` as printed at the end of ``wakes run``.

    Examples
    --------
    >>> w = {"code": "wake-too-short", "message": "wing: wake 0.8 semi-spans long",
    ...      "value": 0.3, "bound": 0.2, "source": "our criterion"}
    >>> print("\\n".join(warning_lines({"warnings": [w]})))
    1 plausibility warning:
      ! wake-too-short: wing: wake 0.8 semi-spans long (bound 0.2; our criterion)
    >>> warning_lines({"warnings": []})
    []
    """
    warnings = summary.get("warnings") or []
    if not warnings:
        return []
    lines = [f"{len(warnings)} plausibility warning{'s' if len(warnings) != 1 else ''}:"]
    lines += [f"  ! {w['code']}: {w['message']} (bound {w['bound']:.4g}; {w['source']})"
              for w in warnings]
    return lines
