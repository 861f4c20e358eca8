"""`wakes check`'s run-time estimate against the measured run time of every bundled case.

Run from the repository root, on one thread (the estimate is for one thread):

    NUMBA_NUM_THREADS=1 python benchmarks/estimates.py [--repeat 3] [--no-append]

Every case in ``cases/*.toml`` and every template of ``wakes new`` runs
``--repeat`` times in one process, after a warm-up run of a few steps that
compiles its kernels; the estimate (:func:`wakes.estimate.estimate_case`,
with the yardstick measured once at the start as ``wakes check`` does) is
compared with the median wall time. Pass: estimate/actual between 1/2 and
2. The progress bar's time left is checked on the same runs: after 10 % of
the steps, the time left from :func:`wakes.estimate.remaining_time` (cost
of the steps left at the speed of the steps done) against the time the
rest of the run really took; pass within the same factor 2.

Prints a table and appends it to benchmarks/RESULTS.md with the machine,
date, commit and load average.
"""

from __future__ import annotations

import argparse
import dataclasses
import datetime
import os
import statistics
import time
import tomllib
from pathlib import Path

from wakes.case import TimeSpec, load_case, parse_case
from wakes.estimate import estimate_case, measure_pair_rate, remaining_time, step_costs
from wakes.run import run_case
from wakes.templates import available_kinds, template_text

from record import append, commit, machine

ROOT = Path(__file__).resolve().parent.parent
RESULTS = ROOT / "benchmarks" / "RESULTS.md"
BAR = 2.0   # pass: within a factor of 2 either way


def _cases():
    for path in sorted((ROOT / "cases").glob("*.toml")):
        yield f"cases/{path.name}", load_case(path)
    for kind in available_kinds():
        yield f"wakes new {kind}", parse_case(tomllib.loads(template_text(kind)), source=kind,
                                              base_dir=ROOT)


def _timed_run(case):
    """Wall time of a run and the wall time after each step."""
    stamps = []
    start = time.perf_counter()
    run_case(case, progress=lambda step, steps: stamps.append(time.perf_counter() - start))
    return time.perf_counter() - start, stamps


def _ok(ratio: float) -> str:
    return "pass" if 1 / BAR <= ratio <= BAR else "FAIL"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--no-append", action="store_true")
    args = parser.parse_args()
    load = os.getloadavg()
    rate = measure_pair_rate()
    rows, failed = [], 0
    for name, case in _cases():
        warm = dataclasses.replace(case, time=TimeSpec(dt=case.time.dt, steps=min(case.time.steps, 4)))
        run_case(warm)   # compiles (or loads) every kernel the case uses
        est = estimate_case(case, pair_rate=rate)
        walls, lefts = [], []
        for _ in range(args.repeat):
            wall, stamps = _timed_run(case)
            walls.append(wall)
            tenth = max(1, case.time.steps // 10)
            # as the bar does: timed from the end of the first step
            left = remaining_time(step_costs(case)[1:], tenth - 1, stamps[tenth - 1] - stamps[0])
            lefts.append(left / (stamps[-1] - stamps[tenth - 1]))
        actual = statistics.median(walls)
        ratio = est.run_time_s / actual
        left_ratio = statistics.median(lefts)
        failed += _ok(ratio) == "FAIL" or _ok(left_ratio) == "FAIL"
        rows.append(f"| {name} | {case.time.steps} | {est.run_time_s:.2f} | {actual:.2f} "
                    f"({min(walls):.2f}-{max(walls):.2f}) | {ratio:.2f} | {_ok(ratio)} | "
                    f"{left_ratio:.2f} ({min(lefts):.2f}-{max(lefts):.2f}) | {_ok(left_ratio)} |")
        print(rows[-1], flush=True)
    load_end = os.getloadavg()
    text = "\n".join([
        "", "## Run-time estimate and time left against measured runs (estimates.py)", "",
        f"{datetime.datetime.now():%Y-%m-%d %H:%M}, commit {commit()}, {machine()}.",
        f"Load average {load[0]:.1f} at the start, {load_end[0]:.1f} at the end (2 cores).",
        f"Yardstick {rate:.3g} pairs/s. {args.repeat} runs per case after a compiling warm-up; "
        "median wall time (min-max). Time left: estimated after 10 % of the steps over the time the "
        f"rest took (median, min-max). Pass: within a factor {BAR:g}.", "",
        "| case | steps | estimate s | measured s | estimate/measured | 2x bar | time left est/actual "
        "at 10 % | 2x bar |",
        "|---|---|---|---|---|---|---|---|", *rows, "",
        f"{len(rows) - failed} of {len(rows)} cases pass both bars.", ""])
    print(text)
    if not args.no_append:
        append(text)


if __name__ == "__main__":
    main()
