"""Time a trimmed edgewise rotor: the demo lift rotor at 5 m/s trimmed to 10 N and zero hub moments.

The case is ``cases/drone-lift-rotor.toml`` with ``[freestream] speed = 5.0``
(mu = 0.05) and ``revolutions`` set to 6 per run; :func:`wakes.trim_rotor`
moves collective, theta_1c and theta_1s to meet the thrust 10 N (the rotor's
share of its invented 4 kg multirotor) and zero roll and pitch moments at
the default tolerances. Target (issue: "a trimmed edgewise case, 3 trim
iterations, 6 revolutions each, in under 5 minutes on 2 cores"): the whole
trim, its Jacobian runs included, under 300 s. It runs in a fresh process
after a short compiling warm-up, ``--repeat`` times; the table gives the
median and spread of the wall time, the runs, Newton steps and the trimmed
controls.

Usage::

    python benchmarks/bench_trim.py [--repeat 1] [--no-append]

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
CASE = os.path.join(os.path.dirname(RESULTS), "..", "cases", "drone-lift-rotor.toml")
TARGET_S = 300.0

_CHILD = """
import json, sys, time
import wakes
path = sys.argv[1]
over = {"freestream": {"speed": 5.0}}
wakes.run_case(wakes.load_case(path, overrides={**over, "bodies": {"lift-rotor": {"revolutions": 0.3}}}))
case = wakes.load_case(path, overrides={**over, "bodies": {"lift-rotor": {"revolutions": 6.0}}})
t0 = time.perf_counter()
trim = wakes.trim_rotor(case, "lift-rotor", {"thrust_N": 10.0, "roll_moment_Nm": 0.0, "pitch_moment_Nm": 0.0})
wall = time.perf_counter() - t0
print(json.dumps({"wall": wall, "runs": trim.runs, "iterations": trim.iterations, "controls": trim.controls,
                  "residuals": trim.residuals}))
"""


def _one() -> dict:
    out = subprocess.run([sys.executable, "-c", _CHILD, os.path.abspath(CASE)], capture_output=True, text=True,
                         check=True, cwd=os.path.dirname(os.path.dirname(RESULTS)))
    return json.loads(out.stdout.strip().splitlines()[-1])


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--repeat", type=int, default=1)
    parser.add_argument("--no-append", action="store_true")
    args = parser.parse_args()
    load = os.getloadavg()
    runs = [_one() for _ in range(args.repeat)]
    walls = [r["wall"] for r in runs]
    last = runs[-1]
    c = last["controls"]
    row = (f"| {statistics.median(walls):.1f} ({min(walls):.1f}-{max(walls):.1f}) | "
           f"{'yes' if statistics.median(walls) < TARGET_S else 'no'} | {last['runs']} | {last['iterations']} | "
           f"{c['collective']:.2f} | {c['cyclic_cos']:+.2f} | {c['cyclic_sin']:+.2f} | "
           + ", ".join(f"{k} {v:+.2g}" for k, v in last["residuals"].items()) + " |")
    load_end = os.getloadavg()
    text = "\n".join([
        "", "## Trimmed edgewise lift rotor (bench_trim.py)", "",
        f"{datetime.datetime.now():%Y-%m-%d %H:%M}, commit {commit()}, {machine()}.",
        f"Load average {load[0]:.1f} at the start, {load_end[0]:.1f} at the end (2 cores).",
        "cases/drone-lift-rotor.toml at 5 m/s (mu = 0.05), 6 revolutions a run, trimmed to 10 N and zero "
        "roll and pitch moments (collective, theta_1c, theta_1s).",
        f"{args.repeat} trim(s), each in a fresh process after a compiling warm-up. Target: under {TARGET_S:g} s.", "",
        "| wall s median (min-max) | under target | runs | Newton steps | collective deg | theta_1c deg "
        "| theta_1s deg | residuals |",
        "|---|---|---|---|---|---|---|---|", row, ""])
    print(text)
    if not args.no_append:
        append(text)


if __name__ == "__main__":
    main()
