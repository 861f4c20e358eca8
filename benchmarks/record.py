"""What every benchmark's results section records: the commit, the machine, and the append.

The scripts run as ``python benchmarks/NAME.py``, so they import this module
by its bare name.
"""

from __future__ import annotations

import os
import platform
import subprocess

RESULTS = os.path.join(os.path.dirname(os.path.abspath(__file__)), "RESULTS.md")


def commit() -> str:
    """Short hash of the checkout's HEAD, or "unknown" outside git."""
    try:
        return subprocess.run(["git", "rev-parse", "--short", "HEAD"], capture_output=True,
                              text=True, cwd=os.path.dirname(RESULTS), check=True).stdout.strip()
    except (OSError, subprocess.CalledProcessError):
        return "unknown"


def machine() -> str:
    """The CPU model, logical CPUs, numba version and numba's thread count."""
    import numba
    cpu = platform.processor() or platform.machine()
    try:
        with open("/proc/cpuinfo") as fh:
            cpu = next(line.split(":", 1)[1].strip() for line in fh if line.startswith("model name"))
    except (OSError, StopIteration):
        pass
    return f"{cpu}, {os.cpu_count()} logical CPUs, numba {numba.__version__} ({numba.get_num_threads()} threads)"


def append(text: str) -> None:
    """Add a results section to benchmarks/RESULTS.md."""
    with open(RESULTS, "a") as fh:
        fh.write(text)
