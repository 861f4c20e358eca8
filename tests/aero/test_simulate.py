"""The time loop: several bodies, full-span geometry, the run folder."""

import numpy as np
import pytest
from wakes.aero.geometry import Distribution, WingPlanform
from wakes.case import parse_case
from wakes.run import run_case


def _case(bodies, steps=24, **extra):
    data = {"freestream": {"speed": 10.0, "angle_of_attack": 4.0},
            "bodies": bodies, "wake": {"motion": "frozen"}, "time": {"dt": 0.025, "steps": steps}}
    data.update(extra)
    return parse_case(data)


WING = {"type": "wing", "span": 4.0, "chord": 0.5, "spanwise_panels": 12}
TAIL = {"type": "wing", "span": 1.2, "chord": 0.3, "spanwise_panels": 8, "position": [2.0, 0.0, 0.0]}


def test_tail_in_the_wing_downwash_loses_lift():
    """A tail two metres behind a lifting wing works at a smaller angle than alone (downwash),
    and each body keeps its own rows in the loads table."""
    both = run_case(_case({"wing": WING, "tail": TAIL}))
    alone = run_case(_case({"tail": TAIL}))
    assert set(both.loads["body"]) == {"wing", "tail"}
    assert len(both.loads) == 2 * 24
    cl_tail = both.summary["bodies"]["tail"]["CL"]
    cl_alone = alone.summary["bodies"]["tail"]["CL"]
    assert 0.3 * cl_alone < cl_tail < 0.95 * cl_alone
    assert set(both.sections["body"]) == {"wing", "tail"}


def test_mirrored_wing_is_symmetric_and_sideslip_breaks_it():
    run = run_case(_case({"wing": WING}))
    g = run.sections["gamma_m2_s"].to_numpy()
    np.testing.assert_allclose(g, g[::-1], rtol=1e-9)
    assert abs(run.summary["bodies"]["wing"]["side_force_N"]) < 1e-9
    yawed = run_case(_case({"wing": {**WING, "dihedral": 6.0}},
                           freestream={"speed": 10.0, "angle_of_attack": 4.0, "sideslip": 8.0}))
    g = yawed.sections["gamma_m2_s"].to_numpy()
    # wind from the right meets the raised right wing from below: more load on the right
    assert g[-3:].sum() > g[:3].sum()


def test_full_span_tables_give_an_asymmetric_wing():
    twist = Distribution("table", eta=(-1.0, 1.0), values=(-2.0, 2.0))
    w = WingPlanform(4.0, Distribution.constant(0.5), twist=twist, symmetric=False)
    t = w.chord_direction(np.array([-1.0, 1.0]))
    assert t[0, 2] == pytest.approx(np.sin(np.radians(2.0)))
    assert t[1, 2] == pytest.approx(-np.sin(np.radians(2.0)))
    run = run_case(_case({"wing": {**WING, "symmetric": False,
                                   "twist": {"law": "table", "eta": [-1.0, 1.0], "values": [-2.0, 2.0]}}},
                         steps=6))
    g = run.sections["gamma_m2_s"].to_numpy()
    assert g[-1] > g[0]


def test_write_replaces_stale_wake_tables(tmp_path):
    particles = run_case(_case({"wing": WING}, steps=12, wake={"model": "particles", "near_wake_steps": 3,
                                                                "motion": "frozen"}))
    particles.write(tmp_path)
    assert (tmp_path / "wake_particles.csv").exists()
    run_case(_case({"wing": WING}, steps=4)).write(tmp_path)
    assert not (tmp_path / "wake_particles.csv").exists()
    assert (tmp_path / "wake_segments.csv").exists()
