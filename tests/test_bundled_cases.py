"""Every bundled case and template: its commented numbers are true, and it runs without a warning.

**Commented claims.** A claim is a number in a comment of a case file or a
template; each is kept in :data:`CLAIMS` (or :data:`RUN_CLAIMS` when it
needs a run) with the exact comment text it comes from, the number as
written (digits, or a word of :data:`WORDS`), the tolerance its digits
carry (half a unit of the last digit, or 10 % for "about") and how to
compute it. The test checks
that the text is still in the file (a changed comment must be checked
again) and that the computed value rounds to the number.

**Zero plausibility warnings.** Each bundled case and template runs as
written and its ``summary["warnings"]`` (:mod:`wakes.aero.plausibility`)
must be empty. Runs other tests already make are reused, not repeated
(:data:`RUN_ELSEWHERE` says where); the others run here, one test each, so
pytest-xdist spreads them over its processes. They take 1-31 s each on a
shared 2-core machine (the validation turbine is the longest), so they
carry ``slow`` like the other long runs.
"""

import math
import re
from pathlib import Path

import numpy as np
import pytest
from wakes.aero.plausibility import rotor_wake_length
from wakes.case import load_case
from wakes.run import run_case
from wakes.templates import TEMPLATE_KINDS, new_case, template_text

ROOT = Path(__file__).resolve().parents[1]
CASES = ROOT / "cases"
ABOUT = 0.1      # "about N": within 10 %
WORDS = {"one": 1.0, "four": 4.0, "a quarter": 0.25}   # numbers written as words


def _case(name, tmp_path):
    if name.startswith("template:"):
        return load_case(new_case(name.split(":")[1], tmp_path / "case.toml"))
    return load_case(CASES / name)


def _text(name):
    if name.startswith("template:"):
        return template_text(name.split(":")[1])
    return (CASES / name).read_text(encoding="utf-8")


def _rotor(case):
    return case.bodies[0]


def _tip_speed(r):
    return r.rpm * 2.0 * math.pi / 60.0 * r.radius


def _tip_travel(case, r):
    """Distance the tip moves in one step [m]."""
    return _tip_speed(r) * case.time.dt


def _mean_chord(r):
    """A linear or constant chord law's mean [m]."""
    c = r.chord
    return c.value if c.law == "constant" else 0.5 * (c.root + c.tip)


def _pitch_at(r, radius_fraction):
    """Section pitch (collective + twist) at r/R [deg]."""
    eta = (radius_fraction * r.radius - r.root_cutout) / (r.radius - r.root_cutout)
    return r.collective + float(r.twist([eta])[0])


def _wing_run_time(case):
    return (case.time.steps - 1) * case.time.dt


# (file, comment text, number as written, tolerance, value computed from the case)
CLAIMS = [
    ("validation/hover-8deg.toml", "1250 rpm (tip Mach 0.440)", "0.440", 0.0005,
     lambda c: _tip_speed(_rotor(c)) / c.fluid.speed_of_sound),
    ("validation/hover-8deg.toml", "(aspect ratio 6)", "6", 0.5,
     lambda c: _rotor(c).radius / _rotor(c).chord.value),
    ("validation/hover-8deg.toml", "cores of 0.06 m, 30 % of the tip's travel", "30", 0.5,
     lambda c: 100 * c.wake.core_radius / _tip_travel(c, _rotor(c))),
    ("validation/elliptic-wing.toml", "C_L = a0 alpha / (1 + a0/(pi AR)) = 0.4386", "0.4386", 0.00005,
     lambda c: 2 * math.pi * math.radians(5.0) / (1 + 2 * math.pi / (math.pi * 8.0))),
    ("validation/elliptic-wing.toml", "S = pi b c0 / 4 = 8 m^2", "8", 0.0005,
     lambda c: c.bodies[0].reference_area),
    ("validation/rectangular-wing.toml", "S = 6 m^2, AR = 6", "6", 0.0005,
     lambda c: c.bodies[0].span ** 2 / c.bodies[0].reference_area),
    ("validation/propeller-axial.toml", "(18.75 deg\n# at 0.75 R", "18.75", 0.005,
     lambda c: math.degrees(math.atan(0.48 / (2 * math.pi * 0.75 * _rotor(c).radius)))),
    ("validation/propeller-axial.toml", "J = 0.5 here (V = 20 m/s at 4000 rpm)", "0.5", 0.05,
     lambda c: 20.0 / (_rotor(c).rpm / 60.0 * 2 * _rotor(c).radius)),
    ("validation/propeller-axial.toml", "0.23 of the tip's travel (0.052 m)", "0.23", 0.005,
     lambda c: c.wake.core_radius / _tip_travel(c, _rotor(c))),
    ("validation/turbine.toml", "rpm = 106.95                  # tip-speed ratio 7", "7", 0.05,
     lambda c: _tip_speed(_rotor(c)) / 8.0),
    ("validation/turbine.toml", "0.23 of the tip's travel (0.87 m)", "0.23", 0.005,
     lambda c: c.wake.core_radius / _tip_travel(c, _rotor(c))),
    ("drone-lift-rotor.toml", "0.46 m diameter", "0.46", 0.005, lambda c: 2 * _rotor(c).radius),
    ("drone-lift-rotor.toml", "# 1/rad, 0.9 x 2 pi (invented)", "0.9", 0.05,
     lambda c: _rotor(c).airfoil.lift_slope / (2 * math.pi)),
    ("drone-lift-rotor.toml", "a quarter of the tip's travel in one 10 deg step", "a quarter", 0.005,
     lambda c: c.wake.core_radius / _tip_travel(c, _rotor(c))),
    ("survey-quad-cruise.toml", "0.46 m diameter", "0.46", 0.005, lambda c: 2 * _rotor(c).radius),
    ("survey-quad-cruise.toml", "# 1/rad, 0.9 x 2 pi (invented)", "0.9", 0.05,
     lambda c: _rotor(c).airfoil.lift_slope / (2 * math.pi)),
    ("survey-quad-cruise.toml", "a quarter of the tip's travel in one 10 deg step", "a quarter", 0.005,
     lambda c: c.wake.core_radius / _tip_travel(c, _rotor(c))),
    ("survey-quad-cruise.toml", "the air meets the\n# disc from 6 deg above its plane", "6", 0.5,
     lambda c: -c.freestream.angle_of_attack),
    ("survey-quad-cruise.toml", "an advance\n# ratio of about 0.1", "0.1", ABOUT * 0.1,
     lambda c: 10.0 * math.cos(math.radians(6.0)) / _tip_speed(_rotor(c))),
    ("propeller-cruise.toml", "0.56 m diameter", "0.56", 0.005, lambda c: 2 * _rotor(c).radius),
    ("propeller-cruise.toml", "pitch about\n# 0.40 m", "0.40", ABOUT * 0.40,
     lambda c: 2 * math.pi * 0.75 * _rotor(c).radius * math.tan(math.radians(_pitch_at(_rotor(c), 0.75)))),
    ("propeller-wing.toml", "pitch 38 deg at the root cut-out", "38", 0.5, lambda c: _pitch_at(c.bodies[1], 0.16)),
    ("propeller-wing.toml", "# 19.7 deg at 0.75 R", "19.7", 0.05, lambda c: _pitch_at(c.bodies[1], 0.75)),
    ("propeller-wing.toml", "12 deg at the tip", "12", 0.5, lambda c: _pitch_at(c.bodies[1], 1.0)),
    ("propeller-wing.toml", "0.23 of the tip's travel (0.065 m)", "0.065", 0.0005,
     lambda c: _tip_travel(c, c.bodies[1])),
    ("propeller-wing.toml", "0.23 of the tip's travel (0.065 m)", "0.23", 0.005,
     lambda c: c.wake.core_radius / _tip_travel(c, c.bodies[1])),
    ("propeller-wing.toml", "at most 2.4 m of wake behind the wing", "2.4", 0.05,
     lambda c: 20.0 * c.wake.max_age),
    ("propeller-wing.toml", "the run's 0.1125 s", "0.1125", 0.00005, _wing_run_time),
    ("propeller-wing.toml", "leave 2.25 m (1.5 semi-spans)", "2.25", 0.005, lambda c: 20.0 * _wing_run_time(c)),
    ("propeller-wing.toml", "leave 2.25 m (1.5 semi-spans)", "1.5", 0.05,
     lambda c: 20.0 * _wing_run_time(c) / (0.5 * c.bodies[0].span)),
    ("propeller-wing.toml", "wing's centre by about 17 %", "17", 0.5,
     lambda c: 100 * (1 - 2.25 / math.hypot(2.25, 0.5 * c.bodies[0].span))),
    ("propeller-wing.toml", "# 4 revolutions (0.05 s)", "0.05", 0.005, lambda c: 4 * 60.0 / c.bodies[1].rpm),
    ("propeller-wing.toml", "9 propeller revolutions at 15 deg a step", "9", 0.05,
     lambda c: _wing_run_time(c) * c.bodies[1].rpm / 60.0),
    ("propeller-wing.toml", "(dt 0.52 ms", "0.52", 0.005, lambda c: 1000 * c.time.dt),
    ("small-wind-turbine.toml", "a 5 m diameter farm wind turbine", "5", 0.5, lambda c: 2 * _rotor(c).radius),
    ("small-wind-turbine.toml", "rpm = 173.8                   # tip-speed ratio 6.5", "6.5", 0.005,
     lambda c: _tip_speed(_rotor(c)) / 7.0),
    ("farm-turbine-yawed.toml", "7 m/s from 30 deg off the rotor axis", "7", 0.0005,
     lambda c: float(np.linalg.norm(c.freestream.velocity))),
    ("farm-turbine-yawed.toml", "7 m/s from 30 deg off the rotor axis", "30", 0.0005,
     lambda c: math.degrees(math.acos(c.freestream.velocity[0] / np.linalg.norm(c.freestream.velocity)))),
    ("survey-glider.toml", "3.2 m span", "3.2", 0.05, lambda c: c.bodies[0].span),
    ("survey-glider.toml", "a wake panel of 0.14 m, 0.7 mean chords", "0.14", 0.005, lambda c: 14.0 * c.time.dt),
    ("survey-glider.toml", "a wake panel of 0.14 m, 0.7 mean chords", "0.7", 0.05,
     lambda c: 14.0 * c.time.dt / c.bodies[0].mean_chord()),
    ("survey-glider.toml", "wake about 3 spans long", "3", ABOUT * 3,
     lambda c: 14.0 * c.time.dt * c.time.steps / c.bodies[0].span),
    ("template:wing", "a 2.4 m span trainer glider at 12 m/s", "2.4", 0.05, lambda c: c.bodies[0].span),
    ("template:wing", "a wake row of 0.24 m, about one mean chord", "0.24", 0.005, lambda c: 12.0 * c.time.dt),
    ("template:wing", "a wake row of 0.24 m, about one mean chord", "one", ABOUT,
     lambda c: 12.0 * c.time.dt / c.bodies[0].mean_chord()),
    ("template:wing", "wake 9.6 m long, four spans", "9.6", 0.05, lambda c: 12.0 * c.time.dt * c.time.steps),
    ("template:wing", "wake 9.6 m long, four spans", "four", 0.05,
     lambda c: 12.0 * c.time.dt * c.time.steps / c.bodies[0].span),
    ("template:rotor", "a 0.8 m radius two-bladed", "0.8", 0.05, lambda c: _rotor(c).radius),
    ("template:rotor", "about 0.4 chord", "0.4", ABOUT * 0.4, lambda c: c.wake.core_radius / _mean_chord(_rotor(c))),
    ("template:propeller", "a 0.3 m radius three-bladed", "0.3", 0.05, lambda c: _rotor(c).radius),
    ("template:propeller", "# m, 0.1 x mean chord", "0.1", 0.005,
     lambda c: c.wake.core_radius / _mean_chord(_rotor(c))),
    ("template:turbine", "a 5 m radius three-bladed", "5", 0.5, lambda c: _rotor(c).radius),
    ("template:turbine", "# m, 0.1 x mean chord", "0.1", 0.005,
     lambda c: c.wake.core_radius / _mean_chord(_rotor(c))),
]


def _summary(run):
    return next(iter(run.summary["bodies"].values()))


def _wake_radii(run):
    """A rotor's kept wake length in radii: the plausibility check's estimate
    (:func:`rotor_wake_length` at the run's mean thrust; the faded end counts half)."""
    r = _rotor(run.case)
    return rotor_wake_length(r, run.case, _summary(run)["thrust_N"]) / r.radius


# (case, comment text, number as written, tolerance, value computed from the run)
RUN_CLAIMS = {
    "drone-lift-rotor.toml": [("the rotor gives about\n# 12 N", "12", ABOUT * 12,
                               lambda run: _summary(run)["thrust_N"])],
    "survey-quad-cruise.toml": [("gives about 11 N", "11", ABOUT * 11, lambda run: _summary(run)["thrust_N"])],
    "validation/turbine.toml": [("# about 6 R downstream", "6", ABOUT * 6, _wake_radii)],
    "template:rotor": [("about 2 R of wake", "2", ABOUT * 2, _wake_radii)],
    "template:propeller": [("about 1.6 R of wake", "1.6", ABOUT * 1.6, _wake_radii)],
    "template:turbine": [("about 6 R of wake", "6", ABOUT * 6, _wake_radii)],
}

#: Bundled cases whose run as written another test makes, and where its warnings are checked.
RUN_ELSEWHERE = {
    "survey-glider.toml": "test_survey_glider_runs_without_a_warning (the doctest folder's run)",
    "validation/elliptic-wing.toml": "tests/validation/test_wings.py",
    "validation/rectangular-wing.toml": "tests/validation/test_wings.py",
    "validation/hover-8deg.toml": "tests/validation/test_rotors.py",
    "small-wind-turbine.toml": "tests/validation/test_rotors.py (the yaw check runs it as written)",
    "farm-turbine-yawed.toml": "tests/validation/test_rotors.py (the yaw check runs it as written)",
}

RUN_HERE = ["drone-lift-rotor.toml", "survey-quad-cruise.toml",
            "propeller-cruise.toml", "propeller-wing.toml",
            "validation/propeller-axial.toml", "validation/turbine.toml", "template:wing", "template:rotor",
            "template:propeller", "template:turbine"]


@pytest.mark.parametrize("name, text, number, tol, compute", CLAIMS,
                         ids=[f"{c[0]}:{c[2]}" for c in CLAIMS])
def test_commented_numbers_are_true(name, text, number, tol, compute, tmp_path):
    assert text in _text(name), f"{name}: the comment {text!r} changed; check its number again"
    assert re.search(rf"(?<![\d.]){re.escape(number)}(?![\d])", text)
    assert compute(_case(name, tmp_path)) == pytest.approx(WORDS.get(number) or float(number), abs=tol)


def test_every_bundled_case_and_template_is_run_somewhere():
    bundled = {p.relative_to(CASES).as_posix() for p in CASES.rglob("*.toml")}
    bundled |= {f"template:{k}" for k in TEMPLATE_KINDS}
    assert bundled == set(RUN_HERE) | set(RUN_ELSEWHERE)
    assert not set(RUN_HERE) & set(RUN_ELSEWHERE)


@pytest.mark.slow
@pytest.mark.parametrize("name", RUN_HERE)
def test_bundled_case_runs_as_written_without_a_warning(name, tmp_path):
    run = run_case(_case(name, tmp_path))
    assert run.status == "finished"
    assert run.summary["warnings"] == []
    for text, number, tol, compute in RUN_CLAIMS.get(name, []):
        assert text in _text(name), f"{name}: the comment {text!r} changed; check its number again"
        assert compute(run) == pytest.approx(float(number), abs=tol), text


def test_survey_glider_runs_without_a_warning(_example_folder):
    """The demo glider's run that the docstring examples share: no warning, and its lift is the
    weight its comment gives ("about 4.5 kg (44 N)"; within 5 %)."""
    import json
    summary = json.loads((_example_folder / "glider-run" / "summary.json").read_text())
    assert summary["warnings"] == []
    assert "about 4.5 kg (44 N)" in _text("survey-glider.toml")
    assert summary["bodies"]["wing"]["lift_N"] == pytest.approx(44.0, rel=0.05)
