"""Time the 8-degree hover validation case to a converged thrust, with direct and with tree induction.

The case is ``cases/validation/hover-8deg.toml`` (Caradonna & Tung 1981,
NASA TM-81232 model rotor): 16 revolutions at 10 degrees a step, the wake
cut six revolutions old. "Converged" is the case's stated criterion: the
mean thrust of the last revolution within 1 % of the one before. Target:
under 60 s on 2 cores for each induction method (``[wake] induction``;
"tree" at the case's tolerance, 1e-6 by default). Each method runs in its
own process, after a short warm-up run there that compiles the kernels,
``--repeat`` times; the table gives the median and the spread of the wall
time, the thrust coefficient (measured 0.00459) and the last revolution's
thrust change.

Usage::

    python benchmarks/bench_hover.py [--repeat 3] [--no-append]

Prints a table and appends it to benchmarks/RESULTS.md with the machine,
date, commit and load average.
"""

from __future__ import annotations

import argparse
import datetime
import json
import os
import statistics
import subprocess
import sys

from record import append, commit, machine

RESULTS = os.path.join(os.path.dirname(os.path.abspath(__file__)), "RESULTS.md")
CASE = os.path.join(os.path.dirname(RESULTS), "..", "cases", "validation", "hover-8deg.toml")
MEASURED_CT = 0.00459  # Caradonna & Tung 1981, NASA TM-81232 (value from memory)
TARGET_S = 60.0

# One timed run in a fresh process: warm-up (compiles), then the case.
_CHILD = """
import json, sys, time
from wakes.case import load_case
from wakes.run import run_case
method, path = sys.argv[1], sys.argv[2]
over = {"wake": {"induction": method}}
run_case(load_case(path, overrides={**over, "bodies": {"rotor": {"revolutions": 0.3}}}))
t0 = time.perf_counter()
run = run_case(load_case(path, overrides=over))
wall = time.perf_counter() - t0
s = run.summary["bodies"]["rotor"]
print(json.dumps({"wall": wall, "CT": s["CT"], "change": s["thrust_change_last_revolution"],
                  "steps": int(run.summary["run"]["steps"]),
                  "segments": int(run.loads["wake_segments"].max())}))
"""


def _one(method: str) -> dict:
    out = subprocess.run([sys.executable, "-c", _CHILD, method, os.path.abspath(CASE)],
                         capture_output=True, text=True, check=True)
    return json.loads(out.stdout.strip().splitlines()[-1])


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--repeat", type=int, default=3)
    parser.add_argument("--no-append", action="store_true")
    args = parser.parse_args()
    load = os.getloadavg()
    rows = []
    for method in ("direct", "tree"):
        runs = [_one(method) for _ in range(args.repeat)]
        walls = [r["wall"] for r in runs]
        last = runs[-1]
        rows.append(f"| {method} | {last['steps']} | {last['segments']} | "
                    f"{statistics.median(walls):.1f} ({min(walls):.1f}-{max(walls):.1f}) | "
                    f"{'yes' if statistics.median(walls) < TARGET_S else 'no'} | {last['CT']:.5f} | "
                    f"{100 * (last['CT'] / MEASURED_CT - 1):+.1f} % | {100 * last['change']:+.2f} % |")
    load_end = os.getloadavg()
    text = "\n".join([
        "", "## Hover validation case to a converged C_T (bench_hover.py)", "",
        f"{datetime.datetime.now():%Y-%m-%d %H:%M}, commit {commit()}, {machine()}.",
        f"Load average {load[0]:.1f} at the start, {load_end[0]:.1f} at the end (2 cores).",
        "cases/validation/hover-8deg.toml: 16 revolutions at 10 deg a step, wake cut 6 revolutions old;",
        f"{args.repeat} runs per method, each in a fresh process after a compiling warm-up.",
        f"Target: under {TARGET_S:g} s per run. C_T against the measured {MEASURED_CT} "
        "(Caradonna & Tung 1981, NASA TM-81232).", "",
        "| induction | steps | wake segments (max) | wall s median (min-max) | under target | C_T "
        "| vs measured | thrust change, last revolution |",
        "|---|---|---|---|---|---|---|---|", *rows, ""])
    print(text)
    if not args.no_append:
        append(text)


if __name__ == "__main__":
    main()
