"""Direct drivers against yardsticks: time ratios in the same run, per numba target.

Each row times one of the library's direct drivers (``wakes/induction/direct.py``,
called as ``wakes.induce(..., method="direct")`` calls it) and a minimal
hand-tuned tiled kernel for the same pair law (``benchmarks/yardsticks.py``)
on the same problem, one after the other, alternating which goes first, in
``--repeats`` rounds; the ratio library/yardstick is taken in each round and
the table gives its median (and range), so a busy spell on a shared machine
falls on both sides of a ratio. Both results are compared (relative max-norm
difference, must be below 1e-11) before anything is timed.

Rows:

* particles, Winckelmans-Leonard kernel, velocity; velocity and gradient;
* filament segments, Lamb-Oseen core (the case files' default), velocity;
  velocity and gradient;
* the Gaussian kernel's driver against the Winckelmans-Leonard driver
  (target: at most 2x), velocity and gradient, same particles and radii.

Problem: N particles uniform in the unit cube, normal random strengths,
sigma = 1.5 N^(-1/3) (common practice: an overlap of 1 to 2 mean spacings),
targets = particles; K segments on four helices (radius 1, pitch 0.3 per
turn, 10 degrees a segment, core radius 0.05), N targets uniform in the
box around them.

Each numba target is run in its own process with an empty numba cache:
``native`` is what numba picks on this machine; ``--targets`` may add
``skylake-avx512`` (the code LLVM emits for an Intel AVX-512 core: it
prefers 256-bit vectors) and ``haswell`` (AVX2 only: the host's features
with every AVX-512 feature turned off). These run on this CPU: they show
the code each target gets, timed here, not that machine's speed.

    python benchmarks/bench_yardstick.py                       # native, appends to RESULTS.md
    python benchmarks/bench_yardstick.py --targets native skylake-avx512 haswell
    python benchmarks/bench_yardstick.py --quick --no-append   # small, print only
"""

from __future__ import annotations

import argparse
import datetime
import json
import os
import re
import subprocess
import sys
import tempfile
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
sys.path.insert(0, ROOT)

from record import append, commit, machine  # noqa: E402

ROWS = ("WL velocity", "WL velocity+gradient", "segments LO velocity",
        "segments LO velocity+gradient", "gaussian/WL velocity", "gaussian/WL velocity+gradient")


def cpu_flags() -> tuple[str, int]:
    """The SIMD extension the CPU reports (/proc/cpuinfo flags) and its vector bits."""
    try:
        with open("/proc/cpuinfo") as fh:
            flags = next(line for line in fh if line.startswith("flags")).split()
    except (OSError, StopIteration):
        return "unknown", 0
    if "avx512f" in flags:
        return "avx512f", 512
    return ("avx2", 256) if "avx2" in flags else ("sse2", 128)


def target_env(name: str) -> dict:
    """Environment of a child process that compiles for the named numba target."""
    env = dict(os.environ)
    if name == "native":
        return env
    import llvmlite.binding as ll
    feats = ll.get_host_cpu_features()
    if name == "haswell":
        for k in feats:
            if k.startswith("avx512"):
                feats[k] = False
    env["NUMBA_CPU_NAME"] = name
    env["NUMBA_CPU_FEATURES"] = feats.flatten()
    return env


# ------------------------------------------------------------------ child

def particles(n: int, seed: int = 7):
    rng = np.random.default_rng(seed)
    x = rng.uniform(0.0, 1.0, (n, 3))
    a = rng.normal(size=(n, 3)) / n
    return x, a, 1.5 * n ** (-1.0 / 3.0)


def helices(k: int, n_targets: int, seed: int = 8):
    """k segments on four helical tip vortices, and n_targets points around them."""
    per = k // 4
    ends_a, ends_b = [], []
    for blade in range(4):
        th = np.radians(10.0) * np.arange(per + 1) + blade * np.pi / 2
        z = -0.3 * (th - blade * np.pi / 2) / (2 * np.pi)
        p = np.stack((np.cos(th), np.sin(th), z), axis=1)
        ends_a.append(p[:-1])
        ends_b.append(p[1:])
    pa, pb = np.concatenate(ends_a), np.concatenate(ends_b)
    rng = np.random.default_rng(seed)
    lo, hi = np.minimum(pa.min(0), pb.min(0)) - 0.2, np.maximum(pa.max(0), pb.max(0)) + 0.2
    return pa, pb, rng.uniform(lo, hi, (n_targets, 3))


def columns(a):
    return [np.ascontiguousarray(a[:, i]) for i in range(3)]


def widest(asm: str) -> str:
    """Widest packed double register in the arithmetic of an assembly listing."""
    regs = set(re.findall(r"v(?:fmadd|fnmadd|mul|add|sub|div|sqrt)\w*pd\s+%([xyz])mm", asm))
    return "zmm (512-bit)" if "z" in regs else ("ymm (256-bit)" if "y" in regs else "xmm (128-bit)")


def child(n: int, k: int, repeats: int, threads: list[int]) -> dict:
    import numba
    from wakes.induction import _jit, direct
    from wakes.induction.smoothing import CORE_LAMB_OSEEN, GAUSSIAN, WINCKELMANS_LEONARD

    import yardsticks as ys

    x, a, sigma = particles(n)
    t = columns(x)
    src = columns(x) + columns(a) + [np.full(n, sigma * sigma)]
    pa, pb, tg = helices(k, n)
    seg = columns(pa) + columns(pb) + [np.full(len(pa), 1.0 / len(pa)), np.full(len(pa), 0.05 ** 2)]
    tt = columns(tg)

    def out(grad, m=n):
        return np.zeros((m, 3)), np.zeros((m, 3, 3) if grad else (0, 3, 3))

    def lib_p(code, grad):
        v, g = out(grad)
        direct.particles_direct(*t, *src, code, grad, v, g)
        return v, g

    def lib_s(grad):
        v, g = out(grad)
        direct.segments_direct(*tt, *seg, CORE_LAMB_OSEEN, grad, v, g)
        return v, g

    def ys_p(grad):
        v, g = out(grad)
        if grad:
            ys.wl_gradient(*t, *src, v, g)
        else:
            ys.wl_velocity(*t, *src, v)
        return v, g

    def ys_s(grad):
        v, g = out(grad)
        (ys.lamb_oseen_segment_gradient if grad else ys.lamb_oseen_segment_velocity)(
            *tt, *seg, v, g)
        return v, g

    wl = WINCKELMANS_LEONARD
    pairs = {
        ROWS[0]: (lambda: lib_p(wl, False), lambda: ys_p(False)),
        ROWS[1]: (lambda: lib_p(wl, True), lambda: ys_p(True)),
        ROWS[2]: (lambda: lib_s(False), lambda: ys_s(False)),
        ROWS[3]: (lambda: lib_s(True), lambda: ys_s(True)),
        ROWS[4]: (lambda: lib_p(GAUSSIAN, False), lambda: lib_p(wl, False)),
        ROWS[5]: (lambda: lib_p(GAUSSIAN, True), lambda: lib_p(wl, True)),
    }
    check = {}
    t0 = time.perf_counter()
    for row, (lib, yard) in pairs.items():          # compiles, and the agreement check
        (v1, g1), (v2, g2) = lib(), yard()
        diff = max(np.abs(v1 - v2).max() / np.abs(v2).max(),
                   np.abs(g1 - g2).max() / np.abs(g2).max() if g2.size else 0.0)
        check[row] = float(diff)
        if "gaussian" not in row and diff > 1e-11:
            raise SystemExit(f"{row}: library and yardstick differ by {diff:.2e}")
    compile_s = time.perf_counter() - t0
    asm = {"library WL gradient": widest(direct._PARTICLE_DRIVERS[(wl, True)].inspect_asm(
               direct._PARTICLE_DRIVERS[(wl, True)].signatures[0])),
           "yardstick WL gradient": widest(ys.wl_gradient.inspect_asm(ys.wl_gradient.signatures[0]))}
    times = {}
    for nt in threads:
        numba.set_num_threads(nt)
        for r in range(repeats):
            for row, (lib, yard) in pairs.items():
                order = (lib, yard) if r % 2 == 0 else (yard, lib)
                dt = {}
                for f in order:
                    s = time.perf_counter()
                    f()
                    dt[f] = time.perf_counter() - s
                times.setdefault(f"{row}|{nt}", []).append((dt[lib], dt[yard]))
    tgt = _jit.machine_target()
    return {"cpu": tgt.cpu, "vector_registers": tgt.vector_registers,
            "max_vector_bits": tgt.max_vector_bits, "gradient_passes": direct.GRADIENT_PASSES,
            "asm": asm, "check": check, "times": times, "compile_s": compile_s,
            "segments": len(pa)}


# ------------------------------------------------------------------ parent

def run_target(name: str, args) -> dict:
    with tempfile.TemporaryDirectory() as cache:
        env = target_env(name)
        env["NUMBA_CACHE_DIR"] = cache
        env["PYTHONPATH"] = os.pathsep.join([HERE, ROOT, env.get("PYTHONPATH", "")])
        cmd = [sys.executable, os.path.abspath(__file__), "--child", "--n", str(args.n),
               "--k", str(args.k), "--repeats", str(args.repeats),
               "--threads", *map(str, args.threads)]
        out = subprocess.run(cmd, env=env, capture_output=True, text=True)
        if out.returncode:
            raise SystemExit(f"target {name} failed:\n{out.stderr}")
        return json.loads(out.stdout.strip().splitlines()[-1])


def section(results: dict, args) -> str:
    import numba
    flag, bits = cpu_flags()
    load = os.getloadavg()
    head = (f"{datetime.datetime.now():%Y-%m-%d %H:%M}, commit {commit()}, {machine()}.\n"
            f"CPU flags: {flag} ({bits}-bit vectors); numba {numba.__version__} native target "
            f"{results.get('native', next(iter(results.values())))['cpu']}. "
            f"Load average at the end: {load[0]:.1f} {load[1]:.1f} {load[2]:.1f} "
            f"(2 cores, shared with other users). {args.repeats} rounds; N = {args.n:,} particles "
            f"(targets = sources), {next(iter(results.values()))['segments']:,} segments on "
            f"{args.n:,} targets.\n")
    lines = ["| numba target | registers | gradient passes | widest vector: library / yardstick "
             "(WL gradient) | row | threads | library s | yardstick s | ratio median (min-max) |",
             "|---|---|---|---|---|---|---|---|---|"]
    for name, res in results.items():
        asm = f"{res['asm']['library WL gradient']} / {res['asm']['yardstick WL gradient']}"
        for key, pairs in res["times"].items():
            row, nt = key.split("|")
            lib = np.array([p[0] for p in pairs])
            yard = np.array([p[1] for p in pairs])
            ratio = lib / yard
            label = f"{name} ({res['cpu']})"
            lines.append(f"| {label} | {res['vector_registers']} | {res['gradient_passes']} | {asm} "
                         f"| {row} | {nt} | {np.median(lib):.3f} | {np.median(yard):.3f} "
                         f"| {np.median(ratio):.2f} ({ratio.min():.2f}-{ratio.max():.2f}) |")
    notes = ("Rows \"gaussian/WL\" time the library's Gaussian driver against its "
             "Winckelmans-Leonard driver (target <= 2); the other rows the library's driver against "
             "the yardstick of benchmarks/yardsticks.py (target <= 1.15). Library and yardstick "
             "agree to " + f"{max(max(r['check'][k] for k in ROWS[:4]) for r in results.values()):.1e}"
             " (relative max norm).\n")
    cmd = (f"python benchmarks/bench_yardstick.py --n {args.n} --k {args.k} --repeats {args.repeats}"
           f" --threads {' '.join(map(str, args.threads))} --targets {' '.join(results)}")
    return head + "\n" + "\n".join(lines) + "\n\n" + notes + f"\nCommand: `{cmd}`\n"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--n", type=int, default=16000, help="particles (and targets)")
    parser.add_argument("--k", type=int, default=4000, help="filament segments")
    parser.add_argument("--repeats", type=int, default=5)
    parser.add_argument("--threads", type=int, nargs="+", default=[1, 2])
    parser.add_argument("--targets", nargs="+", default=["native"],
                        choices=["native", "skylake-avx512", "haswell"])
    parser.add_argument("--quick", action="store_true", help="N = 4,000, K = 1,000, 3 rounds")
    parser.add_argument("--no-append", action="store_true", help="print only")
    parser.add_argument("--child", action="store_true", help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.child:
        print(json.dumps(child(args.n, args.k, args.repeats, args.threads)))
        return
    if args.quick:
        args.n, args.k, args.repeats = 4000, 1000, 3
    results = {}
    for name in args.targets:
        results[name] = run_target(name, args)
        print(f"{name}: done ({results[name]['compile_s']:.0f} s to compile and check)", flush=True)
    text = section(results, args)
    print(text)
    if not (args.quick or args.no_append):
        append("\n## Direct drivers against yardsticks (bench_yardstick.py)\n\n" + text)
        print("appended to RESULTS.md")


if __name__ == "__main__":
    main()
