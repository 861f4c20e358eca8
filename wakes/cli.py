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


def main(argv=None) -> int:
    """Entry point of the ``wakes`` console script; returns the exit status."""
    args = _parser().parse_args(argv)
    try:
        if args.command == "run":
            return _run(args)
    except WakesError as exc:
        print(f"wakes: error: {exc}", file=sys.stderr)
        return EXIT_USER_ERROR
    except KeyboardInterrupt:
        print("wakes: interrupted; nothing written", file=sys.stderr)
        return 130
    return 0


if __name__ == "__main__":
    sys.exit(main())
