"""The section-model case keys: [fluid] speed_of_sound and the [bodies.NAME.airfoil] section keys."""

import math
import tomllib

import numpy as np
import pytest
from wakes.aero.lifting_line import SolverSettings, solve_circulation
from wakes.aero.polars import PolarRangeError, TablePolar
from wakes.aero.post_stall import cd_max_from_aspect_ratio
from wakes.aero.rotor_body import RotorBody
from wakes.aero.sections import CompressiblePolar, MachTablePolar
from wakes.aero.vortex_lattice import influence_matrix
from wakes.aero.wing_body import WingBody
from wakes.case import parse_case
from wakes.errors import CaseError

WING = """
[fluid]
speed_of_sound = {sos}
[freestream]
speed = 10.0
angle_of_attack = 4.0
[bodies.w]
type = "wing"
span = 6.0
chord = {{law = "constant", value = 1.0}}
spanwise_panels = 8
[bodies.w.airfoil]
{airfoil}
"""

ROTOR = """
[bodies.r]
type = "rotor"
blades = 2
radius = 1.0
root_cutout = 0.2
chord = {{law = "constant", value = 0.1}}
rpm = 600.0
panels = 6
[bodies.r.airfoil]
{airfoil}
"""


def _case(airfoil="", sos=340.3, base_dir="."):
    return parse_case(tomllib.loads(WING.format(sos=sos, airfoil=airfoil)), base_dir=base_dir)


def _wing_lift(case):
    """Total bound circulation of the case's wing in its freestream, one steady solve (no wake)."""
    body = WingBody(case.bodies[0], case)
    s = body.surfaces(0.0)[0]
    pts = s.eval_points()
    onset = np.tile(case.freestream.vector(), (len(pts), 1))
    sol = solve_circulation([s], influence_matrix([s], pts), onset, np.zeros(s.n_unknowns),
                            SolverSettings(tolerance=1e-11))
    return float(sol.gamma[0].sum())


def test_defaults_and_speed_of_sound_reach_the_section_polars():
    case = _case()
    assert case.fluid.speed_of_sound == 340.3
    a = case.bodies[0].airfoil
    assert (a.section, a.compressibility, a.mach_limit, a.mach_out_of_range) == (None, "none", 0.7, "error")
    body = WingBody(case.bodies[0], _case(sos=250.0))
    assert body.surfaces(0.0)[0].polars.speed_of_sound == 250.0


def test_prandtl_glauert_raises_the_wing_lift_by_less_than_the_section_factor():
    """50 m/s against a speed of sound of 100 m/s: M = 0.5. The section slope rises by 1/beta = 1.155; an
    aspect-ratio-6 wing's lift by less, as its induced angle grows too (elliptic-wing estimate
    (1 + 2/AR) / (beta + 2/AR) = 1.11, from the slope a / (1 + a / (pi AR)); this rectangular wing of 8
    strips gives 1.077). The bounds leave room for planform and strips; no Mach effect would give 1.0."""
    text = WING.replace("speed = 10.0", "speed = 50.0")
    none = parse_case(tomllib.loads(text.format(sos=100.0, airfoil='section = "naca0012"')))
    pg = parse_case(tomllib.loads(text.format(
        sos=100.0, airfoil='section = "naca0012"\ncompressibility = "prandtl-glauert"')))
    kt = parse_case(tomllib.loads(text.format(
        sos=100.0, airfoil='section = "naca0012"\ncompressibility = "karman-tsien"')))
    assert isinstance(WingBody(pg.bodies[0], pg).surfaces(0.0)[0].polars.polars[0], CompressiblePolar)
    gain = _wing_lift(pg) / _wing_lift(none)
    assert 1.05 < gain < 1.0 / math.sqrt(1.0 - 0.5 ** 2)
    # Karman-Tsien equals Prandtl-Glauert to first order in cl and lies above it at finite lift
    assert _wing_lift(pg) < _wing_lift(kt) < 1.02 * _wing_lift(pg)


def test_mach_limit_and_mach_out_of_range_reach_the_polar():
    text = WING.replace("speed = 10.0", "speed = 50.0")
    stop = parse_case(tomllib.loads(text.format(
        sos=100.0, airfoil='section = "naca0012"\ncompressibility = "prandtl-glauert"\nmach_limit = 0.4')))
    with pytest.raises(PolarRangeError, match=r"strip \d+ .*Mach 0\.5"):
        _wing_lift(stop)
    hold = parse_case(tomllib.loads(text.format(
        sos=100.0, airfoil='section = "naca0012"\ncompressibility = "prandtl-glauert"\nmach_limit = 0.4\n'
                           'mach_out_of_range = "hold"')))
    polar = WingBody(hold.bodies[0], hold).surfaces(0.0)[0].polars.polars[0]
    assert (polar.mach_limit, polar.mach_out_of_range) == (0.4, "hold")
    assert _wing_lift(hold) > 0.0


def test_viterna_keys_reach_the_table_and_the_rotor_uses_r_over_c():
    wing = _case('section = "naca0012"\nout_of_range = "viterna"\npost_stall_cd_max = 1.5')
    polar = WingBody(wing.bodies[0], wing).surfaces(0.0)[0].polars.polars[0]
    assert isinstance(polar, TablePolar)
    assert polar.evaluate(np.radians([90.0]))[1][0] == pytest.approx(1.5)
    rotor = parse_case(tomllib.loads(ROTOR.format(airfoil='section = "naca0012"\nout_of_range = "viterna"')))
    polar = RotorBody(rotor.bodies[0], rotor).polars.polars[0]
    # R/c = 10: Viterna & Corrigan's cd_max = 1.11 + 0.018 AR
    assert polar.evaluate(np.radians([90.0]))[1][0] == pytest.approx(cd_max_from_aspect_ratio(10.0))
    given = parse_case(tomllib.loads(ROTOR.format(
        airfoil='section = "naca0012"\nout_of_range = "viterna"\npost_stall_aspect_ratio = 20.0')))
    polar = RotorBody(given.bodies[0], given).polars.polars[0]
    assert polar.evaluate(np.radians([90.0]))[1][0] == pytest.approx(cd_max_from_aspect_ratio(20.0))


def test_a_polar_with_a_mach_column_is_a_table_by_mach(tmp_path):
    rows = ["mach,alpha_deg,cl,cd"] + [f"{m},{a},{s * a / 10},0.01" for m, s in ((0.0, 1.0), (0.6, 1.25))
                                        for a in (-10, 10)]
    (tmp_path / "m.csv").write_text("\n".join(rows) + "\n")
    case = _case('polar = "m.csv"\nmach_out_of_range = "hold"', base_dir=tmp_path)
    polar = WingBody(case.bodies[0], case).surfaces(0.0)[0].polars.polars[0]
    assert isinstance(polar, MachTablePolar) and polar.mach_out_of_range == "hold"
    assert "mach_out_of_range" in case.to_toml()
    with pytest.raises(CaseError, match=r"compressibility.*already tabulated by Mach"):
        _case('polar = "m.csv"\ncompressibility = "prandtl-glauert"', base_dir=tmp_path)


def test_resolved_case_round_trips():
    case = _case('section = "naca0012"\ncompressibility = "karman-tsien"\nmach_limit = 0.6\n'
                 'out_of_range = "viterna"\npost_stall_aspect_ratio = 8.0')
    again = parse_case(tomllib.loads(case.to_toml()))
    assert again.bodies[0].airfoil == case.bodies[0].airfoil
    plain = _case()
    text = plain.to_toml()
    assert "mach_limit" not in text and "mach_out_of_range" not in text and "speed_of_sound" in text
    assert parse_case(tomllib.loads(text)).bodies[0].airfoil == plain.bodies[0].airfoil


@pytest.mark.parametrize("airfoil, sos, message", [
    ('section = "naca0012"\npolar = "p.csv"', 340.3, r"airfoil\.section: give either a built-in section or "
                                                   r"a polar table"),
    ('section = "naca0012"\ncd0 = 0.01', 340.3,
     r"airfoil\.cd0: give either a polar table or thin-airfoil.*section = 'naca0012'"),
    ('section = "naca9999"', 340.3, r"airfoil\.section.*naca0012"),
    ('compressibility = "glauert"', 340.3, r"airfoil\.compressibility.*prandtl-glauert"),
    ('compressibility = "prandtl-glauert"\nmach_limit = 0.95', 340.3, r"airfoil\.mach_limit.*0\.9"),
    ('compressibility = "prandtl-glauert"\nmach_limit = 0.0', 340.3, r"airfoil\.mach_limit"),
    ("mach_limit = 0.6", 340.3, r"airfoil\.mach_limit applies to a compressibility rule"),
    ('mach_out_of_range = "hold"', 340.3, r"airfoil\.mach_out_of_range applies"),
    ('compressibility = "karman-tsien"\nmach_out_of_range = "clip"', 340.3,
     r"airfoil\.mach_out_of_range.*hold"),
    ('section = "naca0012"\nout_of_range = "extend"', 340.3, r"airfoil\.out_of_range.*viterna"),
    ('out_of_range = "viterna"', 340.3, r"airfoil\.out_of_range applies to a polar table only"),
    ('section = "naca0012"\npost_stall_cd_max = 1.5', 340.3, r"airfoil\.post_stall_cd_max applies to "
                                                             r"out_of_range = \"viterna\""),
    ('section = "naca0012"\nout_of_range = "viterna"\npost_stall_cd_max = 1.5\npost_stall_aspect_ratio = 9.0',
     340.3, r"airfoil\.post_stall_cd_max: give post_stall_aspect_ratio or post_stall_cd_max"),
    ('section = "naca0012"\nout_of_range = "viterna"\npost_stall_aspect_ratio = -1.0', 340.3,
     r"airfoil\.post_stall_aspect_ratio"),
    ('section = "naca0012"\nout_of_range = "viterna"\npost_stall_cd_max = 9.0', 340.3,
     r"airfoil\.post_stall_cd_max"),
    ("", 5.0, r"fluid\.speed_of_sound"),
    ("", 1e5, r"fluid\.speed_of_sound"),
])
def test_bad_values_name_the_key(airfoil, sos, message, tmp_path):
    (tmp_path / "p.csv").write_text("alpha_deg,cl,cd\n-10,-1,0.01\n10,1,0.01\n")
    with pytest.raises(CaseError, match=message):
        _case(airfoil, sos=sos, base_dir=tmp_path)
