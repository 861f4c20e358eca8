"""The rotor body model: blades that turn each step, with rotor, propeller or turbine loads.

Case body type ``"rotor"`` (:class:`wakes.case.RotorSpec`). Each blade is a
nonlinear lifting line (:mod:`wakes.aero.lifting_line`) placed at its
azimuth at every step (:mod:`wakes.aero.rotor`); its wake is a free vortex
sheet that rolls up into a tip vortex and inboard trailers
(:mod:`wakes.aero.rotor_wake`), or the wing's full sheet
(:mod:`wakes.aero.wake`). Loads follow :mod:`wakes.aero.rotor_loads`.
"""

from __future__ import annotations

import collections
import dataclasses

import numpy as np
import pandas as pd

from .flap import FlapState, flap_harmonics, flap_step, hinge_moments
from .polars import SectionPolars
from .rotor import blade_turn_deg, is_axial_flow
from .rotor_loads import (
    FLIGHT_COLUMNS,
    FLOW_COLUMNS,
    HUB_COLUMNS,
    KIND_COLUMNS,
    averaged_radial_table,
    blade_forces,
    blade_harmonics_table,
    coefficients,
    disc_map_table,
    flight_forces,
    flight_frame,
    freestream_ratios,
    hub_coefficients,
    hub_loads,
    inflow_ratio,
    last_revolution,
    local_inflow,
    near_hover,
    power_split,
    radial_table,
    shaft_angle_deg,
    shaft_torques,
    strip_distributions,
)
from .rotor_wake import BladeSymmetry, RolledUpWake, StartupDrift, tip_vortex_table
from .sections import make_polar
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
        self.name = spec.name
        self.spec = spec
        self.kind = spec.kind
        self.geometry = g = spec.geometry(case.freestream.vector())
        # Viterna-Corrigan post-stall drag from the blade aspect ratio R/c unless the case gives it
        self.polars = SectionPolars.uniform(make_polar(spec.airfoil, aspect_ratio=g.radius / g.mean_chord()),
                                            spec.panels, speed_of_sound=case.fluid.speed_of_sound)
        self.density = case.fluid.density
        self.axis = g.frame()[0]
        self.frame = g.rotor_frame()
        self.wind_frame = flight_frame(case.freestream.vector(), self.axis)
        self.hub = np.asarray(g.hub, dtype=np.float64)
        v_inf = case.freestream.vector()
        # propeller: flight speed along the axis; turbine: wind speed; rotor: unused
        self.speed = {"propeller": float(-(v_inf @ self.axis)), "turbine": float(np.linalg.norm(v_inf)),
                      "rotor": 0.0}[self.kind]
        self.mu, self.climb_ratio = freestream_ratios(v_inf, self.axis, g.omega, g.radius)
        self.axial_flow = is_axial_flow(v_inf, self.axis)
        self.dt = case.time.dt
        self.end_time = (case.time.steps - 1) * case.time.dt
        self.steps_per_revolution = max(1, int(round(g.period / case.time.dt)))
        self.r, self.dr = g.strip_radii()
        self.pitch_deg = g.pitch((self.r - g.root_cutout) / (g.radius - g.root_cutout))
        self._symmetry = None
        self._wakes = []
        self._tip_samples = collections.deque(maxlen=self.steps_per_revolution)
        # the section values of the last steps_per_revolution steps: the last full revolution's
        self._radial_samples = collections.deque(maxlen=self.steps_per_revolution)
        self._azimuth_samples = collections.deque(maxlen=self.steps_per_revolution)
        self._disc_samples = collections.deque(maxlen=self.steps_per_revolution)
        self._chord = g.chord((self.r - g.root_cutout) / (g.radius - g.root_cutout))
        self.hinge = spec.flap_hinge()
        self.lock_number = spec.lock_number(case.fluid.density)
        # flap states of the last step and the next (the next one's surfaces place the wake's move)
        self._flap = ([] if self.hinge is None else
                      [FlapState(0.0, np.full(g.blades, self.hinge.rest_angle), np.zeros(g.blades))])

    def flap_state(self, time: float) -> FlapState | None:
        """The blades' flap state kept nearest to ``time`` [s] (the step's or the next), None without flapping.

        The loop asks for the surfaces at the time of the step it runs and
        at the step after (the wake's move); a body built afresh has the
        start's state only.
        """
        if not self._flap:
            return None
        return min(self._flap, key=lambda s: abs(s.time - time))

    def motion_state(self) -> dict:
        """The blades' flap state at the start of the next step (empty without flapping)."""
        if not self._flap:
            return {}
        s = self._flap[-1]
        out = {"flap_time": float(s.time), "flap_beta": s.beta, "flap_rate": s.rate}
        if s.air_moment is not None:
            out["flap_air_moment"] = s.air_moment
        return out

    def restore_motion_state(self, state: dict) -> None:
        """Go on from a :meth:`motion_state` (read from a checkpoint)."""
        if self._flap and state:
            self._flap = [FlapState(float(state["flap_time"]), np.asarray(state["flap_beta"], dtype=np.float64),
                                    np.asarray(state["flap_rate"], dtype=np.float64),
                                    state.get("flap_air_moment"))]

    def surfaces(self, time: float) -> list:
        """The blades at ``time`` [s], one lifting-line surface each, named ``NAME/blade K``.

        Flapping blades are placed at their flap state (:meth:`flap_state`).
        """
        flap = self.flap_state(time)
        return [self.geometry.blade_surface(k, time, self.polars, f"{self.name}/blade {k + 1}",
                                            flap=None if flap is None else (flap.beta[k], flap.rate[k]))
                for k in range(self.geometry.blades)]

    def new_wake(self, surface, time: float, settings):
        """The wake of one blade from ``time`` [s], cut ``wake_revolutions`` revolutions old.

        Its circulation fades to zero over the last ``wake_fade_revolutions``
        revolutions (at most half the kept wake) before the cut.

        A filament wake is a resolved sheet for ``rollup_age`` degrees, then
        a tip vortex and inboard trailers (:class:`RolledUpWake`); a
        particle wake is the wing's full sheet turned into particles
        (:class:`WakeSheet`).
        """
        g = self.geometry
        settings = dataclasses.replace(
            settings, max_age=min(settings.max_age, self.spec.wake_revolutions * g.period))
        if settings.model == "particles":
            return WakeSheet(surface.te_nodes, time, settings)
        startup = None
        drift_time = self.spec.startup_revolutions * g.period
        if self.kind == "rotor" and drift_time > 0.0:   # (a count so small it rounds to no time: none)
            startup = StartupDrift(self.hub, self.axis, g.omega, g.blades, g.radius, drift_time)
        if self.spec.symmetric_wake and self._symmetry is None:
            self._symmetry = BladeSymmetry(self.hub, self.axis, g.blades)
        rollup = self.spec.rollup_age / blade_turn_deg(g.rpm, self.dt)
        wake = RolledUpWake(surface.te_nodes, time, settings,
                            rollup_steps=max(1, int(round(min(rollup, 1e9)))),
                            inboard_trailers=self.spec.inboard_trailers, tip_last=g.spin > 0,
                            hub=self.hub, axis=self.axis, axial_flow=self.axial_flow,
                            startup=startup, symmetry=self._symmetry,
                            fade_age=min(self.spec.wake_fade_revolutions * g.period, 0.5 * settings.max_age),
                            free_age=self.spec.free_wake_revolutions * g.period, period=g.period)
        self._wakes.append(wake)
        return wake

    def blade_azimuths(self, strips: list) -> np.ndarray:
        """Azimuth psi [rad] of each blade, from where its strips are (shape (B,)).

        psi is measured from the azimuth origin in the sense of rotation
        (:meth:`wakes.aero.rotor.RotorGeometry.azimuth_of`).
        """
        return self.geometry.azimuth_of(np.array([np.mean(s.points - self.hub, axis=0) for s in strips]))

    def azimuths_deg(self, strips: list) -> np.ndarray:
        """:meth:`blade_azimuths` in degrees for the tables, rounded to 1e-9 deg and in [0, 360)
        (round-off would write a blade at psi = 0 as 360)."""
        return np.mod(np.round(np.degrees(self.blade_azimuths(strips)), 9), 360.0)

    def section_pitch(self, strips: list) -> np.ndarray:
        """Pitch [deg] of every blade's sections, collective, twist and cyclic, shape (B, n)."""
        cyclic = self.geometry.cyclic_at(self.blade_azimuths(strips))
        return self.pitch_deg[None, :] + np.asarray(cyclic)[:, None]

    def loads_row(self, strips: list, trefftz_drag: float) -> dict:
        """Thrust, torque, power, coefficients of the kind, power split, flow ratios, hub loads, blade thrusts.

        Keeps the section values and blade azimuths of the last
        ``steps_per_revolution`` steps and, over the last revolution,
        samples blade 1's tip-vortex path, for :meth:`tables`. Flapping
        blades add each blade's flap angle and air moment about its hinge
        and step their flap state on (:meth:`_flap_columns`).
        """
        g = self.geometry
        f = blade_forces(strips, self.hub, self.axis, g.spin)
        sections = strip_distributions(strips, dr=self.dr, hub=self.hub, axis=self.axis, spin=g.spin)
        self._radial_samples.append(sections)
        self._azimuth_samples.append(self.blade_azimuths(strips))
        self._disc_samples.append({"azimuth_deg": self.azimuths_deg(strips), "dT_dr_N_per_m": sections["dT_dr_N_per_m"],
                                   "alpha_deg": sections["alpha_deg"],
                                   "inflow_ratio": local_inflow(self.kind, strips, self.axis, g.omega, g.radius)})
        row = self._totals(float(f["thrust"].sum()), float(f["torque_induced"].sum()),
                           float(f["torque_profile"].sum()))
        row["advance_ratio_mu"] = self.mu
        row["inflow_ratio_lambda"] = inflow_ratio(self.kind, strips, self.axis, self.r, self.dr, g.omega,
                                                  g.radius)
        hub = hub_loads(strips, self.hub, self.frame)
        row.update(hub_coefficients(hub, omega=g.omega, radius=g.radius, density=self.density))
        row.update(flight_forces(hub, row["thrust_N"], self.frame, self.wind_frame))
        for k, t in enumerate(f["thrust"]):
            row[f"blade_{k + 1}_thrust_N"] = float(t)
        if self._flap:
            row.update(self._flap_columns(strips))
        if self._wakes:
            w = self._wakes[0]
            t = float(w.near_time[0])
            if t > self.end_time - self.geometry.period + 0.5 * self.dt:
                self._tip_samples.append(w.tip_vortex(t))
        return row

    def _flap_columns(self, strips: list) -> dict:
        """Each blade's flap angle and air moment about its hinge at this step; steps the flap state on.

        The strips are those of the blades placed at the last flap state.
        """
        g, state = self.geometry, self._flap[-1]
        placed = [g.flap_hinge(k, state.time) for k in range(g.blades)]
        moment = hinge_moments(strips, np.array([p for p, _ in placed]), np.array([a for _, a in placed]))
        self._flap = [state, flap_step(self.hinge, state, moment, g.omega, self.dt)]
        row = {}
        for k in range(g.blades):
            row[f"blade_{k + 1}_flap_deg"] = float(np.degrees(state.beta[k]))
            row[f"blade_{k + 1}_hinge_moment_Nm"] = float(moment[k])
        return row

    def _totals(self, thrust: float, torque_induced: float, torque_profile: float) -> dict:
        g = self.geometry
        row = coefficients(self.kind, thrust=thrust, torque=torque_induced + torque_profile,
                           omega=g.omega, radius=g.radius, density=self.density, speed=self.speed,
                           mu=self.mu, climb_ratio=self.climb_ratio)
        row.update(power_split(self.kind, g.omega, torque_induced, torque_profile))
        return row

    def section_table(self, strips: list) -> pd.DataFrame:
        """Radial distributions of every blade at the last step (:func:`radial_table`).

        Each blade's ``pitch_deg`` includes its cyclic pitch at that step and
        ``azimuth_deg`` is its azimuth psi.
        """
        g = self.geometry
        return radial_table(self.name, strips, radius=g.radius, r=self.r, dr=self.dr,
                            pitch_deg=self.section_pitch(strips), hub=self.hub, axis=self.axis, spin=g.spin,
                            azimuth_deg=self.azimuths_deg(strips))

    def tables(self) -> dict:
        """Extra result tables, those there are data for.

        ``radial_loading.csv``: the radial loading averaged over the last
        full revolution (the last ``steps_per_revolution`` steps, or the
        steps done since a resume if fewer) and over the blades
        (:func:`averaged_radial_table`); ``disc_map.csv``: every blade's
        sections at every step of that revolution, by azimuth
        (:func:`disc_map_table`); ``blade_harmonics.csv``: the harmonics of
        blade 1's thrust and flap moment over that revolution
        (:func:`blade_harmonics_table`); ``tip_vortex.csv``: blade 1's
        tip-vortex path (:func:`tip_vortex_table`).
        """
        g = self.geometry
        out = {}
        if self._radial_samples:
            # the pitch averaged as the loads are (the cyclic part averages to zero over a revolution)
            cyclic = float(np.mean(g.cyclic_at(np.asarray(self._azimuth_samples))))
            out["radial_loading.csv"] = averaged_radial_table(
                self.name, list(self._radial_samples), radius=g.radius, r=self.r, chord=self._chord,
                pitch_deg=self.pitch_deg + cyclic)
            out["disc_map.csv"] = disc_map_table(self.name, list(self._disc_samples), radius=g.radius, r=self.r)
            out["blade_harmonics.csv"] = blade_harmonics_table(self.name, list(self._disc_samples), r=self.r,
                                                               dr=self.dr)
        if self._tip_samples:
            out["tip_vortex.csv"] = tip_vortex_table(self.name, list(self._tip_samples), hub=self.hub,
                                                     axis=self.axis, radius=g.radius, omega=g.omega)
        return out

    def summary(self, loads: pd.DataFrame) -> dict:
        """Loads averaged over the last full revolution, and how much they still change.

        Thrust and the two parts of the power are averaged over the last
        ``steps_per_revolution`` steps; the coefficients are those of the
        averages. ``thrust_change_last_revolution`` compares the mean
        thrust of the last two revolutions (relative), a convergence
        indicator (NaN with fewer than two revolutions). The flow ratios
        mu and lambda are the last revolution's means
        (:mod:`wakes.aero.rotor_loads`; ``shaft_angle_deg`` the angle of the
        freestream to the disc), and so are the hub forces and
        moments H, Y, M_x, M_y (in the rotor frame), with the coefficients
        of the means, and the drag, lift and side forces (flight frame). Near hover
        (:func:`wakes.aero.rotor_loads.near_hover`, the figure of merit's
        rule) a lift rotor also reports the induced-power factor
        kappa = P_induced / (T^(3/2)/sqrt(2 rho A)) of momentum theory.
        ``collective_deg`` is the case's collective (the pitch where the
        twist is zero) and ``pitch_075R_deg`` the blade pitch, collective
        plus twist, at r = 0.75 R, where the collective of a twisted blade is
        commonly quoted [deg] (NaN when 0.75 R lies inside the root cut-out).
        Flapping blades add ``coning_deg``, ``flap_cos_deg`` and
        ``flap_sin_deg`` (:meth:`_flap_summary`), ``flap_frequency_ratio``
        nu_beta and the nominal ``lock_number``
        (:meth:`wakes.case.RotorSpec.lock_number`).
        """
        mine = loads[loads["body"] == self.name]
        n = self.steps_per_revolution
        last = last_revolution(mine, n)
        g = self.geometry
        thrust = float(last["thrust_N"].mean())
        p_ind = float(last["induced_power_W"].mean())
        p_pro = float(last["profile_power_W"].mean())
        out = self._totals(thrust, *shaft_torques(self.kind, g.omega, p_ind, p_pro))
        out = {k: float(out[k]) for k in KIND_COLUMNS[self.kind] + _EXTRA_SUMMARY}
        out.update({k: float(last[k].mean()) for k in FLOW_COLUMNS})
        out["shaft_angle_deg"] = shaft_angle_deg(self.mu, self.climb_ratio)
        out.update(hub_coefficients({k: float(last[k].mean()) for k in HUB_COLUMNS[:4]}, omega=g.omega,
                                    radius=g.radius, density=self.density))
        out.update({k: float(last[k].mean()) for k in FLIGHT_COLUMNS})
        if len(mine) >= 2 * n:
            before = float(mine["thrust_N"].iloc[-2 * n:-n].mean())
            out["thrust_change_last_revolution"] = (thrust - before) / abs(before) if before else float("nan")
        else:
            out["thrust_change_last_revolution"] = float("nan")
        ct = out["CT"] if self.kind == "rotor" else float("nan")
        if self.kind == "rotor" and near_hover(self.mu, self.climb_ratio, ct):
            ideal = max(thrust, 0.0) ** 1.5 / np.sqrt(2.0 * self.density * g.disc_area)
            out["induced_power_factor"] = float(p_ind / ideal) if ideal > 0 else float("nan")
        out["revolutions"] = float((len(mine) - 1) * self.dt / g.period)
        out["averaged_steps"] = int(len(last))
        out["solidity"] = float(g.solidity())
        out["collective_deg"] = float(g.collective)
        eta_075 = (0.75 * g.radius - g.root_cutout) / (g.radius - g.root_cutout)
        out["pitch_075R_deg"] = float(g.pitch(eta_075)) if eta_075 >= 0.0 else float("nan")
        if self.hinge is not None:
            out.update(self._flap_summary(last))
        return out

    def _flap_summary(self, last: pd.DataFrame) -> dict:
        """Coning and first-harmonic flapping over the last revolution, every blade's samples together.

        beta(psi) = beta_0 + beta_1c cos psi + beta_1s sin psi fitted to each
        blade's flap angle at its azimuth psi at each step
        (:func:`wakes.aero.flap.flap_harmonics`); psi as the cyclic pitch's
        (from downstream, in the sense of rotation).
        """
        g = self.geometry
        times = last["time_s"].to_numpy()
        beta = np.concatenate([last[f"blade_{k + 1}_flap_deg"].to_numpy() for k in range(g.blades)])
        psi = np.concatenate([[g.blade_azimuth(k, t) for t in times] for k in range(g.blades)])
        b0, b1c, b1s = flap_harmonics(beta, psi)
        return {"coning_deg": b0, "flap_cos_deg": b1c, "flap_sin_deg": b1s,
                "flap_frequency_ratio": float(np.sqrt(self.hinge.frequency_ratio_squared(g.omega))),
                "lock_number": float(self.lock_number)}
