"""Time a resolved vortex ring stepped by ParticleFlow: seconds per RK3 step.

A ring of R = 1, Gamma = 1, sigma = 0.1 with a core of 6 particle layers
(21,385 particles), transposed stretching, RK3, dt = 0.05. Each step makes
three inductions with gradient; ``advance`` adds the diagnostics' smoothed
vorticity sum, timed separately here. Runs every induction method the
engine offers ("direct", and "tree" once it exists, at the given tolerance).

Usage::

    python benchmarks/bench_ring.py [--steps 50] [--kernel winckelmans-leonard]
                                    [--layers 6] [--tolerance 1e-6] [--no-append]

Prints a table and appends it to benchmarks/RESULTS.md with the machine,
date and commit. Peak memory is the process's maximum resident set size
(``ru_maxrss``), which includes the Python interpreter and numba (about
250 MB before any work), and the peak of NumPy allocations during stepping
(``tracemalloc``).
"""

from __future__ import annotations

import argparse
import datetime
import os
import resource
import statistics
import time
import tracemalloc

import wakes
from wakes.vortex.dynamics import induction_methods

from record import commit, machine

RESULTS = os.path.join(os.path.dirname(os.path.abspath(__file__)), "RESULTS.md")


def run(method: str, steps: int, kernel: str, layers: int, tolerance: float) -> dict:
    ring = wakes.vortex_ring(1.0, 1.0, 0.1, kernel=kernel, layers=layers)
    flow = wakes.ParticleFlow(ring, stretching="transposed", integrator="rk3",
                              method=method, tolerance=tolerance)
    flow.step(0.05)                     # compile and warm up
    tracemalloc.start()
    times = []
    for _ in range(steps):
        t0 = time.perf_counter()
        flow.step(0.05)
        times.append(time.perf_counter() - t0)
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    t0 = time.perf_counter()
    flow.diagnostics()                 # one induction (cached for the next step) + vorticity sum
    diag = time.perf_counter() - t0
    return {"method": method, "N": ring.count, "steps": steps,
            "median": statistics.median(times), "min": min(times), "max": max(times),
            "diagnostics": diag, "numpy_peak_MB": peak / 2 ** 20,
            "maxrss_MB": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--steps", type=int, default=50)
    parser.add_argument("--kernel", default="winckelmans-leonard")
    parser.add_argument("--layers", type=int, default=6)
    parser.add_argument("--tolerance", type=float, default=1e-6)
    parser.add_argument("--no-append", action="store_true")
    args = parser.parse_args()

    # "auto" only picks one of the others
    rows = [run(m, args.steps, args.kernel, args.layers, args.tolerance)
            for m in induction_methods() if m != "auto"]
    head = ("| method | particles | steps | s/step median (min-max) | diagnostics s | "
            "NumPy peak MB | max RSS MB |\n|---|---|---|---|---|---|---|")
    lines = [f"| {r['method']} | {r['N']} | {r['steps']} | {r['median']:.3f} "
             f"({r['min']:.3f}-{r['max']:.3f}) | {r['diagnostics']:.3f} | "
             f"{r['numpy_peak_MB']:.1f} | {r['maxrss_MB']:.0f} |" for r in rows]
    table = "\n".join([head, *lines])
    print(table)
    if not args.no_append:
        stamp = datetime.datetime.now().strftime("%Y-%m-%d %H:%M")
        with open(RESULTS, "a") as fh:
            fh.write(f"\n## Resolved vortex ring, ParticleFlow RK3 steps (bench_ring.py)\n\n"
                     f"{stamp}, commit {commit()}, {machine()}. Ring R = 1, sigma = 0.1, "
                     f"{args.layers} core layers, kernel {args.kernel}, transposed stretching, "
                     f"dt = 0.05, tolerance {args.tolerance:g} for approximate methods. "
                     f"A step is three inductions with gradient.\n\n{table}\n")


if __name__ == "__main__":
    main()
