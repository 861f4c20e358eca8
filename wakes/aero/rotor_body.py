"""The rotor body model: blades that turn each step, with rotor, propeller or turbine loads.

Case body type ``"rotor"`` (:class:`wakes.case.RotorSpec`). Each blade is a
nonlinear lifting line (:mod:`wakes.aero.lifting_line`) placed at its
azimuth at every step (:mod:`wakes.aero.rotor`); its wake is the wing's free
vortex lattice (:mod:`wakes.aero.wake`), which becomes a helix as the
blade turns. Loads follow :mod:`wakes.aero.rotor_loads`.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pandas as pd

from .polars import SectionPolars
from .rotor_loads import KIND_COLUMNS, blade_forces, coefficients, last_revolution, radial_table
from .rotor_wake import BladeSymmetry, RolledUpWake, StartupDrift
from .wake import WakeSheet

# Summary figures beyond the kind's own columns.
_EXTRA_SUMMARY = ("induced_power_W", "profile_power_W")


class RotorBody:
    """A rotor, propeller or wind turbine (case body type ``"rotor"``).

    Parameters
    ----------
    spec : wakes.case.RotorSpec
        The resolved body spec.
    case : wakes.case.Case
        The whole case (freestream, fluid, time step).
    """

    trefftz = False

    def __init__(self, spec, case):
        from .bodies import make_polar  # bodies registers this class: import here, not at the top

        self.name = spec.name
        self.spec = spec
        self.kind = spec.kind
        self.geometry = spec.geometry()
        self.polars = SectionPolars.uniform(make_polar(spec.airfoil), spec.panels)
        self.density = case.fluid.density
        self.axis, _, _ = self.geometry.frame()
        self.hub = np.asarray(self.geometry.hub, dtype=np.float64)
        v_inf = case.freestream.vector()
        # propeller: flight speed along the axis; turbine: wind speed; rotor: unused
        self.speed = {"propeller": float(-(v_inf @ self.axis)), "turbine": float(np.linalg.norm(v_inf)),
                      "rotor": 0.0}[self.kind]
        self.hover = not np.any(v_inf)
        self.dt = case.time.dt
        self.steps_per_revolution = max(1, int(round(self.geometry.period / case.time.dt)))
        self.r, self.dr = self.geometry.strip_radii()
        eta = (self.r - self.geometry.root_cutout) / (self.geometry.radius - self.geometry.root_cutout)
        self.pitch_deg = self.geometry.pitch(eta)
        self._symmetry = None

    def surfaces(self, time: float) -> list:
        """The blades at ``time`` [s], one lifting-line surface each, named ``NAME/blade K``."""
        return [self.geometry.blade_surface(k, time, self.polars, f"{self.name}/blade {k + 1}")
                for k in range(self.geometry.blades)]

    def new_wake(self, surface, time: float, settings):
        """The wake of one blade from ``time`` [s], cut ``wake_revolutions`` revolutions old.

        A filament wake rolls up into a tip vortex ``rollup_age`` degrees
        behind the blade (:class:`RolledUpWake`);
        with ``rollup_age = inf`` or a particle wake the blade keeps the
        wing's full vortex sheet (:class:`WakeSheet`).
        """
        g = self.geometry
        settings = dataclasses.replace(
            settings, max_age=min(settings.max_age, self.spec.wake_revolutions * g.period))
        if settings.model == "particles" or not np.isfinite(self.spec.rollup_age):
            return WakeSheet(surface.te_nodes, time, settings)
        steps = max(1, int(round(self.spec.rollup_age / (6.0 * g.rpm * self.dt))))
        startup = None
        if self.kind == "rotor" and self.spec.startup_revolutions > 0:
            startup = StartupDrift(self.hub, self.axis, g.omega, g.blades, g.radius,
                                   self.spec.startup_revolutions * g.period)
        if self.spec.symmetric_wake and self._symmetry is None:
            self._symmetry = BladeSymmetry(self.hub, self.axis, g.blades)
        return RolledUpWake(surface.te_nodes, time, settings, rollup_steps=steps,
                            inboard_trailers=self.spec.inboard_trailers, tip_last=g.spin > 0,
                            hub=self.hub, axis=self.axis, startup=startup, symmetry=self._symmetry)

    def loads_row(self, strips: list, trefftz_drag: float) -> dict:
        """Thrust, torque, power and coefficients of the kind, power split, thrust per blade."""
        g = self.geometry
        f = blade_forces(strips, self.hub, self.axis, g.spin)
        row = self._totals(float(f["thrust"].sum()), float(f["torque_induced"].sum()),
                           float(f["torque_profile"].sum()))
        for k, t in enumerate(f["thrust"]):
            row[f"blade_{k + 1}_thrust_N"] = float(t)
        return row

    def _totals(self, thrust: float, torque_induced: float, torque_profile: float) -> dict:
        g = self.geometry
        row = coefficients(self.kind, thrust=thrust, torque=torque_induced + torque_profile,
                           omega=g.omega, radius=g.radius, density=self.density, speed=self.speed)
        row["induced_power_W"] = g.omega * torque_induced
        row["profile_power_W"] = g.omega * torque_profile
        return row

    def section_table(self, strips: list) -> pd.DataFrame:
        """Radial distributions of every blade at the last step (:func:`radial_table`)."""
        g = self.geometry
        return radial_table(self.name, strips, radius=g.radius, r=self.r, dr=self.dr,
                            pitch_deg=self.pitch_deg, hub=self.hub, axis=self.axis, spin=g.spin)

    def summary(self, loads: pd.DataFrame) -> dict:
        """Loads averaged over the last full revolution, and how much they still change.

        Thrust and the two parts of the power are averaged over the last
        ``steps_per_revolution`` steps; the coefficients are those of the
        averages. ``thrust_change_last_revolution`` compares the mean
        thrust of the last two revolutions (relative), a convergence
        indicator (NaN with fewer than two revolutions). In hover (no
        freestream) a lift rotor also reports the induced-power factor
        kappa = P_induced / (T^(3/2)/sqrt(2 rho A)) of momentum theory.
        """
        mine = loads[loads["body"] == self.name]
        n = self.steps_per_revolution
        last = last_revolution(mine, n)
        g = self.geometry
        thrust = float(last["thrust_N"].mean())
        p_ind = float(last["induced_power_W"].mean())
        p_pro = float(last["profile_power_W"].mean())
        out = self._totals(thrust, p_ind / g.omega, p_pro / g.omega)
        out = {k: float(out[k]) for k in KIND_COLUMNS[self.kind] + _EXTRA_SUMMARY}
        if len(mine) >= 2 * n:
            before = float(mine["thrust_N"].iloc[-2 * n:-n].mean())
            out["thrust_change_last_revolution"] = (thrust - before) / abs(before) if before else float("nan")
        else:
            out["thrust_change_last_revolution"] = float("nan")
        if self.kind == "rotor" and self.hover:
            ideal = max(thrust, 0.0) ** 1.5 / np.sqrt(2.0 * self.density * g.disc_area)
            out["induced_power_factor"] = p_ind / ideal if ideal > 0 else float("nan")
        out["revolutions"] = (len(mine) - 1) * self.dt / g.period
        out["averaged_steps"] = len(last)
        out["solidity"] = g.solidity()
        return out
