"""A wing's total drag, lift-to-drag ratio and pitching moment about a stated reference point."""

import tomllib

import numpy as np
import pytest
from wakes.aero.geometry import Distribution, WingPlanform
from wakes.aero.loads import StripLoads, wing_totals
from wakes.case import load_case, parse_case
from wakes.run import run_case

# A flat rectangular wing of aspect ratio 40 (nearly two-dimensional) on a frozen wake.
FLAT_PLATE = """
[freestream]
speed = 10.0
angle_of_attack = 5.0
[bodies.wing]
type = "wing"
model = "vortex-lattice"
span = 40.0
chord = 1.0
spanwise_panels = 12
chordwise_panels = 8
{extra}
[wake]
motion = "frozen"
[time]
dt = 0.1
steps = 30
"""


def _wing(extra=""):
    run = run_case(parse_case(tomllib.loads(FLAT_PLATE.format(extra=extra))))
    return run, run.summary["bodies"]["wing"]


def test_flat_plate_moment_is_thin_airfoil_theory_s():
    """Thin-airfoil theory (Glauert 1926; Katz & Plotkin 2001, ch. 5): a flat plate's centre of
    pressure is at the quarter chord, so C_m about it is 0 and about the leading edge -C_L/4.
    The lattice's chordwise panel forces give both within 2 % of C_L/4 (a finite aspect ratio
    of 40 and 8 panels: measured -0.2478 C_L about the leading edge)."""
    run, quarter = _wing()
    assert run.case.bodies[0].moment_reference == (0.0, 0.0, 0.0)   # default: root = MAC quarter chord
    assert run.case.bodies[0].reference_chord == pytest.approx(1.0)
    assert abs(quarter["CM"]) < 0.02 * 0.25 * quarter["CL"]
    _, leading = _wing("moment_reference = [-0.25, 0.0, 0.0]")
    assert leading["CL"] == pytest.approx(quarter["CL"])
    assert leading["CM"] / leading["CL"] == pytest.approx(-0.25, rel=0.02)
    # halving the reference chord doubles C_m, the moment itself stays
    _, half = _wing("moment_reference = [-0.25, 0.0, 0.0]\nreference_chord = 0.5")
    assert half["pitching_moment_Nm"] == pytest.approx(leading["pitching_moment_Nm"])
    assert half["CM"] == pytest.approx(2.0 * leading["CM"])


def test_total_drag_and_lift_to_drag_in_loads_and_summary():
    text = FLAT_PLATE.format(extra="[bodies.wing.airfoil]\ncd0 = 0.01\ncd2 = 0.02")
    run = run_case(parse_case(tomllib.loads(text)))
    s = run.summary["bodies"]["wing"]
    assert {"CD", "drag_N", "lift_to_drag", "CM", "pitching_moment_Nm"} <= set(run.loads.columns)
    assert s["CD0"] > 0.009                                  # the polar's profile drag is counted
    assert s["CD"] == pytest.approx(s["CDi"] + s["CD0"])
    assert s["drag_N"] == pytest.approx(s["induced_drag_N"] + s["profile_drag_N"])
    assert s["lift_to_drag"] == pytest.approx(s["CL"] / s["CD"])


def test_mean_aerodynamic_chord_of_a_swept_tapered_wing():
    """Straight taper: c_bar = 2/3 c_r (1 + t + t^2)/(1 + t) at y = b/6 (1 + 2t)/(1 + t), where the
    quarter-chord line sits y tan(sweep) aft and y tan(dihedral) up (textbook geometry)."""
    b, cr, t = 6.0, 1.2, 0.4
    p = WingPlanform(b, Distribution("linear", root=cr, tip=cr * t), sweep=Distribution.constant(20.0),
                     dihedral=Distribution.constant(5.0))
    mac, point = p.mean_aerodynamic_chord()
    y = b / 6.0 * (1 + 2 * t) / (1 + t)
    assert mac == pytest.approx(2.0 / 3.0 * cr * (1 + t + t * t) / (1 + t), rel=1e-6)
    assert point == pytest.approx([y * np.tan(np.radians(20.0)), 0.0, y * np.tan(np.radians(5.0))], rel=1e-5)


def test_default_reference_point_moves_with_the_wing_and_is_recorded(tmp_path):
    path = tmp_path / "w.toml"
    path.write_text(FLAT_PLATE.format(extra="position = [1.0, 0.0, 2.0]\nsweep = 10.0"))
    wing = load_case(path).bodies[0]
    mac, point = wing.planform().mean_aerodynamic_chord()
    assert wing.moment_reference == pytest.approx(tuple(point + [1.0, 0.0, 2.0]))
    assert point[0] > 0.0                                     # swept back: aft of the root
    assert "moment_reference" in load_case(path).to_toml("header")


def test_moment_sign_is_nose_up_positive():
    """Lift acting ahead of the reference point raises the nose: positive C_m."""
    n = 1
    z = np.zeros(n)
    strip = StripLoads("s", z, np.array([[-0.5, 0.0, 0.0]]), np.ones(n), np.ones(n), z, z, z, z, z, z,
                       z + 1, np.array([[0.0, 0.0, 10.0]]), np.zeros((n, 3)))
    out = wing_totals([strip], velocity=np.array([10.0, 0.0, 0.0]), span_axis=np.array([0.0, 1.0, 0.0]),
                      density=1.0, area=2.0, span=2.0, trefftz_drag=0.0, reference_chord=1.0)
    assert out["pitching_moment_Nm"] == pytest.approx(5.0)
    assert out["CM"] == pytest.approx(5.0 / (50.0 * 2.0 * 1.0))
    assert np.isnan(out["lift_to_drag"])                      # no drag: no ratio
