"""Plausibility flags: results that no real rotor, propeller, turbine or wing section reaches.

A run can finish cleanly and still report numbers that cannot be right: a
wake cut too short, a run stopped before the loads settled, a section polar
used far beyond its data. The checks here read only the run's tables -- the
summary dict, the loads and sections tables, the case and the polars' ranges
-- and return a :class:`Flag` for every result beyond a published bound or a
stated rule of thumb. Each flag names its bound and where the bound comes from.

Bounds (codes in brackets):

* ``induced-power-below-momentum`` -- a lift rotor in hover with an
  induced-power factor kappa = P_i / (T^(3/2)/sqrt(2 rho A)) below 1.
  Momentum theory's ideal induced power is the least any rotor of disc area
  A spends for thrust T (Glauert 1935, *Airplane propellers*, in Durand's
  *Aerodynamic Theory* vol. IV; Leishman 2006, *Principles of Helicopter
  Aerodynamics*, 2nd ed., ch. 2-3).
* ``figure-of-merit-high`` -- a lift rotor near hover with FM above 0.85
  (common practice: the best measured rotors reach about 0.8).
* ``turbine-power-above-betz`` -- a turbine's C_P above 16/27 (Betz 1920).
* ``turbine-power-above-momentum`` -- a turbine's C_P above the ideal
  actuator disc at the same C_T (:func:`turbine_power_bound`).
* ``propeller-efficiency-above-ideal`` -- a propeller's efficiency above the
  ideal (actuator-disc) efficiency at the same C_T and J,
  eta_i = 2/(1 + sqrt(1 + 8 C_T/(pi J^2))) (Rankine 1865, Froude 1889;
  Glauert 1935).
* ``section-angle-outside-polar`` -- a section's angle of attack outside
  the angles of its polar table (the table was extended beyond its data).
* ``section-cl-above-polar`` -- a section's c_l beyond the polar table's
  least or greatest c_l.
* ``section-cl-beyond-stall`` -- a polar with no stall (thin-airfoil
  theory, lift rising for ever) used at |c_l| above 1.5 (common practice:
  single-element sections without high-lift devices stall at c_l of about
  1.2-1.7 at Reynolds numbers of millions -- Abbott & von Doenhoff 1959,
  *Theory of Wing Sections*, from memory -- and lower on small rotors).
* ``tip-mach-high`` -- a rotor's largest tip Mach number above 0.7 with a
  polar that has no Mach dependence (common practice: compressibility
  raises the lift slope by 1/sqrt(1 - M^2), the Prandtl--Glauert rule,
  40 % at M = 0.7, and drag diverges beyond about M = 0.7 on thick sections).
* ``advance-ratio-high`` -- a rotor, propeller or turbine whose freestream
  across the axis exceeds the tip speed, mu above 1: the reverse-flow
  region, the circle of diameter mu R on the retreating side where the air
  meets the blade from its trailing edge (Johnson 1980, *Helicopter
  Theory*, ch. 5), then reaches past the tip, and the retreating blade
  works mostly in reversed and stalled flow, where the sections rest on
  the polar's extension to +-180 deg (common practice: conventional rotors
  fly below mu of about 0.5).
* ``blade-loading-high`` -- a lift rotor's C_T/sigma above 0.12 (common
  practice: the onset of blade stall; Leishman 2006, ch. 2).
* ``loads-not-settled`` -- loads still changing: the mean thrust or power
  of a rotor's last revolution, or the mean lift or induced drag of a
  wing's last window (:func:`check_settled`), more than 2 % from the window
  before (our criterion; the bundled hover validation case settles to
  under 1 %).
* ``gust-outlasts-run`` -- a gust of stated length whose end has not
  passed the bodies when the run ends (our criterion: the run then shows
  only part of the gust's loads), and ``gust-after-run`` -- a gust whose
  front reaches the bodies only after the run ends.
* ``wake-too-short`` -- a rotor's or wing's wake cut so close behind it
  that the inflow it induces is estimated more than 20 % low
  (:func:`wake_deficit`; our criterion: there a hovering rotor's induced
  power is about 6 % low, see there).

:func:`check_run` runs them all, :func:`case_flags` those that need no run
(``wakes check`` prints them); :func:`body_polar_limits` (from a run's
body models) or :func:`case_polar_limits` (from the case) give the polars'
ranges.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np
import pandas as pd

from .rotor_loads import freestream_ratios
from .sections import make_polar

KAPPA_MIN = 1.0
FM_MAX = 0.85
BETZ = 16.0 / 27.0
NO_STALL_CL_MAX = 1.5
TIP_MACH_MAX = 0.7
BLADE_LOADING_MAX = 0.12
SETTLE_TOLERANCE = 0.02
WAKE_DEFICIT_MAX = 0.20
ISA_SPEED_OF_SOUND = 340.294  # m/s, sea level (ICAO 1993, Manual of the ICAO Standard Atmosphere)

MOMENTUM_SOURCE = ("momentum theory: the ideal induced power T^(3/2)/sqrt(2 rho A) is the least a "
                   "rotor can spend (Glauert 1935; Leishman 2006, Principles of Helicopter "
                   "Aerodynamics, 2nd ed., ch. 2-3)")
FM_SOURCE = "common practice: the best measured rotors reach a figure of merit of about 0.8"
BETZ_SOURCE = "Betz 1920: an actuator disc extracts at most 16/27 of the wind's power"
DISC_SOURCE = ("actuator-disc momentum theory at the same C_T, C_P = C_T (1 - a) with "
               "C_T = 4 a (1 - a) (Betz 1920; Glauert 1935)")
FROUDE_SOURCE = ("ideal (actuator-disc) propeller efficiency at the same C_T and J, "
                 "2/(1 + sqrt(1 + 8 C_T/(pi J^2))) (Rankine 1865, Froude 1889; Glauert 1935)")
TABLE_SOURCE = "the polar table's data"
STALL_SOURCE = ("common practice: sections without high-lift devices stall at c_l of about 1.2-1.7 "
                "(Abbott & von Doenhoff 1959, Theory of Wing Sections; from memory)")
MACH_SOURCE = ("common practice: above tip Mach 0.7 compressibility (Prandtl-Glauert lift slope "
               "factor 1/sqrt(1 - M^2), drag divergence) changes the section loads")
ADVANCE_RATIO_MAX = 1.0
ADVANCE_SOURCE = ("common practice: above mu = 1 the reverse-flow circle, diameter mu R on the retreating "
                  "side (Johnson 1980, Helicopter Theory, ch. 5), reaches past the tip")
LOADING_SOURCE = "common practice: blade stall sets in near C_T/sigma = 0.12 (Leishman 2006, ch. 2)"
SETTLE_SOURCE = "our criterion: loads change by at most 2 % from one window to the next"
GUST_SOURCE = "our criterion: a run shows a gust's whole loads only once its end has passed the bodies"
WAKE_SOURCE = ("our criterion: a wake cut at distance L lowers the inflow it induces by about "
               "1 - L/sqrt(L^2 + R^2), R the rotor radius or wing semi-span (Biot-Savart), at most 20 %")


@dataclass(frozen=True)
class Flag:
    """One implausible result.

    Attributes
    ----------
    code : str
        What kind of result (module notes).
    message : str
        What was found, on which body, and what to change.
    value : float
        The offending value.
    bound : float
        The bound it crossed.
    source : str
        Where the bound comes from, or "common practice" / "our criterion".
    """

    code: str
    message: str
    value: float
    bound: float
    source: str

    def as_dict(self) -> dict:
        """``{"code", "message", "value", "bound", "source"}`` for ``summary.json``."""
        return {"code": self.code, "message": self.message, "value": float(self.value),
                "bound": float(self.bound), "source": self.source}


@dataclass(frozen=True)
class PolarLimits:
    """What a section polar covers.

    Attributes
    ----------
    name : str
        The polar, for messages.
    alpha_range_deg : tuple of float or None
        Least and greatest angle of attack of the data [deg]; None for a
        formula valid at every angle (thin-airfoil theory).
    cl_range : tuple of float or None
        Least and greatest c_l of the data; None without data.
    stall : bool
        Whether the polar's lift stops rising somewhere (False: thin-airfoil
        lift that rises for ever).
    mach_dependent : bool
        Whether the polar changes with the Mach number in the run.
    speed_of_sound : float or None
        The speed of sound the sections' Mach numbers were taken with [m/s],
        if known.
    """

    name: str
    alpha_range_deg: tuple[float, float] | None
    cl_range: tuple[float, float] | None
    stall: bool
    mach_dependent: bool
    speed_of_sound: float | None = None


def polar_limits(polar) -> PolarLimits | None:
    """The :class:`PolarLimits` of a polar object, or None for one of unknown make.

    Parameters
    ----------
    polar : a polar or SectionPolars
        A table is recognised by its ``alpha_range`` [rad] and ``cl``
        arrays, thin-airfoil theory by its ``lift_slope``, Mach dependence
        by an ``evaluate_mach`` method. Several distinct polars of one
        surface give the widest angle and c_l ranges of them. A
        SectionPolars without a ``speed_of_sound`` evaluates every strip at
        M = 0, so its polars count as Mach-independent.

    Examples
    --------
    >>> from wakes.aero.polars import ThinAirfoilPolar
    >>> polar_limits(ThinAirfoilPolar()).stall
    False
    """
    inner = getattr(polar, "polars", None)
    if isinstance(inner, tuple):
        parts = [polar_limits(p) for p in inner]
        if not parts or any(p is None for p in parts):
            return None
        ranges = [p.alpha_range_deg for p in parts]
        cls = [p.cl_range for p in parts]
        merged = parts[0] if len(parts) == 1 else PolarLimits(
            name=", ".join(p.name for p in parts),
            alpha_range_deg=(None if any(r is None for r in ranges)
                             else (min(r[0] for r in ranges), max(r[1] for r in ranges))),
            cl_range=None if any(c is None for c in cls) else (min(c[0] for c in cls),
                                                              max(c[1] for c in cls)),
            stall=all(p.stall for p in parts), mach_dependent=all(p.mach_dependent for p in parts))
        if hasattr(polar, "speed_of_sound"):
            sos = polar.speed_of_sound
            merged = dataclasses.replace(merged, speed_of_sound=sos,
                                         mach_dependent=merged.mach_dependent and sos is not None)
        return merged
    mach = callable(getattr(polar, "evaluate_mach", None))
    name = str(getattr(polar, "name", type(polar).__name__))
    if hasattr(polar, "alpha_range") and hasattr(polar, "cl"):
        lo, hi = polar.alpha_range
        cl = np.asarray(polar.cl, dtype=np.float64)
        return PolarLimits(name, (math.degrees(lo), math.degrees(hi)),
                           (float(cl.min()), float(cl.max())), True, mach)
    if hasattr(polar, "lift_slope"):
        return PolarLimits(name, None, None, False, mach)
    return None


def case_polar_limits(case) -> dict:
    """``{body name: PolarLimits}`` of every body of ``case`` with an airfoil.

    Reads the polar tables the case names (as a run does). A Mach-dependent
    polar counts as such only if the case gives a speed of sound
    (``[fluid] speed_of_sound``); without one its strips are at M = 0.
    """
    sos = getattr(case.fluid, "speed_of_sound", None)
    out = {}
    for spec in case.bodies:
        airfoil = getattr(spec, "airfoil", None)
        if airfoil is not None:
            limits = polar_limits(make_polar(airfoil))
            if limits is not None:
                out[spec.name] = dataclasses.replace(limits, speed_of_sound=sos,
                                                     mach_dependent=limits.mach_dependent and sos is not None)
    return out


def body_polar_limits(bodies) -> dict:
    """``{body name: PolarLimits}`` of a run's body models (:data:`wakes.aero.bodies.BODY_MODELS`
    instances), from the section polars their surfaces use -- with the speed of sound, if any."""
    out = {}
    for body in bodies:
        polars = getattr(body, "polars", None)
        if polars is None:
            surfaces = body.surfaces(0.0)
            polars = getattr(surfaces[0], "polars", None) if surfaces else None
        limits = polar_limits(polars) if polars is not None else None
        if limits is not None:
            out[body.name] = limits
    return out


# --- bounds -------------------------------------------------------------------------------


def turbine_power_bound(ct: float) -> float:
    """Largest power coefficient of an ideal actuator disc at thrust coefficient ``ct``.

    C_P = C_T (1 - a), the disc's thrust times the wind speed through it,
    with C_T = 4 a (1 - a) for C_T <= 1 (Betz 1920); beyond C_T = 1
    momentum theory has no solution and the wake is turbulent with a >=
    1/2, so C_P <= C_T/2. Never above 16/27.

    Examples
    --------
    >>> round(turbine_power_bound(8.0 / 9.0), 4)   # Betz's optimum, a = 1/3
    0.5926
    >>> turbine_power_bound(1.0)
    0.5
    """
    if ct <= 0.0:
        return 0.0
    disc = 0.5 * ct * (1.0 + math.sqrt(1.0 - ct)) if ct <= 1.0 else 0.5 * ct
    return min(BETZ, disc)


def ideal_propeller_efficiency(ct: float, j: float) -> float:
    """Froude's ideal efficiency 2/(1 + sqrt(1 + 8 C_T/(pi J^2))) of a propeller.

    Parameters
    ----------
    ct : float
        C_T = T/(rho n^2 D^4), positive.
    j : float
        Advance ratio V/(n D), positive.

    Examples
    --------
    >>> round(ideal_propeller_efficiency(0.1, 0.8), 4)
    0.9165
    """
    return 2.0 / (1.0 + math.sqrt(1.0 + 8.0 * ct / (math.pi * j * j)))


def wake_deficit(length: float, radius: float) -> float:
    """Fraction of the disc-centre inflow a wake column of ``length`` [m] leaves out.

    A uniform vortex cylinder of radius R from the disc to infinity induces
    on its axis at the disc w/2; cut at distance L it induces
    w/2 L/sqrt(L^2 + R^2) (Biot--Savart on the cylinder's rings), so the
    missing fraction is 1 - L/sqrt(L^2 + R^2). In hover the wake moves
    with the flow it induces, so a shorter wake also moves slower and packs
    its vorticity closer, which makes up for part of d. Measured on the
    lift-rotor template (``wakes new rotor``: 2 blades, R = 0.8 m,
    C_T 0.0036, 0.03 m cores, each run 8 revolutions longer than its wake):
    wakes cut 3, 6, 8 and 10 revolutions old, with d estimated by
    :func:`rotor_wake_length` 0.46, 0.20, 0.12 and 0.08, gave kappa 0.90,
    1.02, 1.05 and 1.07.

    Examples
    --------
    >>> round(wake_deficit(3.0, 1.0), 3)
    0.051
    """
    if not length > 0.0:
        return 1.0
    return 1.0 - length / math.hypot(length, radius)


# --- checks -------------------------------------------------------------------------------


def _bodies(summary: dict) -> dict:
    return summary.get("bodies", {}) or {}


def _finite(x) -> bool:
    return isinstance(x, (int, float, np.floating, np.integer)) and math.isfinite(float(x))


def _rotor_specs(case) -> list:
    return [s for s in case.bodies if getattr(s, "type", None) == "rotor"]


def check_induced_power(summary: dict) -> list[Flag]:
    """kappa below 1 on any body that reports ``induced_power_factor`` (a lift rotor in hover)."""
    out = []
    for name, b in _bodies(summary).items():
        k = b.get("induced_power_factor")
        if _finite(k) and k < KAPPA_MIN:
            out.append(Flag("induced-power-below-momentum",
                            f"{name}: induced-power factor kappa = {k:.3g} is below {KAPPA_MIN:g}, less "
                            "induced power than momentum theory allows; most likely the wake is cut too "
                            "short or the run stopped before the wake developed (raise wake_revolutions "
                            "and revolutions)", k, KAPPA_MIN, MOMENTUM_SOURCE))
    return out


def check_figure_of_merit(summary: dict, case) -> list[Flag]:
    """FM above 0.85 on a lift rotor, wherever FM is reported (near hover only; elsewhere it is NaN,
    :func:`wakes.aero.rotor_loads.near_hover`)."""
    out = []
    for spec in _rotor_specs(case):
        fm = _bodies(summary).get(spec.name, {}).get("FM")
        if spec.kind == "rotor" and _finite(fm) and fm > FM_MAX:
            out.append(Flag("figure-of-merit-high",
                            f"{spec.name}: figure of merit {fm:.3g} is above {FM_MAX:g}; the best measured "
                            "rotors reach about 0.8", fm, FM_MAX, FM_SOURCE))
    return out


def check_turbine_power(summary: dict, case) -> list[Flag]:
    """A turbine's C_P above Betz's 16/27, or above the ideal actuator disc at its C_T."""
    out = []
    for spec in _rotor_specs(case):
        b = _bodies(summary).get(spec.name, {})
        cp, ct = b.get("CP"), b.get("CT")
        if spec.kind != "turbine" or not _finite(cp):
            continue
        if cp > BETZ:
            out.append(Flag("turbine-power-above-betz",
                            f"{spec.name}: power coefficient {cp:.3g} is above the Betz limit 16/27 = "
                            f"{BETZ:.4f}", cp, BETZ, BETZ_SOURCE))
        elif _finite(ct) and cp > turbine_power_bound(ct):
            bound = turbine_power_bound(ct)
            out.append(Flag("turbine-power-above-momentum",
                            f"{spec.name}: power coefficient {cp:.3g} at thrust coefficient {ct:.3g} is "
                            f"above {bound:.3g}, the most an ideal actuator disc extracts at that thrust; "
                            "most likely the wake is cut too short (raise wake_revolutions)",
                            cp, bound, DISC_SOURCE))
    return out


def check_propeller_efficiency(summary: dict, case) -> list[Flag]:
    """A propeller's efficiency above Froude's ideal at the same C_T and J."""
    out = []
    for spec in _rotor_specs(case):
        b = _bodies(summary).get(spec.name, {})
        eta, ct, j = b.get("efficiency"), b.get("CT"), b.get("J")
        if spec.kind != "propeller" or not (_finite(eta) and _finite(ct) and _finite(j)):
            continue
        if ct > 0.0 and j > 0.0:
            ideal = ideal_propeller_efficiency(ct, j)
            if eta > ideal:
                out.append(Flag("propeller-efficiency-above-ideal",
                                f"{spec.name}: efficiency {eta:.3g} at C_T = {ct:.3g}, J = {j:.3g} is above "
                                f"the ideal {ideal:.3g} of momentum theory", eta, ideal, FROUDE_SOURCE))
    return out


def _stations(rows: pd.DataFrame) -> str:
    """Where the rows lie along their surface, e.g. ``r/R 0.15-0.29 (blades 1, 2)``.

    Columns a body does not fill (NaN in a mixed case's table) are ignored.
    """
    def has(c):
        return c in rows and rows[c].notna().any()

    if has("r_over_R"):
        where = f"r/R {rows['r_over_R'].min():.2f}-{rows['r_over_R'].max():.2f}"
        if has("blade"):
            blades = sorted(int(b) for b in rows["blade"].dropna().unique())
            where += f" (blade{'s' if len(blades) > 1 else ''} {', '.join(map(str, blades))})"
        return where
    if has("eta"):
        return f"eta {rows['eta'].min():.2f}-{rows['eta'].max():.2f}"
    return f"strips {', '.join(str(int(s)) for s in sorted(rows['strip'].dropna().unique()))}"


def check_sections(sections: pd.DataFrame, polars: Mapping, time_s: float) -> list[Flag]:
    """Section angles outside the polar's data, c_l beyond the data or beyond stall.

    Parameters
    ----------
    sections : pandas.DataFrame
        The run's sections table (one row per strip at the last step):
        ``body``, ``cl`` and ``alpha_deg`` (rotors) or
        ``alpha_effective_deg`` (wings).
    polars : mapping of str to PolarLimits
        Each body's polar; bodies not in it are not checked.
    time_s : float
        The time of the sections table [s], for messages.
    """
    out = []
    if sections is None or sections.empty or "body" not in sections:
        return out
    for name, rows in sections.groupby("body", sort=False):
        limits = polars.get(name)
        if limits is None:
            continue
        n = len(rows)
        # a rotor's table has alpha_deg, a wing's alpha_effective_deg; a mixed case has both columns
        alpha_col = next((c for c in ("alpha_deg", "alpha_effective_deg")
                          if c in rows and rows[c].notna().any()), None)
        cl = rows["cl"].to_numpy(dtype=np.float64)
        if limits.alpha_range_deg is not None and alpha_col is not None:
            alpha = rows[alpha_col].to_numpy(dtype=np.float64)
            lo, hi = limits.alpha_range_deg
            bad = (alpha < lo) | (alpha > hi)
            if bad.any():
                worst = float(alpha[bad][np.argmax(np.maximum(lo - alpha[bad], alpha[bad] - hi))])
                bound = lo if worst < lo else hi
                out.append(Flag("section-angle-outside-polar",
                                f"{name}: {int(bad.sum())} of {n} stations ({_stations(rows[bad])}) at "
                                f"t = {time_s:.4g} s work at angles of attack outside the polar "
                                f"'{limits.name}' ({lo:g} to {hi:g} deg), up to {worst:.3g} deg; their "
                                "loads come from the extension beyond the data", worst, bound, TABLE_SOURCE))
        if limits.cl_range is not None:
            lo, hi = limits.cl_range
            bad = (cl < lo) | (cl > hi)
            source, what = TABLE_SOURCE, f"the polar '{limits.name}' reaches {lo:.3g} to {hi:.3g}"
            code = "section-cl-above-polar"
        elif not limits.stall:
            lo, hi = -NO_STALL_CL_MAX, NO_STALL_CL_MAX
            bad = np.abs(cl) > NO_STALL_CL_MAX
            source, code = STALL_SOURCE, "section-cl-beyond-stall"
            what = (f"the polar '{limits.name}' has no stall; real sections stall near |c_l| = "
                    f"{NO_STALL_CL_MAX:g}")
        else:
            continue
        if bad.any():
            worst = float(cl[bad][np.argmax(np.maximum(lo - cl[bad], cl[bad] - hi))])
            bound = lo if worst < lo else hi
            out.append(Flag(code, f"{name}: {int(bad.sum())} of {n} stations ({_stations(rows[bad])}) at "
                                  f"t = {time_s:.4g} s carry c_l up to {worst:.3g}; {what}",
                            worst, bound, source))
    return out


def tip_mach(spec, case, speed_of_sound: float = ISA_SPEED_OF_SOUND) -> float:
    """Largest blade-tip Mach number of a rotor spec: tip speed plus the freestream across the
    disc on the advancing side, with the freestream along the axis added at right angles."""
    a = np.asarray(spec.axis, dtype=np.float64)
    a /= np.linalg.norm(a)
    v = case.freestream.vector()
    along = float(v @ a)
    across = float(np.linalg.norm(v - along * a))
    tip = 2.0 * math.pi * spec.rpm / 60.0 * spec.radius
    return math.hypot(tip + across, along) / speed_of_sound


def check_tip_mach(case, polars: Mapping, speed_of_sound: float = ISA_SPEED_OF_SOUND) -> list[Flag]:
    """A rotor's tip Mach number above 0.7 with a polar that has no Mach dependence.

    The speed of sound is the polars' (:attr:`PolarLimits.speed_of_sound`)
    or else ``speed_of_sound`` [m/s], ISA sea level by default; bodies
    missing from ``polars`` are taken as Mach-independent.
    """
    out = []
    for spec in _rotor_specs(case):
        limits = polars.get(spec.name)
        if limits is not None and limits.mach_dependent:
            continue
        sos = limits.speed_of_sound if limits is not None and limits.speed_of_sound else speed_of_sound
        m = tip_mach(spec, case, sos)
        if m > TIP_MACH_MAX:
            out.append(Flag("tip-mach-high",
                            f"{spec.name}: blade tips reach Mach {m:.3g} (speed of sound {sos:g} "
                            f"m/s) with a polar without Mach dependence; above {TIP_MACH_MAX:g} the section "
                            "loads change with compressibility", m, TIP_MACH_MAX, MACH_SOURCE))
    return out


def check_advance_ratio(case) -> list[Flag]:
    """A rotor whose advance ratio mu (freestream across the axis over the tip speed) is above 1."""
    out = []
    for spec in _rotor_specs(case):
        mu, _ = freestream_ratios(case.freestream.vector(), spec.axis, 2.0 * math.pi * spec.rpm / 60.0,
                                  spec.radius)
        if mu > ADVANCE_RATIO_MAX:
            out.append(Flag("advance-ratio-high",
                            f"{spec.name}: advance ratio mu = {mu:.3g}, the freestream across the axis "
                            f"is faster than the blade tips; the retreating blade meets reversed flow "
                            "beyond its tip (raise rpm or lower the speed across the disc)", mu,
                            ADVANCE_RATIO_MAX, ADVANCE_SOURCE))
    return out


def check_blade_loading(summary: dict, case) -> list[Flag]:
    """A lift rotor's blade loading C_T/sigma above 0.12 (rotor C_T = T/(rho A (Omega R)^2))."""
    out = []
    for spec in _rotor_specs(case):
        b = _bodies(summary).get(spec.name, {})
        ct, sigma = b.get("CT"), b.get("solidity")
        if spec.kind != "rotor" or not (_finite(ct) and _finite(sigma)) or not sigma > 0.0:
            continue
        loading = ct / sigma
        if loading > BLADE_LOADING_MAX:
            out.append(Flag("blade-loading-high",
                            f"{spec.name}: blade loading C_T/sigma = {loading:.3g} is above "
                            f"{BLADE_LOADING_MAX:g}, where blades begin to stall", loading,
                            BLADE_LOADING_MAX, LOADING_SOURCE))
    return out


def _window_change(values: np.ndarray, n: int) -> float:
    """Relative change of the mean of the last ``n`` values from the ``n`` before (NaN if short)."""
    if n < 1 or values.shape[0] < 2 * n:
        return float("nan")
    last, before = float(np.mean(values[-n:])), float(np.mean(values[-2 * n:-n]))
    scale = max(abs(last), abs(before))
    return abs(last - before) / scale if scale > 0.0 else 0.0


def check_settled(loads: pd.DataFrame, case) -> list[Flag]:
    """Loads still changing at the end of the run.

    The mean over the last window is compared with the mean over the
    window before. For a rotor the window is one of its revolutions
    (thrust and power). For a wing (lift and induced drag) it is the
    longest rotor revolution of the case, over which a rotor's slipstream
    repeats, or, with no rotor, one span of travel at the freestream
    speed. A run shorter than two windows is flagged too.
    """
    out = []
    if loads is None or loads.empty:
        return out
    dt = case.time.dt
    rotors = _rotor_specs(case)
    revolution = {s.name: max(1, int(round(60.0 / s.rpm / dt))) for s in rotors}
    speed = float(np.linalg.norm(case.freestream.vector()))
    for spec in case.bodies:
        rows = loads[loads["body"] == spec.name]
        if spec.type == "rotor":
            n, columns = revolution[spec.name], ("thrust_N", "power_W")
            window = f"revolution ({n} steps)"
        elif revolution:
            n, columns = max(revolution.values()), ("lift_N", "induced_drag_N")
            window = f"rotor revolution ({n} steps)"
        elif speed > 0.0 and hasattr(spec, "span"):
            n = max(int(round(spec.span / (speed * dt))), 1)
            window, columns = f"span of travel ({n} steps)", ("lift_N", "induced_drag_N")
        else:
            continue
        columns = [c for c in columns if c in rows]
        if not columns:
            continue
        if len(rows) < 2 * n:
            out.append(Flag("loads-not-settled",
                            f"{spec.name}: the run's {len(rows)} steps are fewer than two of its "
                            f"windows (a {window}); whether the loads settled cannot be told "
                            "(run longer)", float(len(rows)), float(2 * n), SETTLE_SOURCE))
            continue
        for c in columns:
            change = _window_change(rows[c].to_numpy(dtype=np.float64), n)
            if change > SETTLE_TOLERANCE:
                out.append(Flag("loads-not-settled",
                                f"{spec.name}: mean {c} over the last {window} differs by "
                                f"{100 * change:.2g} % from the one before; the run ended before the "
                                "loads settled (run longer)", change, SETTLE_TOLERANCE, SETTLE_SOURCE))
    return out


def _run_time(case) -> float:
    return (case.time.steps - 1) * case.time.dt


def rotor_wake_length(spec, case, thrust: float) -> float:
    """Estimated length [m] of a rotor's kept wake column behind the disc.

    The wake's effective age -- the age it is cut at (``wake_revolutions``
    or ``[wake] max_age``, the smaller) less half its fade (a faded wake
    acts about like one cut half the fade earlier), at most the run's
    duration -- times the flow speed through the disc: the freestream plus
    momentum theory's induced velocity v_i along -axis, v_i from
    v_h = sqrt(T/(2 rho A)) and the axial flow V_c into the disc (climb
    branch for V_c >= 0; windmill branch for V_c <= -2 v_h; v_i = |V_c|/2
    between, where the wake hardly leaves the disc).
    """
    a = np.asarray(spec.axis, dtype=np.float64)
    a /= np.linalg.norm(a)
    v = case.freestream.vector()
    period = 60.0 / spec.rpm
    keep = min(float(spec.wake_revolutions) * period, float(case.wake.max_age))
    fade = min(float(getattr(spec, "wake_fade_revolutions", 0.0)) * period, 0.5 * keep)
    age = min(keep - 0.5 * fade if math.isfinite(keep) else math.inf, _run_time(case))
    area = math.pi * spec.radius ** 2
    vh = math.sqrt(max(thrust, 0.0) / (2.0 * case.fluid.density * area))
    vc = -float(v @ a)
    if vc >= 0.0:
        vi = -0.5 * vc + math.sqrt(0.25 * vc * vc + vh * vh)
    elif vc <= -2.0 * vh:
        vi = -0.5 * vc - math.sqrt(0.25 * vc * vc - vh * vh)
    else:
        vi = -0.5 * vc
    return float(np.linalg.norm(v - vi * a)) * age


def wing_wake_length(case) -> float:
    """Length [m] of a wing's wake: the freestream's travel over the wake's age (``[wake]
    max_age``, at most the run's duration)."""
    return float(np.linalg.norm(case.freestream.vector())) * min(float(case.wake.max_age), _run_time(case))


def check_wake_length(summary: dict, case) -> list[Flag]:
    """A wake cut so short that the inflow it induces is estimated more than 20 % low.

    :func:`wake_deficit` of the wake's length and a radius: for a rotor
    (:func:`rotor_wake_length`) the tip radius, for a wing
    (:func:`wing_wake_length`) the semi-span, where its trailed tip vortices
    lie (the same formula: two straight trailed lines of length L at
    +-b/2 induce at the wing's centre L/sqrt(L^2 + (b/2)^2) of their
    semi-infinite downwash).
    """
    out = []
    for spec in case.bodies:
        if spec.type == "rotor":
            thrust = _bodies(summary).get(spec.name, {}).get("thrust_N")
            if not _finite(thrust):
                continue
            length, radius, what = rotor_wake_length(spec, case, float(thrust)), spec.radius, "R behind the disc"
            change = "wake_revolutions"
        elif hasattr(spec, "span"):
            length, radius, what = wing_wake_length(case), 0.5 * spec.span, "semi-spans behind the wing"
            change = "[wake] max_age or [time] steps"
        else:
            continue
        d = wake_deficit(length, radius)
        if d > WAKE_DEFICIT_MAX:
            out.append(Flag("wake-too-short",
                            f"{spec.name}: the kept wake reaches about {length / radius:.2g} {what}, which "
                            f"leaves out about {100 * d:.2g} % of the inflow it would induce at the centre; "
                            f"the loads are those of too little induced flow (raise {change})",
                            d, WAKE_DEFICIT_MAX, WAKE_SOURCE))
    return out


def check_gust(case) -> list[Flag]:
    """A gust that has not passed the bodies by the end of the run, or reaches them only after it.

    The gust's end (its front plus its length) passes the most downstream
    point of the bodies' planforms (at their mean position) at
    :meth:`wakes.aero.gust.Gust.passed`; a sharp-edged gust without a
    length stays on by design and is not flagged for it.
    """
    gust = case.gust()
    if gust is None:
        return []
    end = _run_time(case)
    if gust.arrival > end:
        return [Flag("gust-after-run",
                     f"the gust's front reaches the bodies at t = {gust.arrival:.4g} s, after the run ends "
                     f"(t = {end:.4g} s); the run shows no gust (lower [freestream.gust] arrival_time or "
                     "raise [time] steps)", gust.arrival, end, GUST_SOURCE)]
    if not math.isfinite(gust.length):
        return []
    heading = gust.freestream / gust.speed
    downstream = max(float(np.max(b.outline().reshape(-1, 3) @ heading)) for b in case.bodies)
    passed = gust.passed(downstream)
    if passed <= end:
        return []
    steps = math.ceil(passed / case.time.dt - 1e-9) + 1
    return [Flag("gust-outlasts-run",
                 f"the gust ({gust.length:.4g} m long) has not passed the bodies when the run ends "
                 f"(t = {end:.4g} s): its end passes the last of them at t = {passed:.4g} s; the loads "
                 f"show only part of the gust (raise [time] steps to at least {steps}, or shorten "
                 "[freestream.gust] length)", passed, end, GUST_SOURCE)]


def case_flags(case, *, speed_of_sound: float = ISA_SPEED_OF_SOUND) -> list[Flag]:
    """The checks that need the case alone (tip Mach number, advance ratio), for ``wakes check``.

    Examples
    --------
    >>> from wakes.case import load_case
    >>> case_flags(load_case("cases/drone-lift-rotor.toml"))
    []
    """
    return (check_tip_mach(case, case_polar_limits(case), speed_of_sound) + check_advance_ratio(case)
            + check_gust(case))


def check_run(summary: dict, loads: pd.DataFrame, sections: pd.DataFrame, case,
              polars: Mapping | None = None, *, speed_of_sound: float = ISA_SPEED_OF_SOUND) -> list[Flag]:
    """Every plausibility check on one run's tables.

    Parameters
    ----------
    summary : dict
        The run's summary (``{"bodies": {name: {...}}, "run": {...}, ...}``).
    loads : pandas.DataFrame
        The loads table (one row per step and body).
    sections : pandas.DataFrame
        The sections table (the last step).
    case : wakes.case.Case
        The case that was run.
    polars : mapping of str to PolarLimits, optional
        Each body's polar ranges: :func:`body_polar_limits` of the run's
        bodies where they are at hand; by default :func:`case_polar_limits`
        (the polar files read again, Mach numbers taken as unknown).
    speed_of_sound : float
        [m/s], for the tip Mach number; ISA sea level by default.

    Returns
    -------
    list of Flag
        In the order of the module notes; empty when nothing is implausible.

    Examples
    --------
    >>> from wakes.case import load_case
    >>> from wakes.run import run_case
    >>> run = run_case(load_case("cases/survey-glider.toml"))
    >>> check_run(run.summary, run.loads, run.sections, run.case)
    []
    """
    if polars is None:
        polars = case_polar_limits(case)
    time_s = float(summary.get("run", {}).get("final_time_s", float("nan")))
    return (check_induced_power(summary) + check_figure_of_merit(summary, case)
            + check_turbine_power(summary, case) + check_propeller_efficiency(summary, case)
            + check_sections(sections, polars, time_s) + check_tip_mach(case, polars, speed_of_sound)
            + check_advance_ratio(case) + check_blade_loading(summary, case) + check_settled(loads, case)
            + check_wake_length(summary, case) + check_gust(case))
