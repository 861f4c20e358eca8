"""The ``wakes`` command.

``wakes run CASE.toml --out DIR`` checks the case, runs it and writes the
run folder (loads.csv, sections.csv, summary.json, case.toml and the final
wake). A mistake a user can make -- a malformed or misspelt case file, a
bad value, a polar table that does not cover the angles met -- ends with
exit status 2 and one line naming the file, the key and what is accepted
(``--debug`` shows the traceback instead).

Runs never lose work. Exit statuses of ``wakes run``:

* 0 -- finished;
* 2 -- a mistake in the input (nothing run, nothing written), another
  such error met during the run (checkpoint and outputs so far written),
  or a file the system would not read or write (a full disk, no
  permission), named in the message; every file is written to a
  temporary name and renamed, so none is left half written;
* 3 -- the watchdog stopped an unstable run (non-finite values, runaway
  wake speed, circulation not converging): the message names step, time,
  element, likely cause and remedy; the last good state is in
  ``DIR/checkpoints/`` and the outputs so far in DIR;
* 4 -- memory budget: refused before the run (estimate above the
  available memory or ``--max-memory``), or the wake outgrew it (checkpoint
  and outputs so far written);
* 130 / 143 -- stopped by SIGINT (Ctrl-C) / SIGTERM at the end of the
  current step, checkpoint and outputs so far written (a second signal
  stops at once).

``wakes run --resume DIR`` goes on from the newest checkpoint (``--dt``
sets a smaller step, e.g. after status 3); the finished result equals an
uninterrupted run's bit for bit on the same machine. ``[output]
checkpoint_every`` in the case writes checkpoints periodically.

The command only parses arguments and calls the same functions a Python
user calls (:func:`wakes.case.load_case`, :func:`wakes.run.run_case`).
"""

from __future__ import annotations

import argparse
import contextlib
import sys
import warnings
from pathlib import Path

import numba
import pandas as pd

from ._validate import readable_file, writable_path
from ._version import __version__
from .aero.plausibility import case_flags
from .budget import check_budget, parse_size
from .case import MAX_DT, MIN_DT, SCHEDULER_ADDRESS, load_case_with
from .errors import MemoryBudgetError, WakesError
from .estimate import estimate_case, step_costs
from .io.atomic import write_text
from .io.checkpoint import prepare_resume
from .io.runfolder import record_files
from .plots import plot_run
from .probe import parse_extent, parse_plane, probe_plane, probe_points
from .progress import ProgressBar
from .refinement import (
    DEFAULT_RATIO,
    LEVELS_FOLDER,
    MAX_RATIO,
    MIN_RATIO,
    LevelFailed,
    level_lines,
    prepare,
    ratio_words,
    refinement_study,
    result_lines,
    sweep_bands,
    sweep_study,
)
from .run import case_inputs, check_new_folder, clear_run, result_table, run_guarded, warning_lines, write_run
from .sweep import SweepStopped, failure_lines, parse_vary, sweep
from .templates import new_case
from .trim import trim_case
from .verify import run_checks
from .watchdog import EXIT_MEMORY, exit_status

EXIT_USER_ERROR = 2
MAX_WORKERS = 256              # most local Dask worker processes of a sweep
MAX_GRID_SIDE = 10_000         # most probe plane points along one axis
MAX_GRID_POINTS = 4_000_000    # most probe plane points in all (about 100 MB a (N, 3) array)
MAX_PROBE_COORDINATE = 1e5     # largest probe plane coordinate [m], as the case's positions

SET_HELP = ("set a case key over the case file's value, e.g. time.steps=40 or bodies.NAME.collective=9: "
            "a dotted key and a TOML value (a bare word is a string); repeatable, checked like the "
            "case file, recorded in the run folder's case.toml")


class _Parser(argparse.ArgumentParser):
    """Argument errors in one line (no usage block), exit status 2."""

    def error(self, message):
        self.exit(EXIT_USER_ERROR, f"{self.prog}: error: {message}\n")


def _parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="wakes", description="Aerodynamic wakes of wings and rotors with vortex methods.")
    parser.add_argument("--version", action="version", version=f"wakes {__version__}")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    run = sub.add_parser("run", help="run a case file and write its results folder",
                         description="Run a case file and write loads.csv, sections.csv, "
                                     "summary.json and the resolved case.toml to DIR.")
    run.add_argument("case", metavar="CASE", nargs="?", help="case file (TOML)")
    run.add_argument("--out", metavar="DIR", help="results folder (created)")
    run.add_argument("--set", action="append", default=[], metavar="KEY=VALUE", help=SET_HELP)
    run.add_argument("--resume", metavar="RUN_DIR",
                     help="go on from the newest checkpoint in RUN_DIR (no CASE or --out)")
    run.add_argument("--dt", type=float, metavar="SECONDS",
                     help="with --resume: a new (smaller) time step; the final time is kept")
    run.add_argument("--max-memory", metavar="SIZE",
                     help="refuse or stop the run beyond this memory, e.g. 4G or 512M "
                          "(default: the memory available)")
    run.add_argument("--debug", action="store_true", help="show tracebacks of errors")
    run.add_argument("--quiet", action="store_true", help="print nothing but errors")
    run.add_argument("--overwrite", action="store_true",
                     help="remove the files an earlier run wrote in DIR (those its manifest.txt lists "
                          "and the run folder's known names; other files stay) before this run starts")
    run.add_argument("--no-plots", action="store_true",
                     help="write no figures (draw them later with 'wakes plot DIR')")
    _study_options(run)
    run.add_argument("--scheduler", metavar="ADDRESS",
                     help="with --uncertainty: run the levels on the Dask scheduler at ADDRESS "
                          "(default: a local cluster)")
    run.add_argument("--workers", type=int, metavar="N",
                     help="with --uncertainty: worker processes of the local cluster (default: one per core)")

    check = sub.add_parser("check", help="validate a case and estimate its cost, without running",
                           description="Check CASE, print the resolved case and estimate the "
                                       "wake size, memory and run time.")
    check.add_argument("case", metavar="CASE", help="case file (TOML)")
    check.add_argument("--set", action="append", default=[], metavar="KEY=VALUE", help=SET_HELP)
    check.add_argument("--quiet", action="store_true", help="print only the estimate")
    _study_options(check)

    new = sub.add_parser("new", help="write a commented template case that runs as written",
                         description="Write a commented case file for a wing, lift rotor, "
                                     "propeller or wind turbine (invented demo values).")
    new.add_argument("kind", metavar="KIND", help="wing, rotor, propeller or turbine")
    new.add_argument("file", metavar="FILE", help="case file to write (TOML)")
    new.add_argument("--overwrite", action="store_true", help="replace an existing FILE")

    probe = sub.add_parser("probe", help="velocity from a run's saved wake at points or on a plane",
                           description="Sum the final wake of RUN_DIR at the points of a CSV "
                                       "file (columns x_m, y_m, z_m) or on a grid in a plane; "
                                       "write CSV (and .vts for planes).")
    probe.add_argument("run_dir", metavar="RUN_DIR", help="run folder written by 'wakes run'")
    where = probe.add_mutually_exclusive_group(required=True)
    where.add_argument("--points", metavar="FILE.csv", help="CSV with columns x_m, y_m, z_m")
    where.add_argument("--plane", metavar="AXIS=VALUE", help="plane normal to x, y or z, e.g. x=2.5")
    probe.add_argument("--extent", metavar="A0:A1,B0:B1",
                       help="plane ranges along its two in-plane axes in x, y, z order "
                            "(default: the wake's extent plus 10 %%); write --extent=-2:2,-1:1 "
                            "when it starts with a minus")
    probe.add_argument("--grid", default="41x41", metavar="NAxNB",
                       help="plane points along the two in-plane axes (default: 41x41)")
    probe.add_argument("--out", metavar="FILE.csv", help="table to write (default: in RUN_DIR)")
    probe.add_argument("--overwrite", action="store_true", help="replace existing output files")

    plot = sub.add_parser("plot", help="redraw the figures of a finished run",
                          description="Draw loads, span or radial loading, the 3-D wake and, "
                                      "for rotors, the tip-vortex path into RUN_DIR/plots.")
    plot.add_argument("run_dir", metavar="RUN_DIR", help="run folder written by 'wakes run'")
    plot.add_argument("--out", metavar="DIR", help="folder for the figures (default: RUN_DIR/plots)")
    plot.add_argument("--overwrite", action="store_true", help="replace figures already there")

    verify = sub.add_parser("verify", help="run the classical checks and print their table",
                            description="Compute ring, segment, Lamb-Oseen and other classical "
                                        "quantities with the library and compare them with "
                                        "closed forms and published values. Exit status 1 if "
                                        "any check fails.")
    verify.add_argument("--csv", metavar="FILE", help="also write the table as CSV")
    verify.add_argument("--full", action="store_true",
                        help="also run the wing and rotor checks (swept and tapered wings, rectangular "
                             "wings, ground effect of a wing and a rotor, a wing's impulsive start and "
                             "harmonic pitch and plunge against Wagner's and Theodorsen's theory; about "
                             "five minutes on one core)")

    sweep = sub.add_parser("sweep", help="run a case over a grid of values on Dask workers",
                           description="Run CASE once per point of a grid of values and write "
                                       "one run folder per point, sweep.csv and sweep.png. Every "
                                       "point is checked before any runs. Exit status: 0 every point "
                                       "finished, 1 a point failed (table on stderr), 2 a bad case or "
                                       "value (nothing run), 130 stopped by Ctrl-C.")
    sweep.add_argument("case", metavar="CASE", help="case file (TOML)")
    sweep.add_argument("--vary", action="append", required=True, metavar="KEY=VALUES",
                       help="dotted case key and its values: a list 4,6,8 or an inclusive "
                            "range 4:14:2; repeat for a grid")
    sweep.add_argument("--set", action="append", default=[], metavar="KEY=VALUE",
                       help="set a case key for every point, as for 'wakes run' (--vary wins for its keys)")
    sweep.add_argument("--zip", action="store_true",
                       help="pair the --vary lists element by element instead of a full grid")
    sweep.add_argument("--scheduler", metavar="ADDRESS",
                       help="address of a running Dask scheduler (default: a local cluster)")
    sweep.add_argument("--workers", type=int, metavar="N",
                       help="worker processes of the local cluster (default: one per core)")
    sweep.add_argument("--out", default="sweep", metavar="DIR", help="sweep folder (default: sweep)")
    sweep.add_argument("--quiet", action="store_true", help="print nothing but errors")
    _study_options(sweep, "every point: ")
    return parser


def _study_options(parser, what: str = "") -> None:
    parser.add_argument("--uncertainty", action="store_true",
                        help=what + "also run the case at two coarser levels (strips and time step coarsened "
                             "together) on Dask workers and give every load with its Richardson-"
                             "extrapolated value, observed order and GCI band (levels in DIR/levels/)")
    parser.add_argument("--uncertainty-ratio", type=float, default=DEFAULT_RATIO, metavar="R",
                        help=f"with --uncertainty: refinement ratio between levels, {MIN_RATIO:g} to "
                             f"{MAX_RATIO:g} (default: sqrt 2 = {DEFAULT_RATIO:.4g})")


def _check_cluster_options(args) -> None:
    if args.workers is not None and not 1 <= args.workers <= MAX_WORKERS:
        raise WakesError(f"--workers must be from 1 to {MAX_WORKERS}; got {args.workers}")
    m = SCHEDULER_ADDRESS.fullmatch(args.scheduler or "")
    if args.scheduler is not None and not (m and 1 <= int(m.group(1)) <= 65535):
        raise WakesError(f"--scheduler must be an address tcp://HOST:PORT or tls://HOST:PORT such as "
                         f"tcp://10.0.0.5:8786, port 1 to 65535; got {args.scheduler!r}")


def _study(args, max_memory) -> int:
    """``wakes run --uncertainty``: the refinement study (:mod:`wakes.refinement`)."""
    if args.resume is not None or args.dt is not None:
        raise WakesError("--uncertainty runs a new study; give CASE and --out DIR, not --resume or --dt")
    _check_cluster_options(args)
    out = writable_path("--out", args.out, folder=True)
    try:
        study = refinement_study(args.case, out, settings=args.set, ratio=args.uncertainty_ratio,
                                 scheduler=args.scheduler, workers=args.workers, overwrite=args.overwrite,
                                 plots=not args.no_plots, max_memory=max_memory,
                                 progress=not args.quiet and sys.stderr.isatty())
    except SweepStopped as stop:
        done = int(stop.table["status"].isin(["ran", "reused"]).sum())
        print(f"wakes: refinement study stopped by Ctrl-C: {done} of {len(stop.table)} levels finished, "
              f"kept in {out / LEVELS_FOLDER}/; run the same command with --overwrite to go on "
              "(finished levels are reused)", file=sys.stderr)
        return 130
    except LevelFailed as exc:
        print(f"wakes: {exc}", file=sys.stderr)
        return 1
    if not args.quiet:
        print(f"{study.levels[0].case.title}: refinement study, {len(study.levels)} levels, ratios "
              f"{ratio_words(study.levels)}, in {study.summary['uncertainty']['wall_time_s']:.1f} s "
              "(GCI band: safety factor 1.25, Roache 1998)")
        print("\n".join(level_lines(study.levels)))
        print("\n".join(result_lines(study.table)))
        print(f"results in {out}/ (the levels' run folders in {out / LEVELS_FOLDER}/)")
    lines = warning_lines(study.summary)
    if lines and not args.quiet:
        print("\n".join(lines))
    return 0


def _run(args) -> int:
    max_memory = parse_size(args.max_memory) if args.max_memory is not None else None
    if args.uncertainty:
        return _study(args, max_memory)
    if args.scheduler is not None or args.workers is not None:
        raise WakesError("--scheduler and --workers apply with --uncertainty only (the case's [cluster] "
                         "table shares one run's wake with workers)")
    if args.resume is not None:
        if args.case is not None or args.out is not None or args.set:
            raise WakesError(f"--resume {args.resume} goes on in that folder with its own case; "
                             "give neither CASE, --out nor --set")
        if args.dt is not None and not MIN_DT <= args.dt <= MAX_DT:
            raise WakesError(f"--dt must be a time step from {MIN_DT:g} to {MAX_DT:g} s; got {args.dt!r}")
        out = writable_path("--resume", args.resume, folder=True)
        case, state = prepare_resume(out, dt=args.dt)
    else:
        if args.case is None or args.out is None:
            raise WakesError("wakes run needs CASE and --out DIR, or --resume RUN_DIR")
        if args.dt is not None:
            raise WakesError("--dt applies with --resume only; set [time] dt in the case file")
        out = check_new_folder(writable_path("--out", args.out, folder=True), args.overwrite)
        case, state = load_case_with(args.case, args.set), None
    check_budget(case, max_memory)       # a refusal leaves nothing behind
    costs = step_costs(case)             # the progress bar's time left is scaled from these
    if args.resume is None and args.overwrite:   # the earlier run's files go now, the user's stay
        clear_run(out, keep=case_inputs(case))
    made = _make_folder("--out" if args.resume is None else "--resume", out)
    bar = ProgressBar(case.time.dt, origin=(0, 0.0) if state is None else state.origin,
                      quiet=args.quiet, step_costs=costs)
    try:
        trims = {}
        if state is None:
            case, trims = _trim(case, args)

        def write(r, o):
            if trims:
                r.summary["trim"] = trims
            return write_run(r, o, plots=r.status == "finished" and not args.no_plots)

        run = run_guarded(case, out, progress=bar, max_memory=max_memory, resume=state, write=write)
    except BaseException:
        if made and not any(out.glob("*.csv")):   # a folder made for a run that wrote no table:
            clear_run(out)                        # its copied inputs go, and then the folder
        for folder in reversed(made):    # folders made for this run and still empty go again
            with contextlib.suppress(OSError):
                folder.rmdir()
        raise
    status = exit_status(run)
    if status:
        print(f"wakes: {run.status}: {run.message}; the last good state and the outputs so far "
              f"are in {out}/ (go on with: wakes run --resume {out})", file=sys.stderr)
        return status
    if not args.quiet:
        wall = run.summary["run"]["wall_time_s"]
        print(f"{case.title}: {case.time.steps} steps of {case.time.dt:.4g} s in {wall:.1f} s")
        print(result_table(run.summary))
        for body, trim in run.summary.get("trim", {}).items():
            controls = ", ".join(f"{k} = {v:.4g} deg" for k, v in trim["controls_deg"].items())
            print(f"{body} trimmed in {trim['iterations']} steps ({trim['runs']} runs): {controls}")
        print(f"results in {out}/")
    lines = warning_lines(run.summary)
    if lines and not args.quiet:
        print("\n".join(lines))
    elif lines:
        n = len(run.summary["warnings"])
        print(f"wakes: {n} plausibility warning{'s' if n != 1 else ''}; see {out}/summary.json",
              file=sys.stderr)
    return 0


def _trim(case, args):
    """Trim the rotors whose [bodies.NAME.trim] gives targets (:func:`wakes.trim.trim_case`), one
    line per trim run on stderr; return the trimmed case and the trims for its summary."""
    def report(body, index, what, controls, residuals):
        if not args.quiet:
            c = ", ".join(f"{k} {v:.4g} deg" for k, v in controls.items())
            r = ", ".join(f"{k} {v:+.4g}" for k, v in residuals.items())
            print(f"wakes: trim {body}, run {index} ({what}): {c}; off target by {r}", file=sys.stderr)

    trimmed, trims, _ = trim_case(case, progress=report)
    return trimmed, trims


def _check(args) -> int:
    case = load_case_with(args.case, args.set)
    if not args.quiet:
        given = "".join(f"\nSet on the command line: {t}" for t in args.set)
        print(case.to_toml(f"Resolved case of {args.case}: every default filled in.{given}"))
    est = estimate_case(case)
    width = max(len(q) for q, _ in est.table())
    print(f"{case.title or args.case}: case is valid; estimate (no run):")
    for quantity, value in est.table():
        print(f"  {quantity.ljust(width)}  {value}")
    for body in case.bodies:
        targets = body.trim.targets() if getattr(body, "trim", None) else {}
        if targets:
            wanted = ", ".join(f"{k} = {v:g}" for k, v in targets.items())
            print(f"  wakes run trims {body.name} first to {wanted}: up to "
                  f"{1 + len(targets) + body.trim.max_iterations} runs of this size before the run")
    lines = warning_lines({"warnings": [f.as_dict() for f in case_flags(case)]})
    if lines:
        print("before running, from the case alone: " + lines[0])
        print("\n".join(lines[1:]))
    if args.uncertainty:
        levels, estimates = prepare(args.case, settings=args.set, ratio=args.uncertainty_ratio)
        print(f"refinement study: {len(levels)} levels, ratios {ratio_words(levels)}; they fit the "
              "memory budget running at once on this machine; the study takes about its finest "
              "level's time:")
        one_thread = est.pair_rate_per_s / numba.get_num_threads()   # a worker runs on one thread
        print("\n".join(level_lines(levels, estimates, one_thread)))
    return 0


def _new(args) -> int:
    writable_path("FILE", args.file, folder=False)
    path = new_case(args.kind, args.file, overwrite=args.overwrite)
    print(f"wrote {path}; check it with: wakes check {path}")
    return 0


def _probe(args) -> int:
    if args.out is not None:
        writable_path("--out", args.out, folder=False)
    if args.points is not None:
        if args.extent is not None:
            raise WakesError("--extent applies to --plane only")
        readable_file("--points", args.points, what="points file")
        table = probe_points(args.run_dir, args.points, out=args.out, overwrite=args.overwrite)
        print(f"velocity at {len(table)} points written")
        return 0
    try:
        grid = tuple(int(g) for g in args.grid.lower().split("x"))
    except ValueError:
        grid = ()
    if len(grid) != 2:
        raise WakesError(f"--grid {args.grid!r}: accepted is NAxNB with two integers, e.g. 41x41")
    if not (all(2 <= g <= MAX_GRID_SIDE for g in grid) and grid[0] * grid[1] <= MAX_GRID_POINTS):
        raise WakesError(f"--grid {args.grid}: accepted is at least 2 and at most {MAX_GRID_SIDE:,} points "
                         f"along each axis, {MAX_GRID_POINTS:,} in all, e.g. 41x41")
    _check_plane(args.plane, args.extent)
    table = probe_plane(args.run_dir, args.plane, extent=args.extent, grid=grid, out=args.out,
                        overwrite=args.overwrite)
    print(f"velocity at {len(table)} plane points written (CSV and .vts)")
    return 0


def _check_plane(plane: str, extent: str | None) -> None:
    """--plane and --extent values: finite and within the case's coordinate range."""
    _, value = parse_plane(plane)
    if not abs(value) <= MAX_PROBE_COORDINATE:
        raise WakesError(f"--plane {plane}: the coordinate must be a number from {-MAX_PROBE_COORDINATE:g} "
                         f"to {MAX_PROBE_COORDINATE:g} m; got {value!r}")
    if extent is not None:
        for a, b in parse_extent(extent):
            if not (abs(a) <= MAX_PROBE_COORDINATE and abs(b) <= MAX_PROBE_COORDINATE):
                raise WakesError(f"--extent {extent}: each range needs two numbers from "
                                 f"{-MAX_PROBE_COORDINATE:g} to {MAX_PROBE_COORDINATE:g} m; got {a!r}:{b!r}")
            if a == b:
                raise WakesError(f"--extent {extent}: the range {a:g}:{b:g} has zero size; give two "
                                 "different values, e.g. --extent=-2:2,-1:1")


def _make_folder(option: str, out: Path) -> list[Path]:
    """Create ``out`` and its missing parents; return the folders made, outermost first."""
    made = []
    folder = out
    while not folder.exists() and folder.parent != folder:
        made.insert(0, folder)
        folder = folder.parent
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise WakesError(f"{option} {out}: cannot create the folder ({_os_words(exc)})") from None
    return made


def _os_words(exc: BaseException) -> str:
    return getattr(exc, "strerror", None) or str(exc) or type(exc).__name__


def _plot(args) -> int:
    if args.out is not None:
        writable_path("--out", args.out, folder=True)
    paths = plot_run(args.run_dir, out=args.out, overwrite=args.overwrite)
    if args.out is None:          # figures in the run folder are the run's: --overwrite removes them
        record_files(args.run_dir, paths)
    for p in paths:
        print(p)
    return 0


def _verify(args) -> int:

    if args.csv:
        writable_path("--csv", args.csv, folder=False)
    progress = (lambda name: print(f"running {name} ...", file=sys.stderr, flush=True)) if args.full else None
    table = run_checks(full=args.full, progress=progress)
    shown = table.assign(error=table["error"].map(lambda e: f"{e:.1e}"),
                         passed=table["passed"].map({True: "pass", False: "FAIL"}))
    with pd.option_context("display.max_colwidth", 90, "display.width", 300):
        print(shown.to_string(index=False))
    if args.csv:
        write_text(args.csv, table.to_csv(index=False))
    failed = int((~table["passed"]).sum())
    print(f"{len(table) - failed} of {len(table)} checks passed")
    return 1 if failed else 0


def _sweep(args) -> int:
    vary = dict(parse_vary(v) for v in args.vary)
    _check_cluster_options(args)
    writable_path("--out", args.out, folder=True)
    run = sweep_study if args.uncertainty else sweep
    extra = {"ratio": args.uncertainty_ratio} if args.uncertainty else {}
    try:
        table = run(args.case, vary, out=args.out, settings=args.set, zipped=args.zip,
                    scheduler=args.scheduler, workers=args.workers,
                    progress=not args.quiet and sys.stderr.isatty(), **extra)
    except SweepStopped as stop:
        print(f"wakes: {stop.message}", file=sys.stderr)
        return 130
    if not args.quiet:
        shown = sweep_bands(table, list(vary)) if args.uncertainty else table[
            [c for c in table.columns if c not in ("folder", "error")]]
        print(shown.to_string(index=False))
        print(f"results in {args.out}/sweep.csv")
    failed = failure_lines(table)
    if failed:
        print("wakes: " + "\n".join(failed), file=sys.stderr)
    return 1 if failed else 0


def _one_line_warning(message, category, filename, lineno, file=None, line=None):
    """A warning from inside a computation as one line, without the source file and line
    (those are for ``--debug``)."""
    print(f"wakes: warning: {message}", file=sys.stderr)


def main(argv=None) -> int:
    """Entry point of the ``wakes`` console script; returns the exit status."""
    parser = _parser()
    args = parser.parse_args(argv)
    if args.command == "run" and args.resume is None and (args.case is None or args.out is None):
        parser.error("wakes run needs CASE and --out DIR, or --resume RUN_DIR")

    with warnings.catch_warnings():      # restores the warning display on return
        if not getattr(args, "debug", False):
            warnings.showwarning = _one_line_warning
        try:
            if args.command == "run":
                return _run(args)
            if args.command in ("check", "new", "probe", "plot"):
                return {"check": _check, "new": _new, "probe": _probe, "plot": _plot}[args.command](args)
            if args.command == "verify":
                return _verify(args)
            if args.command == "sweep":
                return _sweep(args)
        except WakesError as exc:
            if getattr(args, "debug", False):
                raise
            print(f"wakes: error: {exc}", file=sys.stderr)
            return EXIT_MEMORY if isinstance(exc, MemoryBudgetError) else EXIT_USER_ERROR
        except OSError as exc:      # a file the system would not read or write: full disk, permissions
            if getattr(args, "debug", False):
                raise
            where = f"{exc.filename}: " if exc.filename else ""
            print(f"wakes: error: {where}{_os_words(exc)}; files written before are kept whole "
                  "(every file is written to a temporary name and renamed)", file=sys.stderr)
            return EXIT_USER_ERROR
        except MemoryError:
            if getattr(args, "debug", False):
                raise
            print("wakes: error: out of memory; give --max-memory to be refused before a run, or make "
                  "the case, grid or points smaller", file=sys.stderr)
            return EXIT_MEMORY
        except KeyboardInterrupt:
            print("wakes: interrupted; nothing written", file=sys.stderr)
            return 130
    return 0


if __name__ == "__main__":
    sys.exit(main())
