"""Forces on lifting surfaces: strip loads, Trefftz-plane induced drag, wing coefficients.

Strip forces (per spanwise strip of a surface):

* pressure force, from Kutta--Joukowski on every spanwise bound segment,
  F = rho Gamma_net (V x l), with V the velocity relative to the surface at
  the strip's section point on the segment (freestream, motion and
  everything induced); on a
  vortex lattice plus the unsteady term rho (dGamma_ring/dt) A n of each
  panel (Katz & Plotkin 2001, *Low-Speed Aerodynamics*, 2nd ed., ch. 13).
  A lifting line keeps the quasi-steady Kutta--Joukowski force only, as
  its one-panel d Gamma/dt term would overshoot Wagner's lift further
  (measured at aspect ratio 100: the quasi-steady lift is 13 % above
  Jones's Wagner approximation after one chord of travel, 7 % after two,
  2.5 % after four; the lattice converges to Wagner's function at first
  order in its chordwise panels, see :func:`wakes.verify.check_wagner`);
* profile drag 1/2 rho |V_2D|^2 c c_d w along the local section flow, with
  c_d from the polar at the effective angle of attack and w the strip
  width normal to the chord.

Induced drag is the pressure force along the freestream (near field); the
Trefftz-plane value D_i = -(rho/2) sum Gamma w_n ds (Munk 1921, NACA Report
121) uses the trailed vortices of all wings extended to infinity along the
freestream, with their velocity computed by :func:`wakes.induce`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..induction.api import induce
from ..induction.elements import Filaments

TREFFTZ_LENGTH_SPANS = 1.0e4  # half-length of the "infinite" trailed lines, in spans: (1e-4)^2 error


@dataclass
class StripLoads:
    """Loads of the strips of one surface at one instant (arrays of length n_span).

    Attributes
    ----------
    surface : str
        Surface label.
    eta : ndarray
        Span coordinate of each strip.
    points : ndarray, shape (n, 3)
        Quarter-chord section points [m].
    chord, width : ndarray
        Chord and strip width normal to the chord [m].
    gamma : ndarray
        Total bound circulation of the strip [m^2/s].
    cl, cd : ndarray
        Section lift and profile-drag coefficients.
    alpha_geometric, alpha_effective, alpha_induced : ndarray
        Angle of the onset flow (freestream and motion only), the angle the
        section works at, and their difference [rad].
    speed : ndarray
        Section-plane speed used for the coefficients [m/s].
    force_pressure, force_profile : ndarray, shape (n, 3)
        Forces on each strip [N], global frame.
    flow : ndarray, shape (n, 3), or None
        Velocity of the air relative to the strip in its section plane
        [m/s], global frame: ``speed`` along the direction at the
        effective angle of attack to the chord.
    moment_pressure : ndarray, shape (n, 3), or None
        Moment of each strip's pressure forces about its section point
        [N m], global frame: zero on a lifting line (the force acts on the
        quarter-chord line); on a vortex lattice, from the forces on every
        chordwise panel (Kutta--Joukowski at the bound-segment load points,
        the unsteady term at the ring centres).
    """

    surface: str
    eta: np.ndarray
    points: np.ndarray
    chord: np.ndarray
    width: np.ndarray
    gamma: np.ndarray
    cl: np.ndarray
    cd: np.ndarray
    alpha_geometric: np.ndarray
    alpha_effective: np.ndarray
    alpha_induced: np.ndarray
    speed: np.ndarray
    force_pressure: np.ndarray
    force_profile: np.ndarray
    flow: np.ndarray | None = None
    moment_pressure: np.ndarray | None = None


def _in_plane(v, t, n):
    return np.einsum("ij,ij->i", v, t), np.einsum("ij,ij->i", v, n)


def strip_loads(surface, gamma: np.ndarray, gamma_prev, dt: float, v_load: np.ndarray,
                onset_sections: np.ndarray, density: float, *, ll_alpha=None,
                ll_cl=None, ll_cd=None) -> StripLoads:
    """Loads on the strips of one surface.

    Parameters
    ----------
    surface : LiftingSurface
        The surface.
    gamma : ndarray, shape (n_chord, n_span)
        Ring circulations [m^2/s].
    gamma_prev : ndarray, shape (n_chord, n_span), or None
        Ring circulations one step earlier; None on the first step (the
        unsteady term is then left out: an impulsive start's added-mass
        impulse has no finite value).
    dt : float
        Time step [s].
    v_load : ndarray, shape (n_chord, n_span, 3)
        Velocity relative to the surface at the bound-segment midpoints,
        everything included [m/s].
    onset_sections : ndarray, shape (n_span, 3)
        Freestream minus surface motion at the section points [m/s].
    density : float
        Fluid density [kg/m^3].
    ll_alpha, ll_cl, ll_cd : ndarray, shape (n_span,), optional
        A lifting line's converged angles [rad] and polar coefficients.
    """
    nc, ns = surface.n_chord, surface.n_span
    g = np.asarray(gamma, dtype=np.float64).reshape(nc, ns)
    g_net = np.diff(np.vstack([np.zeros((1, ns)), g]), axis=0)
    lvec = surface.bound_vectors()
    sp = surface.section_points[None]
    f_panels = density * g_net[..., None] * np.cross(v_load, lvec)
    f_press = np.sum(f_panels, axis=0)
    m_press = np.sum(np.cross(surface.bound_midpoints() - sp, f_panels), axis=0)
    if not surface.lifting_line and gamma_prev is not None:
        dg = (g - np.asarray(gamma_prev).reshape(nc, ns)) / dt
        f_panels = density * (dg * surface.areas)[..., None] * surface.normals
        f_press = f_press + np.sum(f_panels, axis=0)
        m_press = m_press + np.sum(np.cross(surface.collocation - sp, f_panels), axis=0)
    t, n = surface.chord_dir, surface.section_normal
    width = np.linalg.norm(np.cross(surface.span_vector, t), axis=1)
    strip_gamma = g[-1]
    ot, on = _in_plane(onset_sections, t, n)
    alpha_geo = np.arctan2(on, ot)
    if surface.lifting_line:
        vt, vn = _in_plane(v_load[0], t, n)
        speed = np.hypot(vt, vn)
        alpha_eff, cl, cd = ll_alpha, ll_cl, ll_cd
    else:
        speed = np.hypot(ot, on)
        cl = 2.0 * strip_gamma / np.maximum(speed * surface.section_chord, 1e-300)
        alpha_eff = surface.polars.alpha_for_cl(cl)
        cd = surface.polars.evaluate(alpha_eff)[1]
    flow_dir = np.cos(alpha_eff)[:, None] * t + np.sin(alpha_eff)[:, None] * n
    f_prof = (0.5 * density * speed ** 2 * surface.section_chord * cd * width)[:, None] * flow_dir
    return StripLoads(surface.name, surface.section_eta.copy(), surface.section_points.copy(),
                      surface.section_chord.copy(), width, strip_gamma.copy(), np.asarray(cl),
                      np.asarray(cd), alpha_geo, np.asarray(alpha_eff), alpha_geo - alpha_eff,
                      speed, f_press, f_prof, speed[:, None] * flow_dir, m_press)


def trefftz_induced_drag(groups, drag_dir: np.ndarray, density: float) -> list[float]:
    """Induced drag of each group of strips from the Trefftz plane.

    Parameters
    ----------
    groups : list of (nodes, strip_gamma, fraction)
        For each surface: its shedding-row nodes (n + 1, 3) [m], its strip
        circulations (n,) [m^2/s] and where along each strip its section
        lies (n,) (0.5: the middle). All groups induce on all (interference).
    drag_dir : ndarray, shape (3,)
        Unit freestream direction.
    density : float
        Fluid density [kg/m^3].

    Returns
    -------
    list of float
        D_i of each group [N], -(rho/2) sum_j Gamma_j (w_j . n_j) |ds_j|,
        with w_j the velocity of the trailed vortices (infinite lines along
        ``drag_dir``) at the section point of strip j projected on the
        Trefftz plane, n_j its unit normal (drag_dir x ds_j).
    """
    e = np.asarray(drag_dir, dtype=np.float64)
    e = e / np.linalg.norm(e)
    projected, gammas, fractions = [], [], []
    for nodes, strip_gamma, fraction in groups:
        p = np.asarray(nodes, dtype=np.float64)
        projected.append(p - np.outer(p @ e, e))
        gammas.append(np.asarray(strip_gamma, dtype=np.float64))
        fractions.append(np.asarray(fraction, dtype=np.float64)[:, None])
    size = max(float(np.max(np.ptp(np.vstack(projected), axis=0))), 1e-300)
    half = TREFFTZ_LENGTH_SPANS * size
    starts, ends, circ = [], [], []
    for p, gam in zip(projected, gammas):
        trailed = np.concatenate([[0.0], gam]) - np.concatenate([gam, [0.0]])  # Gamma_{i-1} - Gamma_i
        starts.append(p - half * e)
        ends.append(p + half * e)
        circ.append(trailed)
    a, b = np.vstack(starts), np.vstack(ends)
    k = a.shape[0]
    lines = Filaments(np.vstack([a, b]), np.stack([np.arange(k), np.arange(k) + k], axis=1),
                      np.concatenate(circ), 1.0, core="singular")
    out = []
    for p, gam, f in zip(projected, gammas, fractions):
        mid = (1.0 - f) * p[:-1] + f * p[1:]
        ds = p[1:] - p[:-1]
        w = induce(lines, mid)
        normal = np.cross(e, ds)  # |normal| = |ds|
        out.append(float(-0.5 * density * np.sum(gam * np.einsum("ij,ij->i", w, normal))))
    return out


def wing_totals(strips: list[StripLoads], *, velocity: np.ndarray, span_axis: np.ndarray,
                density: float, area: float, span: float, trefftz_drag: float,
                moment_reference=None, reference_chord: float | None = None) -> dict:
    """Totals and coefficients of one wing from its strips.

    Parameters
    ----------
    strips : list of StripLoads
        The wing's surfaces' strips.
    velocity : ndarray, shape (3,)
        Freestream velocity [m/s]; drag is along it.
    span_axis : ndarray, shape (3,)
        The wing's body y axis in the global frame; lift is along
        velocity x span_axis (normalised), side force completes the triad.
    density, area, span : float
        rho [kg/m^3], reference area S [m^2], span b [m].
    trefftz_drag : float
        Trefftz-plane induced drag [N].
    moment_reference : array_like, shape (3,), optional
        Point the pitching moment is taken about [m] (default: the origin).
    reference_chord : float, optional
        c_ref for the pitching-moment coefficient [m] (default: S/b).

    Returns
    -------
    dict
        ``lift_N``, ``induced_drag_N``, ``induced_drag_trefftz_N``,
        ``trefftz_difference`` ((near field - Trefftz)/Trefftz),
        ``profile_drag_N``, ``drag_N`` (induced, near field, plus profile),
        ``side_force_N``, ``pitching_moment_Nm``, ``CL``, ``CDi``,
        ``CDi_trefftz``, ``CD0``, ``CD`` = C_Di + C_D0, ``lift_to_drag``
        L/D (NaN without drag), ``CM`` = M/(q S c_ref), ``span_efficiency``
        (near field, C_L^2/(pi AR C_Di)), ``span_efficiency_trefftz``.
        The pitching moment M is about the axis through
        ``moment_reference`` along ``span_axis``, positive nose up (it
        raises the leading edge); the sections' own moments about their
        quarter chord (a cambered section's c_m0) are not modelled.
    """
    speed = float(np.linalg.norm(velocity))
    e_d = velocity / speed
    e_l = np.cross(e_d, span_axis)
    e_l /= np.linalg.norm(e_l)
    e_s = np.cross(e_l, e_d)
    f_p = sum(s.force_pressure.sum(axis=0) for s in strips)
    f_v = sum(s.force_profile.sum(axis=0) for s in strips)
    total = f_p + f_v
    ref = np.zeros(3) if moment_reference is None else np.asarray(moment_reference, dtype=np.float64)
    c_ref = area / span if reference_chord is None else float(reference_chord)
    moment = sum(np.cross(s.points - ref, s.force_pressure + s.force_profile).sum(axis=0)
                 + (0.0 if s.moment_pressure is None else s.moment_pressure.sum(axis=0)) for s in strips)
    pitching = float(moment @ span_axis)
    q = 0.5 * density * speed ** 2
    aspect = span ** 2 / area
    lift = float(total @ e_l)
    d_i = float(f_p @ e_d)
    cl = lift / (q * area)
    cdi = d_i / (q * area)
    cdi_t = trefftz_drag / (q * area)

    def efficiency(cd):
        return cl * cl / (np.pi * aspect * cd) if cd > 0 else float("nan")

    drag = float(total @ e_d)
    return {
        "lift_N": lift,
        "induced_drag_N": d_i,
        "induced_drag_trefftz_N": float(trefftz_drag),
        "trefftz_difference": (d_i - trefftz_drag) / trefftz_drag if trefftz_drag != 0 else float("nan"),
        "profile_drag_N": float(f_v @ e_d),
        "drag_N": drag,
        "side_force_N": float(total @ e_s),
        "pitching_moment_Nm": pitching,
        "CL": cl,
        "CDi": cdi,
        "CDi_trefftz": cdi_t,
        "CD0": float(f_v @ e_d) / (q * area),
        "CD": drag / (q * area),
        "lift_to_drag": lift / drag if drag != 0 else float("nan"),
        "CM": pitching / (q * area * c_ref),
        "span_efficiency": efficiency(cdi),
        "span_efficiency_trefftz": efficiency(cdi_t),
    }
