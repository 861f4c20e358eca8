"""The cost model behind `wakes check`'s run time and the progress bar's time left.

Deterministic: counts and formulas only. How close the estimate comes to a measured run is a
speed measurement, so it lives in benchmarks/estimates.py (record in benchmarks/RESULTS.md).
"""

import io

import numpy as np
import pytest
from wakes.case import parse_case
from wakes.estimate import CORE_COST, STEP_OVERHEAD_PAIRS, estimate_case, remaining_time, step_costs, step_pairs
from wakes.progress import ProgressBar

N = 6   # spanwise strips of the wing below


def _wing(**wake):
    return parse_case({"freestream": {"speed": 10.0, "angle_of_attack": 4.0},
                       "bodies": {"wing": {"type": "wing", "model": "lifting-line", "span": 4.0,
                                           "chord": 0.5, "spanwise_panels": N}},
                       "wake": wake, "time": {"steps": 5}})


def test_free_wake_pairs_count_nodes_as_targets_and_segments_as_sources():
    """Before step k a lifting-line wing's filament wake has k rows: k (N + 1) nodes and
    k N + (k - 1)(N + 1) segments. The N evaluation points see the wake; every node sees the
    wake and the wing's own 2 N + (N + 1) filaments."""
    k = np.arange(5.0)
    seg = k * N + np.maximum(k - 1, 0) * (N + 1)
    nodes = k * (N + 1)
    expected = N * seg + nodes * (seg + 2 * N + N + 1)
    np.testing.assert_array_equal(step_pairs(_wing(motion="free", core="vatistas2")), expected)
    np.testing.assert_array_equal(step_pairs(_wing(motion="frozen")), N * seg)   # nodes move with the flow


def test_run_time_is_the_step_costs_at_the_yardstick_rate_weighed_by_the_core():
    algebraic = _wing(motion="free", core="vatistas2")
    exponential = _wing(motion="free", core="lamb-oseen")
    est = estimate_case(algebraic, pair_rate=1e8)
    assert est.run_time_s == pytest.approx(
        (step_pairs(algebraic).sum() + 5 * STEP_OVERHEAD_PAIRS) / 1e8, rel=1e-12)
    np.testing.assert_allclose(est.step_times_s, step_costs(algebraic) / 1e8, rtol=1e-12)
    pairs = step_pairs(exponential)
    np.testing.assert_allclose(step_costs(exponential), pairs * CORE_COST["lamb-oseen"] + STEP_OVERHEAD_PAIRS)


def test_remaining_time_scales_the_cost_left_by_the_speed_so_far():
    costs = np.arange(1.0, 101.0)           # a growing wake: step k costs k units
    # 10 % done: the first 10 steps (55 units) took 5.5 s, the 90 left cost 4995 units
    assert remaining_time(costs, 10, 5.5) == pytest.approx(499.5, rel=1e-12)
    # a straight line through the steps done would say 90 * 0.55 s = 49.5 s, ten times too soon
    assert remaining_time(np.ones(100), 10, 5.5) == pytest.approx(49.5, rel=1e-12)
    assert np.isnan(remaining_time(costs, 0, 0.0))
    assert remaining_time(costs, 100, 60.0) == 0.0


class _Terminal(io.StringIO):
    def isatty(self):
        return True


def test_progress_bar_shows_the_time_left_from_the_step_costs():
    """A fake clock: each step takes as many seconds as its cost, so the time left is exact."""
    costs = np.arange(1.0, 21.0)
    clock = {"now": 0.0}
    stream = _Terminal()
    bar = ProgressBar(0.01, stream=stream, step_costs=costs, clock=lambda: clock["now"])
    for step in range(1, 21):
        clock["now"] += costs[step - 1]
        if step > 1:   # the bar times from its first call, after step 1
            assert bar.time_left(step, 20) == pytest.approx(costs[step:].sum(), rel=1e-12)
        bar(step, 20, (step * 10, 0))
    assert "left" in stream.getvalue()
    linear = ProgressBar(0.01, stream=_Terminal(), clock=lambda: clock["now"])   # no costs: equal steps
    clock["now"] = 0.0
    linear(1, 20)
    clock["now"] = 2.0
    assert linear.time_left(3, 20) == pytest.approx(17.0)
