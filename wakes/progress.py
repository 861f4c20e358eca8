"""A one-line progress bar for runs on a terminal.

The bar shows the step, the simulated time, the live size of the wake
(filament segments and particles), the rate in steps per second and the
time left, redrawn in place with a carriage return. It stays silent when the stream is not a terminal (a log file, a
pipe, a batch job) or when the user asked for quiet, so logs hold no
control characters.
"""

from __future__ import annotations

import sys
import time
from typing import TextIO

BAR_WIDTH = 24          # characters of the bar itself
MIN_REDRAW_S = 0.1      # at most ten redraws a second: a terminal is slow at hundreds


def _clock(seconds: float) -> str:
    """``h:mm:ss`` or ``m:ss`` for a duration in seconds."""
    s = int(round(max(seconds, 0.0)))
    h, rest = divmod(s, 3600)
    m, s = divmod(rest, 60)
    return f"{h}:{m:02d}:{s:02d}" if h else f"{m}:{s:02d}"


def progress_line(step: int, steps: int, sim_time_s: float, wake: tuple[int, int] | None,
                  rate: float, left_s: float) -> str:
    """The text of the bar after ``step`` of ``steps`` steps.

    Parameters
    ----------
    step, steps : int
        Steps done and steps in the run.
    sim_time_s : float
        Simulated time reached [s].
    wake : (int, int) or None
        Filament segments and particles in the wake now (None: not shown).
    rate : float
        Steps per second of wall time (nan: not known yet).
    left_s : float
        Wall time left [s] (nan: not known yet).

    Examples
    --------
    >>> progress_line(5, 10, 0.05, (120, 0), 2.5, 2.0)
    '[############------------]  5/10  t = 0.05 s  wake 120 segments 0 particles  2.50 steps/s  0:02 left'
    """
    frac = step / steps if steps else 1.0
    filled = int(round(BAR_WIDTH * frac))
    parts = [f"[{'#' * filled}{'-' * (BAR_WIDTH - filled)}] {step:>{len(str(steps))}}/{steps}",
             f"t = {sim_time_s:.4g} s"]
    if wake is not None:
        parts.append(f"wake {wake[0]:,} segments {wake[1]:,} particles")
    parts.append(f"{rate:.2f} steps/s" if rate == rate else "- steps/s")
    parts.append(f"{_clock(left_s)} left" if left_s == left_s else "-:-- left")
    return "  ".join(parts)


class ProgressBar:
    """Callable progress bar for :func:`wakes.simulate.run_case`.

    Shows the live wake size handed over by the run (filament segments and
    particles), the simulated time, and the rate and time left measured
    over the steps this bar has seen (a resumed run's earlier steps do not
    count).

    Parameters
    ----------
    dt : float
        Time step [s], to show the simulated time.
    origin : (int, float)
        ``(step0, t0)``: step k is at t0 + (k - step0) dt (a run resumed
        with a new time step starts a new origin).
    stream : file, optional
        Where to draw (default: standard error).
    quiet : bool
        Draw nothing.

    Examples
    --------
    >>> import io
    >>> bar = ProgressBar(0.01, stream=io.StringIO())   # not a terminal: silent
    >>> bar(1, 10, (6, 0)); bar.enabled
    False
    """

    def __init__(self, dt: float, *, origin: tuple[int, float] = (0, 0.0),
                 stream: TextIO | None = None, quiet: bool = False):
        self.dt = dt
        self.origin = (int(origin[0]), float(origin[1]))
        self.stream = sys.stderr if stream is None else stream
        isatty = getattr(self.stream, "isatty", None)
        self.enabled = not quiet and bool(isatty and isatty())
        self._start = time.perf_counter()
        self._first: int | None = None
        self._last = -1.0
        self._width = 0

    def __call__(self, step: int, steps: int, wake: tuple[int, int] | None = None) -> None:
        if not self.enabled:
            return
        now = time.perf_counter()
        if self._first is None:
            self._first = step - 1   # steps done before this bar started
        if step < steps and now - self._last < MIN_REDRAW_S:
            return
        self._last = now
        elapsed = now - self._start
        rate = (step - self._first) / elapsed if elapsed > 0 else float("nan")
        left = (steps - step) / rate if rate == rate and rate > 0 else float("nan")
        sim_time = self.origin[1] + (step - self.origin[0]) * self.dt
        line = progress_line(step, steps, sim_time, wake, rate, left)
        pad = max(self._width - len(line), 0)
        self._width = len(line)
        self.stream.write("\r" + line + " " * pad + ("\n" if step >= steps else ""))
        self.stream.flush()
