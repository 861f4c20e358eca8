"""Treecode against direct summation and, optionally, the fmm3dpy Laplace FMM.

Same points for every method: N random points in the unit cube, random
normal strengths, smoothing radius equal to the mean spacing N^(-1/3);
velocity and gradient at the points themselves. Each measurement runs in a
fresh process, so its peak memory (max RSS) is its own and numba's OpenMP
threads cannot change fmm3dpy's. Accuracy is the relative L2 error over a
random subsample of targets against a direct sum over all sources.

fmm3dpy (``pip install fmm3dpy``) is an optional, benchmark-only
dependency: the singular Biot--Savart velocity is the curl of three Laplace
potentials psi_l = sum alpha_l / (4 pi |x - y|), so one FMM call with three
densities and Hessians gives u_j = eps_jkl d_k psi_l and d_m u_j =
eps_jkl d_m d_k psi_l. It is compared on the singular kernel.

Usage::

    python benchmarks/bench_tree.py            # full run, appends to RESULTS.md
    python benchmarks/bench_tree.py --quick    # N <= 1e5, prints only
"""

from __future__ import annotations

import argparse
import datetime
import json
import os
import platform
import resource
import subprocess
import sys
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
RESULTS = os.path.join(HERE, "RESULTS.md")
N_CHECK = 2000  # targets in the accuracy subsample


# ------------------------------------------------------------------ worker

def _problem(n: int, seed: int = 1):
    rng = np.random.default_rng(seed)
    x = rng.uniform(0.0, 1.0, (n, 3))
    alpha = rng.normal(size=(n, 3)) / n
    return x, alpha, n ** (-1 / 3)


def _fmm3dpy(x, alpha, eps):
    import fmm3dpy

    out = fmm3dpy.lfmm3d(eps=eps, sources=np.ascontiguousarray(x.T),
                         charges=np.ascontiguousarray(alpha.T), pg=3, nd=3)
    gr = out.grad          # (3 densities, 3 directions, n)
    he = out.hess          # (3, 6, n): xx, yy, zz, xy, xz, yz
    h = np.empty((3, 3, 3, x.shape[0]))  # [l, m, k]
    for (m, k), c in zip([(0, 0), (1, 1), (2, 2), (0, 1), (0, 2), (1, 2)], range(6)):
        h[:, m, k] = he[:, c]
        h[:, k, m] = he[:, c]
    eps3 = np.zeros((3, 3, 3))
    eps3[0, 1, 2] = eps3[1, 2, 0] = eps3[2, 0, 1] = 1.0
    eps3[0, 2, 1] = eps3[2, 1, 0] = eps3[1, 0, 2] = -1.0
    vel = np.einsum("jkl,lkn->nj", eps3, gr)
    grad = np.einsum("jkl,lmkn->njm", eps3, h)
    return vel, grad


def worker(spec: dict) -> dict:
    import numba
    import wakes

    x, alpha, h = _problem(spec["n"])
    kernel = spec["kernel"]
    src = wakes.Particles(x, alpha, h, kernel=kernel)
    method = spec["method"]
    if method == "fmm3dpy":
        def run():
            return _fmm3dpy(x, alpha, spec["tol"])
    else:
        small = wakes.Particles(x[:2000], alpha[:2000], h, kernel=kernel)
        wakes.induce(small, x[:2000], gradient=True, method=method, tolerance=spec["tol"])

        def run():
            return wakes.induce(src, x, gradient=True, method=method, tolerance=spec["tol"])

    times = []
    for _ in range(spec["reps"]):
        t0 = time.perf_counter()
        vel, grad = run()
        times.append(time.perf_counter() - t0)
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    pick = np.random.default_rng(7).choice(spec["n"], min(N_CHECK, spec["n"]), replace=False)
    ref_v, ref_g = wakes.induce(src, x[pick], gradient=True)
    ev = np.linalg.norm(vel[pick] - ref_v) / np.linalg.norm(ref_v)
    eg = np.linalg.norm(grad[pick] - ref_g) / np.linalg.norm(ref_g)
    return {**spec, "seconds": times, "max_rss_mb": rss, "err_vel": float(ev),
            "err_grad": float(eg), "threads": numba.get_num_threads()}


# ---------------------------------------------------------------- driver

def measure(method, n, tol, kernel, reps) -> dict | None:
    spec = {"method": method, "n": n, "tol": tol, "kernel": kernel, "reps": reps}
    proc = subprocess.run([sys.executable, __file__, "--worker", json.dumps(spec)],
                          capture_output=True, text=True)
    if proc.returncode != 0:
        print(f"  {method} n={n} tol={tol} failed:\n{proc.stderr[-2000:]}", file=sys.stderr)
        return None
    res = json.loads(proc.stdout.strip().splitlines()[-1])
    t = sorted(res["seconds"])
    print(f"  {method:8s} {kernel:20s} N={n:>8d} tol={tol:.0e}  {t[len(t) // 2]:8.3f} s  "
          f"err u {res['err_vel']:.1e}  grad {res['err_grad']:.1e}  rss {res['max_rss_mb']:.0f} MB",
          flush=True)
    return res


def _row(r: dict) -> str:
    t = sorted(r["seconds"])
    med = t[len(t) // 2]
    spread = f"{t[0]:.3f}-{t[-1]:.3f}" if len(t) > 1 else "-"
    return (f"| {r['method']} | {r['kernel']} | {r['n']:,} | {r['tol']:.0e} | "
            f"{r['err_vel']:.1e} | {r['err_grad']:.1e} | {med:.3f} | {spread} | "
            f"{r['max_rss_mb']:.0f} |")


HEADER = ("| method | kernel | N | tolerance (eps) | error u | error grad u | s (median) | "
          "min-max | max RSS MB |\n|---|---|---|---|---|---|---|---|---|")


def fmm_available() -> bool:
    try:
        import fmm3dpy  # noqa: F401
    except ImportError:
        return False
    return True


def machine() -> str:
    model = "unknown CPU"
    try:
        with open("/proc/cpuinfo") as fh:
            for line in fh:
                if line.startswith("model name"):
                    model = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    try:
        commit = subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=HERE,
                                capture_output=True, text=True).stdout.strip()
    except OSError:
        commit = "?"
    import numba
    return (f"{datetime.datetime.now():%Y-%m-%d %H:%M}, commit {commit}, {model}, "
            f"{os.cpu_count()} logical CPUs, Python {platform.python_version()}, "
            f"numba {numba.__version__} ({numba.config.NUMBA_NUM_THREADS} threads)")


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="N <= 1e5, do not append")
    ap.add_argument("--no-fmm", action="store_true", help="skip fmm3dpy")
    ap.add_argument("--no-append", action="store_true", help="print only")
    ap.add_argument("--worker", help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.worker:
        print(json.dumps(worker(json.loads(args.worker))))
        return
    big = 100_000 if args.quick else 1_000_000
    use_fmm = fmm_available() and not args.no_fmm
    load0 = os.getloadavg()
    sections = []

    print("targets (velocity and gradient, sigma = mean spacing)")
    rows = []
    for kernel in ("winckelmans-leonard", "gaussian"):
        rows.append(measure("tree", 100_000, 1e-4, kernel, 3))
    if not args.quick:
        rows.append(measure("tree", 1_000_000, 1e-4, "winckelmans-leonard", 1))
        rows.append(measure("tree", 1_000_000, 1e-7, "winckelmans-leonard", 1))
    sections.append(("Speed targets", rows))

    print("side by side, singular kernel")
    rows = []
    for n in sorted({100_000, big}):
        if n <= 100_000:
            rows.append(measure("direct", n, 1e-6, "singular", 1))
        for tol in (1e-3, 1e-4, 1e-6, 1e-7):
            rows.append(measure("tree", n, tol, "singular", 3 if n <= 100_000 else 1))
        if use_fmm:
            # at 10^6 points eps 1e-6 needs about 12 GB and two minutes: left out
            for eps in (1e-3, 1e-4, 1e-6) if n <= 100_000 else (1e-3, 1e-4):
                rows.append(measure("fmm3dpy", n, eps, "singular", 3 if n <= 100_000 else 1))
    sections.append(("Direct, tree and fmm3dpy on the same points", rows))

    print("time per target")
    rows = []
    for n in [10_000, 30_000, 100_000, 300_000, 1_000_000]:
        if n <= big:
            rows.append(measure("tree", n, 1e-4, "winckelmans-leonard", 3 if n <= 100_000 else 1))
    scaling = [r for r in rows if r]
    sections.append(("Time per target, tolerance 1e-4, Winckelmans-Leonard", rows))

    print("direct/tree crossover")
    rows = []
    for n in (2_000, 5_000, 10_000, 20_000, 40_000):
        rows.append(measure("direct", n, 1e-6, "winckelmans-leonard", 3))
        for tol in (1e-3, 1e-6, 1e-9):
            rows.append(measure("tree", n, tol, "winckelmans-leonard", 3))
    sections.append(("Direct against tree for small N (auto crossover)", rows))
    load1 = os.getloadavg()

    text = ["\n## Treecode (bench_tree.py)\n",
            f"{machine()}.",
            f"Load average {load0[0]:.1f} before, {load1[0]:.1f} after the run "
            f"(2 cores shared with other work: wall-clock times are upper bounds).",
            "Unit cube, random normal strengths, sigma = mean spacing, velocity and "
            "gradient at all N points; errors are relative L2 over 2,000 random targets "
            "against a direct sum. fmm3dpy: "
            + ("installed from PyPI, singular kernel, eps as its tolerance."
               if use_fmm else "not installed; its rows are missing."), ""]
    for title, rows in sections:
        text += [f"### {title}", "", HEADER] + [_row(r) for r in rows if r] + [""]
        if title.startswith("Time per target"):
            text += ["| N | s | us per target | us per target / log2 N |", "|---|---|---|---|"]
            for r in scaling:
                t = sorted(r["seconds"])[len(r["seconds"]) // 2]
                text.append(f"| {r['n']:,} | {t:.3f} | {1e6 * t / r['n']:.2f} | "
                            f"{1e6 * t / r['n'] / np.log2(r['n']):.3f} |")
            text.append("")
    out = "\n".join(text)
    print(out)
    if not (args.quick or args.no_append):
        with open(RESULTS, "a") as fh:
            fh.write(out)


if __name__ == "__main__":
    main()
