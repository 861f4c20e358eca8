"""Memory budget of a run: refuse before it starts, stop when the wake outgrows it.

The peak memory is that of :func:`wakes.estimate.estimate_case` (the wake
size from the loop's bookkeeping, bytes per segment and particle, the
influence matrices); the budget is the ``--max-memory`` a user gives, or
else the memory the system still has available (``MemAvailable`` of
``/proc/meminfo`` on Linux).
"""

from __future__ import annotations

import math
import re

from ._system import available_bytes
from .errors import MemoryBudgetError, WakesError
from .estimate import estimate_case, peak_bytes  # noqa: F401  (peak_bytes: re-exported)

_SIZE = re.compile(r"^\s*(\d+(?:\.\d*)?|\.\d+)\s*([kmgt]?)i?b?\s*$", re.IGNORECASE)
_UNITS = {"": 1, "k": 2 ** 10, "m": 2 ** 20, "g": 2 ** 30, "t": 2 ** 40}


def parse_size(text: str) -> int:
    """Bytes in a size such as ``"8G"``, ``"512MB"``, ``"1.5GiB"`` or ``"1000000"``.

    Raises
    ------
    WakesError
        If ``text`` is not a positive size.
    """
    m = _SIZE.match(str(text))
    value = float(m.group(1)) * _UNITS[m.group(2).lower()] if m else 0.0
    if not value >= 1.0 or not math.isfinite(value):
        raise WakesError(f"--max-memory must be a positive size such as 8G, 512M or 1.5GiB; "
                         f"got {text!r}")
    return int(value)


def budget_bytes(max_memory: int | None) -> tuple[int | None, str]:
    """The memory a run may use [B] and where the limit comes from."""
    if max_memory is not None:
        return int(max_memory), "--max-memory"
    return available_bytes(), "the memory available on this machine"


def check_budget(case, max_memory: int | None = None):
    """Refuse a run whose estimated peak memory exceeds the budget; return the estimate.

    Parameters
    ----------
    case : wakes.case.Case
        The resolved case.
    max_memory : int, optional
        The user's limit [B]; default: the memory available now.

    Returns
    -------
    wakes.estimate.Estimate

    Raises
    ------
    MemoryBudgetError
        Naming the estimate, the limit and the remedies.
    """
    est = estimate_case(case, pair_rate=1.0)   # the run time is not wanted: skip measuring it
    need = int(est.memory_mb * 1e6)
    limit, where = budget_bytes(max_memory)
    if limit is not None and need > limit:
        raise MemoryBudgetError(
            f"the run would need about {_gib(need)} (final wake of {est.final_segments:,} "
            f"segments and {est.final_particles:,} particles, {est.bound_unknowns} unknowns) but "
            f"{where} is {_gib(limit)}; shorten [time] steps, set [wake] max_age to trim old "
            "wake, use [wake] model = \"particles\", coarsen the panels, or raise --max-memory")
    return est


def _gib(n: int) -> str:
    return f"{n / 2 ** 30:.3g} GiB"
