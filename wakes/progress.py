"""A one-line progress bar for runs on a terminal.

The bar shows the step, the simulated time, the size of the wake, the rate
in steps per second and the time left, redrawn in place with a carriage
return. It stays silent when the stream is not a terminal (a log file, a
pipe, a batch job) or when the user asked for quiet, so logs hold no
control characters.
"""

from __future__ import annotations

import sys
import time
from typing import Callable, TextIO

BAR_WIDTH = 24          # characters of the bar itself
MIN_REDRAW_S = 0.1      # at most ten redraws a second: a terminal is slow at hundreds


def _clock(seconds: float) -> str:
    """``h:mm:ss`` or ``m:ss`` for a duration in seconds."""
    s = int(round(max(seconds, 0.0)))
    h, rest = divmod(s, 3600)
    m, s = divmod(rest, 60)
    return f"{h}:{m:02d}:{s:02d}" if h else f"{m}:{s:02d}"


def progress_line(step: int, steps: int, sim_time_s: float, wake_elements: int | None,
                  elapsed_s: float) -> str:
    """The text of the bar after ``step`` of ``steps`` steps.

    Parameters
    ----------
    step, steps : int
        Steps done and steps in the run.
    sim_time_s : float
        Simulated time reached [s].
    wake_elements : int or None
        Filament segments plus particles in the wake (None: not shown).
    elapsed_s : float
        Wall time since the start [s].

    Examples
    --------
    >>> progress_line(5, 10, 0.05, 120, 2.0)[:30]
    '[############------------]  5/'
    """
    frac = step / steps if steps else 1.0
    filled = int(round(BAR_WIDTH * frac))
    rate = step / elapsed_s if elapsed_s > 0 else float("nan")
    left = (steps - step) / rate if rate and rate == rate and rate > 0 else float("nan")
    parts = [f"[{'#' * filled}{'-' * (BAR_WIDTH - filled)}] {step:>{len(str(steps))}}/{steps}",
             f"t = {sim_time_s:.4g} s"]
    if wake_elements is not None:
        parts.append(f"wake {wake_elements:,} elements")
    parts.append(f"{rate:.2f} steps/s" if rate == rate else "- steps/s")
    parts.append(f"{_clock(left)} left" if left == left else "-:-- left")
    return "  ".join(parts)


class ProgressBar:
    """Callable progress bar for :func:`wakes.simulate.run_case`.

    Parameters
    ----------
    dt : float
        Time step [s], to show the simulated time.
    wake_size : callable, optional
        ``wake_size(step)`` gives the number of wake elements after a step
        (e.g. from :func:`wakes.estimate.wake_size_at`).
    stream : file, optional
        Where to draw (default: standard error).
    quiet : bool
        Draw nothing.

    Examples
    --------
    >>> import io
    >>> bar = ProgressBar(0.01, stream=io.StringIO())   # not a terminal: silent
    >>> bar(1, 10); bar.enabled
    False
    """

    def __init__(self, dt: float, *, wake_size: Callable[[int], int] | None = None,
                 stream: TextIO | None = None, quiet: bool = False):
        self.dt = dt
        self.wake_size = wake_size
        self.stream = sys.stderr if stream is None else stream
        isatty = getattr(self.stream, "isatty", None)
        self.enabled = not quiet and bool(isatty and isatty())
        self._start = time.perf_counter()
        self._last = -1.0
        self._width = 0

    def __call__(self, step: int, steps: int) -> None:
        if not self.enabled:
            return
        now = time.perf_counter()
        if step < steps and now - self._last < MIN_REDRAW_S:
            return
        self._last = now
        size = self.wake_size(step) if self.wake_size is not None else None
        line = progress_line(step, steps, step * self.dt, size, now - self._start)
        pad = max(self._width - len(line), 0)
        self._width = len(line)
        self.stream.write("\r" + line + " " * pad + ("\n" if step >= steps else ""))
        self.stream.flush()
