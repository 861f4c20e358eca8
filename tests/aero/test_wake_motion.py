"""Time marching of lifting bodies' wakes: observed order of accuracy of the wake step.

The wakes here move in their own field only (no body): a vortex ring held by a wing's wake
lattice, the same ring as the particles of a particle wake, and a helical vortex held by a
rotor blade's far wake. Each is marched to a fixed time with 4 to 32 steps and compared with
the same wake marched with 256 steps of the classical fourth-order scheme; the observed order
is the slope of log(error) against log(dt) (a least-squares fit over the four step sizes).
"""

import numpy as np
import pytest
from wakes.aero.rotor_wake import RolledUpWake
from wakes.aero.wake import WakeSettings, WakeSheet
from wakes.aero.wake_motion import march
from wakes.case import parse_case
from wakes.induction.api import induce
from wakes.run import run_case
from wakes.vortex.dynamics import stretching_rate
from wakes.vortex.integrators import INTEGRATORS

GAMMA = 1.0     # m^2/s
CORE = 0.08     # m, on a ring and helix of radius 1 m
STEPS = (4, 8, 16, 32)
HEUN = INTEGRATORS["rk2"]


def _self_induced(time, trial):
    """The velocity every wake induces on its own nodes and particles, and the stretching."""
    src = [e for w in trial for e in w.sources(time)]
    src = [e for e in src if getattr(e, "segment_count", 1)]
    nodes = np.vstack([w.state()[:w.node_count] for w in trial])
    u_nodes = induce(src, nodes)
    parts = np.vstack([w.positions for w in trial])
    if not parts.shape[0]:
        return u_nodes, parts, None
    vel, grad = induce(src, parts, gradient=True)
    return u_nodes, vel, stretching_rate("transposed", np.vstack([w.strengths for w in trial]), grad)


def _ring_points(n):
    """n points of an elliptic ring (semi-axes 1.2 m, 0.8 m) in the plane z = 0, counter-clockwise."""
    theta = np.linspace(0.0, 2.0 * np.pi, n, endpoint=False)
    return np.stack([1.2 * np.cos(theta), 0.8 * np.sin(theta), np.zeros(n)], axis=1)


def _filament_ring(n=24):
    """A wing's wake lattice holding one closed vortex ring: rows 1 and 2 are the ring's two
    halves (upper half from angle 0 to pi, lower half from 0 to -pi), ring 1 between them
    carries GAMMA; the attached row 0 and its ring carry nothing. The end legs have zero length
    (dropped), so the net vortex lines are the closed ellipse."""
    theta = np.linspace(0.0, np.pi, n + 1)
    half = np.stack([1.2 * np.cos(theta), 0.8 * np.sin(theta), np.zeros(n + 1)], axis=1)
    other = half * [1.0, -1.0, 1.0]
    w = WakeSheet(half, 0.0, WakeSettings(core="lamb-oseen", core_radius=CORE, viscosity=0.0))
    w.rows = np.stack([half, half, other])
    w.row_time = np.zeros(3)
    w.gamma = np.vstack([np.zeros(n), np.full(n, -GAMMA)])
    return w


def _particle_ring(n=48):
    """A particle wake holding the same ring as particles alpha = GAMMA dl; its lattice is one bare row."""
    w = WakeSheet(np.array([[5.0, 0.0, 0.0], [5.0, 1.0, 0.0]]), 0.0,
                  WakeSettings(model="particles", core_radius=CORE, viscosity=0.0))
    p = _ring_points(n)
    nxt = np.roll(p, -1, axis=0)
    w.positions, w.strengths = 0.5 * (p + nxt), GAMMA * (nxt - p)
    w.radii, w.birth = np.full(n, 0.15), np.zeros(n)
    return w


def _helix(turns=3, per_turn=24, pitch=0.6):
    """A rotor blade's far wake holding a helical tip vortex of radius 1 m: ``turns`` turns of
    ``pitch`` m, GAMMA, no inboard trailers, moving freely."""
    te = np.array([[0.0, 0.0, 5.0], [0.0, 0.1, 5.0]])          # a bare, distant sheet row
    w = RolledUpWake(te, 0.0, WakeSettings(core="vatistas2", core_radius=CORE, viscosity=0.0),
                     rollup_steps=1, inboard_trailers=0, tip_last=True, hub=np.zeros(3),
                     axis=np.array([0.0, 0.0, 1.0]), axial_flow=False)
    psi = np.linspace(0.0, 2.0 * np.pi * turns, turns * per_turn + 1)
    w.far = np.stack([np.cos(psi), np.sin(psi), -pitch * psi / (2.0 * np.pi)], axis=1)[:, None, :]
    m = psi.size
    w.far_time, w.far_gamma = np.zeros(m), np.full((m - 1, 1), GAMMA)
    w.far_spread, w.far_ratio = np.zeros((m, 1)), np.zeros((m, 0))
    return w


def _march_to(make, t_end, steps, scheme):
    w = make()
    dt = t_end / steps
    for k in range(steps):
        march([w], k * dt, dt, _self_induced, scheme=scheme)
    return w.state()


def _observed_order(make, t_end, scheme):
    ref = _march_to(make, t_end, 256, INTEGRATORS["rk4"])
    err = [np.max(np.linalg.norm(_march_to(make, t_end, n, scheme) - ref, axis=1)) for n in STEPS]
    slope = np.polyfit(np.log(t_end / np.array(STEPS)), np.log(err), 1)[0]
    return slope, err


# Each case's end time lets the wake deform visibly (the elliptic ring's axes exchange in
# about 2 s at GAMMA = 1; the helix's ends roll up) while 4 steps still resolve the motion.
CASES = {"filament ring": (_filament_ring, 1.0), "particle ring": (_particle_ring, 1.0),
         "helical vortex": (_helix, 1.0)}


@pytest.mark.parametrize("name", list(CASES))
def test_wake_step_is_second_order(name):
    """The wake step's position error falls as dt^p with p >= 1.8 (Heun's method, p = 2)."""
    make, t_end = CASES[name]
    slope, err = _observed_order(make, t_end, HEUN)
    assert slope >= 1.8, (slope, err)
    assert err[-1] < 1e-3          # and it is small: 32 steps put every node within 1 mm


def test_forward_euler_would_be_first_order():
    """The check tells the orders apart: forward Euler, the former wake step, gives p near 1
    on the filament ring and an error at 32 steps over ten times Heun's."""
    make, t_end = CASES["filament ring"]
    slope, err = _observed_order(make, t_end, INTEGRATORS["euler"])
    _, err2 = _observed_order(make, t_end, HEUN)
    assert 0.8 < slope < 1.3, (slope, err)
    assert err[-1] > 10.0 * err2[-1]


def test_ring_moves_along_its_axis_at_the_speed_of_the_discrete_ring():
    """The filament ring's wake translates at its own induced speed: a circular ring marched by
    the wake step moves as far as its initial mean velocity says (a steady translation; Heun's
    method is exact for it up to the ring's slow change of shape, none for a circle)."""
    def circle():
        w = _filament_ring()
        w.rows = w.rows * [1.0 / 1.2, 1.0 / 0.8, 1.0]
        return w
    w = circle()
    u0, _, _ = _self_induced(0.0, [w])
    start = w.state()
    for k in range(10):
        march([w], 0.1 * k, 0.1, _self_induced, scheme=HEUN)
    shift = (w.state() - start)[w.n_span + 1:]
    assert np.allclose(shift, u0[w.n_span + 1:], atol=1e-9)   # 1 s at the initial velocity
    assert np.allclose(shift[:, :2], 0.0, atol=1e-9)                  # along the axis,
    assert np.ptp(shift[:, 2]) < 1e-9 and abs(shift[0, 2]) > 0.1       # every node alike


def test_time_loop_runs_a_free_wing_wake_with_heuns_method(monkeypatch):
    """Through the time loop (provisional shed rows, the wing at t + dt): a free wake behind a
    rectangular wing gives the lift of the forward-Euler wake within 0.5 % (a steady wing's
    lift hardly depends on how its far wake rolls up), with a different wake."""
    case = parse_case({"freestream": {"speed": 10.0, "angle_of_attack": 4.0},
                       "bodies": {"wing": {"type": "wing", "span": 4.0, "chord": 0.5, "spanwise_panels": 8}},
                       "time": {"dt": 0.025, "steps": 16}})
    euler = run_case(case)
    monkeypatch.setitem(march.__kwdefaults__, "scheme", HEUN)
    heun = run_case(case)
    cl = [r.summary["bodies"]["wing"]["CL"] for r in (euler, heun)]
    assert cl[1] == pytest.approx(cl[0], rel=0.005)
    a, b = (np.vstack([f.endpoints()[0] for f in r.wake["wing"] if hasattr(f, "segment_count")]) for r in (euler, heun))
    assert a.shape == b.shape and not np.allclose(a, b, atol=1e-6)
