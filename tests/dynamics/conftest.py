"""Shared fixtures of the particle-flow tests."""

from contextlib import contextmanager

import numba
import numpy as np
import pytest
import wakes

RNG_SEED = 31415


@contextmanager
def single_thread():
    """Run tiny problems on one numba thread, restoring the count afterwards.

    On a shared two-core machine an OpenMP barrier costs about 15 ms when the
    other core is busy (measured), some 60 times the work of one induction
    over 126 particles; long runs of tiny flows would spend their time
    waiting.
    """
    old = numba.get_num_threads()
    numba.set_num_threads(1)
    try:
        yield
    finally:
        numba.set_num_threads(old)


@pytest.fixture
def one_thread():
    """:func:`single_thread` as a fixture."""
    with single_thread():
        yield


def random_cloud(n: int, seed: int = RNG_SEED, kernel: str = "winckelmans-leonard",
                 sigma: float = 0.3, net: float = 0.5) -> wakes.Particles:
    """A compact random cloud of particles in the unit cube, with net vorticity.

    Strengths are random normal plus ``net`` times (1, 2, 3)/n so that their
    sum is far from zero (a relative conservation test needs a non-zero sum).
    """
    rng = np.random.default_rng(seed)
    pos = rng.random((n, 3))
    alpha = 0.02 * rng.standard_normal((n, 3)) + net * np.array([1.0, 2.0, 3.0]) / n
    return wakes.Particles(pos, alpha, sigma, kernel)
