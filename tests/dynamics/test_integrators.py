"""Runge--Kutta tables: consistency, order conditions and observed order."""

import math
from fractions import Fraction

import numpy as np
import pytest
from wakes.vortex.integrators import INTEGRATORS, RungeKuttaScheme, rk_step

ALL = sorted(INTEGRATORS)


@pytest.mark.parametrize("name", ALL)
def test_table_is_consistent(name):
    """Weights sum to one and each row of A sums to c (Butcher 2016, sec. 23)."""
    s = INTEGRATORS[name]
    a = np.array(s.a)
    assert a.shape == (s.stages, s.stages)
    assert np.allclose(np.triu(a), 0.0), "explicit schemes have a strictly lower A"
    assert math.isclose(sum(s.b), 1.0, rel_tol=0, abs_tol=1e-15)
    assert np.allclose(a.sum(axis=1), s.c, rtol=0, atol=1e-15)
    assert s.c[0] == 0.0


# Order conditions of explicit Runge--Kutta schemes up to order 4 (Butcher
# 2016, Numerical Methods for ODEs, sec. 31: rooted trees), each as
# (order, function of (A, b, c), exact value).
ORDER_CONDITIONS = [
    (1, lambda a, b, c: b.sum(), 1.0),
    (2, lambda a, b, c: b @ c, 1 / 2),
    (3, lambda a, b, c: b @ c ** 2, 1 / 3),
    (3, lambda a, b, c: b @ a @ c, 1 / 6),
    (4, lambda a, b, c: b @ c ** 3, 1 / 4),
    (4, lambda a, b, c: (b * c) @ a @ c, 1 / 8),
    (4, lambda a, b, c: b @ a @ c ** 2, 1 / 12),
    (4, lambda a, b, c: b @ a @ a @ c, 1 / 24),
]


@pytest.mark.parametrize("name", ALL)
def test_order_conditions(name):
    """Each scheme meets every condition up to its order and fails one beyond."""
    s = INTEGRATORS[name]
    a, b, c = np.array(s.a), np.array(s.b), np.array(s.c)
    for order, f, exact in ORDER_CONDITIONS:
        if order <= s.order:
            assert math.isclose(f(a, b, c), exact, abs_tol=1e-14), (name, order, exact)
    beyond = [abs(f(a, b, c) - exact) for order, f, exact in ORDER_CONDITIONS
              if order == s.order + 1]
    if beyond:
        assert max(beyond) > 1e-3, f"{name} is of higher order than it claims"


def test_williamson_tableau_matches_2n_form():
    """The rk3 tableau reproduces Williamson's (1980, J. Comput. Phys. 35)
    2N-storage recursion q = A_i q + dt f(y), y = y + B_i q with
    A = (0, -5/9, -153/128), B = (1/3, 15/16, 8/15), run here literally."""
    A = (0.0, -5 / 9, -153 / 128)
    B = (1 / 3, 15 / 16, 8 / 15)
    lam = np.array([-0.7, 1.3j - 0.2, 0.5 + 0.1j])

    def f(t, y):
        return lam * y + np.cos(t) * y ** 2

    y0 = np.array([1.0, 0.5 + 0.2j, -0.3])
    dt, t = 0.1, 0.3
    y, q = y0.copy(), np.zeros_like(y0)
    c = (0.0, 1 / 3, 3 / 4)
    for i in range(3):
        q = A[i] * q + dt * f(t + c[i] * dt, y)
        y = y + B[i] * q
    got = rk_step(INTEGRATORS["rk3"], f, t, y0, dt)
    assert np.allclose(got, y, rtol=1e-14, atol=1e-15)
    # the published stage times and weights, as exact fractions
    s = INTEGRATORS["rk3"]
    assert [Fraction(x).limit_denominator(1000) for x in s.c] == [0, Fraction(1, 3), Fraction(3, 4)]
    assert [Fraction(x).limit_denominator(1000) for x in s.b] == [Fraction(1, 6), Fraction(3, 10),
                                                                  Fraction(8, 15)]


def _solve(scheme: RungeKuttaScheme, n: int) -> float:
    """y' = y^2 - t y from y(0) = 1 over [0, 1] with n steps."""
    def f(t, y):
        return y * y - t * y
    y, t, dt = np.array([1.0]), 0.0, 1.0 / n
    for _ in range(n):
        y = rk_step(scheme, f, t, y, dt)
        t += dt
    return float(y[0])


def _exact() -> float:
    """y' = y^2 - t y, y(0) = 1 is a Bernoulli equation: 1/y = e^(t^2/2) (1 - int_0^t e^(-s^2/2) ds),
    so y(1) = e^(-1/2) / (1 - sqrt(pi/2) erf(1/sqrt 2)) (derived)."""
    return math.exp(-0.5) / (1.0 - math.sqrt(math.pi / 2.0) * math.erf(1.0 / math.sqrt(2.0)))


@pytest.mark.parametrize("name", ALL)
def test_observed_order(name):
    """Halving dt divides the error by 2^p: the observed order is within 0.15
    of the design order (the error constants settle by n = 32..128 steps)."""
    s = INTEGRATORS[name]
    exact = _exact()
    errors = [abs(_solve(s, n) - exact) for n in (32, 64, 128)]
    observed = [math.log2(e0 / e1) for e0, e1 in zip(errors, errors[1:])]
    assert abs(observed[-1] - s.order) < 0.15, (name, errors, observed)


def test_first_derivative_is_reused():
    """Passing the first stage's derivative skips one evaluation and changes nothing."""
    calls = []

    def f(t, y):
        calls.append(t)
        return -y + t

    y0 = np.array([2.0, -1.0])
    s = INTEGRATORS["rk4"]
    full = rk_step(s, f, 0.0, y0, 0.1)
    n_full = len(calls)
    calls.clear()
    reused = rk_step(s, f, 0.0, y0, 0.1, first_derivative=f(0.0, y0))
    assert n_full == 4 and len(calls) == 4  # one of them is the caller's own
    assert np.array_equal(full, reused)
