"""The progress bar of a run, drawn by tqdm.

The bar shows the steps done, the simulated time, the live size of the
wake (filament segments and particles), the rate in steps per second and
the time left. A rotor's wake grows, so its later steps cost more: the time
left is the cost of the steps left (:func:`wakes.estimate.step_costs`)
at the speed measured over the steps done
(:func:`wakes.estimate.remaining_time`), not a straight line through the
steps done. tqdm draws it in place on a terminal and as a widget in a
notebook (``tqdm.auto``), and stays silent when the stream is not a
terminal (a log file, a pipe, a batch job) or when the user asked for
quiet, so logs hold no control characters.
"""

from __future__ import annotations

import sys
import time
from typing import TextIO

import numpy as np
from tqdm.auto import tqdm

from .estimate import remaining_time

BAR_WIDTH = 24          # characters of the bar itself
MIN_REDRAW_S = 0.1      # at most ten redraws a second: a terminal is slow at hundreds
BAR_FORMAT = "[{bar:" + str(BAR_WIDTH) + "}] {n_fmt}/{total_fmt}  {postfix}  {rate_fmt}"


def wake_text(sim_time_s: float, wake: tuple[int, int] | None) -> str:
    """The simulated time and the wake size, as the bar shows them.

    Examples
    --------
    >>> wake_text(0.05, (1234, 0))
    't = 0.05 s  wake 1,234 segments 0 particles'
    """
    text = f"t = {sim_time_s:.4g} s"
    if wake is not None:
        text += f"  wake {wake[0]:,} segments {wake[1]:,} particles"
    return text


class ProgressBar:
    """Callable progress bar for :func:`wakes.run.run_case`.

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
    step_costs : array_like, shape (steps,), optional
        Cost of every step (:func:`wakes.estimate.step_costs`) to scale the
        time left from; without it (or for another number of steps) the
        time left assumes steps of equal cost.
    clock : callable, optional
        Returns the time [s] (default :func:`time.perf_counter`).

    Examples
    --------
    >>> import io
    >>> bar = ProgressBar(0.01, stream=io.StringIO())   # not a terminal: silent
    >>> bar(1, 10, (6, 0)); bar.enabled
    False
    """

    def __init__(self, dt: float, *, origin: tuple[int, float] = (0, 0.0),
                 stream: TextIO | None = None, quiet: bool = False, step_costs=None,
                 clock=time.perf_counter):
        self.dt = dt
        self.step_costs = None if step_costs is None else np.asarray(step_costs, dtype=np.float64)
        self.clock = clock
        self._first = self._start = None
        self.origin = (int(origin[0]), float(origin[1]))
        self.stream = sys.stderr if stream is None else stream
        isatty = getattr(self.stream, "isatty", None)
        self.enabled = not quiet and bool(isatty and isatty())
        self._bar = None

    def __call__(self, step: int, steps: int, wake: tuple[int, int] | None = None) -> None:
        if not self.enabled:
            return
        if self._bar is None:
            # steps done before this bar started count as done, not as this bar's rate
            self._bar = tqdm(total=steps, initial=step - 1, file=self.stream, unit=" steps",
                             bar_format=BAR_FORMAT, mininterval=MIN_REDRAW_S, dynamic_ncols=False,
                             leave=True)
            self._first, self._start = step, self.clock()   # the time is measured from here
        sim_time = self.origin[1] + (step - self.origin[0]) * self.dt
        text = wake_text(sim_time, wake)
        left = 0.0 if step >= steps else self.time_left(step, steps)
        text += f"  {'?' if left != left else tqdm.format_interval(left)} left"   # NaN: nothing timed yet
        self._bar.set_postfix_str(text, refresh=False)
        self._bar.update(step - self._bar.n)
        if step >= steps:
            self._bar.close()

    def time_left(self, step: int, steps: int) -> float:
        """Time [s] left after ``step`` of ``steps`` steps, from the steps this bar has timed.

        Examples
        --------
        Steps that cost 1, 1, 2, 4 (a growing wake): the bar starts after
        step 1 and step 2 (cost 1) takes 1 s, so the last two (cost 6)
        take 6 s; a straight line would say 2 s.

        >>> import io
        >>> now = iter([0.0, 1.0])
        >>> bar = ProgressBar(0.01, step_costs=[1, 1, 2, 4], clock=lambda: next(now))
        >>> bar._first, bar._start = 1, bar.clock()     # as the first call after step 1 sets them
        >>> bar.time_left(2, 4)
        6.0
        """
        done = step - self._first
        if done <= 0:
            return float("nan")
        elapsed = self.clock() - self._start
        costs = self.step_costs
        if costs is None or len(costs) != steps:
            costs = np.ones(steps)
        return remaining_time(costs[self._first:], done, elapsed)
