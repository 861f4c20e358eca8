"""Freestream gusts: the frozen gust field, the case keys, bad input, the warning, and the time loop."""

import math

import numpy as np
import pandas as pd
import pytest
from wakes.aero.gust import Gust, upward_normal
from wakes.aero.plausibility import case_flags
from wakes.case import load_case, parse_case
from wakes.cli import main
from wakes.errors import CaseError
from wakes.run import run_case
from wakes.simulate import wake_tables

SPEED = 10.0


def _wing(gust, model="vortex-lattice", **time):
    body = {"type": "wing", "model": model, "span": 6.0, "chord": 1.0, "spanwise_panels": 6}
    if model == "vortex-lattice":
        body["chordwise_panels"] = 4
    data = {"freestream": {"speed": SPEED, "gust": gust}, "bodies": {"wing": body},
            "time": time or {"dt": 0.025, "steps": 20}, "wake": {"motion": "frozen"}}
    return data


def test_front_position_and_profiles():
    """The front reaches the upstream point at the arrival time and moves at the freestream
    speed; a point is in the gust once the front has passed it (xi > 0)."""
    up = np.array([0.0, 0.0, 1.0])
    sharp = Gust("sharp-edged", 2.0, math.inf, up, np.array([SPEED, 0.0, 0.0]), -0.25, 0.5)
    pts = np.array([[-0.25, 0.0, 0.0], [0.75, 3.0, -1.0]])
    np.testing.assert_allclose(sharp.travelled(pts, 0.5), [0.0, -1.0], atol=1e-15)
    np.testing.assert_allclose(sharp.travelled(pts, 0.7), [2.0, 1.0], atol=1e-15)
    np.testing.assert_array_equal(sharp.velocity(pts, 0.5), np.zeros((2, 3)))      # on the front: not yet
    np.testing.assert_array_equal(sharp.velocity(pts, 0.7), [[0.0, 0.0, 2.0], [0.0, 0.0, 2.0]])
    cosine = Gust("one-minus-cosine", 2.0, 4.0, up, np.array([SPEED, 0.0, 0.0]), 0.0, 0.0)
    xi = np.array([-0.5, 0.0, 1.0, 2.0, 3.0, 4.0, 4.5])
    np.testing.assert_allclose(cosine.profile(xi), [0.0, 0.0, 0.5, 1.0, 0.5, 0.0, 0.0], atol=1e-15)
    # a finite sharp-edged gust is a top hat of its length
    hat = Gust("sharp-edged", 1.0, 4.0, up, np.array([SPEED, 0.0, 0.0]), 0.0, 0.0)
    np.testing.assert_array_equal(hat.profile(np.array([-1.0, 1.0, 3.9, 4.1])), [0.0, 1.0, 1.0, 0.0])
    # its end passes a plane 1 m downstream of the upstream point (4 + 1) m / 10 m/s after arrival
    assert hat.passed(1.0) == pytest.approx(0.5)


def test_default_direction_is_normal_to_the_freestream_and_up():
    for v in ([10.0, 0.0, 0.0], [10.0, -2.0, 3.0], [-5.0, 1.0, -8.0]):
        d = upward_normal(np.array(v))
        assert d @ np.array(v) == pytest.approx(0.0, abs=1e-12)
        assert d[2] > 0.0 and np.linalg.norm(d) == pytest.approx(1.0)
        assert d[1] * v[0] == pytest.approx(d[0] * v[1], abs=1e-12)    # in the vertical plane of V
    assert upward_normal(np.array([0.0, 0.0, -3.0])) is None


def test_case_keys_give_the_gust_with_its_front_at_the_leading_edge():
    """The wing's root quarter chord is at the origin, so its leading edge (the most upstream
    point) is at x = -0.25 m; a freestream at 5 deg turns the default direction with it."""
    case = parse_case(_wing({"shape": "one-minus-cosine", "amplitude": 1.5, "length": 3.0,
                             "arrival_time": 0.2}))
    g = case.gust()
    assert (g.shape, g.amplitude, g.length, g.arrival, g.upstream) == ("one-minus-cosine", 1.5, 3.0, 0.2, -0.25)
    np.testing.assert_allclose(g.direction, [0.0, 0.0, 1.0])
    tilted = parse_case({**_wing({"shape": "sharp-edged", "amplitude": 1.0}),
                         "freestream": {"speed": SPEED, "angle_of_attack": 5.0,
                                        "gust": {"shape": "sharp-edged", "amplitude": 1.0}}}).gust()
    a = math.radians(5.0)
    np.testing.assert_allclose(tilted.direction, [-math.sin(a), 0.0, math.cos(a)], atol=1e-15)
    assert tilted.length == math.inf
    assert parse_case(_wing({})).gust() is None


def test_the_resolved_case_reads_back_with_its_gust(tmp_path):
    case = parse_case(_wing({"shape": "sharp-edged", "amplitude": -0.5, "length": 2.0,
                             "direction": [0.0, 1.0, 0.0]}))
    path = tmp_path / "case.toml"
    path.write_text(case.to_toml())
    again = load_case(path)
    assert again.freestream.gust == case.freestream.gust
    assert "gust" not in parse_case(_wing({})).to_dict()["freestream"]     # no gust, no table


@pytest.mark.parametrize("gust, message", [
    ({"shape": "sharp-edged", "amplitude": 1.0, "length": -2.0},
     r"freestream.gust.length must be greater than 0 \[m\]; got -2.0"),
    ({"shape": "sharp-edged", "amplitude": float("nan")}, r"freestream.gust.amplitude must be a number; got nan"),
    ({"shape": "sharp-edged", "amplitude": float("inf")}, r"freestream.gust.amplitude must be finite"),
    ({"shape": "one-minus-cosine", "amplitude": 1.0},
     r"freestream.gust.length is required for shape = \"one-minus-cosine\""),
    ({"amplitude": 1.0}, r"freestream.gust.amplitude applies to a gust only; set freestream.gust.shape"),
    ({"shape": "sharp-edged", "amplitude": 10.0},
     r"amplitude = 10 m/s must be smaller in size than the freestream speed \(10 m/s\)"),
    ({"shape": "sharp-edged", "amplitude": 1.0, "direction": [1.0, 0.0, 1.0]},
     r"freestream.gust.direction \[1.0, 0.0, 1.0\] must be normal to the freestream"),
    ({"shape": "sharp-edged", "amplitude": 1.0, "direction": [0.0, 0.0, 0.0]},
     r"freestream.gust.direction must be a nonzero vector"),
    ({"shape": "gusty"}, r"freestream.gust.shape must be one of 'none', 'sharp-edged', 'one-minus-cosine'"),
    ({"shape": "sharp-edged", "amplitud": 1.0}, r"unknown key 'freestream.gust.amplitud'; did you mean 'amplitude'"),
])
def test_bad_gust_is_refused_naming_the_key(gust, message):
    with pytest.raises(CaseError, match=message):
        parse_case(_wing(gust))


def test_a_gust_on_a_rotor_is_refused():
    data = {"freestream": {"speed": 5.0, "gust": {"shape": "sharp-edged", "amplitude": 1.0}},
            "bodies": {"rotor": {"type": "rotor", "blades": 2, "radius": 1.0, "root_cutout": 0.2, "chord": 0.1,
                                 "collective": 8.0, "rpm": 600.0, "axis": [0.0, 0.0, 1.0]}}}
    with pytest.raises(CaseError, match=r"freestream.gust acts on wings only; bodies.rotor is a rotor"):
        parse_case(data)


def test_check_exits_2_on_a_bad_gust_and_warns_of_a_gust_longer_than_the_run(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text('[freestream]\nspeed = 10.0\n[freestream.gust]\nshape = "sharp-edged"\namplitude = 1.0\n'
                   'length = -3.0\n[bodies.wing]\ntype = "wing"\nspan = 6.0\nchord = 1.0\n')
    assert main(["check", str(bad), "--quiet"]) == 2
    assert "freestream.gust.length must be greater than 0" in capsys.readouterr().err
    # 20 steps of 0.025 s: the run ends at t = 0.475 s; a gust 30 m long passes the 1 m chord at
    # (30 + 1) / 10 = 3.1 s
    long = tmp_path / "long.toml"
    long.write_text('[freestream]\nspeed = 10.0\n[freestream.gust]\nshape = "one-minus-cosine"\n'
                    'amplitude = 1.0\nlength = 30.0\n[time]\ndt = 0.025\nsteps = 20\n'
                    '[bodies.wing]\ntype = "wing"\nspan = 6.0\nchord = 1.0\n')
    assert main(["check", str(long), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "gust-outlasts-run" in out and "its end passes the last of them at t = 3.1 s" in out
    assert "raise [time] steps to at least 125" in out


def test_gust_flags():
    """A gust that outlasts the run or comes after it is flagged; one that has passed, or a
    sharp-edged gust without a length (a step, on by design), is not."""
    def codes(gust, steps=20):
        return [f.code for f in case_flags(parse_case(_wing(gust, dt=0.025, steps=steps)))]
    assert codes({"shape": "sharp-edged", "amplitude": 1.0, "length": 2.0}) == []    # gone at t = 0.3 s
    assert codes({"shape": "sharp-edged", "amplitude": 1.0, "length": 4.0}) == ["gust-outlasts-run"]
    assert codes({"shape": "sharp-edged", "amplitude": 1.0}) == []
    assert codes({"shape": "sharp-edged", "amplitude": 1.0, "arrival_time": 0.5}) == ["gust-after-run"]


def test_a_gust_after_the_run_changes_nothing_and_one_during_it_lifts():
    """Loads of a wing whose gust arrives after the run equal those without a gust, bit for bit
    (the gust adds exact zeros); an upward gust raises the lift once its front has reached the
    wing and not before."""
    none = run_case(parse_case(_wing({}))).loads
    late = run_case(parse_case(_wing({"shape": "sharp-edged", "amplitude": 0.5, "arrival_time": 1.0}))).loads
    pd.testing.assert_frame_equal(none, late, check_exact=True)
    gust = run_case(parse_case(_wing({"shape": "sharp-edged", "amplitude": 0.5, "arrival_time": 0.1}))).loads
    before = gust["time_s"] <= 0.1
    np.testing.assert_array_equal(gust.loc[before, "CL"], none.loc[before, "CL"])
    assert (gust.loc[~before, "CL"] > none.loc[~before, "CL"] + 1e-3).all()


def test_the_gust_carries_the_frozen_wake():
    """A frozen wake moves with the freestream and the gust: a node shed after the front passed
    the trailing edge (at t = 0.1125 s: arrival at the leading edge half a step after the start,
    then 1 m of chord at 10 m/s, so that no node lies on the front) has risen by w times its
    age; nodes shed before it stay ahead of the front and in the plane. Lifting-line wing at
    zero incidence."""
    run = run_case(parse_case(_wing({"shape": "sharp-edged", "amplitude": 0.5, "arrival_time": 0.0125},
                                    model="lifting-line")))
    seg, _ = wake_tables(run.wake)
    z = np.concatenate([seg["z0_m"], seg["z1_m"]])
    x = np.concatenate([seg["x0_m"], seg["x1_m"]])
    t_end = run.wake_time_s
    shed = t_end - (x - 0.75) / SPEED          # trailing edge at x = 0.75 m, carried at 10 m/s
    expected = np.where(shed > 0.1125, 0.5 * (t_end - shed), 0.0)
    np.testing.assert_allclose(z, expected, atol=1e-9)
    assert z.max() == pytest.approx(0.5 * (t_end - 0.125))
