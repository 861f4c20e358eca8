"""SHA-256 fingerprints of the loads and sections tables of every bundled case.

Run it before and after a change that must not change results and compare
the two outputs line by line::

    python tools/loads_fingerprint.py > before.txt
    # ... change the code ...
    python tools/loads_fingerprint.py > after.txt
    diff before.txt after.txt

Each case runs through the public API (``wakes.load_case``,
``wakes.run_case``) with all its steps (about 2 minutes for the whole set
on one core); ``--max-steps N`` caps each case at N steps, through the
case's ``[time] steps`` override, for a quicker look (keep the cap the same
on both sides of a comparison). The hashes cover the tables' CSV text with
every float written with 17 significant digits (round-trip exact), so they
change with the last bit of any value. The timing column ``wall_time_s`` is
not in the tables.

Each case runs in a fresh Python process: within one process a run's loads
may depend on the cases run before it (measured on the rotor cases: the
same case gave other hashes after other cases than alone), which would
make the comparison depend on the order of the list.
"""

from __future__ import annotations

import argparse
import hashlib
import subprocess
import sys
from pathlib import Path

import wakes

ROOT = Path(__file__).resolve().parent.parent


def _digest(table) -> str:
    text = table.to_csv(index=False, float_format="%.17g", lineterminator="\n")
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def case_files() -> list[Path]:
    """Every case file under cases/ and cases/validation/, sorted."""
    return sorted(ROOT.glob("cases/*.toml")) + sorted(ROOT.glob("cases/validation/*.toml"))


def fingerprint(path: Path, max_steps: int):
    """One line (case path, steps run, SHA-256 of loads and of sections) and the run."""
    case = wakes.load_case(path)
    if 0 < max_steps < case.time.steps:
        case = wakes.load_case(path, overrides={"time": {"steps": max_steps}})
    run = wakes.run_case(case, use_cluster=False)
    line = (f"{path.relative_to(ROOT)}  steps={case.time.steps}  "
            f"loads={_digest(run.loads)}  sections={_digest(run.sections)}")
    return line, run


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--max-steps", type=int, default=0,
                        help="cap on the steps of each case (default 0: no cap)")
    parser.add_argument("--dump", type=Path, default=None,
                        help="also write each case's loads and sections CSV into this folder")
    parser.add_argument("--one", type=Path, default=None,
                        help="fingerprint this case file only, in this process")
    args = parser.parse_args(argv)
    if args.one is None:
        for path in case_files():
            cmd = [sys.executable, __file__, "--one", str(path), "--max-steps", str(args.max_steps)]
            if args.dump is not None:
                cmd += ["--dump", str(args.dump)]
            subprocess.run(cmd, check=True)
        return 0
    for path in [args.one.resolve()]:
        line, run = fingerprint(path, args.max_steps)
        print(line, flush=True)
        if args.dump is not None:
            args.dump.mkdir(parents=True, exist_ok=True)
            stem = path.stem
            run.loads.to_csv(args.dump / f"{stem}-loads.csv", index=False, float_format="%.17g")
            run.sections.to_csv(args.dump / f"{stem}-sections.csv", index=False,
                                float_format="%.17g")
    return 0


if __name__ == "__main__":
    sys.exit(main())
