"""Bound circulation of lifting surfaces: nonlinear lifting line and vortex lattice together.

The unknowns are the ring circulations of every surface. Each ring has one
equation, posed at its evaluation point with the velocity seen there,
V = V_onset + A Gamma, where V_onset is the freestream minus the surface's
own motion plus everything the wakes induce, and A is the influence matrix
of the rings (:func:`wakes.aero.vortex_lattice.influence_matrix`):

* lifting-line strip (one chordwise panel, quarter-chord point):
  Gamma = 1/2 |V_2D| c cl(alpha, M), with V_2D the velocity in the section
  plane, alpha = atan2(V.n, V.t) and M = |V_2D| / a the local Mach number
  when the surface's polars know the speed of sound a (M = 0 otherwise)
  (Prandtl's lifting line with section polars; e.g. Phillips & Snyder 2000,
  J. Aircraft 37);
* vortex-lattice panel (three-quarter point): flow tangency V.n = 0
  (Weissinger's rule, exact for a 2-D flat plate by Pistolesi's theorem).

Past stall, where a strip's lift slope dcl/dalpha is negative, the
lifting-line equations are ill-posed (many solutions, short spanwise waves
not damped; Sears 1956, J. Aeronautical Sciences). There, and only there,
a strip's equation gains a spanwise artificial viscosity, as Chattot
proposed (Chattot 2004, AIAA paper 2004-0220; Chattot & Hafez 2015,
Theoretical and Applied Aerodynamics, ch. 6; used by Gallay & Laurendeau
2015, J. Aircraft 52; all from memory):

    Gamma_j - 1/2 |V_2D| c cl - mu_j (Gamma_j+1 - 2 Gamma_j + Gamma_j-1) = 0,

with Gamma = 0 beyond a surface's ends (tips, a rotor blade's root) and,
our choice of the size, mu_j = c_j m(-dcl/dalpha) / (2 pi ds_j), ds_j
the strip's width: the size of the term c cl' / (2 pi ds) that the two
trailing legs of an isolated strip add to its own equation, so a stalled
strip keeps the diagonal it would have on a rising lift curve of the same
slope. m(x) = max(0, x) but rounded over 0 < x < :data:`STALL_RAMP`
(:func:`falling_slope`), so mu_j grows from zero with a continuous
derivative as a strip passes cl_max (a kink there makes Newton cycle).
mu_j is exactly zero where dcl/dalpha >= 0, so solves whose iterates never
meet a falling lift curve are unchanged. The term is a
second difference, of order ds Gamma'' (Chattot), and vanishes as the
strips refine. mu_j is taken at the solve's starting guess (in a time
march the previous step's circulation) and held through the solve, so each
solve is one smooth system and Newton converges quadratically; the
viscosity lags the state by one step, and in a march to a steady state the
two settle together. A solve not converged after 10 iterations takes mu at
the iterate reached and goes on (every 10 iterations): a strip attached at
the start and stalled now has mu = 0 at first, and its equation on the
falling lift curve may have no nearby solution without it. (Taken at each iterate instead and held fixed only in
the Jacobian, mu_j moved with every iterate on a strip past cl_max, the
iterates flipped it between two values and the solve converged linearly
or not at all: the demo lift rotor edgewise at 10 m/s on the NACA 0012
stopped at step 4, measured 2026-12-05.) On a
piecewise-linear table whose slope turns from rising to falling at one
node (a corner at cl_max) mu_j jumps there, and a strip that settles on
that corner may not converge; the Viterna-Corrigan extension joins a
table smoothly (:mod:`wakes.aero.post_stall`), so its cl_max is round.

Where a strip's section flow comes from its trailing edge or almost
vanishes (the reverse-flow region of a rotor's retreating blade in
edgewise flight, and the sections next to it) the lifting-line equation
has no unique solution: the strip's own trailing legs induce a section
velocity as large as the onset flow, so the angle of attack can swing
through 180 degrees between iterates. There the section is treated as the
comprehensive rotor analyses treat the reverse-flow region (Johnson 1980,
*Helicopter Theory*, ch. 5, the section aerodynamics in reversed flow;
memory): its lift comes from the polar at the angle the onset flow makes
with the chord, the reversed angle past +-90 degrees (for a
Viterna-Corrigan table the forward section at the supplementary angle,
:mod:`wakes.aero.post_stall`), without the strip's equation feeling the
rings' own induction:

    Gamma_j = 1/2 c |V_onset,2D| cl(alpha_onset),

an explicit value, so no iteration can diverge there. With
u = V_onset . t / (eps q_ref), eps = :data:`WEAK_ONSET` and q_ref the
surface's strongest onset section speed (a rotor blade's tip speed
against the flow), a strip is explicit for u <= 1 (the flow from the
trailing edge is u < 0), coupled as above for u >= 2, and in between its
equation blends the two with the weight w = 3 x^2 - 2 x^3, x = 2 - u, so
the circulation does not jump as a strip moves in and out of the region
(our choice of the band; the strips in it carry loads of order eps^2 of
the blade's, and their share of a rotor's loads vanishes with eps).
Attached, forward-flow strips (u >= 2, every strip of a wing in a
freestream and of a rotor in hover) are unchanged.

The system is solved by Newton's method with an analytic Jacobian, each
step scaled by the under-relaxation factor and halved while the residual
grows. It stops when every scaled residual is below the tolerance:
lifting-line residuals are divided by 1/2 c |V_onset,2D| (the circulation
at cl = 1), tangency residuals by |V_onset|. Purely vortex-lattice systems
are linear and converge in one step.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass

import numpy as np
from scipy.linalg import LinAlgWarning, lu_factor, lu_solve

from ..errors import NumericalError
from .polars import PolarRangeError

_BACKTRACK_HALVINGS = 8
_VISCOSITY_REFRESH = 10     # Newton iterations after which an unconverged solve takes mu at its iterate
#: Falling lift slope [1/rad] over which the artificial viscosity reaches its full size (ours; numerical).
STALL_RAMP = 1.0
#: Onset flow along the chord below this fraction of the surface's strongest onset: explicit strips (our choice).
WEAK_ONSET = 0.05


def falling_slope(dcl):
    """The falling part of a lift slope, m(-dcl/dalpha), and dm/d(-dcl/dalpha) (module notes).

    m(x) = 0 for x <= 0, x^2 / (2 d) up to d = :data:`STALL_RAMP`, x - d/2
    beyond: zero on a rising lift curve and continuous in slope, so the
    artificial viscosity does not switch on with a kink at cl_max.

    Examples
    --------
    >>> import numpy as np
    >>> m, dm = falling_slope(np.array([1.0, -0.5, -3.0]))
    >>> [round(float(x), 3) for x in m], [round(float(x), 3) for x in dm]
    ([0.0, 0.125, 2.5], [0.0, 0.5, 1.0])
    """
    x = -np.asarray(dcl, dtype=np.float64)
    d = STALL_RAMP
    m = np.where(x <= 0.0, 0.0, np.where(x < d, 0.5 * x * x / d, x - 0.5 * d))
    return m, np.clip(x / d, 0.0, 1.0)


def explicit_weight(vt, q_ref):
    """Weight w (0 to 1) of a strip's explicit equation (module notes), shape of ``vt``.

    Parameters
    ----------
    vt : ndarray
        Onset velocity along the chord, leading to trailing edge [m/s].
    q_ref : float or ndarray
        The surface's strongest onset section speed [m/s].

    Examples
    --------
    >>> import numpy as np
    >>> [round(float(w), 3) for w in explicit_weight(np.array([-3.0, 0.25, 0.75, 1.0, 50.0]), 10.0)]
    [1.0, 1.0, 0.5, 0.0, 0.0]
    """
    band = WEAK_ONSET * np.asarray(q_ref, dtype=np.float64)
    u = np.asarray(vt, dtype=np.float64) / np.where(band > 0.0, band, 1.0)
    x = np.clip(2.0 - u, 0.0, 1.0)
    w = x * x * (3.0 - 2.0 * x)
    return np.where(band > 0.0, w, 1.0)


@dataclass(frozen=True)
class SolverSettings:
    """Convergence controls of the circulation solve.

    Parameters
    ----------
    tolerance : float
        Largest scaled residual accepted (see module notes).
    max_iterations : int
        Newton iterations allowed per time step.
    relaxation : float
        Under-relaxation factor on each Newton step, 0 < relaxation <= 1.
    """

    tolerance: float = 1e-6
    max_iterations: int = 50
    relaxation: float = 1.0


@dataclass
class CirculationSolution:
    """Result of one solve.

    Attributes
    ----------
    gamma : list of ndarray, each (n_chord, n_span)
        Ring circulations per surface [m^2/s].
    velocity : ndarray, shape (N, 3)
        Velocity relative to the surfaces at every evaluation point [m/s].
    alpha : ndarray, shape (N,)
        Section angle of attack at lifting-line points [rad] (NaN elsewhere).
    cl, cd : ndarray, shape (N,)
        Polar coefficients at lifting-line points (NaN elsewhere).
    iterations : int
        Newton iterations used.
    residual : float
        Final largest scaled residual.
    """

    gamma: list
    velocity: np.ndarray
    alpha: np.ndarray
    cl: np.ndarray
    cd: np.ndarray
    iterations: int
    residual: float


class _System:
    """Residual and Jacobian of the stacked equations of all surfaces."""

    def __init__(self, surfaces, aic, onset):
        self.surfaces = surfaces
        self.aic = aic
        self.onset = onset
        n = onset.shape[0]
        self.ll = np.zeros(n, dtype=bool)
        self.t = np.zeros((n, 3))
        self.nrm = np.zeros((n, 3))
        self.chord = np.ones(n)
        self.width = np.ones(n)
        self.left = np.full(n, -1, dtype=np.int64)
        self.right = np.full(n, -1, dtype=np.int64)
        self.owner = np.zeros(n, dtype=np.int64)
        self.offsets = []
        k = 0
        for si, s in enumerate(surfaces):
            m = s.n_unknowns
            self.offsets.append(k)
            self.owner[k:k + m] = si
            if s.lifting_line:
                self.ll[k:k + m] = True
                self.t[k:k + m] = s.chord_dir
                self.nrm[k:k + m] = s.section_normal
                self.chord[k:k + m] = s.section_chord
                self.width[k:k + m] = np.linalg.norm(s.span_vector, axis=1)
                self.left[k + 1:k + m] = np.arange(k, k + m - 1)
                self.right[k:k + m - 1] = np.arange(k + 1, k + m)
            else:
                self.nrm[k:k + m] = s.normals.reshape(-1, 3)
            k += m
        vt0 = np.einsum("ij,ij->i", onset, self.t)
        vn0 = np.einsum("ij,ij->i", onset, self.nrm)
        v2d = np.hypot(vt0, vn0)
        speed = np.linalg.norm(onset, axis=1)
        scale = np.where(self.ll, 0.5 * self.chord * v2d, speed)
        floor = 1e-12 * max(float(scale.max(initial=0.0)), 1e-300)
        self.scale = np.maximum(scale, floor)
        # the explicit equation of strips in reversed or vanishing section flow (module notes)
        q_ref = np.zeros(n)
        for si, o in enumerate(self.offsets):
            mine = slice(o, o + surfaces[si].n_unknowns)
            q_ref[mine] = float(v2d[mine].max(initial=0.0))
        self.weight = np.where(self.ll, explicit_weight(vt0, q_ref), 0.0)
        self.coupled = 1.0 - self.weight
        self.alpha0 = np.arctan2(vn0, vt0)
        self.gamma0 = np.zeros(n)
        self.cl0 = np.full(n, np.nan)
        self.cd0 = np.full(n, np.nan)
        if (self.weight > 0.0).any():
            # every strip of a surface with one: a polar evaluates a surface's strips together;
            # strips without weight use only cl0 * 0 (their onset angle may lie outside a table)
            ll = self.ll
            cl0, cd0, _, _ = self._polars(self.alpha0[ll], v2d[ll], only=self.weight[ll] > 0.0)
            self.cl0[ll], self.cd0[ll] = cl0, cd0
            self.gamma0[ll] = self.weight[ll] * 0.5 * self.chord[ll] * v2d[ll] * np.nan_to_num(cl0)

    def evaluate(self, gamma, jacobian: bool, viscosity=None):
        """Scaled residual (N,), Jacobian (N, N) or None, and the section state.

        ``viscosity`` (N,) fixes the artificial viscosity mu (module notes);
        None takes it from the state ``gamma``. The Jacobian holds mu fixed.
        """
        v = self.onset + np.einsum("ikn,n->ik", self.aic, gamma)
        n = gamma.shape[0]
        res = np.empty(n)
        alpha = np.full(n, np.nan)
        cl = np.full(n, np.nan)
        cd = np.full(n, np.nan)
        jac = np.empty((n, n)) if jacobian else None
        vlm = ~self.ll
        if vlm.any():
            res[vlm] = np.einsum("ij,ij->i", v[vlm], self.nrm[vlm])
            if jacobian:
                jac[vlm] = np.einsum("ij,ijn->in", self.nrm[vlm], self.aic[vlm])
        if self.ll.any():
            ll = self.ll
            vt = np.einsum("ij,ij->i", v[ll], self.t[ll])
            vn = np.einsum("ij,ij->i", v[ll], self.nrm[ll])
            q = np.hypot(vt, vn)
            a = np.arctan2(vn, vt)
            k = self.coupled[ll]
            cl_l, cd_l, dcl, dcl_dq = self._coupled_polars(a, q, k > 0.0)
            c = self.chord[ll]
            res[ll] = gamma[ll] - k * 0.5 * c * q * cl_l - self.gamma0[ll]
            # explicit strips report the section state their equation used: the onset flow's
            explicit = k == 0.0
            alpha[ll] = np.where(explicit, self.alpha0[ll], a)
            cl[ll] = np.where(explicit, self.cl0[ll], cl_l)
            cd[ll] = np.where(explicit, self.cd0[ll], cd_l)
            mu = self._viscosity_at_slope(dcl) if viscosity is None else viscosity[ll]
            stalled = mu > 0.0
            if jacobian:
                qs = np.maximum(q, 1e-300)
                dq = (vt[:, None] * self.t[ll] + vn[:, None] * self.nrm[ll]) / qs[:, None]
                da = (vt[:, None] * self.nrm[ll] - vn[:, None] * self.t[ll]) / (qs * qs)[:, None]
                # Gamma = c q cl(alpha, q / a) / 2: the Mach number moves with the speed q too
                dgam_dv = 0.5 * (k * c)[:, None] * ((cl_l + q * dcl_dq)[:, None] * dq + (q * dcl)[:, None] * da)
                jl = -np.einsum("ij,ijn->in", dgam_dv, self.aic[ll])
                jl[np.arange(jl.shape[0]), np.flatnonzero(ll)] += 1.0
                if stalled.any():
                    self._add_viscosity_jacobian(jl, mu, np.flatnonzero(ll))
                jac[ll] = jl
            if stalled.any():
                res[ll] -= mu * self._second_difference(gamma)[ll]
        res /= self.scale
        if jacobian:
            jac /= self.scale[:, None]
        return res, jac, v, alpha, cl, cd

    def viscosity(self, gamma):
        """Artificial viscosity mu (N,) of every strip at the state ``gamma`` (zero off the lifting lines)."""
        mu = np.zeros(gamma.shape[0])
        if self.ll.any():
            ll = self.ll
            v = self.onset[ll] + np.einsum("ikn,n->ik", self.aic[ll], gamma)
            vt = np.einsum("ij,ij->i", v, self.t[ll])
            vn = np.einsum("ij,ij->i", v, self.nrm[ll])
            dcl = self._coupled_polars(np.arctan2(vn, vt), np.hypot(vt, vn), self.coupled[ll] > 0.0)[2]
            mu[ll] = self._viscosity_at_slope(dcl)
        return mu

    def _viscosity_at_slope(self, dcl):
        """mu (n_ll,) of the lifting-line strips at lift slopes ``dcl`` [1/rad] (module notes)."""
        ll = self.ll
        return self.coupled[ll] * self.chord[ll] * falling_slope(dcl)[0] / (2.0 * np.pi * self.width[ll])

    def _second_difference(self, gamma):
        """Gamma_j+1 - 2 Gamma_j + Gamma_j-1 along each lifting line's span, Gamma = 0 beyond its ends."""
        ext = np.append(gamma, 0.0)            # index -1 reads the zero beyond an end
        return ext[self.left] - 2.0 * gamma + ext[self.right]

    def _add_viscosity_jacobian(self, jl, mu, rows):
        """Add d(-mu_j (Gamma_j+1 - 2 Gamma_j + Gamma_j-1))/dGamma to the lifting-line rows ``jl``, mu held fixed."""
        r = np.arange(rows.shape[0])
        jl[r, rows] += 2.0 * mu
        for nb in (self.left[rows], self.right[rows]):
            has = nb >= 0
            jl[r[has], nb[has]] -= mu[has]

    def _coupled_polars(self, alpha, speed, coupled):
        """:meth:`_polars` on the strips whose equation has a coupled part (bool ``coupled``), zeros elsewhere.

        An explicit strip's polar is not evaluated at its iterate's angle,
        which may lie outside a table that its onset angle is inside.
        """
        if coupled.all():
            return self._polars(alpha, speed)
        return tuple(np.where(coupled, x, 0.0) for x in self._polars(alpha, speed, only=coupled))

    def _polars(self, alpha, speed, only=None):
        """Evaluate each lifting-line surface's polars on its own strips at their speeds [m/s].

        Returns cl, cd, dcl/dalpha [1/rad] and dcl/dspeed [s/m] (the Mach
        number's share; zero for low-speed polars). With ``only`` (bool, one
        per lifting-line strip) a surface none of whose strips is selected is
        skipped, and every strip not selected gets NaN.
        """
        cl, cd, dcl, dcl_dq = (np.full_like(alpha, np.nan) for _ in range(4))
        k = 0
        for s in self.surfaces:
            if not s.lifting_line:
                continue
            m = s.n_unknowns
            sl = slice(k, k + m)
            if only is not None and not only[sl].any():
                k += m
                continue
            a = alpha[sl] if only is None else np.where(only[sl], alpha[sl], 0.0)
            try:
                cl[sl], cd[sl], dcl[sl], dcl_dq[sl] = s.polars.evaluate_at_speed(a, speed[sl])
            except PolarRangeError as exc:
                raise PolarRangeError(f"surface '{s.name}', strip {exc.index} "
                                      f"(eta = {s.section_eta[exc.index]:.3f}): {exc}",
                                      exc.index, exc.alpha_deg, exc.mach) from None
            if only is not None:
                for x in (cl, cd, dcl, dcl_dq):
                    x[sl] = np.where(only[sl], x[sl], np.nan)
            k += m
        return cl, cd, dcl, dcl_dq


class LinearCache:
    """LU factors of a purely vortex-lattice system, kept while its influence matrix is unchanged."""

    def __init__(self):
        self._aic = None
        self._lu = None

    def factors(self, aic: np.ndarray, jacobian_of):
        if self._aic is not aic:
            with warnings.catch_warnings():
                warnings.simplefilter("error", LinAlgWarning)
                try:
                    self._lu = lu_factor(jacobian_of())
                except (LinAlgWarning, ValueError) as exc:   # exactly singular, or not finite
                    raise NumericalError(
                        f"the vortex-lattice equations cannot be solved ({exc}); likely cause: "
                        "panels that coincide or have almost no size, e.g. a chord or span "
                        "thousands of times the other, or two surfaces on top of each other; "
                        "remedy: check the bodies' chord, span, panel counts and positions") from None
            self._aic = aic
        return self._lu


def solve_circulation(surfaces, aic: np.ndarray, onset: np.ndarray, gamma0: np.ndarray,
                      settings: SolverSettings, *, step: int = 0, time: float = 0.0,
                      linear_cache: LinearCache | None = None) -> CirculationSolution:
    """Solve for the ring circulations of all ``surfaces`` at one instant.

    Parameters
    ----------
    surfaces : list of LiftingSurface
        In the order of the unknowns.
    aic : ndarray, shape (N, 3, N)
        Influence of unit rings at the evaluation points.
    onset : ndarray, shape (N, 3)
        Velocity at the evaluation points without the rings' own induction,
        relative to the surface [m/s].
    gamma0 : ndarray, shape (N,)
        Starting guess (the previous step's solution) [m^2/s].
    settings : SolverSettings
        Tolerance, iteration limit, under-relaxation.
    step, time : int, float
        For error messages.
    linear_cache : LinearCache, optional
        Reuses the LU factors of a purely vortex-lattice (linear) system
        while ``aic`` is the same array object.

    Raises
    ------
    wakes.errors.NumericalError
        If the iteration does not converge.
    wakes.aero.polars.PolarRangeError
        If a section angle leaves its polar table (message names the
        surface, strip, step and time).
    """
    try:
        system = _System(surfaces, aic, onset)
    except PolarRangeError as exc:
        raise PolarRangeError(f"{exc} at step {step} (t = {time:.6g} s)", exc.index, exc.alpha_deg,
                              exc.mach) from None
    gamma = np.asarray(gamma0, dtype=np.float64).copy()
    if not system.ll.any() and linear_cache is not None:
        lu = linear_cache.factors(aic, lambda: np.einsum("ij,ijn->in", system.nrm, aic))
        gamma = lu_solve(lu, -np.einsum("ij,ij->i", onset, system.nrm))
        res, _, v, alpha, cl, cd = system.evaluate(gamma, False)
        per_surface = [gamma[o:o + s.n_unknowns].reshape(s.n_chord, s.n_span)
                       for o, s in zip(system.offsets, surfaces)]
        return CirculationSolution(per_surface, v, alpha, cl, cd, 1, float(np.max(np.abs(res))))
    try:
        mu = system.viscosity(gamma)        # at the starting guess, held through the solve (module notes)
        res, jac, v, alpha, cl, cd = system.evaluate(gamma, True, viscosity=mu)
        norm = np.max(np.abs(res), initial=0.0)
        it = 0
        while norm > settings.tolerance:
            if it >= settings.max_iterations:
                raise NumericalError(
                    f"circulation did not converge at step {step} (t = {time:.6g} s): largest scaled "
                    f"residual {norm:.3g} after {it} iterations, tolerance {settings.tolerance:g}; "
                    "likely a stalled section on a polar with a falling lift curve: lower [solver] "
                    "relaxation or raise max_iterations")
            try:
                delta = np.linalg.solve(jac, -res)
            except np.linalg.LinAlgError:
                raise NumericalError(f"singular circulation system at step {step} (t = {time:.6g} s); "
                                     "check for coincident or zero-chord panels") from None
            frac = settings.relaxation
            for _ in range(_BACKTRACK_HALVINGS):
                try:
                    trial = system.evaluate(gamma + frac * delta, False, viscosity=mu)
                except PolarRangeError:
                    frac *= 0.5
                    continue
                if np.max(np.abs(trial[0])) < norm or frac < settings.relaxation * 2 ** -(_BACKTRACK_HALVINGS - 1):
                    break
                frac *= 0.5
            gamma = gamma + frac * delta
            it += 1
            if it % _VISCOSITY_REFRESH == 0:
                mu = system.viscosity(gamma)    # not converged with it: take it at the iterate reached
            res, jac, v, alpha, cl, cd = system.evaluate(gamma, True, viscosity=mu)
            norm = np.max(np.abs(res))
    except PolarRangeError as exc:
        raise PolarRangeError(f"{exc} at step {step} (t = {time:.6g} s)", exc.index, exc.alpha_deg,
                              exc.mach) from None
    per_surface = [gamma[o:o + s.n_unknowns].reshape(s.n_chord, s.n_span)
                   for o, s in zip(system.offsets, surfaces)]
    return CirculationSolution(per_surface, v, alpha, cl, cd, it, float(norm))
