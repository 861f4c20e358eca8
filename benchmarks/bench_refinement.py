"""Cost of a refinement study (``wakes run --uncertainty``) against one run of its finest level.

The case is the hover validation case ``cases/validation/hover-8deg.toml``
(Caradonna & Tung 1981, NASA TM-81232 model rotor) as written (10 deg a
step, 16 strips per blade) and one refinement finer (7.07 deg, 23 strips,
``--set bodies.rotor.azimuth_step=7.0710678 --set bodies.rotor.panels=23``).
For each, the plain ``wakes run`` of the case (its finest level, numba on
every core) and ``wakes run --uncertainty --workers 2`` (three levels on a
local Dask cluster of two single-threaded workers) run one after the other,
alternating, ``--repeat`` times, each as a fresh command (start-up, kernel
cache loading and, for the study, starting the cluster included). Target:
the study under 4x the single run's wall time on 2 cores. The table also
gives C_T with its band, the extrapolated C_T and the measured C_T 0.00459.

Usage::

    python benchmarks/bench_refinement.py [--repeat 2] [--no-append]

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
import tempfile
import time

from record import append, commit

RESULTS = os.path.join(os.path.dirname(os.path.abspath(__file__)), "RESULTS.md")
CASE = os.path.join(os.path.dirname(RESULTS), "..", "cases", "validation", "hover-8deg.toml")
MEASURED_CT = 0.00459  # Caradonna & Tung 1981, NASA TM-81232 (value from memory)
TARGET = 4.0
VARIANTS = {"10 deg, 16 strips (as written)": [],
            "7.07 deg, 23 strips": ["--set", "bodies.rotor.azimuth_step=7.0710678",
                                    "--set", "bodies.rotor.panels=23"]}


def _timed(args: list[str], out: str) -> tuple[float, dict]:
    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-m", "wakes.cli", "run", os.path.abspath(CASE), "--out", out,
                    "--quiet", "--no-plots", *args], check=True)
    wall = time.perf_counter() - t0
    with open(os.path.join(out, "summary.json"), encoding="utf-8") as fh:
        return wall, json.load(fh)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--repeat", type=int, default=2)
    parser.add_argument("--no-append", action="store_true")
    args = parser.parse_args()
    load = os.getloadavg()
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        for name, settings in VARIANTS.items():
            single, study = [], []
            for k in range(args.repeat):
                wall, one = _timed(settings, os.path.join(tmp, f"one-{len(rows)}-{k}"))
                single.append(wall)
                wall, res = _timed([*settings, "--uncertainty", "--workers", "2"],
                                   os.path.join(tmp, f"study-{len(rows)}-{k}"))
                study.append(wall)
            ct = res["uncertainty"]["bodies"]["rotor"]["CT"]
            band = (f"± {ct['uncertainty']['absolute']:.2g}" if ct["uncertainty"]["absolute"] is not None
                    else f"no band ({ct['convergence']})")
            ext = f"{ct['extrapolated']:.5f}" if ct["extrapolated"] is not None else "-"
            order = f"{ct['order']:.2f}" if ct["order"] is not None else "-"
            ratio = statistics.median(study) / statistics.median(single)
            rows.append(f"| {name} | {statistics.median(single):.1f} ({min(single):.1f}-{max(single):.1f}) | "
                        f"{statistics.median(study):.1f} ({min(study):.1f}-{max(study):.1f}) | {ratio:.2f}x | "
                        f"{'yes' if ratio < TARGET else 'no'} | {one['bodies']['rotor']['CT']:.5f} | "
                        f"{ct['value']:.5f} {band} | {order} | {ext} |")
    load_end = os.getloadavg()
    text = "\n".join([
        "", "## Refinement study against its finest run, hover case (bench_refinement.py)", "",
        f"{datetime.datetime.now():%Y-%m-%d %H:%M}, commit {commit()}, {os.cpu_count()} logical CPUs.",
        f"Load average {load[0]:.1f} at the start, {load_end[0]:.1f} at the end.",
        "cases/validation/hover-8deg.toml; `wakes run` (numba on every core) against `wakes run "
        "--uncertainty --workers 2`",
        f"(three levels, ratio about sqrt 2), alternating, {args.repeat} of each, whole commands timed. "
        f"Target: study under {TARGET:g}x the single run.",
        f"Measured C_T {MEASURED_CT} (Caradonna & Tung 1981, NASA TM-81232).", "",
        "| case | single run s median (min-max) | study s median (min-max) | study / single | under target "
        "| C_T single | C_T study ± band | order | C_T extrapolated |",
        "|---|---|---|---|---|---|---|---|---|", *rows, ""])
    print(text)
    if not args.no_append:
        append(text)


if __name__ == "__main__":
    main()
