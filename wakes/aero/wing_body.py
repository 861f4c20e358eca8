"""The wing body model: a wing in the freestream, at rest or in prescribed motion (body type ``"wing"``)."""

from __future__ import annotations

import numpy as np
import pandas as pd

from .geometry import rotation_matrix, wing_surface
from .loads import wing_totals
from .polars import SectionPolars
from .sections import make_polar
from .wake import WakeSheet

WING_SUMMARY_KEYS = ("CL", "CDi", "span_efficiency", "lift_N", "induced_drag_N",
                     "induced_drag_trefftz_N", "CDi_trefftz", "span_efficiency_trefftz",
                     "trefftz_difference", "profile_drag_N", "CD0", "side_force_N",
                     "drag_N", "CD", "lift_to_drag", "pitching_moment_Nm", "CM")


class WingBody:
    """A fixed wing in the freestream (case body type ``"wing"``).

    Parameters
    ----------
    spec : wakes.case.WingSpec
        The resolved body spec.
    case : wakes.case.Case
        The whole case (freestream, fluid).
    """

    trefftz = True

    def __init__(self, spec, case):
        self.name = spec.name
        self.spec = spec
        self.velocity = case.freestream.vector()
        self.density = case.fluid.density
        polars = SectionPolars.uniform(make_polar(spec.airfoil), spec.spanwise_panels,
                                       speed_of_sound=case.fluid.speed_of_sound)
        self._surface = wing_surface(spec.name, spec.planform(), n_span=spec.spanwise_panels,
                                     spacing=spec.spacing, n_chord=spec.chordwise_panels,
                                     lifting_line=spec.model == "lifting-line", polars=polars,
                                     position=spec.position, orientation_deg=spec.orientation)
        self.span_axis = rotation_matrix(spec.orientation) @ np.array([0.0, 1.0, 0.0])
        self.area = spec.reference_area
        self.span = spec.span
        self.moment_reference = np.asarray(spec.moment_reference, dtype=np.float64)
        self.reference_chord = spec.reference_chord
        self.motion = spec.harmonic_motion()

    def surfaces(self, time: float) -> list:
        """The wing's one surface at ``time`` [s]: at rest, or placed by its prescribed motion."""
        if self.motion is None:
            return [self._surface]
        return [self.motion.place(self._surface, time)]

    def new_wake(self, surface, time: float, settings) -> WakeSheet:
        """The free vortex lattice (or particles) shed by ``surface`` from ``time`` [s]."""
        return WakeSheet(surface.te_nodes, time, settings)

    def loads_row(self, strips: list, trefftz_drag: float) -> dict:
        """Totals and coefficients (see :func:`wakes.aero.loads.wing_totals`)."""
        return wing_totals(strips, velocity=self.velocity, span_axis=self.span_axis,
                           density=self.density, area=self.area, span=self.span,
                           trefftz_drag=trefftz_drag, moment_reference=self.moment_reference,
                           reference_chord=self.reference_chord)

    def section_table(self, strips: list) -> pd.DataFrame:
        """Spanwise distribution: one row per strip, per-unit-span loads along lift and drag."""
        e_d = self.velocity / np.linalg.norm(self.velocity)
        e_l = np.cross(e_d, self.span_axis)
        e_l /= np.linalg.norm(e_l)
        frames = []
        for s in strips:
            f_p, f_v = s.force_pressure, s.force_profile
            frames.append(pd.DataFrame({
                "body": self.name, "surface": s.surface, "strip": np.arange(s.gamma.shape[0]),
                "eta": s.eta, "x_m": s.points[:, 0], "y_m": s.points[:, 1], "z_m": s.points[:, 2],
                "chord_m": s.chord, "gamma_m2_s": s.gamma, "cl": s.cl, "cd": s.cd,
                "alpha_geometric_deg": np.degrees(s.alpha_geometric),
                "alpha_effective_deg": np.degrees(s.alpha_effective),
                "alpha_induced_deg": np.degrees(s.alpha_induced),
                "lift_N_per_m": ((f_p + f_v) @ e_l) / s.width,
                "induced_drag_N_per_m": (f_p @ e_d) / s.width,
                "profile_drag_N_per_m": (f_v @ e_d) / s.width,
            }))
        return pd.concat(frames, ignore_index=True)

    def tables(self) -> dict:
        """No extra tables for a wing."""
        return {}

    def motion_state(self) -> dict:
        """Nothing: a wing's motion is a function of time."""
        return {}

    def restore_motion_state(self, state: dict) -> None:
        """Nothing to restore (:meth:`motion_state`)."""

    def summary(self, loads: pd.DataFrame) -> dict:
        """The last step's totals and coefficients."""
        last = loads[loads["body"] == self.name].iloc[-1]
        return {k: float(last[k]) for k in WING_SUMMARY_KEYS}
