"""The ``wakes`` command.

``wakes run CASE.toml --out DIR`` checks the case, runs it and writes the
run folder (loads.csv, sections.csv, summary.json, case.toml and the final
wake). A mistake a user can make -- a malformed or misspelt case file, a
bad value, a polar table that does not cover the angles met -- ends with
exit status 2 and one line naming the file, the key and what is accepted;
nothing is written to DIR unless the run finishes.

The command only parses arguments and calls the same functions a Python
user calls (:func:`wakes.case.load_case`, :func:`wakes.simulate.run_case`).
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from .errors import WakesError

EXIT_USER_ERROR = 2


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="wakes", description="Aerodynamic wakes of wings and rotors with vortex methods.")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")
    run = sub.add_parser("run", help="run a case file and write its results folder",
                         description="Run a case file and write loads.csv, sections.csv, "
                                     "summary.json and the resolved case.toml to DIR.")
    run.add_argument("case", metavar="CASE", help="case file (TOML)")
    run.add_argument("--out", required=True, metavar="DIR", help="results folder (created)")
    run.add_argument("--quiet", action="store_true", help="print nothing but errors")

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
    from .case import load_case
    from .simulate import run_case

    out = Path(args.out)
    if out.exists() and not out.is_dir():
        raise WakesError(f"--out {out}: exists and is not a folder")
    case = load_case(args.case)
    progress = None
    if not args.quiet and sys.stderr.isatty():
        def progress(step, steps):
            print(f"\rstep {step}/{steps}", end="" if step < steps else "\n", file=sys.stderr)
    run = run_case(case, progress=progress)
    run.write(out)
    if not args.quiet:
        print(run.short_report())
        print(f"results in {out}/")
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
    args = _parser().parse_args(argv)
    try:
        if args.command == "run":
            return _run(args)
        if args.command == "verify":
            return _verify(args)
        if args.command == "sweep":
            return _sweep(args)
    except WakesError as exc:
        print(f"wakes: error: {exc}", file=sys.stderr)
        return EXIT_USER_ERROR
    except KeyboardInterrupt:
        print("wakes: interrupted; nothing written", file=sys.stderr)
        return 130
    return 0


if __name__ == "__main__":
    sys.exit(main())
