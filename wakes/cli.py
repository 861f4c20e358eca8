"""The ``wakes`` command.

``wakes run CASE.toml --out DIR`` checks the case, runs it and writes the
run folder (loads.csv, sections.csv, summary.json, case.toml and the final
wake). A mistake a user can make -- a malformed or misspelt case file, a
bad value, a polar table that does not cover the angles met -- ends with
exit status 2 and one line naming the file, the key and what is accepted
(``--debug`` shows the traceback instead).

Runs never lose work. Exit statuses of ``wakes run``:

* 0 -- finished;
* 2 -- a mistake in the input (nothing run), or another such error met
  during the run (checkpoint and outputs so far written);
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
user calls (:func:`wakes.case.load_case`, :func:`wakes.simulate.run_case`).
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from . import __version__
from .errors import WakesError

EXIT_USER_ERROR = 2


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
                     help="replace the files of an earlier run in DIR")
    run.add_argument("--no-plots", action="store_true",
                     help="write no figures (draw them later with 'wakes plot DIR')")

    check = sub.add_parser("check", help="validate a case and estimate its cost, without running",
                           description="Check CASE, print the resolved case and estimate the "
                                       "wake size, memory and run time.")
    check.add_argument("case", metavar="CASE", help="case file (TOML)")
    check.add_argument("--quiet", action="store_true", help="print only the estimate")

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

    sweep = sub.add_parser("sweep", help="run a case over a grid of values on Dask workers",
                           description="Run CASE once per point of a grid of values and write "
                                       "one run folder per point, sweep.csv and sweep.png.")
    sweep.add_argument("case", metavar="CASE", help="case file (TOML)")
    sweep.add_argument("--vary", action="append", required=True, metavar="KEY=VALUES",
                       help="dotted case key and its values: a list 4,6,8 or an inclusive "
                            "range 4:14:2; repeat for a grid")
    sweep.add_argument("--zip", action="store_true",
                       help="pair the --vary lists element by element instead of a full grid")
    sweep.add_argument("--scheduler", metavar="ADDRESS",
                       help="address of a running Dask scheduler (default: a local cluster)")
    sweep.add_argument("--workers", type=int, metavar="N",
                       help="worker processes of the local cluster (default: one per core)")
    sweep.add_argument("--out", default="sweep", metavar="DIR", help="sweep folder (default: sweep)")
    sweep.add_argument("--quiet", action="store_true", help="print nothing but errors")
    return parser


def _run(args) -> int:
    from .budget import parse_size
    from .case import load_case
    from .io.checkpoint import prepare_resume
    from .progress import ProgressBar
    from .runfolder import check_new_folder, result_table, write_run
    from .watchdog import exit_status, run_guarded

    max_memory = parse_size(args.max_memory) if args.max_memory is not None else None
    if args.resume is not None:
        if args.case is not None or args.out is not None:
            raise WakesError(f"--resume {args.resume} goes on in that folder with its own case; "
                             "give neither CASE nor --out")
        out = Path(args.resume)
        case, state = prepare_resume(out, dt=args.dt)
    else:
        if args.case is None or args.out is None:
            raise WakesError("wakes run needs CASE and --out DIR, or --resume RUN_DIR")
        if args.dt is not None:
            raise WakesError("--dt applies with --resume only; set [time] dt in the case file")
        out = check_new_folder(args.out, args.overwrite)
        case, state = load_case(args.case), None
    bar = ProgressBar(case.time.dt, origin=(0, 0.0) if state is None else state.origin,
                      quiet=args.quiet)
    run = run_guarded(case, out, progress=bar, max_memory=max_memory, resume=state,
                      write=lambda r, o: write_run(r, o, plots=r.status == "finished"
                                                   and not args.no_plots))
    status = exit_status(run)
    if status:
        print(f"wakes: {run.status}: {run.message}; the last good state and the outputs so far "
              f"are in {out}/ (go on with: wakes run --resume {out})", file=sys.stderr)
        return status
    if not args.quiet:
        wall = run.summary["run"]["wall_time_s"]
        print(f"{case.title}: {case.time.steps} steps of {case.time.dt:.4g} s in {wall:.1f} s")
        print(result_table(run.summary))
        print(f"results in {out}/")
    return 0


def _check(args) -> int:
    from .case import load_case
    from .estimate import estimate_case

    case = load_case(args.case)
    if not args.quiet:
        print(case.to_toml(f"Resolved case of {args.case}: every default filled in."))
    est = estimate_case(case)
    width = max(len(q) for q, _ in est.table())
    print(f"{case.title or args.case}: case is valid; estimate (no run):")
    for quantity, value in est.table():
        print(f"  {quantity.ljust(width)}  {value}")
    return 0


def _new(args) -> int:
    from .templates import new_case

    path = new_case(args.kind, args.file, overwrite=args.overwrite)
    print(f"wrote {path}; check it with: wakes check {path}")
    return 0


def _probe(args) -> int:
    from .probe import probe_plane, probe_points

    if args.points is not None:
        if args.extent is not None:
            raise WakesError("--extent applies to --plane only")
        table = probe_points(args.run_dir, args.points, out=args.out, overwrite=args.overwrite)
        print(f"velocity at {len(table)} points written")
        return 0
    try:
        grid = tuple(int(g) for g in args.grid.lower().split("x"))
    except ValueError:
        grid = ()
    if len(grid) != 2:
        raise WakesError(f"--grid {args.grid!r}: accepted is NAxNB with two integers, e.g. 41x41")
    table = probe_plane(args.run_dir, args.plane, extent=args.extent, grid=grid, out=args.out,
                        overwrite=args.overwrite)
    print(f"velocity at {len(table)} plane points written (CSV and .vts)")
    return 0


def _plot(args) -> int:
    from .plots import plot_run

    paths = plot_run(args.run_dir, out=args.out, overwrite=args.overwrite)
    for p in paths:
        print(p)
    return 0


def _verify(args) -> int:
    import pandas as pd

    from .verify import run_checks

    table = run_checks()
    shown = table.assign(error=table["error"].map(lambda e: f"{e:.1e}"),
                         passed=table["passed"].map({True: "pass", False: "FAIL"}))
    with pd.option_context("display.max_colwidth", 70, "display.width", 250):
        print(shown.to_string(index=False))
    if args.csv:
        table.to_csv(args.csv, index=False)
    failed = int((~table["passed"]).sum())
    print(f"{len(table) - failed} of {len(table)} checks passed")
    return 1 if failed else 0


def _sweep(args) -> int:
    from .sweep import parse_vary, sweep

    vary = dict(parse_vary(v) for v in args.vary)
    if args.workers is not None and args.workers < 1:
        raise WakesError(f"--workers must be at least 1; got {args.workers}")
    table = sweep(args.case, vary, out=args.out, zipped=args.zip, scheduler=args.scheduler,
                  workers=args.workers, progress=not args.quiet and sys.stderr.isatty())
    if not args.quiet:
        with_cols = [c for c in table.columns if c not in ("folder", "error")]
        print(table[with_cols].to_string(index=False))
        failed = table[table["status"] == "failed"]
        for row in failed.itertuples():
            print(f"point {row.Index} failed: {row.error}", file=sys.stderr)
        print(f"results in {args.out}/sweep.csv")
    return 0


def main(argv=None) -> int:
    """Entry point of the ``wakes`` console script; returns the exit status."""
    parser = _parser()
    args = parser.parse_args(argv)
    if args.command == "run" and args.resume is None and (args.case is None or args.out is None):
        parser.error("wakes run needs CASE and --out DIR, or --resume RUN_DIR")
    from .budget import MemoryBudgetError
    from .watchdog import EXIT_MEMORY

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
    except KeyboardInterrupt:
        print("wakes: interrupted; nothing written", file=sys.stderr)
        return 130
    return 0


if __name__ == "__main__":
    sys.exit(main())
