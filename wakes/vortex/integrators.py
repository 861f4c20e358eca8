"""Explicit Runge--Kutta schemes as coefficient tables, run by one stepper.

Every scheme is its Butcher tableau ``(A, b, c)``: stage ``i`` evaluates the
right-hand side at ``t + c[i] dt`` and ``y + dt sum_j A[i, j] k_j``, and the
step is ``y + dt sum_i b[i] k_i``. A scheme is data; :func:`rk_step` runs any
of them, and the tests check each table's consistency (weights sum to one,
rows of ``A`` sum to ``c``) and its observed order.

=====  ======  ==================================================================
name   order   scheme
=====  ======  ==================================================================
euler  1       forward Euler
rk2    2       Heun's method (explicit trapezoidal rule)
rk3    3       Williamson (1980) low-storage scheme, 2N form A = (0, -5/9,
               -153/128), B = (1/3, 15/16, 8/15), run here through its
               equivalent Butcher tableau
rk4    4       the classical fourth-order Runge--Kutta scheme (Kutta 1901)
=====  ======  ==================================================================

The stepper keeps every stage derivative (s state-sized arrays); for a
particle flow the state is 7 floats per particle, far smaller than the cost
of the induction each stage needs, so the 2N storage form is not used.

References
----------
Williamson, J. H. 1980, Low-storage Runge-Kutta schemes, J. Comput. Phys.
35, 48-56.
Butcher, J. C. 2016, *Numerical Methods for Ordinary Differential
Equations*, 3rd ed., Wiley.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from fractions import Fraction

import numpy as np


@dataclass(frozen=True)
class RungeKuttaScheme:
    """An explicit Runge--Kutta scheme as its Butcher tableau.

    Attributes
    ----------
    name : str
        Registry name.
    order : int
        Order of accuracy.
    a : tuple of tuple of float, shape (s, s)
        Stage coefficients, strictly lower triangular.
    b : tuple of float, shape (s,)
        Weights.
    c : tuple of float, shape (s,)
        Stage times as fractions of the step.
    description : str
        The scheme and its source, in words.
    """

    name: str
    order: int
    a: tuple
    b: tuple
    c: tuple
    description: str

    @property
    def stages(self) -> int:
        """Number of stages s (right-hand-side evaluations per step)."""
        return len(self.b)


def _tableau_from_2n(a2n, b2n) -> tuple[tuple, tuple, tuple]:
    """Butcher tableau of a 2N-storage scheme (Williamson 1980).

    The 2N form is ``q = A_i q + dt f(y); y = y + B_i q`` for i = 1..s.
    Unrolling it, stage i's increment is ``q_i = sum_j Q[i, j] dt f_j`` with
    ``Q[i, j] = A_i Q[i-1, j]`` (j < i) and ``Q[i, i] = 1``; the state seen by
    stage i+1 is ``y_0 + sum_{m <= i} B_m q_m``. Exact rational arithmetic.
    """
    s = len(b2n)
    a2n = [Fraction(x) for x in a2n]
    b2n = [Fraction(x) for x in b2n]
    q = [[Fraction(0)] * s for _ in range(s)]
    for i in range(s):
        for j in range(i):
            q[i][j] = a2n[i] * q[i - 1][j]
        q[i][i] = Fraction(1)
    # cumulative[i][j]: coefficient of dt f_j in the state after i+1 updates
    cumulative = []
    acc = [Fraction(0)] * s
    for i in range(s):
        acc = [acc[j] + b2n[i] * q[i][j] for j in range(s)]
        cumulative.append(list(acc))
    a = [[Fraction(0)] * s] + [cumulative[i - 1] for i in range(1, s)]
    b = cumulative[-1]
    c = [sum(row) for row in a]
    return (tuple(tuple(float(x) for x in row) for row in a),
            tuple(float(x) for x in b), tuple(float(x) for x in c))


def _scheme(name, order, a, b, c, description) -> RungeKuttaScheme:
    return RungeKuttaScheme(name, order,
                            tuple(tuple(float(x) for x in row) for row in a),
                            tuple(float(x) for x in b), tuple(float(x) for x in c),
                            description)


_WILLIAMSON_A = (0, Fraction(-5, 9), Fraction(-153, 128))
_WILLIAMSON_B = (Fraction(1, 3), Fraction(15, 16), Fraction(8, 15))

INTEGRATORS: dict[str, RungeKuttaScheme] = {
    s.name: s for s in (
        _scheme("euler", 1, [[0]], [1], [0], "forward Euler"),
        _scheme("rk2", 2, [[0, 0], [1, 0]], [0.5, 0.5], [0, 1],
                "Heun's method (explicit trapezoidal rule)"),
        RungeKuttaScheme("rk3", 3, *_tableau_from_2n(_WILLIAMSON_A, _WILLIAMSON_B),
                         "Williamson (1980) low-storage third-order scheme"),
        _scheme("rk4", 4,
                [[0, 0, 0, 0], [0.5, 0, 0, 0], [0, 0.5, 0, 0], [0, 0, 1, 0]],
                [1 / 6, 1 / 3, 1 / 3, 1 / 6], [0, 0.5, 0.5, 1],
                "classical fourth-order Runge-Kutta (Kutta 1901)"),
    )
}


def rk_step(scheme: RungeKuttaScheme, rhs: Callable, t: float, y: np.ndarray,
            dt: float, first_derivative: np.ndarray | None = None) -> np.ndarray:
    """Advance ``dy/dt = rhs(t, y)`` by one step of ``scheme``.

    Parameters
    ----------
    scheme : RungeKuttaScheme
        The tableau to run.
    rhs : callable
        ``rhs(t, y) -> dy/dt``, an array of the shape of ``y``. It must not
        modify ``y``.
    t : float
        Time at the start of the step [s].
    y : numpy.ndarray
        State at ``t`` (any shape); not modified.
    dt : float
        Step [s].
    first_derivative : numpy.ndarray, optional
        ``rhs(t, y)`` if the caller already has it (every scheme here has
        ``c[0] = 0``); saves one evaluation.

    Returns
    -------
    numpy.ndarray
        State at ``t + dt``.
    """
    k = []
    for i in range(scheme.stages):
        if i == 0 and first_derivative is not None:
            k.append(first_derivative)
            continue
        yi = y
        for j, aij in enumerate(scheme.a[i][:i]):
            if aij != 0.0:
                yi = yi + (dt * aij) * k[j]
        k.append(rhs(t + scheme.c[i] * dt, yi))
    out = y
    for bi, ki in zip(scheme.b, k):
        if bi != 0.0:
            out = out + (dt * bi) * ki
    return out
