"""Sweep throughput on local Dask workers, and the overhead of distributed induction.

Run from the repository root:

    python benchmarks/bench_sweep.py [--points 8] [--particles 200000]

Prints two tables and appends them to benchmarks/RESULTS.md:

1. eight points of a small wing case run one after another in this process
   (numba on both cores) against the same points as a sweep on a local
   cluster of two single-threaded worker processes (target: >= 1.7x);
2. ``wakes.induce`` on N particles in one process against the same call
   spread over two workers with ``client=`` (the cost of sending the
   sources and gathering the result).
"""

from __future__ import annotations

import argparse
import datetime
import os
import platform
import statistics
import tempfile
import time
from pathlib import Path

import numpy as np
import wakes
from wakes.case import parse_case
from wakes.run import run_case
from wakes.sweep import sweep

from record import commit

HERE = Path(__file__).resolve().parent

CASE = {
    "title": "bench sweep wing",
    "freestream": {"speed": 10.0, "angle_of_attack": 4.0},
    "bodies": {"wing": {"type": "wing", "span": 6.0, "chord": 0.5, "spanwise_panels": 12}},
    "wake": {"motion": "free"},
    "time": {"steps": 40},
}


def bench_sweep(n_points: int) -> dict:
    import distributed

    alphas = list(np.linspace(1.0, 8.0, n_points))
    run_case(parse_case(CASE))   # compile and warm every kernel in this process
    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory() as tmp:   # the same work as a sweep point: run and write
        for i, a in enumerate(alphas):
            data = {**CASE, "freestream": {"speed": 10.0, "angle_of_attack": float(a)}}
            run_case(parse_case(data)).write(Path(tmp) / f"p{i}")
    serial = time.perf_counter() - t0
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        with tempfile.TemporaryDirectory() as tmp:   # warm the workers' kernels first
            sweep(CASE, {"freestream.angle_of_attack": [1.0, 2.0]}, out=Path(tmp) / "warm",
                  client=client)
        with tempfile.TemporaryDirectory() as tmp:
            t0 = time.perf_counter()
            table = sweep(CASE, {"freestream.angle_of_attack": alphas}, out=Path(tmp) / "s",
                          client=client)
            parallel = time.perf_counter() - t0
    assert (table["status"] == "ran").all()
    return {"points": n_points, "serial_s": serial, "sweep_s": parallel,
            "speedup": serial / parallel}


def bench_induce(n: int, repeats: int = 3) -> dict:
    import distributed

    rng = np.random.default_rng(0)
    p = wakes.Particles(rng.uniform(size=(n, 3)), rng.normal(size=(n, 3)) * 1e-6,
                        0.8 * n ** (-1 / 3), kernel="winckelmans-leonard")
    opts = dict(method="tree", tolerance=1e-4)
    wakes.induce(p, p.positions[:1000], **opts)
    serial = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        ref = wakes.induce(p, p.positions, **opts)
        serial.append(time.perf_counter() - t0)
    spread = []
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        wakes.induce(p, p.positions[:1000], client=client, **opts)
        for _ in range(repeats):
            t0 = time.perf_counter()
            got = wakes.induce(p, p.positions, client=client, **opts)
            spread.append(time.perf_counter() - t0)
    err = np.linalg.norm(got - ref) / np.linalg.norm(ref)
    return {"particles": n, "serial_s": statistics.median(serial),
            "distributed_s": statistics.median(spread), "relative_difference": err}


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=8)
    parser.add_argument("--particles", type=int, default=200_000)
    args = parser.parse_args()
    s = bench_sweep(args.points)
    d = bench_induce(args.particles)
    load = os.getloadavg()[0]
    lines = [
        "",
        "## Sweeps and distributed induction (bench_sweep.py)",
        "",
        f"{datetime.datetime.now():%Y-%m-%d %H:%M}, commit {commit()}, {platform.processor() or platform.machine()}, "
        f"{os.cpu_count()} logical CPUs, load average {load:.1f} at the end of the run.",
        "",
        "| what | points | one after another (s) | sweep on 2 local workers (s) | speed-up |",
        "|---|---|---|---|---|",
        f"| small free-wake wing, 12 panels, 40 steps | {s['points']} | {s['serial_s']:.1f} | "
        f"{s['sweep_s']:.1f} | {s['speedup']:.2f}x |",
        "",
        "| what | particles | one process (s) | 2 workers with client= (s) | relative difference |",
        "|---|---|---|---|---|",
        f"| induce, tree 1e-4, velocity | {d['particles']} | {d['serial_s']:.2f} | "
        f"{d['distributed_s']:.2f} | {d['relative_difference']:.1e} |",
        "",
    ]
    text = "\n".join(lines)
    print(text)
    with open(HERE / "RESULTS.md", "a", encoding="utf-8") as fh:
        fh.write(text)


if __name__ == "__main__":
    main()
