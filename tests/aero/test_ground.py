"""Ground plane by mirror images: the plane is a stream surface, images of rings in the cache."""

import numpy as np
import pytest
from wakes import Filaments, Particles, induce
from wakes.aero.geometry import Distribution
from wakes.aero.ground import GroundPlane, with_ground
from wakes.aero.influence_cache import RigidInfluenceCache
from wakes.aero.polars import SectionPolars, ThinAirfoilPolar
from wakes.aero.rotor import RotorGeometry
from wakes.aero.vortex_lattice import influence_matrix

GROUND = GroundPlane(np.array([0.2, -0.1, -0.5]), np.array([0.1, 0.3, 1.0]))


def _plane_points(ground, rng, n=40):
    """Random points on the plane (n, 3)."""
    p = rng.normal(size=(n, 3))
    return p - np.multiply.outer(ground.height(p), ground.normal)


def _elements(rng):
    """A random open filament polyline and a few particles, all above GROUND."""
    lift = 1.0 * GROUND.normal
    pts = np.cumsum(rng.normal(scale=0.3, size=(12, 3)), axis=0) + lift
    pts += np.multiply.outer(np.maximum(0.2 - GROUND.height(pts), 0.0), GROUND.normal)
    fil = Filaments.from_polyline(pts, rng.normal(size=11), 0.05, core="vatistas2")
    pos = rng.normal(scale=0.5, size=(6, 3)) + 2.0 * GROUND.normal
    par = Particles(pos, rng.normal(scale=1e-2, size=(6, 3)), 0.1)
    return [fil, par]


def test_velocity_normal_to_the_ground_vanishes_on_it():
    """u(x) + M u(x') has no normal part on the plane (exact; round-off only)."""
    rng = np.random.default_rng(4)
    elements = _elements(rng)
    on = _plane_points(GROUND, rng)
    u = induce(with_ground(elements, GROUND), on, method="direct")
    alone = induce(elements, on, method="direct")
    assert np.max(np.abs(alone @ GROUND.normal)) > 1e-3      # the images do the work
    assert np.max(np.abs(u @ GROUND.normal)) < 1e-12 * np.max(np.abs(alone))


def test_image_vorticity_keeps_the_normal_part_and_reverses_the_rest():
    """A vortex segment normal to the ground continues through it (same sense); one parallel
    to it has an image of the opposite sense (Milne-Thomson 1968)."""
    g = GroundPlane(np.zeros(3), np.array([0.0, 0.0, 1.0]))
    up = g.image(Filaments.from_polyline([[0, 0, 1.0], [0, 0, 2.0]], 1.0, 0.1))
    a, b = up.endpoints()
    assert np.allclose(up.circulation[0] * (b - a), [[0.0, 0.0, 1.0]])
    flat = g.image(Filaments.from_polyline([[0, 0, 1.0], [1.0, 0, 1.0]], 1.0, 0.1))
    a, b = flat.endpoints()
    assert np.allclose(flat.circulation[0] * (b - a), [[-1.0, 0.0, 0.0]])
    p = g.image(Particles([[0.0, 0.0, 1.0]], [[1.0, 2.0, 3.0]], 0.1))
    assert np.allclose(p.positions, [[0.0, 0.0, -1.0]]) and np.allclose(p.strengths, [[-1.0, -2.0, 3.0]])


def test_influence_cache_adds_the_images_of_turning_blades():
    """Blocks with the ground equal a fresh sum over rings and mirrored rings, also after the
    blades turned (the image of a rotor with its axis normal to the ground turns rigidly)."""
    polars = SectionPolars.uniform(ThinAirfoilPolar(), 6)
    geo = RotorGeometry(blades=2, radius=1.0, root_cutout=0.2, chord=Distribution.constant(0.1),
                        twist=Distribution.constant(0.0), collective=8.0, rpm=600.0, panels=6,
                        hub=(0.0, 0.0, 1.0), axis=(0.0, 0.0, 1.0))
    ground = GroundPlane(np.zeros(3), np.array([0.0, 0.0, 1.0]))
    cache = RigidInfluenceCache(ground)
    for t in (0.0, 0.013):
        blades = [geo.blade_surface(k, t, polars, f"b{k}") for k in range(2)]
        pts = np.vstack([s.eval_points() for s in blades])
        aic, _ = cache.get(blades, pts, np.zeros((0, 3)))
        expected = influence_matrix(blades, pts) - influence_matrix(
            [_Mirror(s, ground) for s in blades], pts)
        assert np.allclose(aic, expected, rtol=1e-9, atol=1e-12)


class _Mirror:
    def __init__(self, s, ground):
        self.n_chord, self.n_span = s.n_chord, s.n_span
        self.corners = ground.reflect_points(s.corners)


@pytest.mark.parametrize("point", [[0.0, 0.0, 0.0], [1.0, 2.0, -3.0]])
def test_reflection_is_an_involution(point):
    rng = np.random.default_rng(1)
    g = GroundPlane(np.array(point), np.array([0.3, -0.2, 0.9]))
    x = rng.normal(size=(5, 3))
    assert np.allclose(g.reflect_points(g.reflect_points(x)), x)
    assert np.allclose(g.height(g.reflect_points(x)), -g.height(x))
