"""Influence matrices reused under rigid motion equal freshly summed ones."""

import numpy as np
import pytest
from wakes.aero.geometry import Distribution, WingPlanform, wing_surface
from wakes.aero.influence_cache import RigidInfluenceCache, rigid_motion
from wakes.aero.polars import SectionPolars, ThinAirfoilPolar
from wakes.aero.rotor import RotorGeometry
from wakes.aero.vortex_lattice import influence_matrix

POLAR = SectionPolars.uniform(ThinAirfoilPolar(), 6)


def blades(t):
    g = RotorGeometry(blades=2, radius=1.0, root_cutout=0.2, chord=Distribution.constant(0.1),
                      twist=Distribution.constant(0.0), collective=8.0, rpm=600.0, panels=6,
                      hub=(0.3, -0.2, 1.0), axis=(0.2, 0.1, 1.0))
    return [g.blade_surface(k, t, POLAR, f"b{k}") for k in range(2)]


def wing():
    return wing_surface("w", WingPlanform(3.0, Distribution.constant(0.3)), n_span=6, spacing="cosine",
                        n_chord=1, lifting_line=True, polars=POLAR, position=(2.0, 0.0, 0.0))


def stacked(surfaces):
    return np.vstack([s.eval_points() for s in surfaces])


def test_rigid_motion_finds_rotations_and_rejects_deformation():
    rng = np.random.default_rng(11)
    p = rng.normal(size=(20, 3))
    c, s = np.cos(0.4), np.sin(0.4)
    rot = np.array([[c, -s, 0], [s, c, 0], [0, 0, 1]])
    assert np.allclose(rigid_motion(p, p @ rot.T + [1.0, 2.0, 3.0]), rot)
    assert rigid_motion(p, p * [1.0, 1.0, 1.001]) is None


@pytest.mark.parametrize("t", [0.013, 0.05])
def test_turned_blades_reuse_their_matrix_exactly(t):
    cache = RigidInfluenceCache()
    cache.get(blades(0.0), stacked(blades(0.0)), np.zeros((0, 3)))
    now = blades(t)
    aic, _ = cache.get(now, stacked(now), np.zeros((0, 3)))
    assert np.allclose(aic, influence_matrix(now, stacked(now)), rtol=1e-9, atol=1e-12)


def test_blades_beside_a_fixed_wing_recompute_the_cross_blocks():
    cache = RigidInfluenceCache()
    first = blades(0.0) + [wing()]
    cache.get(first, stacked(first), np.zeros((0, 3)))
    now = blades(0.02) + [wing()]
    aic, _ = cache.get(now, stacked(now), np.zeros((0, 3)))
    assert np.allclose(aic, influence_matrix(now, stacked(now)), rtol=1e-9, atol=1e-12)


def test_nothing_moved_returns_the_same_arrays():
    cache = RigidInfluenceCache()
    surfaces = [wing()]
    a1 = cache.get(surfaces, stacked(surfaces), np.zeros((0, 3)))
    a2 = cache.get([wing()], stacked(surfaces), np.zeros((0, 3)))
    assert a1[0] is a2[0]
