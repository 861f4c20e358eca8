"""Filament segments as sources: treecode against direct sum, and the crossover.

A free-wake-like set of segments: four helical tip vortices (radius 1,
pitch 0.3 per turn, 10 degrees a segment, Lamb-Oseen core 0.05), K
segments in all, and their K + 4 nodes as targets (what a free-wake step
asks for: the velocity at every node). Each size is timed by
``wakes.induce(..., method="direct")`` and ``method="tree"`` at the given
tolerance (the wake's default ``induction_tolerance`` is 1e-6), alternating
which goes first, ``--repeats`` rounds; the table gives medians, the ratio
tree/direct per round (median and range) and the tree's measured relative
error against direct (max over targets of |du| / max |u|). The crossover is
the smallest K measured where the median ratio is below 1.

    python benchmarks/bench_segment_tree.py                        # appends to RESULTS.md
    python benchmarks/bench_segment_tree.py --sizes 2000 8000 --no-append
"""

from __future__ import annotations

import argparse
import datetime
import os
import sys
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.dirname(HERE))

from record import append, commit, machine  # noqa: E402


def helix_wake(k: int):
    """Four helices of k // 4 segments each, as Filaments, and their nodes."""
    import wakes
    sets, nodes = [], []
    per = k // 4
    for blade in range(4):
        th = np.radians(10.0) * np.arange(per + 1)
        z = -0.3 * th / (2 * np.pi)
        ph = th + blade * np.pi / 2
        p = np.stack((np.cos(ph), np.sin(ph), z), axis=1)
        sets.append(wakes.Filaments.from_polyline(p, 1.0, 0.05))
        nodes.append(p)
    return sets, np.concatenate(nodes)


def main() -> None:
    import wakes
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", type=int, nargs="+",
                        default=[2000, 4000, 8000, 16000, 32000, 64000])
    parser.add_argument("--tolerance", type=float, default=1e-6)
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--no-append", action="store_true")
    args = parser.parse_args()

    s, x = helix_wake(400)                           # compile or load both paths
    for method in ("direct", "tree"):
        wakes.induce(s, x, method=method, tolerance=args.tolerance)
    lines = ["| segments | direct s | tree s | tree/direct median (min-max) | tree error |",
             "|---|---|---|---|---|"]
    crossover = None
    for k in args.sizes:
        s, x = helix_wake(k)
        td, tt, err = [], [], 0.0
        for r in range(args.repeats):
            order = ("direct", "tree") if r % 2 == 0 else ("tree", "direct")
            res = {}
            for method in order:
                t0 = time.perf_counter()
                res[method] = wakes.induce(s, x, method=method, tolerance=args.tolerance)
                (td if method == "direct" else tt).append(time.perf_counter() - t0)
            err = float(np.abs(res["tree"] - res["direct"]).max() / np.abs(res["direct"]).max())
        ratio = np.array(tt) / np.array(td)
        med = float(np.median(ratio))
        if crossover is None and med < 1.0:
            crossover = k
        lines.append(f"| {k:,} | {np.median(td):.3f} | {np.median(tt):.3f} | {med:.2f} "
                     f"({ratio.min():.2f}-{ratio.max():.2f}) | {err:.1e} |")
        print(lines[-1], flush=True)
    load = os.getloadavg()
    text = (f"{datetime.datetime.now():%Y-%m-%d %H:%M}, commit {commit()}, {machine()}.\n"
            f"Velocity at the K + 4 nodes, tolerance {args.tolerance:g}, {args.repeats} rounds. "
            f"Load average at the end: {load[0]:.1f} {load[1]:.1f} {load[2]:.1f} "
            f"(2 cores, shared with other users).\n\n" + "\n".join(lines) + "\n\n"
            + (f"Crossover: the tree is faster from {crossover:,} segments (smallest size measured "
               f"with a median ratio below 1).\n" if crossover else
               "Crossover: not reached at the sizes measured.\n")
            + f"\nCommand: `python benchmarks/bench_segment_tree.py --sizes "
            f"{' '.join(map(str, args.sizes))} --tolerance {args.tolerance:g} "
            f"--repeats {args.repeats}`\n")
    print(text)
    if not args.no_append:
        append("\n## Filament segments: treecode against direct (bench_segment_tree.py)\n\n" + text)


if __name__ == "__main__":
    main()
