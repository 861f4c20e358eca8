"""Prescribed harmonic plunge and pitch of a wing: placement, material velocity, case keys."""

import math

import numpy as np
import pandas as pd
import pytest
from wakes.aero.geometry import rotation_matrix
from wakes.aero.wing_body import WingBody
from wakes.aero.wing_motion import HarmonicMotion, axis_rotation
from wakes.case import parse_case
from wakes.errors import CaseError
from wakes.run import run_case

from ..resume import stopped_and_resumed


def _wing(motion, **time):
    body = {"type": "wing", "model": "vortex-lattice", "span": 6.0, "chord": 1.0,
            "chordwise_panels": 4, "spanwise_panels": 6, "motion": motion}
    data = {"freestream": {"speed": 10.0, "angle_of_attack": 2.0}, "bodies": {"wing": body}}
    if time:
        data["time"] = time
    return data


def test_axis_rotation_is_a_proper_rotation():
    axis = np.array([1.0, 2.0, 2.0]) / 3.0
    r = axis_rotation(axis, 0.7)
    np.testing.assert_allclose(r @ r.T, np.eye(3), atol=1e-14)
    assert np.linalg.det(r) == pytest.approx(1.0, abs=1e-14)
    np.testing.assert_allclose(r @ axis, axis, atol=1e-14)
    # about body y it is the orientation's pitch rotation (nose up positive)
    np.testing.assert_allclose(axis_rotation(np.array([0.0, 1.0, 0.0]), math.radians(12.0)),
                               rotation_matrix((0.0, 12.0, 0.0)), atol=1e-14)


def test_material_velocity_is_the_rate_of_the_placed_points():
    """The velocity the surface reports equals the central difference of its placed corners
    (second order: step 1e-6 s, error below 1e-7 of the speed)."""
    case = parse_case(_wing({"plunge_amplitude": 0.05, "pitch_amplitude": 4.0, "frequency": 2.0,
                             "pitch_lead": 30.0, "pitch_axis": 0.4}))
    body = WingBody(case.bodies[0], case)
    t, h = 0.13, 1e-6
    before, now, after = (body.surfaces(t + d)[0] for d in (-h, 0.0, h))
    rate = (after.corners - before.corners) / (2 * h)
    pts = now.corners.reshape(-1, 3)
    v = now.velocity_of(pts)
    np.testing.assert_allclose(v, rate.reshape(-1, 3), atol=1e-7 * np.max(np.abs(v)))
    # the normals turn with the pitch and stay unit vectors
    np.testing.assert_allclose(np.linalg.norm(now.normals, axis=-1), 1.0, atol=1e-14)


def test_pitch_axis_points_do_not_move_in_pure_pitch():
    """Points of the pitch axis (here the mid chord) stay where they are."""
    case = parse_case(_wing({"pitch_amplitude": 10.0, "frequency": 1.0, "pitch_axis": 0.5}))
    motion = case.bodies[0].harmonic_motion()
    np.testing.assert_allclose(motion.axis_point, [0.25, 0.0, 0.0], atol=1e-12)
    body = WingBody(case.bodies[0], case)
    on_axis = np.array([[0.25, -2.0, 0.0], [0.25, 1.0, 0.0]])
    np.testing.assert_allclose(body.surfaces(0.2)[0].velocity_of(on_axis), 0.0, atol=1e-12)


def test_state_at_quarter_periods():
    m = HarmonicMotion(plunge=0.1, pitch=0.2, frequency=0.5, pitch_lead=math.pi / 2,
                       axis_point=np.zeros(3), span_axis=np.array([0.0, 1.0, 0.0]),
                       up=np.array([0.0, 0.0, 1.0]))
    z, dz, th, dth = m.state(0.0)
    assert (z, th) == (0.0, pytest.approx(0.2))        # pitch leads by a quarter period
    assert dz == pytest.approx(0.1 * math.pi) and dth == pytest.approx(0.0, abs=1e-15)


def test_no_motion_by_default_leaves_the_wing_at_rest():
    case = parse_case(_wing({}))
    assert case.bodies[0].harmonic_motion() is None
    body = WingBody(case.bodies[0], case)
    assert body.surfaces(1.0)[0] is body.surfaces(0.0)[0]


@pytest.mark.parametrize("motion, time, message", [
    ({"plunge_amplitude": 0.1}, {}, r"motion.frequency must be positive for a plunge or pitch"),
    # plunge speed 2 pi f h = 2 pi 20 0.1 = 12.6 m/s, faster than the 10 m/s freestream
    ({"plunge_amplitude": 0.1, "frequency": 20.0}, {}, r"moves the wing at up to 12.57 m/s, not slower "
                                                       r"than the freestream \(10 m/s\)"),
    # a period of 0.5 s in 0.1 s steps: 5 steps, fewer than 8
    ({"pitch_amplitude": 2.0, "frequency": 2.0}, {"dt": 0.1, "steps": 10},
     r"time.dt = 0.1 s resolves a period of bodies.wing.motion \(0.5 s\) by 5 steps; at least 8"),
])
def test_bad_motion_is_refused_with_the_limit(motion, time, message):
    with pytest.raises(CaseError, match=message):
        parse_case(_wing(motion, **time))


def test_default_step_resolves_the_motion():
    """Without [time] dt, a fast motion gets 32 steps a period (the chord alone would give 0.025 s)."""
    case = parse_case(_wing({"pitch_amplitude": 2.0, "frequency": 4.0}))
    assert case.time.dt == pytest.approx(1.0 / (32 * 4.0))


def test_moving_wing_interrupted_and_resumed_equals_an_uninterrupted_run(tmp_path):
    """A pitching and plunging lattice wing stopped at step 7 and resumed from its checkpoint
    gives the loads of a run that never stopped, bit for bit (the motion is a function of time;
    the influence blocks turned rigidly are restored from the checkpoint)."""
    case = parse_case(_wing({"plunge_amplitude": 0.02, "pitch_amplitude": 2.0, "frequency": 2.0},
                            dt=0.025, steps=12))
    full, part, _, resumed = stopped_and_resumed(case, tmp_path)
    assert part.status == "interrupted"
    pd.testing.assert_frame_equal(full.loads, resumed.loads, check_exact=True)
    # the motion changes the lift: a wing at rest gives another history
    rest = run_case(parse_case(_wing({}, dt=0.025, steps=12)))
    assert np.max(np.abs(rest.loads["CL"].to_numpy() - full.loads["CL"].to_numpy())) > 0.01
