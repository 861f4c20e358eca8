"""Rotor geometry and rotation: stations, hub frame, blade frames, spin mirror, precone, motion."""

import numpy as np
import pytest
from wakes.aero.geometry import Distribution
from wakes.aero.kinematics import RigidRotation, hub_frame, rotate_about
from wakes.aero.polars import SectionPolars, ThinAirfoilPolar
from wakes.aero.rotor import RotorGeometry, blade_stations
from wakes.errors import InputError


def rotor(**kw) -> RotorGeometry:
    base = dict(blades=3, radius=1.0, root_cutout=0.2, chord=Distribution.constant(0.1),
                twist=Distribution("linear", root=0.0, tip=-8.0), collective=10.0, rpm=600.0,
                panels=10)
    base.update(kw)
    return RotorGeometry(**base)


def blade(g: RotorGeometry, k=0, t=0.0):
    return g.blade_surface(k, t, SectionPolars.uniform(ThinAirfoilPolar(), g.panels), f"b{k}")


@pytest.mark.parametrize("spacing", ["cosine", "tip", "uniform"])
def test_stations_span_the_blade_and_sections_fall_inside_strips(spacing):
    nodes, sections = blade_stations(12, spacing)
    assert nodes[0] == 0.0 and nodes[-1] == 1.0
    assert np.all(np.diff(nodes) > 0)
    assert np.all((sections > nodes[:-1]) & (sections < nodes[1:]))


def test_stations_cluster_where_asked():
    d_cos = np.diff(blade_stations(20, "cosine")[0])
    d_tip = np.diff(blade_stations(20, "tip")[0])
    assert d_cos[0] < d_cos[10] and d_cos[-1] < d_cos[10]      # both ends
    assert d_tip[-1] < d_tip[0] / 10                           # the tip only
    with pytest.raises(InputError, match="spacing"):
        blade_stations(4, "log")


def test_hub_frame_is_right_handed_with_azimuth_zero_towards_x_or_up():
    a, e0, e90 = hub_frame([0, 0, 2.0])
    assert np.allclose([a, e0, e90], [[0, 0, 1], [1, 0, 0], [0, 1, 0]])
    a, e0, e90 = hub_frame([-1.0, 0, 0])        # a propeller facing -x: azimuth zero points up
    assert np.allclose(e0, [0, 0, 1]) and np.allclose(np.cross(a, e0), e90)


def test_rotate_about_matches_a_rotation_matrix():
    rng = np.random.default_rng(3)
    v = rng.normal(size=(5, 3))
    axis = np.array([0.0, 0.0, 1.0])
    c, s = np.cos(0.7), np.sin(0.7)
    expected = v @ np.array([[c, -s, 0], [s, c, 0], [0, 0, 1]]).T
    assert np.allclose(rotate_about(v, axis, 0.7), expected, atol=1e-14)


def test_rigid_rotation_velocity_is_the_time_derivative_of_place():
    spin = RigidRotation(np.array([1.0, 2.0, 0.5]), np.array([0.6, 0.0, 0.8]), -7.0)
    p = np.array([[2.0, 1.0, 0.0], [0.0, 0.0, 3.0]])
    h = 1e-6
    fd = (spin.place(p, h) - spin.place(p, -h)) / (2 * h)
    assert np.allclose(fd, spin.velocity(p), rtol=1e-8, atol=1e-8)


def test_blade_lies_on_the_radius_with_its_pitch_and_lifts_along_the_axis():
    g = rotor()
    s = blade(g)
    r_nodes, r_sec = g.blade_radii()
    qc = s.corners[0]
    assert np.allclose(np.linalg.norm(qc, axis=1), r_nodes)          # hub at the origin
    assert np.allclose(qc[:, 2], 0.0)                                # no precone: in the disc
    pitch = np.radians(g.pitch((r_sec - 0.2) / 0.8))
    # the leading edge is raised: chord (LE to TE) descends by the pitch angle
    assert np.allclose(-s.chord_dir[:, 2], np.sin(pitch))
    assert np.all(s.section_normal[:, 2] > 0.9)                      # positive lift is thrust
    # the blade moves towards its leading edge
    motion = s.velocity_of(s.section_points)
    assert np.all(np.einsum("ij,ij->i", motion, s.chord_dir) < 0)


def test_blades_are_equally_spaced_and_turn_at_the_rotation_rate():
    g = rotor(azimuth0=30.0)
    tips = [blade(g, k).corners[0, -1] for k in range(3)]
    angles = np.degrees([np.arctan2(p[1], p[0]) for p in tips])
    assert np.allclose(np.sort(np.mod(angles, 360.0)), [30.0, 150.0, 270.0])
    t = 0.01
    turned = np.degrees(np.arctan2(*blade(g, 0, t).corners[0, -1][[1, 0]]))
    assert turned == pytest.approx(30.0 + 6.0 * 600.0 * t)


def test_clockwise_rotor_is_the_mirror_image_with_the_same_section_frame():
    ccw, cw = blade(rotor(spin=1)), blade(rotor(spin=-1))
    mirror = np.array([1.0, -1.0, 1.0])
    # nodes run tip to root for clockwise spin; the mirror of the ccw blade in the xz plane
    assert np.allclose(cw.corners[0][::-1], ccw.corners[0] * mirror)
    assert np.allclose(cw.section_points[::-1], ccw.section_points * mirror)
    assert np.allclose(cw.section_normal, [[0, 0, 1]] * 10, atol=0.2)
    assert np.allclose(cw.section_normal[::-1] * mirror, ccw.section_normal)
    v_cw = cw.velocity_of(cw.section_points)
    assert np.all(np.einsum("ij,ij->i", v_cw, cw.chord_dir) < 0)


def test_precone_lifts_the_blade_towards_the_axis():
    g = rotor(precone=5.0)
    qc = blade(g).corners[0]
    r_nodes, _ = g.blade_radii()
    assert np.allclose(qc[:, 2], r_nodes * np.sin(np.radians(5.0)))


def test_solidity_of_a_constant_chord_blade():
    # thrust-weighted chord: 3 int c r^2 dr / R^3 = c (1 - x0^3) for a cut-out x0 R
    g = rotor(twist=Distribution.constant(0.0))
    assert g.solidity() == pytest.approx(3 * 0.1 * (1 - 0.2 ** 3) / np.pi, rel=1e-6)
    assert g.mean_chord() == pytest.approx(0.1)


def test_strip_radii_follow_the_node_order():
    ccw, cw = rotor(spin=1), rotor(spin=-1)
    r1, dr1 = ccw.strip_radii()
    r2, dr2 = cw.strip_radii()
    assert np.allclose(r2, r1[::-1]) and np.allclose(dr2, dr1[::-1])
    assert dr1.sum() == pytest.approx(0.8)


def _section_pitch_deg(g: RotorGeometry, surface) -> np.ndarray:
    """Angle of each section's chord line to the plane of rotation [deg], read from the surface."""
    a = g.frame()[0]
    return np.degrees(np.arcsin(-(surface.chord_dir @ a)))


@pytest.mark.parametrize("spin", [1, -1])
def test_cyclic_pitch_follows_the_first_harmonic_law_from_downstream_in_the_sense_of_rotation(spin):
    # theta = theta_0 + twist + theta_1c cos psi + theta_1s sin psi (Johnson 1980, Helicopter Theory,
    # ch. 5), psi from the downstream direction (here the freestream along +y) in the sense of rotation
    g = rotor(spin=spin, cyclic_cos=2.0, cyclic_sin=-3.0, downstream=(0.0, 5.0, 0.4), panels=6)
    plain = rotor(spin=spin, panels=6)
    eta = (g.strip_radii()[0] - g.root_cutout) / (g.radius - g.root_cutout)
    for k, t in [(0, 0.0), (1, 0.013), (2, 0.031), (0, 0.077)]:
        psi = g.blade_azimuth(k, t)
        tip = blade(g, k, t).section_points[-1 if spin > 0 else 0]
        # the blade's own position gives the same azimuth
        assert g.azimuth_of(tip) == pytest.approx(psi, abs=1e-12)
        measured = _section_pitch_deg(g, blade(g, k, t))
        law = g.pitch(eta) + 2.0 * np.cos(psi) - 3.0 * np.sin(psi)
        assert np.allclose(measured, law, atol=1e-10)
        assert np.allclose(_section_pitch_deg(plain, blade(plain, k, t)), g.pitch(eta), atol=1e-10)
    # psi = 0 where the blade points downstream (+y), psi = 90 deg a quarter turn later in the sense of rotation
    period = g.period
    t0 = next(t for t in np.linspace(0.0, period, 3601) if abs(g.blade_azimuth(0, t)) < 1e-3)
    x_h, y_h, a = g.rotor_frame()
    assert np.allclose(x_h, [0, 1, 0]) and np.allclose(y_h, [-1, 0, 0]) and np.allclose(a, [0, 0, 1])
    assert g.blade_azimuth(0, t0 + period / 4) == pytest.approx(np.pi / 2, abs=2e-3)


def test_azimuth_origin_without_a_freestream_across_the_axis_is_the_hub_frames_zero():
    for downstream in (None, (0.0, 0.0, -3.0)):
        g = rotor(downstream=downstream)
        assert np.allclose(g.rotor_frame()[0], g.frame()[1])
        assert g.blade_azimuth(0, 0.0) == pytest.approx(0.0)


def test_zero_cyclic_leaves_every_blade_array_unchanged_to_the_last_bit():
    # the azimuth origin (from the freestream) must not touch the sections when there is no cyclic pitch
    g0 = rotor()
    g1 = rotor(downstream=(7.0, -2.0, 1.0), cyclic_cos=0.0, cyclic_sin=0.0)
    for k, t in [(0, 0.0), (2, 0.021)]:
        a, b = blade(g0, k, t), blade(g1, k, t)
        for name in ("corners", "section_points", "chord_dir", "section_normal", "collocation"):
            assert np.array_equal(getattr(a, name), getattr(b, name)), name
