"""Direct Biot--Savart summation: pair interactions per second.

Sources = targets: N points uniform in the unit cube, normal random vector
strengths, one smoothing radius sigma = overlap * h with h = N^(-1/3) the
mean spacing (overlap 1.5 by default; an overlap of 1 to 2 is common
practice for vortex particles). Velocity, or velocity and gradient, by
``wakes.induce(..., method="direct")`` with 1 and 2 numba threads. Every
configuration is timed ``--repeats`` times, round-robin so that a busy spell
on the shared machine spreads over all rows; the table gives the median,
the fastest and the slowest run, and N^2 / median in million pairs per
second.

The Gaussian kernel equals the singular one beyond 9.5 sigma to round-off,
and the driver uses that (see ``wakes/induction/direct.py``), so its rate
depends on sigma: the "gaussian (dense)" rows (smallest N only) put every pair within
9.5 sigma (sigma = 0.5, the cube's diagonal is 1.73) and show the worst case.

Options::

    python benchmarks/bench_direct.py              # N = 16,000 and 64,000; appends to RESULTS.md
    python benchmarks/bench_direct.py --quick      # N = 4,000; prints only
    python benchmarks/bench_direct.py --compile    # compile time of each driver (fresh cache)
    python benchmarks/bench_direct.py --asm        # packed (vector) instructions per driver

``NUMBA_CPU_FEATURES`` is honoured as numba reads it. On CPUs with AVX-512
that numba treats as an older model, ``NUMBA_CPU_FEATURES=<host
features>,-prefer-256-bit`` gives 512-bit code: a benchmark-only knob (the
numba cache is per CPU, and users' machines differ), recorded in the table
header when set.
"""

from __future__ import annotations

import argparse
import datetime
import os
import platform
import re
import subprocess
import sys
import tempfile
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
RESULTS = os.path.join(HERE, "RESULTS.md")
sys.path.insert(0, ROOT)

KERNELS = ("winckelmans-leonard", "gaussian")
DENSE_SIGMA = 0.5   # every pair of the unit cube within 9.5 sigma


def problem(n: int, seed: int = 7):
    """N points uniform in the unit cube and normal random strengths."""
    rng = np.random.default_rng(seed)
    return rng.uniform(0.0, 1.0, (n, 3)), rng.normal(size=(n, 3)) / n


def configurations(sizes, overlap, dense):
    rows = []
    for n in sizes:
        for kernel in KERNELS:
            for gradient in (False, True):
                rows.append((kernel, n, gradient, overlap * n ** (-1 / 3), ""))
    if dense:                               # worst case, at the smallest size only
        for gradient in (False, True):
            rows.append(("gaussian", sizes[0], gradient, DENSE_SIGMA, " (dense)"))
    return rows


def run_timings(rows, threads, repeats):
    import numba
    import wakes

    cache = {}
    times = {}
    for kernel in KERNELS:                  # compile or load every driver first
        for gradient in (False, True):
            x, alpha = problem(500)
            wakes.induce(wakes.Particles(x, alpha, 0.05, kernel=kernel), x,
                         gradient=gradient, method="direct")
    for r in range(1, repeats + 1):
        for nt in threads:
            numba.set_num_threads(nt)
            for kernel, n, gradient, sigma, tag in rows:
                if n not in cache:
                    cache[n] = problem(n)
                x, alpha = cache[n]
                p = wakes.Particles(x, alpha, sigma, kernel=kernel)
                t0 = time.perf_counter()
                wakes.induce(p, x, gradient=gradient, method="direct")
                dt = time.perf_counter() - t0
                times.setdefault((kernel + tag, n, gradient, nt), []).append(dt)
            print(f"round {r}/{repeats} ({nt} thread(s)) done", flush=True)
    return times


def machine() -> str:
    model = platform.processor() or "unknown CPU"
    flags = ""
    try:
        with open("/proc/cpuinfo") as f:
            text = f.read()
        model = re.search(r"model name\s*:\s*(.*)", text).group(1)
        flags = re.search(r"flags\s*:\s*(.*)", text).group(1).split()
    except (OSError, AttributeError):
        pass
    simd = "AVX-512" if "avx512f" in flags else ("AVX2" if "avx2" in flags else "no AVX2")
    return f"{model}, {os.cpu_count()} logical CPUs, {simd}"


def git_commit() -> str:
    try:
        rev = subprocess.run(["git", "rev-parse", "--short", "HEAD"], cwd=ROOT,
                             capture_output=True, text=True, check=True).stdout.strip()
        dirty = subprocess.run(["git", "status", "--porcelain", "--", "wakes/induction"], cwd=ROOT,
                               capture_output=True, text=True).stdout.strip()
        return rev + (" (wakes/induction modified)" if dirty else "")
    except (OSError, subprocess.CalledProcessError):
        return "unknown"


def table(times, repeats) -> str:
    import numba

    stamp = datetime.datetime.now().strftime("%Y-%m-%d %H:%M")
    load = os.getloadavg()
    head = [f"{stamp}, commit {git_commit()}, {machine()}, numba {numba.__version__} "
            f"({numba.threading_layer()} threading layer), float64, median of {repeats}.",
            f"Load average at the end of the run: {load[0]:.1f} {load[1]:.1f} {load[2]:.1f} "
            f"(2 cores, shared with other users)."]
    if os.environ.get("NUMBA_CPU_FEATURES"):
        head.append(f"NUMBA_CPU_FEATURES={os.environ['NUMBA_CPU_FEATURES']}")
    lines = ["| kernel | N | gradient | threads | seconds median (min-max) | M pairs/s |",
             "|---|---|---|---|---|---|"]
    for (kernel, n, gradient, nt), ts in times.items():
        med = float(np.median(ts))
        lines.append(f"| {kernel} | {n:,} | {'yes' if gradient else 'no'} | {nt} | "
                     f"{med:.3f} ({min(ts):.3f}-{max(ts):.3f}) | {n * n / med / 1e6:,.0f} |")
    return "\n".join(head) + "\n\n" + "\n".join(lines) + "\n"


# ------------------------------------------------------ compile time, asm

_PROBE = """
import sys, time, numpy as np
sys.path.insert(0, {root!r})
from wakes.induction import direct
from wakes.induction.smoothing import PARTICLE_KERNELS
kernel, gradient = PARTICLE_KERNELS[{kernel!r}].code, {gradient!r}
rng = np.random.default_rng(0)
c = [rng.random(300) for _ in range(6)]
vel = np.zeros((300, 3)); grad = np.zeros((300, 3, 3) if gradient else (0, 3, 3))
t0 = time.perf_counter(); c0 = time.process_time()
direct.particles_direct(*c[:3], *c, np.full(300, 0.01), kernel, gradient, vel, grad)
print("TIME", time.perf_counter() - t0, time.process_time() - c0)
if {asm!r}:
    import re
    fns = [direct._PARTICLE_DRIVERS[(kernel, gradient)]]
    if kernel == direct.GAUSSIAN:
        fns.append(direct._gaussian_gradient_block if gradient else direct._gaussian_velocity_block)
    text = "".join(f.inspect_asm(f.signatures[0]) for f in fns)
    for name in ("vsqrtpd", "vdivpd", "vfmadd[0-9]+pd", "vmulpd", "vaddpd"):
        found = re.findall(name + r"\\s+%([xyz])mm", text)
        print("ASM", name.replace("[0-9]+", "*"), "ymm", found.count("y"), "zmm", found.count("z"),
              "xmm", found.count("x"))
"""


def probe(kernel: str, gradient: bool, asm: bool):
    """Compile one driver in a fresh process with an empty numba cache."""
    with tempfile.TemporaryDirectory() as cache_dir:
        env = dict(os.environ, NUMBA_CACHE_DIR=cache_dir)
        code = _PROBE.format(root=ROOT, kernel=kernel, gradient=gradient, asm=asm)
        out = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True,
                             text=True, check=True).stdout
    return out


METHOD = """Method (wakes/induction/direct.py, pairs.py, gaussian.py): sources in blocks of
1,024 (structure of arrays, in cache) against blocks of 128 targets, numba
prange over target blocks; the inner loop runs over a contiguous source range
with an unsigned index, so LLVM emits packed loads and arithmetic (256-bit,
4 doubles, on AVX2); fastmath reassoc+contract only, error_model numpy. One
square root and one division per pair, x^-1 taken as x^-1.5 * x^0.5. With
the gradient, the algebraic kernels run one loop where AVX-512 gives 32
vector registers, and on AVX2 (direct.GRADIENT_PASSES, chosen from numba's
target) three passes over blocks of 256 sources that stay in L1 (pair factors f, f'; velocity, sum f alpha and
f' alpha x r; the eight gradient sums): one loop holding all 14 sums spilled
on the 16 AVX2 registers (1.26-1.29x on the AMD EPYC below). Tried and not
used on that CPU (Zen 3 class, single-thread CPU time): a float32 reciprocal
square root estimate (vrsqrtps, emitted by LLVM for a float32 1/sqrt with
fastmath afn+arcp) refined in float64 to round-off ran at 0.65-0.75x the exact
square root and division (its dependency chain is longer, and the divider is
not the limit once the loop is latency-bound); fusing the passes, or the
square root and division issued in parallel (x^-3 * x^0.5), gained nothing;
source blocks of 128, 384 and 512 were slower than 256; the three-pass form
for the Gaussian gradient ran at 0.91x (short runs of sub-blocks), and
Gaussian sub-blocks of 16 at 0.96-0.99x. Every kernel is exact to round-off.
Gaussian kernel: e^-x by Cody-Waite
reduction and a degree-11 polynomial (2 ulp); q(rho) from the positive Kummer
series for t = rho^2 < 5.06 and from 1 - e^-t/2 S(rho) beyond, with S a fitted
ratio P/Q and e^-t/2 a [6/6] Pade ratio whose denominators join the one
division, branch-free (g within 2.1 ulp, g' within 3.3 ulp of
30-digit values; tests/induction/test_fast_math.py). Gaussian sources are
sorted along a Morton curve and visited in sub-blocks of 32: a sub-block at
least 9.49 sigma_max from the target uses the singular law (the kernels differ
by < 3e-19 there), one beyond 2.25 sigma_max skips the near-centre series."""


def compile_table(asm: bool) -> str:
    lines = ["| kernel | gradient | compile s wall | compile s CPU |", "|---|---|---|---|"]
    for kernel in KERNELS:
        for gradient in (False, True):
            out = probe(kernel, gradient, asm)
            wall, cpu = map(float, re.search(r"TIME (\S+) (\S+)", out).groups())
            lines.append(f"| {kernel} | {'yes' if gradient else 'no'} | {wall:.1f} | {cpu:.1f} |")
            for line in out.splitlines():
                if line.startswith("ASM"):
                    lines.append(f"|  | asm: {line[4:]} | | |")
            print(lines[-1], flush=True)
    return ("Compile time of each driver in a fresh process with an empty numba cache "
            "(afterwards it loads from the cache in well under a second):\n\n"
            + "\n".join(lines) + "\n")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="N = 4,000, print only")
    parser.add_argument("--sizes", type=int, nargs="+", default=[16000, 64000])
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--overlap", type=float, default=1.5, help="sigma / mean spacing")
    parser.add_argument("--no-dense", action="store_true", help="skip the dense Gaussian rows")
    parser.add_argument("--compile", action="store_true", help="only the compile times")
    parser.add_argument("--asm", action="store_true", help="only the packed-instruction counts")
    parser.add_argument("--no-append", action="store_true", help="print only")
    args = parser.parse_args()

    if args.compile or args.asm:
        print(compile_table(args.asm))
        return

    sizes = [4000] if args.quick else args.sizes
    rows = configurations(sizes, args.overlap, not args.no_dense)
    times = run_timings(rows, (1, 2), args.repeats)
    text = table(times, args.repeats)
    print(text)
    if args.quick or args.no_append:
        return
    compiled = compile_table(False)
    with open(RESULTS, "a") as f:
        f.write(f"\n## Direct summation, pairs per second (bench_direct.py)\n\n{text}\n"
                f"{compiled}\n{METHOD}\n")
    print(f"appended to {RESULTS}")


if __name__ == "__main__":
    main()
