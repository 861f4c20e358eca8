"""Closed-form classical solutions, for users and tests to check vortex codes.

Everything here is plain numpy/scipy and independent of the induction
kernels of :mod:`wakes.induction`, so it can serve as a reference for them.
SI units throughout (any consistent set works); right-handed axes.

Contents
--------
Vortex rings
    :func:`ring_velocity` (field of a thin ring), :func:`ring_speed` (speed
    of a thin ring with a physical core), :func:`ring_speed_particles`
    (speed of a ring of regularized vortex particles), with the constants in
    :data:`RING_CORE_CONSTANTS` and :data:`PARTICLE_RING_CONSTANTS`.
Straight vortices
    :func:`segment_velocity` (singular straight segment),
    :func:`lamb_oseen_velocity` and :func:`lamb_oseen_peak` (diffusing
    line vortex), :data:`LAMB_OSEEN_ALPHA`.
Wings
    :func:`elliptic_wing_lift_slope`, :func:`elliptic_wing_induced_drag`
    (Prandtl's lifting line), :func:`theodorsen` (lift deficiency of
    harmonic motion) and :func:`theodorsen_lift`, :func:`wagner` and :func:`wagner_jones` (indicial lift),
    :func:`sears` (lift in a sinusoidal gust), :func:`kussner` and
    :func:`kussner_sears_sparks` (lift entering a sharp-edged gust),
    :func:`one_minus_cosine_gust_lift` (a one-minus-cosine gust),
    :func:`helmbold_lift_slope` and :func:`chord_line_sweep` (swept and
    tapered wings), :func:`glauert_rectangular_wing` (lifting line of a
    rectangular wing by Glauert's series), :func:`wieselsberger_drag_ratio` and
    :func:`ground_drag_ratio` (a wing near the ground).
Rotors, propellers, turbines
    :func:`hover_induced_velocity`, :func:`hover_ideal_power`,
    :func:`figure_of_merit`, :func:`froude_efficiency`, :data:`BETZ_LIMIT`.

Scalar-parameter functions accept numbers or arrays that broadcast against
each other (numpy rules); they return a ``float`` when every argument is a
scalar and an array of the broadcast shape otherwise.
"""

from __future__ import annotations

import math
from types import MappingProxyType

import numpy as np
from scipy.integrate import quad
from scipy.interpolate import CubicSpline
from scipy.special import elliprd, elliprf, hankel2, j0, j1

from ._validate import as_float_array, choice, positive_scalar
from .errors import InputError
from .induction.smoothing import LAMB_OSEEN_ALPHA

__all__ = [
    "BETZ_LIMIT", "LAMB_OSEEN_ALPHA", "PARTICLE_RING_CONSTANTS", "RING_CORE_CONSTANTS",
    "elliptic_wing_induced_drag", "elliptic_wing_lift_slope", "figure_of_merit",
    "froude_efficiency", "chord_line_sweep", "glauert_rectangular_wing", "ground_drag_ratio",
    "helmbold_lift_slope",
    "hover_ideal_power", "hover_induced_velocity", "wieselsberger_drag_ratio",
    "lamb_oseen_peak", "lamb_oseen_velocity", "ring_speed", "ring_speed_particles",
    "ring_velocity", "segment_velocity", "theodorsen", "theodorsen_lift", "wagner", "wagner_jones",
    "kussner", "kussner_sears_sparks", "sears", "one_minus_cosine_gust_lift",
]

# A target closer than this fraction of the length scale (segment length, ring
# radius) to a singular vortex line gets zero velocity from it: the line
# itself carries no velocity, and 1e-12 keeps the answer finite well above
# float64 round-off (same convention as the library's filament induction).
_ON_LINE_FRACTION = 1e-12

# Betz (1920): the largest power coefficient P/(rho A V^3 / 2) of an ideal
# actuator disk in an unbounded stream.
BETZ_LIMIT = 16.0 / 27.0


# Lamb-Oseen peak-velocity constant, the root of e^a = 1 + 2a (where d u_theta / dr = 0
# in x = r^2/(4 nu t)): the engine's one value (wakes.induction.smoothing).

_EULER_GAMMA = float(np.euler_gamma)
_LN2 = math.log(2.0)

# C in U = Gamma/(4 pi R) [ln(8R/a) + C] for a thin ring of core radius a.
RING_CORE_CONSTANTS = MappingProxyType({
    # Uniform vorticity in a circular core of radius a (Kelvin 1867).
    "uniform": -0.25,
    # Hollow (vorticity-free, stagnant) core of radius a (Hicks 1884; Lamb
    # 1932, Hydrodynamics, 6th ed., art. 163).
    "hollow": -0.5,
    # Gaussian core, vorticity proportional to exp(-s^2/a^2) at distance s from
    # the centre line, a = sqrt(4 nu t) for a diffusing ring (Saffman 1970).
    "gaussian": -(1.0 - _EULER_GAMMA + _LN2) / 2.0,
})

# C in U = Gamma/(4 pi R) [ln(8R/sigma) + C] for a ring of regularized vortex
# particles of smoothing radius sigma, kernels as in wakes.Particles. Derived
# from each kernel's smoothing function q(rho):
# "single": velocity of the centre line, from the regularized Biot-Savart law
#   integrated round a continuous circle of particles;
# "filled": speed of the ring whose vorticity is that of the smoothed circle
#   (Saffman's 1970 thin-ring formula applied to the kernel's swirl profile,
#   h^2/(h^2+s^2) for Rosenhead-Moore, h^2(h^2+2s^2)/(h^2+s^2)^2 for
#   Winckelmans-Leonard, 1 - exp(-h^2/(2 s^2)) for the Gaussian).
PARTICLE_RING_CONSTANTS = MappingProxyType({
    "rosenhead-moore": MappingProxyType({"single": -1.0, "filled": -1.0}),
    "winckelmans-leonard": MappingProxyType({"single": -0.5, "filled": -5.0 / 12.0}),
    "gaussian": MappingProxyType({
        "single": -1.0 - (_LN2 - _EULER_GAMMA) / 2.0,
        # Saffman's Gaussian-core constant with a = sqrt(2) sigma.
        "filled": -(1.0 - _EULER_GAMMA + 2.0 * _LN2) / 2.0,
    }),
})


# ---------------------------------------------------------------- validation

def _real(name: str, value, *, positive: bool = False,
          nonnegative: bool = False) -> np.ndarray:
    """Return ``value`` (a number or an array of any shape) as finite float64."""
    try:
        arr = np.asarray(value, dtype=np.float64)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be a real number or an array of real numbers; "
                         f"got {value!r}") from None

    def where(mask):
        if arr.ndim == 0:
            return f"{name} = {float(arr)!r}"
        idx = tuple(int(i) for i in np.argwhere(mask)[0])
        return f"{name}[{', '.join(map(str, idx))}] = {float(arr[idx])!r}"

    bad = ~np.isfinite(arr)
    if bad.any():
        raise InputError(f"{name} must be finite; {where(bad)}")
    if positive and (arr <= 0).any():
        raise InputError(f"{name} must be positive; {where(arr <= 0)}")
    if nonnegative and (arr < 0).any():
        raise InputError(f"{name} must be zero or positive; {where(arr < 0)}")
    return arr


def _broadcast(**arrays: np.ndarray) -> list[np.ndarray]:
    """Broadcast named arrays together; a mismatch names every argument."""
    try:
        return np.broadcast_arrays(*arrays.values())
    except ValueError:
        shapes = ", ".join(f"{k} {np.shape(v)}" for k, v in arrays.items())
        raise InputError(f"arguments must broadcast to one shape; got {shapes}") from None


def _out(x: np.ndarray):
    """A 0-d result as a Python float, anything else as an array."""
    return float(x) if np.ndim(x) == 0 else x


def _scalar(name: str, value) -> float:
    """A finite real number of any sign."""
    arr = _real(name, value)
    if arr.ndim != 0:
        raise InputError(f"{name} must be a single real number; got an array of shape "
                         f"{arr.shape}")
    return float(arr)


def _direction(name: str, value) -> np.ndarray:
    """A non-zero 3-vector, returned as a unit vector."""
    v = as_float_array(name, value, (3,))
    norm = float(np.linalg.norm(v))
    if norm == 0.0:
        raise InputError(f"{name} must be a non-zero 3-vector; got {tuple(v.tolist())}")
    return v / norm


# ---------------------------------------------------------------- vortex rings

def ring_velocity(points, radius: float, circulation: float, center=(0.0, 0.0, 0.0),
                  axis=(0.0, 0.0, 1.0)) -> np.ndarray:
    """Velocity induced by a thin (singular) circular vortex ring.

    Parameters
    ----------
    points : array_like, shape (M, 3)
        Target points [m].
    radius : float
        Ring radius R [m], positive.
    circulation : float
        Circulation Γ [m²/s], any sign. The vorticity points along +e_θ about
        ``axis`` (right-hand rule), so a positive ring moves along +axis.
    center : array_like, shape (3,), optional
        Centre of the ring [m].
    axis : array_like, shape (3,), optional
        Normal of the ring's plane; any non-zero length.

    Returns
    -------
    numpy.ndarray, shape (M, 3)
        Velocity [m/s]. A point closer than 1e-12 R to the ring line gets
        zero (the singular line carries no velocity of its own, as for the
        filaments of :func:`wakes.induce`); on the axis the radial component
        is exactly zero.

    Notes
    -----
    In the ring's frame (cylindrical r, z), with A = (r+R)² + z²,
    B = (r-R)² + z², m = 4rR/A (Lamb 1932, art. 161)::

        u_z = Γ/(2π√A) [K(m) + (R² - r² - z²)/B · E(m)]
        u_r = Γz/(2πr√A) [-K(m) + (R² + r² + z²)/B · E(m)]

    K and E are evaluated as Carlson's symmetric integrals,
    K = R_F(0, 1-m, 1) and K - E = (m/3) R_D(0, 1-m, 1) (DLMF 19.25.1), with
    1 - m = B/A formed without cancellation. The factor r in K - E then
    cancels the 1/r of u_r exactly::

        u_r = ΓzR/(2π√A) [2E/B - 4R_D/(3A)]

    which is finite and accurate up to and on the axis, where
    u_z = ΓR²/(2(R² + z²)^(3/2)).

    References
    ----------
    Lamb, H. 1932, *Hydrodynamics*, 6th ed., Cambridge, art. 161.
    NIST Digital Library of Mathematical Functions, eq. 19.25.1.

    Examples
    --------
    >>> from wakes import exact
    >>> exact.ring_velocity([[0.0, 0.0, 0.0]], radius=1.0, circulation=2.0)
    array([[0., 0., 1.]])
    """
    pts = as_float_array("points", points, (None, 3))
    big_r = positive_scalar("radius", radius)
    gamma = _scalar("circulation", circulation)
    c = as_float_array("center", center, (3,))
    e_z = _direction("axis", axis)

    d = pts - c
    z = d @ e_z
    radial = d - z[:, None] * e_z
    r = np.linalg.norm(radial, axis=1)

    a2 = (r + big_r) ** 2 + z * z
    b2 = (r - big_r) ** 2 + z * z
    on_line = b2 <= (_ON_LINE_FRACTION * big_r) ** 2
    b2 = np.where(on_line, 1.0, b2)            # placeholder, zeroed below
    m = 4.0 * r * big_r / a2
    y = b2 / a2                                 # 1 - m, free of cancellation
    k_int = elliprf(0.0, y, 1.0)
    rd = elliprd(0.0, y, 1.0)
    e_int = k_int - m / 3.0 * rd
    pre = gamma / (2.0 * np.pi * np.sqrt(a2))
    # K + (R^2 - r^2 - z^2)/B E rewritten as (K - E) + 2R(R - r)E/B.
    u_z = pre * (m / 3.0 * rd + 2.0 * big_r * (big_r - r) * e_int / b2)
    u_r = pre * z * big_r * (2.0 * e_int / b2 - 4.0 * rd / (3.0 * a2))
    u_z[on_line] = 0.0
    u_r[on_line] = 0.0

    with np.errstate(invalid="ignore", divide="ignore"):
        e_r = np.where(r[:, None] > 0.0, radial / r[:, None], 0.0)
    return u_r[:, None] * e_r + u_z[:, None] * e_z


def ring_speed(radius, circulation, core_radius, core: str = "gaussian"):
    """Self-induced speed of a thin vortex ring with a physical core.

    U = Γ/(4πR) [ln(8R/a) + C], along +axis for positive circulation (the
    convention of :func:`ring_velocity`).

    Parameters
    ----------
    radius : float or array_like
        Ring radius R [m], positive.
    circulation : float or array_like
        Circulation Γ [m²/s], any sign.
    core_radius : float or array_like
        Core radius a [m], positive and smaller than ``radius``.
    core : {"gaussian", "uniform", "hollow"}
        Vorticity in the core cross-section, at distance s from its centre:

        - "gaussian": ω ∝ exp(-s²/a²); a = √(4νt) for a ring diffusing from a
          line; C = -(1 - γ_E + ln 2)/2 ≈ -0.5579658 (Saffman 1970);
        - "uniform": constant ω for s < a; C = -1/4 (Kelvin 1867);
        - "hollow": no vorticity inside s < a; C = -1/2 (Hicks 1884; Lamb
          1932, art. 163).

    Returns
    -------
    float or numpy.ndarray
        Speed U [m/s], of the broadcast shape of the inputs.

    Notes
    -----
    Leading-order asymptotics in a/R: the neglected terms are
    O((a/R)² ln(R/a)) relative. Constants are in :data:`RING_CORE_CONSTANTS`.

    References
    ----------
    Thomson, W. (Lord Kelvin) 1867, The translatory velocity of a circular
    vortex ring, Phil. Mag.
    Hicks, W. M. 1884, On the steady motion and small vibrations of a hollow
    vortex, Phil. Trans. R. Soc.
    Lamb, H. 1932, *Hydrodynamics*, 6th ed., Cambridge, art. 163.
    Saffman, P. G. 1970, The velocity of viscous vortex rings, Stud. Appl.
    Math. 49, 371-380.

    Examples
    --------
    >>> from wakes import exact
    >>> round(exact.ring_speed(1.0, 1.0, 0.1, core="uniform"), 6)
    0.328816
    """
    constant = RING_CORE_CONSTANTS[choice("core", core, RING_CORE_CONSTANTS)]
    return _thin_ring_speed(radius, circulation, "core_radius", core_radius, constant)


def ring_speed_particles(radius, circulation, smoothing_radius,
                         kernel: str = "gaussian", *, filled: bool = False):
    """Self-induced speed of a vortex ring built from regularized particles.

    U = Γ/(4πR) [ln(8R/σ) + C], along +axis for positive circulation, for
    the kernels of :class:`wakes.Particles` with smoothing radius σ.

    Parameters
    ----------
    radius : float or array_like
        Ring radius R [m], positive.
    circulation : float or array_like
        Circulation Γ [m²/s], any sign.
    smoothing_radius : float or array_like
        Particle smoothing radius σ [m], positive and smaller than ``radius``.
    kernel : {"gaussian", "winckelmans-leonard", "rosenhead-moore"}
        Smoothing kernel; the Gaussian is ζ ∝ exp(-ρ²/2), ρ = |x|/σ.
    filled : bool, optional
        False (default): the speed of one circle of particles on the centre
        line, each moving with the regularized velocity at its centre
        (C = -1 - (ln 2 - γ_E)/2 ≈ -1.0579658 Gaussian, -1/2
        Winckelmans-Leonard, -1 Rosenhead-Moore).
        True: the speed of the vorticity field that circle represents, as a
        core filled with several layers of much finer particles would move
        (C ≈ -0.9045393 Gaussian, i.e. Saffman's constant with a = √2 σ;
        -5/12 Winckelmans-Leonard; -1 Rosenhead-Moore).

    Returns
    -------
    float or numpy.ndarray
        Speed U [m/s], of the broadcast shape of the inputs.

    Notes
    -----
    Derived here from each kernel's smoothing function q(ρ): "single" by
    integrating the regularized Biot-Savart law round a continuous circle,
    "filled" from Saffman's (1970) thin-ring formula
    C = -1/2 + lim [∫₀^X g(x)²/x dx - ln X] with the swirl profile g of a
    straight line of particles. Constants are in
    :data:`PARTICLE_RING_CONSTANTS`. The formula is leading-order in σ/R
    (about 0.2 % from the exact continuous-circle integral at σ/R = 0.1),
    and a discrete circle approaches the continuous one only with overlap:
    at σ/R = 0.1 a spacing of σ/2 is within 1e-4 for all three kernels,
    a spacing of σ is 1 % off for Winckelmans-Leonard (direct sums).

    References
    ----------
    Saffman, P. G. 1970, The velocity of viscous vortex rings, Stud. Appl.
    Math. 49, 371-380.
    Winckelmans, G. S. & Leonard, A. 1993, Contributions to vortex particle
    methods for the computation of three-dimensional incompressible
    unsteady flows, J. Comput. Phys. 109, 247-273.

    Examples
    --------
    >>> from wakes import exact
    >>> round(exact.ring_speed_particles(1.0, 1.0, 0.1, "rosenhead-moore"), 6)
    0.269133
    """
    name = choice("kernel", kernel, PARTICLE_RING_CONSTANTS)
    if not isinstance(filled, (bool, np.bool_)):
        raise InputError(f"filled must be True or False; got {filled!r}")
    constant = PARTICLE_RING_CONSTANTS[name]["filled" if filled else "single"]
    return _thin_ring_speed(radius, circulation, "smoothing_radius", smoothing_radius,
                            constant)


def _thin_ring_speed(radius, circulation, core_name: str, core_radius, constant: float):
    big_r = _real("radius", radius, positive=True)
    gamma = _real("circulation", circulation)
    a = _real(core_name, core_radius, positive=True)
    big_r, gamma, a = _broadcast(radius=big_r, circulation=gamma, **{core_name: a})
    thick = a >= big_r
    if thick.any():
        i = np.unravel_index(np.argmax(thick), thick.shape)
        raise InputError(f"{core_name} must be smaller than radius for a thin ring; "
                         f"got {core_name} = {float(a[i])!r} with radius = {float(big_r[i])!r}")
    return _out(gamma / (4.0 * np.pi * big_r) * (np.log(8.0 * big_r / a) + constant))


# ---------------------------------------------------------------- straight vortices

def segment_velocity(points, start, end, circulation: float) -> np.ndarray:
    """Velocity induced by a singular straight vortex segment.

    Parameters
    ----------
    points : array_like, shape (M, 3)
        Target points x [m].
    start, end : array_like, shape (3,)
        End points A and B [m]; the vorticity points from A to B.
    circulation : float
        Circulation Γ [m²/s], any sign.

    Returns
    -------
    numpy.ndarray, shape (M, 3)
        Velocity [m/s]. Points closer than 1e-12 |B - A| to the segment's
        line (including its extension and the end points) get zero.

    Notes
    -----
    With r1 = x - A, r2 = x - B, r0 = B - A (Katz & Plotkin 2001)::

        u = Γ/(4π) (r1 × r2)/|r1 × r2|² · r0·(r1/|r1| - r2/|r2|)

    References
    ----------
    Katz, J. & Plotkin, A. 2001, *Low-Speed Aerodynamics*, 2nd ed.,
    Cambridge University Press (straight vortex segment).

    Examples
    --------
    >>> from wakes import exact
    >>> u = exact.segment_velocity([[0.5, 1.0, 0.0]], (0, 0, 0), (1, 0, 0), 1.0)
    >>> round(float(u[0, 2]), 8)
    0.07117625
    """
    pts = as_float_array("points", points, (None, 3))
    a = as_float_array("start", start, (3,))
    b = as_float_array("end", end, (3,))
    gamma = _scalar("circulation", circulation)
    r0 = b - a
    length2 = float(r0 @ r0)
    if length2 == 0.0:
        raise InputError(f"end must differ from start; both are {tuple(a.tolist())}")

    r1 = pts - a
    r2 = pts - b
    cross = np.cross(r1, r2)
    cross2 = np.einsum("ij,ij->i", cross, cross)
    on_line = cross2 <= _ON_LINE_FRACTION ** 2 * length2 * length2
    n1 = np.linalg.norm(r1, axis=1)
    n2 = np.linalg.norm(r2, axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        w = r1 @ r0 / n1 - r2 @ r0 / n2
        factor = gamma / (4.0 * np.pi) * w / cross2
    factor[on_line] = 0.0
    return factor[:, None] * cross


def lamb_oseen_velocity(r, circulation, viscosity, time):
    """Swirl velocity of a Lamb-Oseen vortex (a diffusing line vortex).

    u_θ = Γ/(2πr) (1 - exp(-r²/(4νt))), evaluated with ``expm1`` so it stays
    accurate near the axis, where u_θ → Γr/(8πνt) and u_θ(0) = 0.

    Parameters
    ----------
    r : float or array_like
        Distance from the vortex axis [m], zero or positive.
    circulation : float or array_like
        Circulation Γ [m²/s], any sign; u_θ follows the right-hand rule.
    viscosity : float or array_like
        Kinematic viscosity ν [m²/s], positive.
    time : float or array_like
        Time t [s] since the vortex was a line, positive.

    Returns
    -------
    float or numpy.ndarray
        u_θ [m/s], of the broadcast shape of the inputs.

    References
    ----------
    Lamb, H. 1932, *Hydrodynamics*, 6th ed., Cambridge.
    Oseen, C. W. 1911, Über Wirbelbewegung in einer reibenden Flüssigkeit,
    Ark. Mat. Astron. Fys. 7.

    Examples
    --------
    >>> from wakes import exact
    >>> exact.lamb_oseen_velocity(0.0, 1.0, 1e-5, 1.0)
    0.0
    """
    r_arr = _real("r", r, nonnegative=True)
    gamma = _real("circulation", circulation)
    nu = _real("viscosity", viscosity, positive=True)
    t = _real("time", time, positive=True)
    r_arr, gamma, nu, t = _broadcast(r=r_arr, circulation=gamma, viscosity=nu, time=t)
    with np.errstate(invalid="ignore", divide="ignore"):
        u = -gamma / (2.0 * np.pi * r_arr) * np.expm1(-r_arr * r_arr / (4.0 * nu * t))
    return _out(np.where(r_arr > 0.0, u, 0.0))


def lamb_oseen_peak(circulation, viscosity, time):
    """Radius and value of the peak swirl velocity of a Lamb-Oseen vortex.

    The swirl peaks where r² = α·4νt, with α = :data:`LAMB_OSEEN_ALPHA` the
    positive root of 1 + 2α = e^α (≈ 1.2564312), so r_peak ≈ 1.1209064 √(4νt)
    and u_peak = 2√α/(1 + 2α) · Γ/(2π√(4νt)) ≈ 0.6381727 Γ/(2π√(4νt)).

    Parameters
    ----------
    circulation : float or array_like
        Circulation Γ [m²/s], any sign (the peak value carries its sign).
    viscosity : float or array_like
        Kinematic viscosity ν [m²/s], positive.
    time : float or array_like
        Time t [s], positive.

    Returns
    -------
    radius : float or numpy.ndarray
        Radius of the peak [m].
    speed : float or numpy.ndarray
        u_θ at that radius [m/s].

    References
    ----------
    Devenport, W. J., Rife, M. C., Liapis, S. I. & Follin, G. J. 1996, The
    structure and development of a wing-tip vortex, J. Fluid Mech. 312,
    67-106 (α = 1.25643).

    Examples
    --------
    >>> from wakes import exact
    >>> r, u = exact.lamb_oseen_peak(1.0, 0.25, 1.0)
    >>> round(r, 7)
    1.1209064
    """
    gamma = _real("circulation", circulation)
    nu = _real("viscosity", viscosity, positive=True)
    t = _real("time", time, positive=True)
    gamma, nu, t = _broadcast(circulation=gamma, viscosity=nu, time=t)
    scale = np.sqrt(4.0 * nu * t)
    alpha = LAMB_OSEEN_ALPHA
    radius = math.sqrt(alpha) * scale
    speed = 2.0 * math.sqrt(alpha) / (1.0 + 2.0 * alpha) * gamma / (2.0 * np.pi * scale)
    return _out(radius), _out(speed)


# ---------------------------------------------------------------- wings

def elliptic_wing_lift_slope(aspect_ratio, a0=2.0 * np.pi):
    """Lift-curve slope of an elliptically loaded wing (Prandtl's lifting line).

    C_Lα = a₀/(1 + a₀/(π AR)).

    Parameters
    ----------
    aspect_ratio : float or array_like
        AR = b²/S, positive.
    a0 : float or array_like, optional
        Section lift-curve slope [1/rad], positive; 2π (thin airfoil) by
        default.

    Returns
    -------
    float or numpy.ndarray
        C_Lα [1/rad].

    References
    ----------
    Prandtl, L. 1918, Tragflügeltheorie I, Nachr. Ges. Wiss. Göttingen.
    Anderson, J. D., *Fundamentals of Aerodynamics*, McGraw-Hill, ch. 5.

    Examples
    --------
    >>> from wakes import exact
    >>> round(exact.elliptic_wing_lift_slope(6.0), 6)
    4.712389
    """
    ar = _real("aspect_ratio", aspect_ratio, positive=True)
    a0_arr = _real("a0", a0, positive=True)
    ar, a0_arr = _broadcast(aspect_ratio=ar, a0=a0_arr)
    return _out(a0_arr / (1.0 + a0_arr / (np.pi * ar)))


def elliptic_wing_induced_drag(lift_coefficient, aspect_ratio):
    """Induced-drag coefficient of an elliptically loaded wing, C_Di = C_L²/(π AR).

    The minimum for a planar wing of that span (span efficiency e = 1).

    Parameters
    ----------
    lift_coefficient : float or array_like
        C_L, any sign.
    aspect_ratio : float or array_like
        AR = b²/S, positive.

    Returns
    -------
    float or numpy.ndarray
        C_Di.

    References
    ----------
    Prandtl, L. 1918, Tragflügeltheorie I, Nachr. Ges. Wiss. Göttingen.
    Anderson, J. D., *Fundamentals of Aerodynamics*, McGraw-Hill, ch. 5.

    Examples
    --------
    >>> from wakes import exact
    >>> round(exact.elliptic_wing_induced_drag(0.5, 8.0), 8)
    0.00994718
    """
    cl = _real("lift_coefficient", lift_coefficient)
    ar = _real("aspect_ratio", aspect_ratio, positive=True)
    cl, ar = _broadcast(lift_coefficient=cl, aspect_ratio=ar)
    return _out(cl * cl / (np.pi * ar))


def wagner_jones(s):
    """R. T. Jones's approximation of Wagner's indicial lift function.

    Φ(s) = 1 - 0.165 e^(-0.0455 s) - 0.335 e^(-0.3 s): the fraction of the
    steady 2-D lift reached after a sudden start, Φ(0) = 1/2, Φ(∞) = 1.

    Parameters
    ----------
    s : float or array_like
        Distance travelled in half-chords, s = 2Vt/c, zero or positive.

    Returns
    -------
    float or numpy.ndarray
        Φ(s), dimensionless.

    References
    ----------
    Jones, R. T. 1940, The unsteady lift of a wing of finite aspect ratio,
    NACA Report 681.

    Examples
    --------
    >>> from wakes import exact
    >>> round(exact.wagner_jones(0.0), 12)
    0.5
    """
    s_arr = _real("s", s, nonnegative=True)
    return _out(1.0 - 0.165 * np.exp(-0.0455 * s_arr) - 0.335 * np.exp(-0.3 * s_arr))

def theodorsen(k):
    """Theodorsen's lift-deficiency function C(k) of a thin aerofoil in harmonic motion.

    C(k) = H1(k) / (H1(k) + i H0(k)), with H_n = H_n^(2) the Hankel functions
    of the second kind: the ratio of the circulatory lift to its quasi-steady
    value, C(0) = 1, C(∞) = 1/2.

    Parameters
    ----------
    k : float or array_like
        Reduced frequency k = ω c / (2 V), positive.

    Returns
    -------
    complex or numpy.ndarray of complex
        C(k) = F(k) + i G(k) (G < 0: the lift lags).

    References
    ----------
    Theodorsen, T. 1935, General theory of aerodynamic instability and the
    mechanism of flutter, NACA Report 496.

    Examples
    --------
    >>> from wakes import exact
    >>> c = exact.theodorsen(0.1)        # tabulated F = 0.8319, G = -0.1723 (memory)
    >>> round(c.real, 4), round(c.imag, 4)
    (0.8319, -0.1723)
    """
    k_arr = _real("k", k, positive=True)
    h1, h0 = hankel2(1, k_arr), hankel2(0, k_arr)
    c = h1 / (h1 + 1j * h0)
    return complex(c) if np.ndim(c) == 0 else c


def theodorsen_lift(k, *, plunge=0.0, pitch=0.0, axis: float = -0.5):
    """Lift of a thin aerofoil in harmonic plunge and pitch (Theodorsen 1935), as a complex amplitude.

    For the motion z = ĥ e^(iωt) (plunge, up positive) and θ = θ̂ e^(iωt)
    (pitch, nose up, about the axis ``axis`` semichords behind mid-chord), the
    lift coefficient (on the chord) is C_L = Λ e^(iωt) with

        Λ = (ĥ/b) (π k² - 2π i k C) + θ̂ [π (i k + a k²) + 2π C (1 + (1/2 - a) i k)],

    C = C(k) (:func:`theodorsen`), b the semichord, the first terms of each
    bracket the non-circulatory (added-mass) lift. Theodorsen's plunge h is
    down positive; here it is taken up, as a wing's z axis points.

    Parameters
    ----------
    k : float
        Reduced frequency ω b / V, positive.
    plunge : complex
        Plunge amplitude over the semichord, ĥ/b (its phase in its argument).
    pitch : complex
        Pitch amplitude θ̂ [rad].
    axis : float
        Pitch axis a, in semichords behind mid-chord (-1/2: the quarter chord).

    Returns
    -------
    complex
        Λ: |Λ| the lift coefficient's amplitude, arg Λ its phase [rad] ahead
        of the motion.

    References
    ----------
    Theodorsen, T. 1935, General theory of aerodynamic instability and the
    mechanism of flutter, NACA Report 496.

    Examples
    --------
    >>> from wakes import exact
    >>> lam = exact.theodorsen_lift(1e-6, pitch=0.01)      # quasi-steady: 2 pi theta
    >>> round(abs(lam), 6)
    0.062832
    """
    kk = float(_real("k", k, positive=True))
    a = float(_real("axis", axis))
    c = theodorsen(kk)
    h, th = complex(plunge), complex(pitch)
    return (h * (math.pi * kk ** 2 - 2j * math.pi * kk * c)
            + th * (math.pi * (1j * kk + a * kk ** 2) + 2.0 * math.pi * c * (1.0 + (0.5 - a) * 1j * kk)))


def _wagner_integrand(k: float) -> float:
    """F(k)/k, F the real part of Theodorsen's function."""
    return float(np.real(theodorsen(k))) / k


def _step_response(integrand, s: float) -> float:
    """(2/π) ∫_0^∞ integrand(k) sin(k s) dk for one s > 0: adaptive quadrature to k = 1, then
    a Fourier integral (the indicial response of a frequency response, integrand = Re/k)."""
    near, _ = quad(lambda k: integrand(k) * math.sin(k * s), 0.0, 1.0, limit=200, epsabs=1e-12)
    far, _ = quad(integrand, 1.0, np.inf, weight="sin", wvar=s, limlst=200, epsabs=1e-12)
    return 2.0 / math.pi * (near + far)


def _wagner_one(s: float) -> float:
    """Φ(s) of one s >= 0 (Φ(0) = 1/2, the limit from above)."""
    return 0.5 if s == 0.0 else _step_response(_wagner_integrand, s)


def wagner(s):
    """Wagner's indicial lift function, computed from Theodorsen's function.

    Φ(s) = (2/π) ∫_0^∞ F(k)/k sin(k s) dk, F = Re C(k) (:func:`theodorsen`):
    the circulatory lift of a thin aerofoil after a sudden start (or a step
    in angle of attack) as a fraction of its steady value, Φ(0) = 1/2,
    Φ(∞) = 1. The integral is taken by adaptive quadrature (the part past
    k = 1 as a Fourier integral); two forms of it, the sine form here and
    the cosine form 1 + (2/π) ∫ G(k)/k cos(k s) dk, agree to 1e-11 for
    0 < s <= 200 (ours).

    Parameters
    ----------
    s : float or array_like
        Distance travelled in half-chords, s = 2Vt/c, zero or positive.

    Returns
    -------
    float or numpy.ndarray
        Φ(s), dimensionless.

    References
    ----------
    Wagner, H. 1925, Über die Entstehung des dynamischen Auftriebes von
    Tragflügeln, Z. angew. Math. Mech. 5; the Fourier relation to
    Theodorsen's function: Garrick, I. E. 1938, On some reciprocal relations
    in the theory of nonstationary flows, NACA Report 629 (memory).
    R. T. Jones's exponential approximation is :func:`wagner_jones`.

    Examples
    --------
    >>> from wakes import exact
    >>> round(exact.wagner(1.0), 4), round(exact.wagner_jones(1.0), 4)
    (0.6006, 0.5942)
    """
    s_arr = _real("s", s, nonnegative=True)
    out = np.vectorize(_wagner_one, otypes=[np.float64])(s_arr)
    return _out(out)


def sears(k):
    """Sears's function S(k): the lift of a thin aerofoil in a sinusoidal vertical gust.

    S(k) = [J0(k) - i J1(k)] C(k) + i J1(k), C(k) Theodorsen's function
    (:func:`theodorsen`): for a gust w = ŵ e^(iω(t - x/V)) frozen in the
    flow, x measured from mid-chord, the lift coefficient (on the chord) is
    C_L = 2π (ŵ/V) S(k) e^(iωt), the whole lift (there is no separate
    added-mass part). S(0) = 1; |S| falls as 1/sqrt(2πk).

    Parameters
    ----------
    k : float or array_like
        Reduced frequency k = ω c / (2 V), positive.

    Returns
    -------
    complex or numpy.ndarray of complex
        S(k), the phase referred to the gust at mid-chord.

    References
    ----------
    Sears, W. R. 1941, Some aspects of non-stationary airfoil theory and
    its practical application, J. Aeronaut. Sci. 8 (3).

    Examples
    --------
    >>> from wakes import exact
    >>> round(abs(exact.sears(1e-6)), 4), round(abs(exact.sears(1e4)) * (2 * np.pi * 1e4) ** 0.5, 3)
    (1.0, 1.0)
    """
    k_arr = _real("k", k, positive=True)
    s = (j0(k_arr) - 1j * j1(k_arr)) * theodorsen(k_arr) + 1j * j1(k_arr)
    return complex(s) if np.ndim(s) == 0 else s


def _kussner_integrand(k: float) -> float:
    """Re[S(k) e^(-ik)]/k: Sears's function referred to the gust at the leading edge, over k."""
    return float(np.real(sears(k) * np.exp(-1j * k))) / k


def _kussner_one(s: float) -> float:
    """ψ(s) of one s >= 0."""
    return 0.0 if s == 0.0 else _step_response(_kussner_integrand, s)


def kussner(s):
    """Küssner's function: the lift of a thin aerofoil entering a sharp-edged gust.

    A vertical gust of velocity w, frozen in the flow, whose front reaches
    the leading edge at s = 0, gives the lift C_L = 2π (w/V) ψ(s); ψ(0) = 0,
    ψ(∞) = 1. Computed as a step response from Sears's function
    (:func:`sears`) referred to the leading edge,

        ψ(s) = (2/π) ∫_0^∞ Re[S(k) e^(-ik)]/k sin(k s) dk,

    by adaptive quadrature (the part past k = 1 as a Fourier integral), as
    :func:`wagner` is from Theodorsen's function. The cosine form
    1 + (2/π) ∫ Im[S e^(-ik)]/k cos(k s) dk, which equals it only for a
    response that starts when the gust reaches the leading edge, agrees to
    1e-11 for 0 < s <= 60 (ours); near the start ψ follows sqrt(2s)/π, the
    step response of S's high-frequency limit e^(i(k - π/4))/sqrt(2πk)
    (derived).

    Parameters
    ----------
    s : float or array_like
        Distance the gust front has travelled past the leading edge, in
        half-chords, s = 2Vt/c, zero or positive.

    Returns
    -------
    float or numpy.ndarray
        ψ(s), dimensionless.

    References
    ----------
    Küssner, H. G. 1936, Schwingungen von Flugzeugflügeln, Luftfahrtforschung
    13; Sears, W. R. 1941, J. Aeronaut. Sci. 8 (3). Sears & Sparks's
    exponential approximation is :func:`kussner_sears_sparks`.

    Examples
    --------
    >>> from wakes import exact
    >>> round(exact.kussner(2.0), 4), round(exact.kussner_sears_sparks(2.0), 4)
    (0.5508, 0.5468)
    """
    s_arr = _real("s", s, nonnegative=True)
    return _out(np.vectorize(_kussner_one, otypes=[np.float64])(s_arr))


def kussner_sears_sparks(s):
    """Sears & Sparks's exponential approximation of Küssner's function.

    ψ(s) = 1 - 0.5 e^(-0.13 s) - 0.5 e^(-s) (from memory), ψ(0) = 0, ψ(∞) = 1.
    It departs from :func:`kussner` by up to 0.095 of the final lift, near
    s = 0.2, and by 0.04 at s = 1 (measured).

    Parameters
    ----------
    s : float or array_like
        Distance the gust front has travelled past the leading edge, in
        half-chords, zero or positive.

    Returns
    -------
    float or numpy.ndarray
        The approximate ψ(s).

    References
    ----------
    Sears, W. R. & Sparks, B. O. 1941, On the reaction of an elastic wing
    to vertical gusts, J. Aeronaut. Sci. 9 (2).

    Examples
    --------
    >>> from wakes import exact
    >>> exact.kussner_sears_sparks(0.0)
    0.0
    """
    s_arr = _real("s", s, nonnegative=True)
    return _out(1.0 - 0.5 * np.exp(-0.13 * s_arr) - 0.5 * np.exp(-s_arr))


def one_minus_cosine_gust_lift(s, length, *, samples: int = 400, nodes: int = 41):
    """Lift of a thin aerofoil in a one-minus-cosine gust, by Duhamel's integral of Küssner's function.

    The gust's velocity at the leading edge is w(σ) = (ŵ/2)(1 - cos(2πσ/g))
    for 0 <= σ <= g (σ the distance its front has travelled past the leading
    edge, g its length, both in half-chords), zero outside; the lift is
    C_L(s) = 2π (ŵ/V) ∫_0^s (dw/dσ / ŵ) ψ(s - σ) dσ, ψ = :func:`kussner`.
    The integral is taken by the midpoint rule on ``samples`` intervals of
    the gust, with ψ interpolated by a cubic spline in sqrt(s) through
    ``nodes`` values (ψ grows as sqrt(s) from the start, so it is smooth in
    that variable). With the defaults the result lies within 5e-5 of that
    with four times the samples and eight times the nodes (measured, g = 10,
    0 <= s <= 40; the midpoint rule's error, at the kink of ψ at the start,
    is most of it).

    Parameters
    ----------
    s : float or array_like
        Distance the gust front has travelled past the leading edge, in
        half-chords, zero or positive.
    length : float
        Gust length g, in half-chords, positive.
    samples : int
        Intervals of the gust in the midpoint rule.
    nodes : int
        Values of ψ the spline passes through.

    Returns
    -------
    float or numpy.ndarray
        C_L / (2π ŵ/V), dimensionless.

    Examples
    --------
    >>> from wakes import exact
    >>> lift = exact.one_minus_cosine_gust_lift([6.0, 100.0], 10.0)    # peak, and long after the gust
    >>> lift.round(3).tolist()
    [0.633, 0.001]
    """
    s_arr = _real("s", s, nonnegative=True)
    g = positive_scalar("length", length)
    n, m = int(samples), int(nodes)
    if n < 1 or m < 4:
        raise InputError(f"samples must be at least 1 and nodes at least 4; got {samples!r}, {nodes!r}")
    sigma = (np.arange(n) + 0.5) * (g / n)
    weight = math.pi / g * np.sin(2.0 * math.pi * sigma / g) * (g / n)   # (dw/dσ)/ŵ dσ
    lag = s_arr.reshape(-1, 1) - sigma[None, :]
    top = float(np.max(lag, initial=0.0))
    if top <= 0.0:
        return _out(np.zeros(s_arr.shape))
    root = np.linspace(0.0, math.sqrt(top), m)
    spline = CubicSpline(root, kussner(root ** 2))
    psi = np.where(lag > 0.0, spline(np.sqrt(np.maximum(lag, 0.0))), 0.0)
    return _out((psi @ weight).reshape(s_arr.shape))


def glauert_rectangular_wing(aspect_ratio: float, a0: float = 2.0 * np.pi, terms: int = 40):
    """Lift-curve slope and induced-drag factor of an untwisted rectangular wing by Glauert's series.

    Prandtl's lifting-line equation solved with the circulation as a sine
    series, Γ = 2bV Σ A_n sin nθ, y = -(b/2) cos θ (Glauert 1926); for a
    rectangular wing μ = c a₀/(4b) = a₀/(4A) and the equation at each
    collocation angle θ_i reads

        Σ A_n sin nθ_i (n μ + sin θ_i) = μ α sin θ_i,

    over odd n (symmetric loading), collocated at θ_i = (i + ½) π/(2N),
    i = 0..N-1. Then C_L = π A A₁ and C_Di = C_L²/(π A) (1 + δ) with
    δ = Σ_{n>1} n (A_n/A₁)². The series converges fast: 40 terms give δ to
    1e-6 at A = 10.

    Parameters
    ----------
    aspect_ratio : float
        A = b/c, positive.
    a0 : float, optional
        Section lift-curve slope [1/rad], positive; 2π by default.
    terms : int, optional
        Odd terms of the series N, at least 1.

    Returns
    -------
    lift_slope : float
        C_Lα [1/rad].
    delta : float
        Induced-drag factor δ; the span efficiency is 1/(1 + δ).

    References
    ----------
    Glauert, H. 1926, *The Elements of Aerofoil and Airscrew Theory*,
    Cambridge, ch. XI (the method; the values here are computed, not read
    from his tables).

    Examples
    --------
    >>> from wakes import exact
    >>> slope, delta = exact.glauert_rectangular_wing(6.0)
    >>> round(slope, 4), round(delta, 4)
    (4.5304, 0.0483)
    """
    ar = positive_scalar("aspect_ratio", aspect_ratio)
    slope0 = positive_scalar("a0", a0)
    if not (isinstance(terms, (int, np.integer)) and terms >= 1):
        raise InputError(f"terms must be a whole number of at least 1; got {terms!r}")
    n = 2.0 * np.arange(terms) + 1.0
    theta = (np.arange(terms) + 0.5) * np.pi / (2.0 * terms)
    mu = slope0 / (4.0 * ar)
    matrix = np.sin(np.outer(theta, n)) * (mu * n[None, :] + np.sin(theta)[:, None])
    a = np.linalg.solve(matrix, mu * np.sin(theta))
    return float(np.pi * ar * a[0]), float(np.sum(n[1:] * (a[1:] / a[0]) ** 2))



def helmbold_lift_slope(aspect_ratio, sweep_deg=0.0):
    """Lift-curve slope of a thin wing at low speed by the Helmbold–Diederich formula.

    C_Lα = 2π A / (2 + √(A² (1 + tan²Λ) + 4)), thin sections (a₀ = 2π) at
    M = 0. Helmbold (1942) gave it for unswept (elliptic) wings; Diederich's
    extension adds the sweep Λ, which later use (the USAF DATCOM form) takes
    at the half chord, so that a straight taper is accounted for in part
    (:func:`chord_line_sweep` moves a sweep to the half chord).

    Parameters
    ----------
    aspect_ratio : float or array_like
        A = b²/S, positive.
    sweep_deg : float or array_like, optional
        Sweep Λ of the half-chord line [deg], between -90 and 90 (exclusive).

    Returns
    -------
    float or numpy.ndarray
        C_Lα [1/rad].

    Notes
    -----
    Stated accuracy: against lifting-surface theory for 80 planforms, the
    formula with the half-chord sweep has a maximum error "not much more than
    10 %", with some bias (ESDU TM 169, *Wing lift-curve slope in inviscid
    subsonic flow: improvements to the Helmbold-Diederich equation*;
    from its published abstract).

    References
    ----------
    Helmbold, H. B. 1942, Der unverwundene Ellipsenflügel als tragende
    Fläche, Jahrbuch der deutschen Luftfahrtforschung (from memory).
    Diederich, F. W. 1951, A plan-form parameter for correlating certain
    aerodynamic characteristics of swept wings, NACA TN 2335 (from memory).

    Examples
    --------
    >>> from wakes import exact
    >>> round(exact.helmbold_lift_slope(6.0), 4)
    4.5287
    >>> round(exact.helmbold_lift_slope(6.0, 45.0), 4)
    3.5174
    """
    ar = _real("aspect_ratio", aspect_ratio, positive=True)
    sweep = _real("sweep_deg", sweep_deg)
    if (np.abs(sweep) >= 90.0).any():
        raise InputError(f"sweep_deg must lie between -90 and 90 deg; got {sweep_deg!r}")
    ar, sweep = _broadcast(aspect_ratio=ar, sweep_deg=sweep)
    tan2 = np.tan(np.radians(sweep)) ** 2
    return _out(2.0 * np.pi * ar / (2.0 + np.sqrt(ar * ar * (1.0 + tan2) + 4.0)))


def chord_line_sweep(sweep_deg, aspect_ratio, taper, from_fraction=0.25, to_fraction=0.5):
    """Sweep of another chord-fraction line of a straight-tapered wing.

    tan Λ_n = tan Λ_m - (4/A) (n - m) (1 - λ)/(1 + λ), the plain geometry of
    a trapezoidal half wing of taper λ = c_tip/c_root.

    Parameters
    ----------
    sweep_deg : float or array_like
        Sweep of the line at chord fraction m [deg].
    aspect_ratio : float or array_like
        A = b²/S, positive.
    taper : float or array_like
        λ = c_tip/c_root, zero or positive.
    from_fraction, to_fraction : float, optional
        m and n, fractions of the chord from the leading edge (0.25 and 0.5:
        quarter chord to half chord).

    Returns
    -------
    float or numpy.ndarray
        Sweep of the line at n [deg].

    Examples
    --------
    >>> from wakes import exact
    >>> round(exact.chord_line_sweep(0.0, 4.0, 0.5), 4)   # unswept quarter chord, taper 1/2
    -4.7636
    """
    sweep = _real("sweep_deg", sweep_deg)
    ar = _real("aspect_ratio", aspect_ratio, positive=True)
    lam = _real("taper", taper, nonnegative=True)
    sweep, ar, lam = _broadcast(sweep_deg=sweep, aspect_ratio=ar, taper=lam)
    shift = 4.0 / ar * (float(to_fraction) - float(from_fraction)) * (1.0 - lam) / (1.0 + lam)
    return _out(np.degrees(np.arctan(np.tan(np.radians(sweep)) - shift)))


WIESELSBERGER_RANGE = (0.033, 0.25)
"""Heights over span h/b for which :func:`wieselsberger_drag_ratio` is given (from memory)."""


def wieselsberger_drag_ratio(height_over_span):
    """Induced drag near the ground over that in free air, same lift: Wieselsberger's approximation.

    D_i,ground / D_i,free = 1 - σ with σ = (1 - 1.32 h/b)/(1.05 + 7.4 h/b):
    the ground's image makes the wing a biplane of gap 2h, and σ is Prandtl's
    biplane interference factor of two elliptically loaded wings at that gap,
    written as a fit for 0.033 <= h/b <= 0.25 (:data:`WIESELSBERGER_RANGE`).

    Parameters
    ----------
    height_over_span : float or array_like
        Height of the lifting line above the ground over the span, within
        :data:`WIESELSBERGER_RANGE`.

    Returns
    -------
    float or numpy.ndarray
        The drag ratio, dimensionless.

    Notes
    -----
    No accuracy is stated with the fit in the sources we remember; within its
    range it lies within 0.4 % of the image theory it fits, evaluated exactly
    by :func:`ground_drag_ratio` (tests/validation/test_ground_effect.py).

    References
    ----------
    Wieselsberger, C. 1922, Wing resistance near the ground, NACA TM 77
    (translated from Z. Flugtech. Motorluftschiff. 12); the fit as quoted by
    McCormick, B. W. 1979, *Aerodynamics, Aeronautics and Flight Mechanics*,
    Wiley (both from memory).

    Examples
    --------
    >>> from wakes import exact
    >>> round(exact.wieselsberger_drag_ratio(0.1), 4)
    0.5151
    """
    hb = _real("height_over_span", height_over_span, positive=True)
    low, high = WIESELSBERGER_RANGE
    if ((hb < low) | (hb > high)).any():
        raise InputError(f"height_over_span must lie within the fit's range {low} to {high}; got "
                         f"{height_over_span!r} (use ground_drag_ratio elsewhere)")
    return _out(1.0 - (1.0 - 1.32 * hb) / (1.05 + 7.4 * hb))


def ground_drag_ratio(height_over_span, nodes: int = 400):
    """Induced drag near the ground over that in free air of an elliptic loading held fixed.

    The image theory Wieselsberger's fit approximates, evaluated by
    quadrature: a lifting line with Γ(y) = Γ₀ √(1 - (2y/b)²) at height h, its
    mirror image (circulation -Γ) at -h, and the mutual induced drag of the
    two in the Trefftz plane (Munk 1921, NACA Report 121). With y = (b/2)
    cos ψ and η = (b/2) cos φ,

        σ = -(2/π²) ∫∫ sin²ψ cos φ c/(c² + δ²) dφ dψ,  c = cos ψ - cos φ,
        δ = 4h/b,

    and the ratio is 1 - σ (σ → 1 as h → 0, the δ → 0 limit of the
    double integral being -π²/2). The midpoint rule on the periodic
    integrand converges fast: 400 nodes give 1e-6.

    Parameters
    ----------
    height_over_span : float or array_like
        h/b, positive.
    nodes : int, optional
        Midpoint-rule nodes in each of ψ and φ.

    Returns
    -------
    float or numpy.ndarray
        The drag ratio at equal lift, dimensionless.

    References
    ----------
    Wieselsberger, C. 1922, Wing resistance near the ground, NACA TM 77
    (from memory); Prandtl's biplane theory (derived here).

    Examples
    --------
    >>> from wakes import exact
    >>> round(exact.ground_drag_ratio(0.1), 4)
    0.5158
    """
    hb = _real("height_over_span", height_over_span, positive=True)
    n = int(positive_scalar("nodes", nodes))
    if n < 2 or n != nodes:
        raise InputError(f"nodes must be a whole number of at least 2; got {nodes!r}")
    t = (np.arange(n) + 0.5) * np.pi / n
    cos_t, sin2_t = np.cos(t), np.sin(t) ** 2
    diff = cos_t[:, None] - cos_t[None, :]               # (ψ, φ)
    weight = sin2_t[:, None] * cos_t[None, :] * diff
    out = np.empty(hb.shape)
    for index, h in np.ndenumerate(hb):
        delta2 = (4.0 * h) ** 2
        sigma = -(2.0 / np.pi ** 2) * float(np.sum(weight / (diff * diff + delta2))) * (np.pi / n) ** 2
        out[index] = 1.0 - sigma
    return _out(out)


# ---------------------------------------------------------------- rotors and propellers

def hover_induced_velocity(thrust, density, disk_area):
    """Induced velocity at an ideal hovering rotor disk, v_i = √(T/(2ρA)).

    Parameters
    ----------
    thrust : float or array_like
        Thrust T [N], zero or positive.
    density : float or array_like
        Air density ρ [kg/m³], positive.
    disk_area : float or array_like
        Disk area A = πR² [m²], positive.

    Returns
    -------
    float or numpy.ndarray
        v_i [m/s].

    References
    ----------
    Rankine-Froude actuator-disk momentum theory; Leishman, J. G. 2006,
    *Principles of Helicopter Aerodynamics*, 2nd ed., Cambridge, ch. 2.

    Examples
    --------
    >>> from wakes import exact
    >>> exact.hover_induced_velocity(2000.0, 1.0, 10.0)
    10.0
    """
    t, rho, area = _hover_inputs(thrust, density, disk_area)
    return _out(np.sqrt(t / (2.0 * rho * area)))


def hover_ideal_power(thrust, density, disk_area):
    """Ideal (induced) power of a hovering rotor, P = T v_i = T^(3/2)/√(2ρA).

    Parameters
    ----------
    thrust : float or array_like
        Thrust T [N], zero or positive.
    density : float or array_like
        Air density ρ [kg/m³], positive.
    disk_area : float or array_like
        Disk area A = πR² [m²], positive.

    Returns
    -------
    float or numpy.ndarray
        P [W].

    References
    ----------
    Leishman, J. G. 2006, *Principles of Helicopter Aerodynamics*, 2nd ed.,
    Cambridge, ch. 2.

    Examples
    --------
    >>> from wakes import exact
    >>> exact.hover_ideal_power(2000.0, 1.0, 10.0)
    20000.0
    """
    t, rho, area = _hover_inputs(thrust, density, disk_area)
    return _out(t * np.sqrt(t / (2.0 * rho * area)))


def _hover_inputs(thrust, density, disk_area):
    t = _real("thrust", thrust, nonnegative=True)
    rho = _real("density", density, positive=True)
    area = _real("disk_area", disk_area, positive=True)
    return _broadcast(thrust=t, density=rho, disk_area=area)


def figure_of_merit(thrust_coefficient, power_coefficient):
    """Hover figure of merit, FM = C_T^(3/2)/(√2 C_P).

    The ratio of ideal (momentum-theory) to actual power, with
    C_T = T/(ρA(ΩR)²) and C_P = P/(ρA(ΩR)³).

    Parameters
    ----------
    thrust_coefficient : float or array_like
        C_T, zero or positive.
    power_coefficient : float or array_like
        C_P, positive.

    Returns
    -------
    float or numpy.ndarray
        FM, dimensionless (≤ 1 for a real rotor).

    References
    ----------
    Leishman, J. G. 2006, *Principles of Helicopter Aerodynamics*, 2nd ed.,
    Cambridge, ch. 2.

    Examples
    --------
    >>> from wakes import exact
    >>> round(exact.figure_of_merit(0.0046, 0.00030), 4)
    0.7354
    """
    ct = _real("thrust_coefficient", thrust_coefficient, nonnegative=True)
    cp = _real("power_coefficient", power_coefficient, positive=True)
    ct, cp = _broadcast(thrust_coefficient=ct, power_coefficient=cp)
    return _out(ct ** 1.5 / (math.sqrt(2.0) * cp))


def froude_efficiency(thrust_coefficient, advance_ratio):
    """Ideal propulsive efficiency of a propeller (actuator-disk momentum theory).

    η_ideal = 2/(1 + √(1 + 8C_T/(πJ²))), with C_T = T/(ρn²D⁴) and J = V/(nD);
    no propeller of that thrust, speed and diameter does better.

    Parameters
    ----------
    thrust_coefficient : float or array_like
        C_T = T/(ρn²D⁴), zero or positive.
    advance_ratio : float or array_like
        J = V/(nD), zero or positive.

    Returns
    -------
    float or numpy.ndarray
        η_ideal, between 0 and 1: 0 at J = 0 with thrust, 1 at C_T = 0.

    References
    ----------
    Froude, R. E. 1889, On the part played in propulsion by differences of
    fluid pressure, Trans. Inst. Naval Archit. 30.

    Examples
    --------
    >>> from wakes import exact
    >>> exact.froude_efficiency(0.0, 0.8)
    1.0
    """
    ct = _real("thrust_coefficient", thrust_coefficient, nonnegative=True)
    j = _real("advance_ratio", advance_ratio, nonnegative=True)
    ct, j = _broadcast(thrust_coefficient=ct, advance_ratio=j)
    # Multiplied through by J so that J = 0 gives 0 without dividing by zero;
    # only C_T = J = 0 is 0/0, and zero thrust costs no loss: eta = 1.
    with np.errstate(invalid="ignore"):
        eta = 2.0 * j / (j + np.sqrt(j * j + 8.0 * ct / np.pi))
    return _out(np.where(ct == 0.0, 1.0, eta))
