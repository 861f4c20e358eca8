"""Validation of Particles, Filaments and induce() arguments."""

import numpy as np
import pytest
import wakes
from wakes.errors import InputError


def test_wakes_error_is_a_value_error():
    assert issubclass(wakes.WakesError, ValueError)
    assert issubclass(InputError, wakes.WakesError)


@pytest.mark.parametrize("kwargs, words", [
    (dict(positions=np.zeros((3, 2)), strengths=np.zeros((3, 3)), radii=0.1), ["positions", "(N, 3)", "(3, 2)"]),
    (dict(positions=np.zeros((3, 3)), strengths=np.zeros((2, 3)), radii=0.1), ["strengths", "(3, 3)"]),
    (dict(positions=[[0, 0, np.nan]], strengths=np.zeros((1, 3)), radii=0.1), ["positions", "finite", "[0, 2]"]),
    (dict(positions=np.zeros((2, 3)), strengths=np.zeros((2, 3)), radii=[0.1, -0.002]),
     ["radii", "positive", "radii[1] = -0.002"]),
    (dict(positions=np.zeros((2, 3)), strengths=np.zeros((2, 3)), radii=0.0), ["radii", "positive"]),
    (dict(positions=np.zeros((2, 3)), strengths=np.zeros((2, 3)), radii=[0.1, 0.1, 0.1]), ["radii", "(2,)"]),
    (dict(positions=np.zeros((2, 3)), strengths=np.zeros((2, 3)), radii=0.1, kernel="gauss"),
     ["kernel", "'gaussian'", "'gauss'"]),
    (dict(positions="abc", strengths=np.zeros((2, 3)), radii=0.1), ["positions"]),
])
def test_particles_reject_bad_input_naming_it(kwargs, words):
    with pytest.raises(wakes.WakesError) as err:
        wakes.Particles(**kwargs)
    for w in words:
        assert w in str(err.value)


def test_filaments_reject_bad_segments_and_cores():
    nodes = np.zeros((3, 3))
    with pytest.raises(wakes.WakesError, match=r"segments\[1, 1\] = 3"):
        wakes.Filaments(nodes, [[0, 1], [1, 3]], 1.0, 0.1)
    with pytest.raises(wakes.WakesError, match="integer"):
        wakes.Filaments(nodes, [[0, 1.5]], 1.0, 0.1)
    with pytest.raises(wakes.WakesError, match=r"shape \(K, 2\)"):
        wakes.Filaments(nodes, [0, 1, 2], 1.0, 0.1)
    with pytest.raises(wakes.WakesError, match="'lamb-oseen'"):
        wakes.Filaments(nodes, [[0, 1]], 1.0, 0.1, core="vortex")
    with pytest.raises(wakes.WakesError, match=r"core_radius\[0\]"):
        wakes.Filaments(nodes, [[0, 1], [1, 2]], 1.0, [-1.0, 0.1])
    with pytest.raises(wakes.WakesError, match="at least 3"):
        wakes.Filaments.from_polyline(np.zeros((2, 3)), 1.0, 0.1, closed=True)


def test_arrays_are_read_only_and_float64():
    p = wakes.Particles(np.zeros((2, 3), dtype=np.float32), np.ones((2, 3), dtype=int), 1)
    assert p.positions.dtype == np.float64 and p.radii.shape == (2,)
    with pytest.raises(ValueError):
        p.positions[0, 0] = 1.0


def test_induce_rejects_bad_arguments():
    p = wakes.Particles(np.zeros((1, 3)), np.ones((1, 3)), 0.1)
    with pytest.raises(wakes.WakesError, match="targets"):
        wakes.induce(p, np.zeros((4, 2)))
    with pytest.raises(wakes.WakesError, match="method"):
        wakes.induce(p, np.zeros((4, 3)), method="magic")
    with pytest.raises(wakes.WakesError, match=r"sources\[1\]"):
        wakes.induce([p, "ring"], np.zeros((4, 3)))
    with pytest.raises(wakes.WakesError, match="sources"):
        wakes.induce(np.zeros((3, 3)), np.zeros((4, 3)))


def test_empty_sources_and_targets_give_empty_results_of_the_right_shape():
    p = wakes.Particles(np.zeros((0, 3)), np.zeros((0, 3)), 0.1)
    f = wakes.Filaments(np.zeros((0, 3)), np.zeros((0, 2), dtype=int), 1.0, 0.1)
    u, g = wakes.induce([p, f], np.ones((5, 3)), gradient=True)
    assert u.shape == (5, 3) and g.shape == (5, 3, 3) and not u.any() and not g.any()
    full = wakes.Particles(np.ones((2, 3)), np.ones((2, 3)), 0.1)
    u, g = wakes.induce(full, np.zeros((0, 3)), gradient=True)
    assert u.shape == (0, 3) and g.shape == (0, 3, 3)
    assert wakes.induce([], np.ones((2, 3))).shape == (2, 3)
