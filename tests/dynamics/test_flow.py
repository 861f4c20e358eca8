"""ParticleFlow: stepping, checkpoints, bad input, blow-ups, symmetry properties."""

import pathlib

import numpy as np
import pandas as pd
import pytest
import wakes
from hypothesis import given
from hypothesis import strategies as st
from scipy.spatial.transform import Rotation
from wakes import ParticleFlow
from wakes.errors import InputError, NumericalError, WakesError
from wakes.vortex.diagnostics import DIAGNOSTIC_COLUMNS

from .conftest import random_cloud, single_thread


def _state(flow):
    p = flow.particles
    return p.positions, p.strengths, p.radii


CHECKPOINT_CASES = [
    dict(kernel="winckelmans-leonard", options=dict(stretching="transposed", integrator="rk3")),
    dict(kernel="gaussian", options=dict(stretching="classic", integrator="rk4", viscosity=1e-3,
                                         viscous_scheme="pse", relaxation=2.0)),
    dict(kernel="gaussian", options=dict(stretching="none", integrator="euler", viscosity=1e-3,
                                         viscous_scheme="core-spreading")),
    dict(kernel="rosenhead-moore", options=dict(integrator="rk2")),
]


@pytest.mark.parametrize("case", CHECKPOINT_CASES, ids=lambda c: c["options"].get("integrator"))
def test_checkpoint_restart_is_bit_for_bit(case, tmp_path, one_thread):
    """10 steps in one go equal 5 steps, save, load, 5 steps, to the last bit."""
    start = random_cloud(30, kernel=case["kernel"])
    straight = ParticleFlow(start, **case["options"])
    for _ in range(10):
        straight.step(0.05)
    first = ParticleFlow(start, **case["options"])
    for _ in range(5):
        first.step(0.05)
    first.save(tmp_path / "half.npz")
    resumed = ParticleFlow.load(tmp_path / "half.npz")
    assert resumed.settings == first.settings
    for _ in range(5):
        resumed.step(0.05)
    assert resumed.time == straight.time and resumed.steps == straight.steps == 10
    for a, b in zip(_state(resumed), _state(straight)):
        assert np.array_equal(a, b)


def test_checkpoint_path_and_format_errors(tmp_path):
    bogus = tmp_path / "not_a_checkpoint.npz"
    np.savez(bogus, something=np.zeros(3))
    with pytest.raises(InputError, match="checkpoint"):
        ParticleFlow.load(bogus)
    with pytest.raises(InputError, match="path"):
        ParticleFlow.load(tmp_path / "missing.npz")
    flow = ParticleFlow(random_cloud(5))
    flow.save(str(tmp_path / "a_str_path.npz"))   # str and pathlib both accepted
    assert ParticleFlow.load(pathlib.Path(tmp_path / "a_str_path.npz")).steps == 0
    assert not list(tmp_path.glob("*.tmp")), "no temporary file is left behind"


def test_advance_table_and_landing_time(capsys, one_thread):
    flow = ParticleFlow(random_cloud(20))
    table = flow.advance(0.25, 0.1, progress=True)
    assert isinstance(table, pd.DataFrame)
    assert list(table.columns) == ["step", "time", *DIAGNOSTIC_COLUMNS]
    assert list(table["step"]) == [0, 1, 2, 3]
    assert table["time"].iloc[-1] == 0.25 and flow.time == 0.25
    assert np.allclose(table["time"], [0.0, 0.1, 0.2, 0.25], rtol=0, atol=1e-15)
    assert len(capsys.readouterr().err.strip().splitlines()) == 3
    again = flow.advance(0.25, 0.1)       # already there: only the current row
    assert len(again) == 1 and again["time"].iloc[0] == 0.25
    for col in ("impulse_x", "angular_impulse_z", "kinetic_energy", "enstrophy", "helicity"):
        assert np.isfinite(table[col]).all()


def test_transposed_scheme_conserves_total_vorticity(one_thread):
    """Total vorticity conserved to 1e-12 relative under transposed stretching
    (Winckelmans & Leonard 1993, J. Comput. Phys. 109; derived from the
    pairwise antisymmetry), over 20 RK3 steps of a field with net vorticity
    whose strengths change by tens of percent; classic stretching does not
    conserve it, which shows the check has teeth."""
    start = random_cloud(60, kernel="winckelmans-leonard", sigma=0.2)
    out = {}
    for scheme in ("transposed", "classic"):
        flow = ParticleFlow(start, stretching=scheme)
        table = flow.advance(1.0, 0.05)
        w = table[["vorticity_x", "vorticity_y", "vorticity_z"]].to_numpy()
        change = np.abs(flow.particles.strengths - start.strengths).max() / np.abs(start.strengths).max()
        out[scheme] = (np.abs(w - w[0]).max() / np.linalg.norm(w[0]), change)
    assert out["transposed"][1] > 0.1, "the strengths must actually stretch"
    assert out["transposed"][0] < 1e-12
    assert out["classic"][0] > 1e-6


def test_core_spreading_grows_sigma_squared_linearly(one_thread):
    """Core spreading: sigma^2 = sigma_0^2 + 2 nu t (Leonard 1980), exact under any
    Runge-Kutta scheme because the flow carries sigma^2; strengths untouched
    without stretching."""
    start = random_cloud(10, kernel="gaussian", sigma=0.1)
    flow = ParticleFlow(start, stretching="none", viscosity=0.02, integrator="rk3")
    for _ in range(4):
        flow.step(0.25)
    assert np.allclose(flow.particles.radii ** 2, 0.1 ** 2 + 2 * 0.02 * 1.0, rtol=1e-14)
    assert np.array_equal(flow.particles.strengths, start.strengths)


# ---------------------------------------------------------------- bad input

@pytest.mark.parametrize("kwargs, words", [
    (dict(viscosity=-1e-3), ["viscosity", "-0.001", "zero or positive"]),
    (dict(viscosity=float("nan")), ["viscosity", "nan"]),
    (dict(stretching="tilting"), ["stretching", "'tilting'", "'transposed'", "'classic'", "'none'"]),
    (dict(viscous_scheme="vortex-redistribution"), ["viscous_scheme", "'core-spreading'", "'pse'"]),
    (dict(integrator="rk45"), ["integrator", "'rk45'", "'euler'", "'rk2'", "'rk3'", "'rk4'"]),
    (dict(method="fmm"), ["method", "'fmm'", "'direct'", "'auto'"]),
    (dict(tolerance=0.0), ["tolerance", "positive"]),
    (dict(relaxation=-1.0), ["relaxation"]),
    (dict(viscosity=1e-3, viscous_scheme="core-spreading"),
     ["core-spreading", "'gaussian'", "'winckelmans-leonard'"]),
    (dict(viscosity=1e-3, viscous_scheme="pse", volumes=np.ones(3)), ["volumes", "(5,)"]),
])
def test_bad_options_name_the_input_and_what_is_accepted(kwargs, words):
    with pytest.raises(WakesError) as info:
        ParticleFlow(random_cloud(5, kernel="winckelmans-leonard"), **kwargs)
    for w in words:
        assert w in str(info.value), (w, str(info.value))


def test_bad_particles():
    with pytest.raises(InputError, match="wakes.Particles"):
        ParticleFlow(np.zeros((3, 3)))
    singular = wakes.Particles(np.eye(3), np.eye(3), 0.1, "singular")
    with pytest.raises(InputError, match="kernel.*'gaussian'.*'singular'"):
        ParticleFlow(singular)
    rm = random_cloud(4, kernel="rosenhead-moore")
    with pytest.raises(InputError, match="pse.*'gaussian' or 'winckelmans-leonard'"):
        ParticleFlow(rm, viscosity=1e-3, viscous_scheme="pse")


@pytest.mark.parametrize("dt", [0.0, -0.1, float("nan"), float("inf"), "soon"])
def test_bad_time_steps(dt):
    flow = ParticleFlow(random_cloud(5))
    with pytest.raises(InputError, match="dt must be a positive finite number"):
        flow.step(dt)
    with pytest.raises(InputError, match="dt"):
        flow.advance(1.0, dt)


def test_bad_end_time():
    flow = ParticleFlow(random_cloud(5))
    flow.step(0.1)
    with pytest.raises(InputError, match=r"t_end .* 0\.1 s; got 0\.05"):
        flow.advance(0.05, 0.01)
    with pytest.raises(InputError, match="t_end"):
        flow.advance(float("inf"), 0.01)


def test_blow_up_reports_step_and_time_and_keeps_the_last_good_state(tmp_path, one_thread):
    """Strengths near the float range overflow during the second step's stretching;
    the error names the step and time, the flow keeps the state before it and
    can save it."""
    start = random_cloud(8)
    flow = ParticleFlow(start.replace(strengths=start.strengths * 1e100), stretching="classic")
    flow.step(1e-110)                     # fine
    good = _state(flow)
    flow_big = ParticleFlow(start.replace(strengths=start.strengths * 1e200), stretching="classic")
    with pytest.raises(NumericalError) as info:
        flow_big.step(0.5)
    msg = str(info.value)
    assert "step 1" in msg and "t = 0.0 s to 0.5 s" in msg and "save()" in msg
    assert flow_big.time == 0.0 and flow_big.steps == 0
    assert np.array_equal(flow_big.particles.positions, start.positions)
    flow_big.save(tmp_path / "last_good.npz")
    assert np.array_equal(ParticleFlow.load(tmp_path / "last_good.npz").particles.strengths,
                          start.strengths * 1e200)
    with pytest.raises(NumericalError) as info:
        flow_big.advance(1.0, 0.5)
    assert isinstance(info.value.diagnostics, pd.DataFrame) and len(info.value.diagnostics) == 1
    assert all(np.isfinite(a).all() for a in good)


# ---------------------------------------------------------------- properties

STEPS, DT = 3, 0.05


def _run(particles, dt=DT, steps=STEPS, **options):
    with single_thread():
        flow = ParticleFlow(particles, **options)
        for _ in range(steps):
            flow.step(dt)
    return flow.particles


seeds = st.integers(min_value=0, max_value=2 ** 32 - 1)
schemes = st.sampled_from(["transposed", "classic"])


@given(seed=seeds, stretching=schemes)
def test_rotation_equivariance(seed, stretching):
    """Rotating the initial field rotates the result (positions and strengths are
    vectors under proper rotations); round-off only, 1e-10 relative."""
    p = random_cloud(12, seed=seed % 1000)
    rot = Rotation.random(random_state=seed).as_matrix()
    turned = p.replace(positions=p.positions @ rot.T, strengths=p.strengths @ rot.T)
    a = _run(p, stretching=stretching)
    b = _run(turned, stretching=stretching)
    assert np.allclose(a.positions @ rot.T, b.positions, rtol=0, atol=1e-10)
    assert np.allclose(a.strengths @ rot.T, b.strengths, rtol=0,
                       atol=1e-10 * np.abs(a.strengths).max())


@given(seed=seeds, shift=st.tuples(*[st.floats(-5.0, 5.0)] * 3))
def test_translation_equivariance(seed, shift):
    """Translating the initial field translates the result."""
    p = random_cloud(12, seed=seed % 1000)
    moved = p.replace(positions=p.positions + np.array(shift))
    a = _run(p)
    b = _run(moved)
    assert np.allclose(a.positions + np.array(shift), b.positions, rtol=0, atol=1e-10)
    assert np.allclose(a.strengths, b.strengths, rtol=0, atol=1e-10 * np.abs(a.strengths).max())


@given(seed=seeds, k=st.floats(0.25, 4.0))
def test_strength_scaling_speeds_time_up(seed, k):
    """Strengths times k make the inviscid flow run k times faster: the same
    number of steps of dt/k lands on the same positions, strengths times k
    (velocity and gradient are linear in the strengths)."""
    p = random_cloud(12, seed=seed % 1000)
    a = _run(p)
    b = _run(p.replace(strengths=k * p.strengths), dt=DT / k)
    assert np.allclose(a.positions, b.positions, rtol=0, atol=1e-10)
    assert np.allclose(k * a.strengths, b.strengths, rtol=0, atol=1e-10 * k * np.abs(a.strengths).max())


@given(seed=seeds)
def test_particle_order_does_not_matter(seed):
    """Permuting the particles permutes the result, with viscosity too."""
    p = random_cloud(12, seed=seed % 1000, kernel="gaussian")
    order = np.random.default_rng(seed).permutation(12)
    shuffled = p.replace(positions=p.positions[order], strengths=p.strengths[order])
    opts = dict(viscosity=1e-3, viscous_scheme="pse")
    a = _run(p, **opts)
    b = _run(shuffled, **opts)
    assert np.allclose(a.positions[order], b.positions, rtol=0, atol=1e-12)
    assert np.allclose(a.strengths[order], b.strengths, rtol=0, atol=1e-12 * np.abs(a.strengths).max())


@pytest.mark.parametrize("method", sorted(set(wakes.induction.api.METHODS) | {"auto"}))
def test_method_and_tolerance_pass_through(method, one_thread):
    """Every method the engine offers steps the flow; at tolerance 1e-8 each
    agrees with direct summation to 1e-6 of the step's displacement."""
    start = random_cloud(300, sigma=0.1)
    flow = ParticleFlow(start, method=method, tolerance=1e-8)
    assert flow.settings["method"] == method and flow.settings["tolerance"] == 1e-8
    direct = ParticleFlow(start, method="direct")
    flow.step(0.1)
    direct.step(0.1)
    moved = np.abs(direct.particles.positions - start.positions).max()
    assert np.abs(flow.particles.positions - direct.particles.positions).max() < 1e-6 * moved
