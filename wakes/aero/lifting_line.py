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
#: An onset flow below this fraction of the surface's strongest one counts as vanishing (our choice).
WEAK_ONSET = 0.05


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
            else:
                self.nrm[k:k + m] = s.normals.reshape(-1, 3)
            k += m
        v2d = np.hypot(np.einsum("ij,ij->i", onset, self.t), np.einsum("ij,ij->i", onset, self.nrm))
        speed = np.linalg.norm(onset, axis=1)
        scale = np.where(self.ll, 0.5 * self.chord * v2d, speed)
        floor = 1e-12 * max(float(scale.max(initial=0.0)), 1e-300)
        self.scale = np.maximum(scale, floor)

    def likely_cause(self, res) -> str:
        """Why the solve did not converge, judged at the section with the largest residual ``res``.

        A lifting-line section whose onset flow (everything but the rings'
        own induction) reaches it from the trailing edge, or almost vanishes
        (below :data:`WEAK_ONSET` of the surface's strongest onset), has no
        unique circulation: the reverse-flow region of a rotor's retreating
        blade in edgewise flight. Otherwise the usual cause is a stalled
        section on a falling lift curve.
        """
        i = int(np.argmax(np.abs(res)))
        si = int(self.owner[i])
        s = self.surfaces[si]
        if self.ll[i]:
            o = self.offsets[si]
            mine = slice(o, o + s.n_unknowns)
            vt = np.einsum("ij,ij->i", self.onset[mine], self.t[mine])
            v2d = np.hypot(vt, np.einsum("ij,ij->i", self.onset[mine], self.nrm[mine]))
            j = i - o
            where = f"surface '{s.name}', strip {j} (eta = {s.section_eta[j]:.3f})"
            if vt[j] < 0.0 or v2d[j] < WEAK_ONSET * float(v2d.max()):
                what = "reaches it from the trailing edge" if vt[j] < 0.0 else "almost vanishes"
                return (f"at {where} the flow {what} ({v2d[j]:.3g} m/s in its section plane): a lifting "
                        "line has no unique circulation where the section flow passes through zero, as in "
                        "the reverse-flow region of a rotor's retreating blade in edgewise flight; remedy: "
                        "less flight speed across the disc (a lower advance ratio) or a larger root cut-out")
        return ("likely a stalled section on a polar with a falling lift curve: lower [solver] relaxation or "
                "raise max_iterations")

    def evaluate(self, gamma, jacobian: bool):
        """Scaled residual (N,), Jacobian (N, N) or None, and the section state."""
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
            cl_l, cd_l, dcl, dcl_dq = self._polars(a, q)
            c = self.chord[ll]
            res[ll] = gamma[ll] - 0.5 * c * q * cl_l
            alpha[ll], cl[ll], cd[ll] = a, cl_l, cd_l
            if jacobian:
                qs = np.maximum(q, 1e-300)
                dq = (vt[:, None] * self.t[ll] + vn[:, None] * self.nrm[ll]) / qs[:, None]
                da = (vt[:, None] * self.nrm[ll] - vn[:, None] * self.t[ll]) / (qs * qs)[:, None]
                # Gamma = c q cl(alpha, q / a) / 2: the Mach number moves with the speed q too
                dgam_dv = 0.5 * c[:, None] * ((cl_l + q * dcl_dq)[:, None] * dq + (q * dcl)[:, None] * da)
                jl = -np.einsum("ij,ijn->in", dgam_dv, self.aic[ll])
                jl[np.arange(jl.shape[0]), np.flatnonzero(ll)] += 1.0
                jac[ll] = jl
        res /= self.scale
        if jacobian:
            jac /= self.scale[:, None]
        return res, jac, v, alpha, cl, cd

    def _polars(self, alpha, speed):
        """Evaluate each lifting-line surface's polars on its own strips at their speeds [m/s].

        Returns cl, cd, dcl/dalpha [1/rad] and dcl/dspeed [s/m] (the Mach
        number's share; zero for low-speed polars).
        """
        cl, cd, dcl, dcl_dq = (np.empty_like(alpha) for _ in range(4))
        k = 0
        for s in self.surfaces:
            if not s.lifting_line:
                continue
            m = s.n_unknowns
            sl = slice(k, k + m)
            try:
                cl[sl], cd[sl], dcl[sl], dcl_dq[sl] = s.polars.evaluate_at_speed(alpha[sl], speed[sl])
            except PolarRangeError as exc:
                raise PolarRangeError(f"surface '{s.name}', strip {exc.index} "
                                      f"(eta = {s.section_eta[exc.index]:.3f}): {exc}",
                                      exc.index, exc.alpha_deg, exc.mach) from None
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
    system = _System(surfaces, aic, onset)
    gamma = np.asarray(gamma0, dtype=np.float64).copy()
    if not system.ll.any() and linear_cache is not None:
        lu = linear_cache.factors(aic, lambda: np.einsum("ij,ijn->in", system.nrm, aic))
        gamma = lu_solve(lu, -np.einsum("ij,ij->i", onset, system.nrm))
        res, _, v, alpha, cl, cd = system.evaluate(gamma, False)
        per_surface = [gamma[o:o + s.n_unknowns].reshape(s.n_chord, s.n_span)
                       for o, s in zip(system.offsets, surfaces)]
        return CirculationSolution(per_surface, v, alpha, cl, cd, 1, float(np.max(np.abs(res))))
    try:
        res, jac, v, alpha, cl, cd = system.evaluate(gamma, True)
        norm = np.max(np.abs(res), initial=0.0)
        it = 0
        while norm > settings.tolerance:
            if it >= settings.max_iterations:
                raise NumericalError(
                    f"circulation did not converge at step {step} (t = {time:.6g} s): largest scaled "
                    f"residual {norm:.3g} after {it} iterations, tolerance {settings.tolerance:g}; "
                    f"{system.likely_cause(res)}")
            try:
                delta = np.linalg.solve(jac, -res)
            except np.linalg.LinAlgError:
                raise NumericalError(f"singular circulation system at step {step} (t = {time:.6g} s); "
                                     "check for coincident or zero-chord panels") from None
            frac = settings.relaxation
            for _ in range(_BACKTRACK_HALVINGS):
                try:
                    trial = system.evaluate(gamma + frac * delta, False)
                except PolarRangeError:
                    frac *= 0.5
                    continue
                if np.max(np.abs(trial[0])) < norm or frac < settings.relaxation * 2 ** -(_BACKTRACK_HALVINGS - 1):
                    break
                frac *= 0.5
            gamma = gamma + frac * delta
            res, jac, v, alpha, cl, cd = system.evaluate(gamma, True)
            norm = np.max(np.abs(res))
            it += 1
    except PolarRangeError as exc:
        raise PolarRangeError(f"{exc} at step {step} (t = {time:.6g} s)", exc.index, exc.alpha_deg,
                              exc.mach) from None
    per_surface = [gamma[o:o + s.n_unknowns].reshape(s.n_chord, s.n_span)
                   for o, s in zip(system.offsets, surfaces)]
    return CirculationSolution(per_surface, v, alpha, cl, cd, it, float(norm))
