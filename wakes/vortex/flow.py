"""Free vortex-particle flows: time stepping, diagnostics and checkpoints."""

from __future__ import annotations

import io
import json
import math
import os
import sys

import numpy as np
import pandas as pd

from .._validate import choice, per_element, positive_scalar
from ..errors import InputError, NumericalError
from ..induction.elements import Particles
from ..induction.particle_ops import smoothed_fields_at
from ..induction.smoothing import PARTICLE_KERNELS
from ..io import atomic
from .diagnostics import DIAGNOSTIC_COLUMNS, field_diagnostics
from .dynamics import (
    STRETCHING_SCHEMES,
    VISCOUS_SCHEMES,
    ParticleDynamics,
    induction_methods,
    relax_divergence,
)
from .integrators import INTEGRATORS, rk_step

CHECKPOINT_FORMAT = "wakes.ParticleFlow"
CHECKPOINT_VERSION = 1
REGULARIZED_KERNELS = tuple(k for k in PARTICLE_KERNELS if k != "singular")


class _NonFiniteState(Exception):
    """A stage of a step met a non-finite state (turned into NumericalError)."""


class ParticleFlow:
    """A free field of vortex particles in an unbounded fluid at rest at infinity.

    Particles move with the velocity they induce, and their strengths obey
    the vorticity equation of a homogeneous incompressible fluid, with
    stretching and, optionally, viscous diffusion (see
    :mod:`wakes.vortex.dynamics`; baroclinic and body-force terms vanish for such a
    fluid under conservative forces). Every velocity comes from
    :func:`wakes.induce`.

    Parameters
    ----------
    particles : wakes.Particles
        Initial field; any regularized kernel (not "singular").
    stretching : {"transposed", "classic", "none"}, default "transposed"
        Stretching scheme; "transposed" conserves total vorticity exactly.
    viscosity : float, default 0.0
        Kinematic viscosity nu [m^2/s], zero or positive.
    viscous_scheme : {"core-spreading", "pse"}, default "core-spreading"
        Used only when ``viscosity`` > 0. "core-spreading" needs the Gaussian
        kernel; "pse" the Gaussian or Winckelmans-Leonard kernel.
    integrator : {"euler", "rk2", "rk3", "rk4"}, default "rk3"
        Runge--Kutta scheme (:mod:`wakes.vortex.integrators`).
    method : str, default "auto"
        Induction summation method, passed to :func:`wakes.induce`; "auto"
        lets the engine choose (direct summation while it offers nothing
        else).
    tolerance : float, default 1e-6
        Relative tolerance of approximate induction methods, passed to
        :func:`wakes.induce` when the method is not "direct".
    relaxation : float, default 0.0
        Rate f [1/s] of Pedrizzetti's divergence relaxation, applied after
        each step with fraction min(f dt, 1); 0 disables it. Each relaxed
        step costs one more induction.
    volumes : float or array_like, shape (N,), optional
        Particle volumes [m^3], used by PSE only. By default estimated once
        as 1 / sum_q zeta_sigma(x_p - x_q), the reciprocal particle density,
        accurate inside a lattice of spacing up to the smoothing radius and
        too large by up to about 2x on its boundary.

    Attributes
    ----------
    particles : wakes.Particles
        The current field.
    time : float
        Current time [s].
    steps : int
        Steps taken since the flow was created (carried by checkpoints).

    Raises
    ------
    wakes.errors.InputError
        On an unknown scheme, integrator or method name, a negative
        viscosity, a kernel a scheme does not support, or bad volumes.

    Notes
    -----
    Each step costs one induction with gradient per Runge--Kutta stage
    (1, 2, 3, 4 for euler, rk2, rk3, rk4), plus one more with relaxation.
    :meth:`advance` also evaluates diagnostics after each step; their
    induction is reused by the next step's first stage, so it costs only the
    smoothed-vorticity sum.

    Examples
    --------
    >>> import wakes
    >>> flow = wakes.ParticleFlow(wakes.vortex_ring(1.0, 1.0, 0.1, kernel="winckelmans-leonard"))
    >>> table = flow.advance(0.2, 0.1)
    >>> list(table["time"])
    [0.0, 0.1, 0.2]
    """

    def __init__(self, particles: Particles, *, stretching: str = "transposed",
                 viscosity: float = 0.0, viscous_scheme: str = "core-spreading",
                 integrator: str = "rk3", method: str = "auto", tolerance: float = 1e-6,
                 relaxation: float = 0.0, volumes=None):
        if not isinstance(particles, Particles):
            raise InputError(f"particles must be a wakes.Particles; got {type(particles).__name__}")
        choice("particles.kernel", particles.kernel, REGULARIZED_KERNELS)
        choice("stretching", stretching, STRETCHING_SCHEMES)
        choice("viscous_scheme", viscous_scheme, VISCOUS_SCHEMES)
        choice("integrator", integrator, INTEGRATORS)
        engine_methods = induction_methods()
        choice("method", method, sorted(set(engine_methods) | {"auto"}))
        nu = positive_scalar("viscosity", viscosity, allow_zero=True)
        tol = positive_scalar("tolerance", tolerance)
        rate = positive_scalar("relaxation", relaxation, allow_zero=True)
        scheme = VISCOUS_SCHEMES[viscous_scheme]
        if nu > 0.0 and particles.kernel not in scheme.kernels:
            raise InputError(f"viscous_scheme {viscous_scheme!r} needs particles.kernel "
                             f"{' or '.join(repr(k) for k in scheme.kernels)}; "
                             f"got {particles.kernel!r}")
        vol = None
        if nu > 0.0 and scheme.needs_volumes:
            if volumes is None:
                _, _, density = smoothed_fields_at(particles.positions, particles.positions,
                                                   particles.strengths, particles.radii,
                                                   PARTICLE_KERNELS[particles.kernel].code)
                vol = 1.0 / density
            else:
                vol = per_element("volumes", volumes, particles.count, positive=True)
        resolved = method if method in engine_methods else "direct"
        self._settings = {"stretching": stretching, "viscosity": nu,
                          "viscous_scheme": viscous_scheme, "integrator": integrator,
                          "method": method, "tolerance": tol, "relaxation": rate}
        self._scheme = INTEGRATORS[integrator]
        self._dynamics = ParticleDynamics(particles.count, particles.kernel, stretching, nu,
                                          viscous_scheme, resolved, tol, vol)
        self._y = ParticleDynamics.pack(particles.positions, particles.strengths,
                                        particles.radii ** 2)
        self._time = 0.0
        self._steps = 0
        self._induced = None  # (velocity, grad) at the current state, once computed

    # ------------------------------------------------------------ state

    @property
    def particles(self) -> Particles:
        """The current field as :class:`wakes.Particles`."""
        return self._dynamics.particles(self._y)

    @property
    def time(self) -> float:
        """Current time [s]."""
        return self._time

    @property
    def steps(self) -> int:
        """Number of steps taken."""
        return self._steps

    @property
    def settings(self) -> dict:
        """The flow's options (stretching, viscosity, ...), as given."""
        return dict(self._settings)

    def __repr__(self) -> str:
        return (f"ParticleFlow(N={self._dynamics.count}, kernel={self._dynamics.kernel!r}, "
                f"time={self._time!r}, steps={self._steps})")

    # ------------------------------------------------------------ stepping

    def _induced_now(self):
        """Velocity and gradient at the current state (cached)."""
        if self._induced is None:
            self._induced = self._dynamics.induced(self._y, gradient=True)
        return self._induced

    def _rhs(self, t: float, y: np.ndarray) -> np.ndarray:
        if not np.isfinite(y).all():
            raise _NonFiniteState
        return self._dynamics(t, y)

    def step(self, dt: float) -> None:
        """Advance the flow by one step of ``dt`` seconds.

        Raises
        ------
        wakes.errors.InputError
            If ``dt`` is not a positive finite number.
        wakes.errors.NumericalError
            If the state becomes non-finite; the flow keeps the last good
            state, which :meth:`save` can write.
        """
        self._advance_one(_step_size(dt))

    def _advance_one(self, dt: float) -> None:
        y, t = self._y, self._time
        velocity, grad = self._induced_now()
        first = self._dynamics.derivative(y, velocity, grad)
        try:
            with np.errstate(over="ignore", invalid="ignore"):
                y_new = rk_step(self._scheme, self._rhs, t, y, dt, first_derivative=first)
                if not np.isfinite(y_new).all():
                    raise _NonFiniteState
                if self._settings["relaxation"] > 0.0:
                    relaxed = self._dynamics.induced(y_new, gradient=True)
                    if not np.isfinite(relaxed[1]).all():
                        raise _NonFiniteState
                    fraction = min(self._settings["relaxation"] * dt, 1.0)
                    _, alpha, _ = self._dynamics.unpack(y_new)
                    alpha[...] = relax_divergence(alpha, relaxed[1], fraction)
        except _NonFiniteState:
            raise NumericalError(
                f"the particle state became non-finite during step {self._steps + 1} "
                f"(t = {t!r} s to {t + dt!r} s, dt = {dt!r} s); likely cause: a step too long "
                f"for the fastest rotation in the flow (max |grad u| dt = "
                f"{float(np.abs(grad).max()) * dt:.3g} at the step's start; keep it below "
                f"about 1) or strengths too large to represent; the last good state "
                f"(t = {t!r} s) is kept and save() can write it") from None
        self._y = y_new
        self._time = t + dt
        self._steps += 1
        self._induced = None

    def diagnostics(self) -> dict:
        """Diagnostics of the current state: step, time and :mod:`wakes.vortex.diagnostics` columns."""
        velocity, _ = self._induced_now()
        row = {"step": self._steps, "time": self._time}
        row.update(field_diagnostics(self.particles, velocity))
        return row

    def advance(self, t_end: float, dt: float, progress: bool = False) -> pd.DataFrame:
        """Step the flow to ``t_end`` and return its diagnostics.

        Parameters
        ----------
        t_end : float
            Final time [s], not before :attr:`time`.
        dt : float
            Step [s], positive; the last step is shortened to land on
            ``t_end``.
        progress : bool, default False
            Print one line per step to standard error.

        Returns
        -------
        pandas.DataFrame
            One row for the starting state, then one per step, with columns
            ``step``, ``time`` [s] and those of :data:`wakes.vortex.diagnostics.DIAGNOSTIC_COLUMNS`.

        Raises
        ------
        wakes.errors.InputError
            On a non-finite ``t_end`` before :attr:`time`, or a bad ``dt``.
        wakes.errors.NumericalError
            If the state becomes non-finite; the flow keeps the last good
            state, and the rows computed so far are on the exception's
            ``diagnostics`` attribute.
        """
        dt = _step_size(dt)
        try:
            t_end = float(t_end)
        except (TypeError, ValueError):
            raise InputError(f"t_end must be a real number; got {t_end!r}") from None
        if not math.isfinite(t_end) or t_end < self._time:
            raise InputError(f"t_end must be finite and not before the flow's time "
                             f"{self._time!r} s; got {t_end!r}")
        n = math.ceil((t_end - self._time) / dt * (1.0 - 1e-12))
        rows = [self.diagnostics()]
        try:
            for k in range(n):
                self._advance_one(dt if k < n - 1 else t_end - self._time)
                if k == n - 1:
                    self._time = t_end
                rows.append(self.diagnostics())
                if progress:
                    print(f"step {k + 1}/{n}  t = {self._time:.6g} s  max speed = "
                          f"{rows[-1]['max_speed']:.4g} m/s", file=sys.stderr)
        except NumericalError as exc:
            exc.diagnostics = pd.DataFrame(rows, columns=_TABLE_COLUMNS)
            raise
        return pd.DataFrame(rows, columns=_TABLE_COLUMNS)

    # ------------------------------------------------------------ checkpoints

    def save(self, path) -> None:
        """Write the full state to ``path`` (a NumPy ``.npz`` file).

        Restoring it with :meth:`load` and stepping on reproduces an
        uninterrupted run bit for bit on the same machine. The file is
        written to a temporary name and then renamed, so an interrupted save
        never leaves a half-written checkpoint.
        """
        path = os.fspath(path)
        meta = {"format": CHECKPOINT_FORMAT, "version": CHECKPOINT_VERSION,
                "kernel": self._dynamics.kernel, "count": self._dynamics.count,
                "steps": self._steps, "settings": self._settings}
        arrays = {"state": self._y, "time": np.array(self._time),
                  "meta": np.array(json.dumps(meta))}
        if self._dynamics.volumes is not None:
            arrays["volumes"] = self._dynamics.volumes
        buffer = io.BytesIO()
        np.savez(buffer, **arrays)
        atomic.write_bytes(path, buffer.getvalue())

    @classmethod
    def load(cls, path) -> ParticleFlow:
        """Restore a flow written by :meth:`save`.

        Raises
        ------
        wakes.errors.InputError
            If ``path`` is not a readable checkpoint of this format.
        """
        path = os.fspath(path)
        try:
            with np.load(path, allow_pickle=False) as data:
                arrays = {k: data[k] for k in data.files}
            meta = json.loads(str(arrays["meta"]))
            ok = meta.get("format") == CHECKPOINT_FORMAT
        except (OSError, ValueError, KeyError) as exc:
            raise InputError(f"path must be a checkpoint written by ParticleFlow.save; "
                             f"could not read {path!r} ({exc})") from None
        if not ok or meta.get("version") != CHECKPOINT_VERSION:
            raise InputError(f"path must be a {CHECKPOINT_FORMAT} checkpoint of version "
                             f"{CHECKPOINT_VERSION}; {path!r} holds format "
                             f"{meta.get('format')!r} version {meta.get('version')!r}")
        y = np.ascontiguousarray(arrays["state"], dtype=np.float64)
        n = int(meta["count"])
        pos, alpha, s2 = y[:3 * n].reshape(n, 3), y[3 * n:6 * n].reshape(n, 3), y[6 * n:]
        flow = cls(Particles(pos, alpha, np.sqrt(s2), meta["kernel"]),
                   volumes=arrays.get("volumes"), **meta["settings"])
        flow._y = y
        flow._time = float(arrays["time"])
        flow._steps = int(meta["steps"])
        return flow


_TABLE_COLUMNS = ("step", "time") + DIAGNOSTIC_COLUMNS


def _step_size(dt) -> float:
    try:
        x = float(dt)
    except (TypeError, ValueError):
        raise InputError(f"dt must be a positive finite number of seconds; got {dt!r}") from None
    if not (math.isfinite(x) and x > 0.0):
        raise InputError(f"dt must be a positive finite number of seconds; got {dt!r}")
    return x
