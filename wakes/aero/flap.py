"""Rigid blade flapping about a hinge: the blade's equation of motion, its time step, its harmonics.

A rotor blade may turn as a rigid body about a flap hinge at the distance
``e`` from the hub centre along its radial line, normal to the blade and to
the axis, restrained by a spring of stiffness K_beta [N m/rad] that is
unloaded at the rest angle beta_p (the case's ``precone``). beta is the
angle of the blade to the disc plane, positive towards +axis. In the frame
turning with the shaft at the rate Omega, the moments about the hinge of a
blade element dm at the distance s from the hinge are its inertia
-s^2 beta'' dm, the centrifugal force Omega^2 (e + s cos beta) dm, along
the radial line, acting at the height s sin beta, and the air loads. With
the flap inertia I_b = int s^2 dm and the first moment S_b = int s dm
about the hinge:

    I_b beta'' + Omega^2 sin(beta) (e S_b + I_b cos(beta)) + K_beta (beta - beta_p) = M_aero,

M_aero the moment of the air forces about the hinge axis (flap up
positive). Linearized about beta = 0 the flap frequency ratio (flap
frequency over Omega) is

    nu_beta^2 = 1 + e S_b / I_b + K_beta / (I_b Omega^2),

the rigid-blade result of Johnson 1980 (*Helicopter Theory*, ch. 9) and
Leishman 2006 (*Principles of Helicopter Aerodynamics*, 2nd ed., ch. 4)
(the form from memory; the terms derived above). The blade's mass is
taken as uniform between the hinge and the tip, L = R - e long, so
S_b = 3 I_b / (2 L) and e S_b / I_b = (3/2) e / (R - e).

The time step is the trapezoidal rule on (beta, beta') -- Newmark's
average-acceleration scheme, second order and without numerical damping
of the free motion (its period is long by about (nu Omega dt)^2/12) --
with the structural moments taken implicitly (a scalar Newton solve per
blade) and the air moment at the end of the step extrapolated linearly from
the last two steps' (the air loads of the new step are not known until its
circulation is solved). The extrapolated air moment keeps the scheme second
order; with the aerodynamic flap damping c (per unit inertia; gamma Omega/8
for a blade of Lock number gamma, Johnson 1980) it is stable while
c dt < 1 (measured on the linear model, see ``tests/aero/test_flap.py``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import NumericalError

NEWTON_TOLERANCE = 1e-14   # |change of beta| [rad] that ends the implicit solve
NEWTON_ITERATIONS = 50
MAX_FLAP_DEG = 60.0        # a flap angle beyond this stops the run (the motion has diverged; ours)


@dataclass(frozen=True)
class FlapHinge:
    """A blade's flap hinge, spring and inertia.

    Parameters
    ----------
    offset : float
        Hinge offset e from the hub centre along the blade's radial line [m].
    spring : float
        Hinge spring K_beta [N m/rad].
    inertia : float
        Flap inertia I_b of the blade about the hinge [kg m^2], positive.
    radius : float
        Tip radius R, along the blade [m], above ``offset``.
    rest_angle : float
        Angle beta_p where the spring is unloaded [rad].

    Examples
    --------
    A uniform blade hinged at 5 % of the radius, no spring:

    >>> h = FlapHinge(offset=0.05, spring=0.0, inertia=2.0, radius=1.0, rest_angle=0.0)
    >>> round(h.frequency_ratio_squared(omega=30.0), 6)   # 1 + 1.5 * 0.05 / 0.95
    1.078947
    """

    offset: float
    spring: float
    inertia: float
    radius: float
    rest_angle: float = 0.0

    @property
    def first_moment(self) -> float:
        """S_b [kg m] of a uniform blade between hinge and tip with inertia I_b: 3 I_b / (2 (R - e))."""
        return 1.5 * self.inertia / (self.radius - self.offset)

    def frequency_ratio_squared(self, omega: float) -> float:
        """nu_beta^2 = 1 + e S_b / I_b + K_beta / (I_b Omega^2) at the rotation rate ``omega`` [rad/s]."""
        return (1.0 + self.offset * self.first_moment / self.inertia
                + self.spring / (self.inertia * omega * omega))

    def structural_moment(self, beta, omega: float):
        """Centrifugal and spring moment about the hinge [N m] at ``beta`` [rad], restoring positive.

        Omega^2 sin(beta) (e S_b + I_b cos(beta)) + K_beta (beta - beta_p).
        """
        beta = np.asarray(beta, dtype=np.float64)
        return (omega * omega * np.sin(beta) * (self.offset * self.first_moment + self.inertia * np.cos(beta))
                + self.spring * (beta - self.rest_angle))

    def structural_stiffness(self, beta, omega: float):
        """d/dbeta of :meth:`structural_moment` [N m/rad]."""
        beta = np.asarray(beta, dtype=np.float64)
        return (omega * omega * (self.offset * self.first_moment * np.cos(beta) + self.inertia * np.cos(2.0 * beta))
                + self.spring)


@dataclass(frozen=True)
class FlapState:
    """The flap angles of a rotor's blades at one time.

    Attributes
    ----------
    time : float
        [s].
    beta : ndarray, shape (B,)
        Flap angle of each blade [rad].
    rate : ndarray, shape (B,)
        d beta / dt [rad/s].
    air_moment : ndarray, shape (B,), or None
        The air's moment about each hinge at the step before [N m] (for
        the extrapolation), None before the first step.
    """

    time: float
    beta: np.ndarray
    rate: np.ndarray
    air_moment: np.ndarray | None = None


def flap_step(hinge: FlapHinge, state: FlapState, air_moment, omega: float, dt: float) -> FlapState:
    """The flap state one step of ``dt`` [s] after ``state``, given the air moment at ``state.time``.

    Trapezoidal rule (module notes): the air moment at the end of the step is
    2 M_n - M_(n-1), or M_n on the first step.

    Parameters
    ----------
    hinge : FlapHinge
    state : FlapState
    air_moment : array_like, shape (B,)
        Moment of the air loads about each hinge at ``state.time`` [N m].
    omega : float
        Rotation rate [rad/s].
    dt : float
        Time step [s].

    Raises
    ------
    NumericalError
        When a blade's flap angle leaves +-``MAX_FLAP_DEG``.

    Examples
    --------
    No air load, no spring, released at 2 deg: the blade swings back
    towards the disc plane.

    >>> h = FlapHinge(offset=0.0, spring=0.0, inertia=1.0, radius=1.0)
    >>> s = FlapState(0.0, np.array([np.radians(2.0)]), np.zeros(1))
    >>> s = flap_step(h, s, np.zeros(1), omega=10.0, dt=0.01)
    >>> bool(0.0 < np.degrees(s.beta[0]) < 2.0), bool(s.rate[0] < 0.0)
    (True, True)
    """
    m_now = np.asarray(air_moment, dtype=np.float64)
    m_next = m_now if state.air_moment is None else 2.0 * m_now - state.air_moment
    inertia = hinge.inertia
    acc = (m_now - hinge.structural_moment(state.beta, omega)) / inertia
    known = state.beta + dt * state.rate + 0.25 * dt * dt * acc
    beta = state.beta + dt * state.rate           # Newton from the explicit guess
    for _ in range(NEWTON_ITERATIONS):
        residual = beta - known - 0.25 * dt * dt * (m_next - hinge.structural_moment(beta, omega)) / inertia
        slope = 1.0 + 0.25 * dt * dt * hinge.structural_stiffness(beta, omega) / inertia
        change = residual / slope
        beta = beta - change
        if np.max(np.abs(change), initial=0.0) <= NEWTON_TOLERANCE:
            break
    acc_next = (m_next - hinge.structural_moment(beta, omega)) / inertia
    rate = state.rate + 0.5 * dt * (acc + acc_next)
    limit = np.radians(MAX_FLAP_DEG)
    if not (np.all(np.isfinite(beta)) and np.all(np.abs(beta) <= limit)):
        worst = int(np.argmax(np.where(np.isfinite(beta), np.abs(beta), np.inf)))
        raise NumericalError(f"blade {worst + 1} flaps to {np.degrees(beta[worst]):.4g} deg at "
                             f"t = {state.time + dt:.6g} s, beyond +-{MAX_FLAP_DEG:g} deg: the flap "
                             "motion has diverged; likely cause: a time step too long for the blade's "
                             "aerodynamic damping (a light blade: raise flap.inertia or lower the "
                             "azimuth step) or a spring too soft for the loads")
    return FlapState(state.time + dt, beta, rate, m_now)


def hinge_moments(strips, hinges: np.ndarray, hinge_axes: np.ndarray) -> np.ndarray:
    """Moment of each blade's air loads about its flap hinge axis [N m], flap up positive.

    Sum over strips of the axis component of (x - x_hinge) x F, F the strip's
    pressure and profile forces at its section point x, plus the axis
    component of the strip's own pressure moment.

    Parameters
    ----------
    strips : list of StripLoads
        One per blade.
    hinges : ndarray, shape (B, 3)
        Hinge points [m].
    hinge_axes : ndarray, shape (B, 3)
        Unit hinge axes, e_r x a for the blade's radial direction e_r and
        the rotor axis a (turning e_r towards +a).

    Examples
    --------
    1 N along +z at 2 m along +x from a hinge at the origin, axis e_r x a = -y:

    >>> from types import SimpleNamespace
    >>> s = SimpleNamespace(points=np.array([[2.0, 0.0, 0.0]]), force_pressure=np.array([[0.0, 0.0, 1.0]]),
    ...                     force_profile=np.zeros((1, 3)), moment_pressure=None)
    >>> hinge_moments([s], np.zeros((1, 3)), np.array([[0.0, -1.0, 0.0]])).tolist()
    [2.0]
    """
    out = np.empty(len(strips))
    for k, s in enumerate(strips):
        f = s.force_pressure + s.force_profile
        moment = np.cross(s.points - hinges[k], f).sum(axis=0)
        if s.moment_pressure is not None:
            moment = moment + s.moment_pressure.sum(axis=0)
        out[k] = float(moment @ hinge_axes[k])
    return out


def flap_harmonics(beta, psi) -> tuple[float, float, float]:
    """Coning and first-harmonic flapping (beta_0, beta_1c, beta_1s) of samples over one revolution.

    The least-squares fit of beta = beta_0 + beta_1c cos psi + beta_1s sin
    psi to the samples ``beta`` at azimuths ``psi`` [rad] (any unit for
    beta; the fit keeps it). Equally spaced samples over a revolution give
    the Fourier coefficients. NaN for all three when the azimuths do not
    determine them (fewer than three distinct ones, or two opposite).

    Examples
    --------
    >>> psi = np.linspace(0.0, 2.0 * np.pi, 12, endpoint=False)
    >>> [round(v, 12) for v in flap_harmonics(3.0 - 1.5 * np.cos(psi) + 0.5 * np.sin(psi), psi)]
    [3.0, -1.5, 0.5]
    """
    beta = np.asarray(beta, dtype=np.float64).ravel()
    psi = np.asarray(psi, dtype=np.float64).ravel()
    basis = np.column_stack([np.ones_like(psi), np.cos(psi), np.sin(psi)])
    coef, _, rank, _ = np.linalg.lstsq(basis, beta, rcond=None)
    if rank < 3:
        return (float("nan"),) * 3
    return float(coef[0]), float(coef[1]), float(coef[2])
