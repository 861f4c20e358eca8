"""Rotor loads: thrust, torque and power from the blade strips, and their coefficients.

Every blade strip carries a pressure force (Kutta--Joukowski on its bound
vortex, with the velocity that includes everything induced) and a profile
force from its polar (:mod:`wakes.aero.loads`). About the hub centre h and
the unit axis a (thrust direction; downwind for a turbine):

* thrust T = sum F . a [N];
* shaft torque Q = -spin sum ((x - h) x F) . a [N m], the torque the shaft
  must supply to keep the rotation (negative when the air drives it);
* shaft power P = Omega Q [W], split into induced power (pressure forces)
  and profile power (profile forces).

Coefficients by ``kind`` (Leishman 2006, *Principles of Helicopter
Aerodynamics*, 2nd ed., ch. 2-3; Glauert 1926 for propellers; Betz 1920 for
turbines), with A = pi R^2, n = Omega/(2 pi) and D = 2R:

* ``rotor``: C_T = T/(rho A (Omega R)^2), C_Q = Q/(rho A (Omega R)^2 R),
  C_P = P/(rho A (Omega R)^3), figure of merit FM = C_T^(3/2)/(sqrt(2) C_P);
* ``propeller``: C_T = T/(rho n^2 D^4), C_P = P/(rho n^3 D^5), J = V/(n D)
  with V the flight speed along the axis, efficiency = T V/P;
* ``turbine``: power extracted P_w = -P, C_P = P_w/(1/2 rho A V^3),
  C_T = T/(1/2 rho A V^2), tip-speed ratio Omega R/V with V the wind speed.

Signs: one convention per kind, so that every reported power and torque is
positive in the kind's normal working (:data:`POWER_SENSE`). A rotor or
propeller reports the shaft torque and power it takes, a turbine the
torque and power it gives. The power splits into induced power (the
pressure forces' part: taken by a rotor or propeller, given by a turbine)
and profile power (lost to profile drag, positive for every kind), so
``power_W`` = induced + profile for a rotor or propeller and induced -
profile for a turbine.

Flow ratios, for every kind (Leishman 2006, ch. 2 and 5), with V the
freestream (the air's velocity relative to the hub) and a the axis:

* advance ratio mu = |V - (V . a) a|/(Omega R), the freestream across the
  axis over the tip speed (edgewise flight; 0 in hover and axial flight; a
  propeller's J = V/(n D) is a different ratio, of the speed along the axis);
* shaft angle alpha_s = atan2(V . a, |V - (V . a) a|), the angle of the
  freestream to the disc plane, positive when the air crosses the disc
  along +a (:func:`shaft_angle_deg`);
* inflow ratio lambda = the mean flow through the blades' annulus over the
  tip speed, freestream and induced velocity together, in the direction the
  air crosses the disc in the kind's normal working (against the axis for a
  rotor or propeller, along it for a turbine). It is measured at the
  blades: each strip's section-plane air velocity along the axis, averaged
  over the blades with weights r dr (annulus area). In hover momentum
  theory gives lambda = sqrt(C_T/2) for a uniform inflow.

Hub forces and moments, for every kind, in the rotor frame (x_h, y_h, a)
of :meth:`wakes.aero.rotor.RotorGeometry.rotor_frame`: x_h the azimuth
origin psi = 0 (downstream, the freestream's direction across the axis;
without one the hub frame's azimuth zero), y_h = a x x_h, a right-handed
frame whatever the sense of rotation (Johnson 1980, *Helicopter Theory*,
ch. 5, takes the same axes for a counter-clockwise rotor):

* H = sum F . x_h [N], the in-plane force downstream (rearward in
  edgewise flight, opposite to the direction of flight);
* Y = sum F . y_h [N], the side force (towards the advancing side psi =
  90 deg of a ``spin = +1`` rotor);
* roll moment M_x = sum ((x - h) x F) . x_h and pitch moment M_y = sum ((x -
  h) x F) . y_h [N m] about the hub centre, with every strip's pressure
  and profile force at its section point (and a vortex-lattice strip's own
  moment). A positive M_y lifts the upstream edge of the disc (nose up in
  edgewise flight), a positive M_x the +y_h edge;
* coefficients C_H = H/(rho A (Omega R)^2), C_Y = Y/(rho A (Omega R)^2),
  C_Mx = M_x/(rho A (Omega R)^2 R), C_My = M_y/(rho A (Omega R)^2 R), the
  normalisation of C_T and C_Q for every kind.

A clockwise rotor is the mirror image of a counter-clockwise one in the
plane of x_h and a: H and M_y stay, Y and M_x change sign.

Forces in the flight frame (wind axes), for every kind, from the same
total force F: x_f along the freestream V (downstream), z_f the axis's part
normal to V (towards +a), y_f = z_f x x_f (:func:`flight_frame`):

* ``drag_force_N`` D = F . x_f (positive downstream: the rotor's drag;
  negative: it propels), ``lift_force_N`` L = F . z_f and
  ``side_force_N`` S = F . y_f [N]. With the shaft normal to V (edgewise
  flight, zero shaft angle) D = H, S = Y and L = T. Without a freestream
  all three are NaN; with a freestream along the axis L and S are.

Figure of merit is a hover quantity (Leishman 2006, ch. 2): it is reported
only near hover, where the freestream is at most :data:`NEAR_HOVER_RATIO`
of momentum theory's hover induced velocity, sqrt(mu^2 + lambda_c^2) <=
0.05 sqrt(C_T/2), with lambda_c = -(V . a)/(Omega R) the climb ratio
(:func:`near_hover`; our rule: in axial climb at that speed momentum
theory's ideal power is 2.5 % above hover's, V/(2 v_h) + sqrt((V/(2
v_h))^2 + 1) = 1.025, and less in edgewise flight). Elsewhere ``FM`` is
NaN, and so is the induced-power factor.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from .rotor import is_axial_flow

ROTOR_KINDS = ("rotor", "propeller", "turbine")

#: +1 where the shaft drives the rotor (rotor, propeller), -1 where the air drives it (turbine).
POWER_SENSE = {"rotor": 1.0, "propeller": 1.0, "turbine": -1.0}

#: Near hover: the freestream at most this fraction of the hover induced velocity (module notes).
NEAR_HOVER_RATIO = 0.05

#: Flow-ratio columns every rotor reports in loads.csv and summary.json (module notes).
FLOW_COLUMNS = ("advance_ratio_mu", "inflow_ratio_lambda")

#: Hub-force and hub-moment columns every rotor reports, dimensional then coefficients (module notes).
HUB_COLUMNS = ("H_force_N", "Y_force_N", "roll_moment_Nm", "pitch_moment_Nm", "CH", "CY", "CMx", "CMy")

KIND_COLUMNS = {
    "rotor": ("thrust_N", "torque_Nm", "power_W", "CT", "CQ", "CP", "FM"),
    "propeller": ("thrust_N", "torque_Nm", "power_W", "CT", "CP", "J", "efficiency"),
    "turbine": ("power_W", "thrust_N", "torque_Nm", "CP", "CT", "tip_speed_ratio"),
}


def _nan_div(num: float, den: float) -> float:
    return num / den if den != 0.0 else float("nan")


def blade_forces(strips, hub: np.ndarray, axis: np.ndarray, spin: int) -> dict:
    """Thrust and shaft torque of each blade, split into pressure and profile parts.

    Parameters
    ----------
    strips : list of StripLoads
        One per blade (:func:`wakes.aero.loads.strip_loads`).
    hub : ndarray, shape (3,)
        Hub centre [m].
    axis : ndarray, shape (3,)
        Unit thrust axis.
    spin : int
        +1 or -1 (rotation sense about ``axis``).

    Returns
    -------
    dict of ndarray, each shape (B,)
        ``thrust`` [N], ``torque_induced`` and ``torque_profile`` [N m]
        (shaft torque from pressure and profile forces).
    """
    out = {"thrust": [], "torque_induced": [], "torque_profile": []}
    for s in strips:
        arm = s.points - hub
        f_p, f_v = s.force_pressure, s.force_profile
        out["thrust"].append(float(np.sum((f_p + f_v) @ axis)))
        out["torque_induced"].append(-spin * float(np.sum(np.cross(arm, f_p) @ axis)))
        out["torque_profile"].append(-spin * float(np.sum(np.cross(arm, f_v) @ axis)))
    return {k: np.asarray(v) for k, v in out.items()}


def hub_loads(strips, hub: np.ndarray, frame) -> dict:
    """In-plane forces and hub moments of all blades together, in the rotor frame (module notes).

    Parameters
    ----------
    strips : list of StripLoads
        One per blade.
    hub : ndarray, shape (3,)
        Hub centre [m].
    frame : tuple of ndarray, each shape (3,)
        The rotor frame's unit vectors (x_h, y_h, a).

    Returns
    -------
    dict of float
        ``H_force_N``, ``Y_force_N`` [N], ``roll_moment_Nm``,
        ``pitch_moment_Nm`` [N m].

    Examples
    --------
    A force of 1 N along +a at 2 m on +x_h: no in-plane force, a moment of
    -2 N m about y_h (the downstream edge pushed up: nose down).

    >>> from types import SimpleNamespace
    >>> s = SimpleNamespace(points=np.array([[2.0, 0.0, 0.0]]), force_pressure=np.array([[0.0, 0.0, 1.0]]),
    ...                     force_profile=np.zeros((1, 3)), moment_pressure=None)
    >>> {k: float(v) for k, v in hub_loads([s], np.zeros(3), np.eye(3)).items()}
    {'H_force_N': 0.0, 'Y_force_N': 0.0, 'roll_moment_Nm': 0.0, 'pitch_moment_Nm': -2.0}
    """
    x_h, y_h, _ = (np.asarray(v, dtype=np.float64) for v in frame)
    force = np.zeros(3)
    moment = np.zeros(3)
    for s in strips:
        f = s.force_pressure + s.force_profile
        force += f.sum(axis=0)
        moment += np.cross(s.points - hub, f).sum(axis=0)
        if s.moment_pressure is not None:
            moment += s.moment_pressure.sum(axis=0)
    return {"H_force_N": float(force @ x_h), "Y_force_N": float(force @ y_h),
            "roll_moment_Nm": float(moment @ x_h), "pitch_moment_Nm": float(moment @ y_h)}


#: Force columns in the flight frame every rotor reports (module notes).
FLIGHT_COLUMNS = ("drag_force_N", "lift_force_N", "side_force_N")


def flight_frame(v_inf, axis) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Unit vectors (x_f, y_f, z_f) of the flight frame (module notes); NaN where undefined.

    Examples
    --------
    >>> [v.tolist() for v in flight_frame([10.0, 0.0, 0.0], [0.0, 0.0, 1.0])]
    [[1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]]
    >>> flight_frame([0.0, 0.0, -5.0], [0.0, 0.0, 1.0])[2].tolist()
    [nan, nan, nan]
    """
    v = np.asarray(v_inf, dtype=np.float64)
    a = np.asarray(axis, dtype=np.float64)
    a = a / np.linalg.norm(a)
    nan = np.full(3, np.nan)
    speed = float(np.linalg.norm(v))
    if speed == 0.0:
        return nan, nan, nan
    x_f = v / speed
    if is_axial_flow(v, a):
        return x_f, nan, nan
    normal = a - (a @ x_f) * x_f
    z_f = normal / np.linalg.norm(normal)
    return x_f, np.cross(z_f, x_f), z_f


def flight_forces(loads: dict, thrust: float, rotor_frame, frame) -> dict:
    """Drag, lift and side force [N] in the flight frame ``frame`` (:func:`flight_frame`) from the
    hub loads ``loads`` (:func:`hub_loads`), the thrust [N] and the rotor frame (x_h, y_h, a)."""
    x_h, y_h, a = (np.asarray(u, dtype=np.float64) for u in rotor_frame)
    force = loads["H_force_N"] * x_h + loads["Y_force_N"] * y_h + thrust * a
    x_f, y_f, z_f = frame
    return {"drag_force_N": float(force @ x_f), "lift_force_N": float(force @ z_f),
            "side_force_N": float(force @ y_f)}


def hub_coefficients(loads: dict, *, omega: float, radius: float, density: float) -> dict:
    """``loads`` (:func:`hub_loads`) with C_H, C_Y, C_Mx and C_My added (module notes).

    Examples
    --------
    >>> c = hub_coefficients({"H_force_N": 2.0, "Y_force_N": 0.0, "roll_moment_Nm": 0.0,
    ...                       "pitch_moment_Nm": 4.0}, omega=1.0, radius=1.0, density=1.0 / np.pi)
    >>> c["CH"], c["CMy"]
    (2.0, 4.0)
    """
    force = density * np.pi * radius ** 2 * (omega * radius) ** 2
    out = dict(loads)
    out.update({"CH": loads["H_force_N"] / force, "CY": loads["Y_force_N"] / force,
                "CMx": loads["roll_moment_Nm"] / (force * radius),
                "CMy": loads["pitch_moment_Nm"] / (force * radius)})
    return out


def near_hover(mu: float, climb_ratio: float, ct: float) -> bool:
    """Whether a lift rotor's flow is close enough to hover for a figure of merit (module notes).

    Parameters
    ----------
    mu : float
        Advance ratio (freestream across the axis over the tip speed).
    climb_ratio : float
        lambda_c, the freestream along the axis over the tip speed (either sign).
    ct : float
        Thrust coefficient T/(rho A (Omega R)^2).

    Returns
    -------
    bool
        sqrt(mu^2 + lambda_c^2) <= NEAR_HOVER_RATIO sqrt(C_T/2), with C_T > 0.

    Examples
    --------
    >>> near_hover(0.0, 0.0, 0.005), near_hover(0.002, 0.0, 0.005), near_hover(0.1, 0.0, 0.005)
    (True, True, False)
    """
    return bool(ct > 0.0 and np.hypot(mu, climb_ratio) <= NEAR_HOVER_RATIO * np.sqrt(0.5 * ct))


def freestream_ratios(v_inf, axis, omega: float, radius: float) -> tuple[float, float]:
    """Advance ratio mu and climb ratio lambda_c of a freestream ``v_inf`` [m/s] (module notes).

    Examples
    --------
    >>> freestream_ratios([3.0, 0.0, -4.0], [0.0, 0.0, 1.0], 10.0, 1.0)
    (0.3, 0.4)
    """
    v = np.asarray(v_inf, dtype=np.float64)
    a = np.asarray(axis, dtype=np.float64)
    a = a / np.linalg.norm(a)
    along = float(v @ a)
    tip = omega * radius
    return float(np.linalg.norm(v - along * a)) / tip, -along / tip


def shaft_angle_deg(mu: float, climb_ratio: float) -> float:
    """Angle of the freestream to the disc plane [deg] (module notes), NaN without a freestream.

    Positive when the air crosses the disc along +axis (a lift rotor's disc
    tilted back against the flight, the sense of a helicopter's shaft angle
    of attack, Johnson 1980, ch. 5); -90 deg in axial climb, +90 deg for a
    turbine facing the wind.

    Examples
    --------
    >>> shaft_angle_deg(0.3, 0.3), shaft_angle_deg(0.2, 0.0), shaft_angle_deg(0.0, 0.0)
    (-45.0, 0.0, nan)
    """
    if mu == 0.0 and climb_ratio == 0.0:
        return float("nan")
    return float(np.degrees(np.arctan2(-climb_ratio, mu))) + 0.0   # + 0.0: no -0.0 in the tables


def inflow_ratio(kind: str, strips, axis: np.ndarray, r: np.ndarray, dr: np.ndarray, omega: float,
                 radius: float) -> float:
    """Inflow ratio lambda measured at the blades (module notes).

    Parameters
    ----------
    kind : {"rotor", "propeller", "turbine"}
        Sets the sense of lambda.
    strips : list of StripLoads
        One per blade, with the section-plane air velocity ``flow``.
    axis : ndarray, shape (3,)
        Unit thrust axis (downwind for a turbine).
    r, dr : ndarray, shape (n,)
        Blade coordinate of each strip's section and the strip width [m],
        in the strips' order.
    omega, radius : float
        Rotation rate [rad/s] and R [m].

    Returns
    -------
    float
        The r dr weighted mean over all blades' strips of the air velocity
        along the axis, times -1 for a rotor or propeller, over Omega R.
    """
    w = r * dr
    along = np.mean([float(np.sum((s.flow @ axis) * w)) for s in strips]) / float(np.sum(w))
    return -POWER_SENSE[kind] * along / (omega * radius)


def local_inflow(kind: str, strips, axis: np.ndarray, omega: float, radius: float) -> np.ndarray:
    """Each strip's inflow ratio, the local values whose r dr mean is :func:`inflow_ratio`.

    Parameters
    ----------
    kind : {"rotor", "propeller", "turbine"}
        Sets the sense (module notes).
    strips : list of StripLoads
        One per blade (B of them, n strips each), with the section-plane air velocity ``flow``.
    axis : ndarray, shape (3,)
        Unit thrust axis.
    omega, radius : float
        Rotation rate [rad/s] and R [m].

    Returns
    -------
    ndarray, shape (B, n)
        Air velocity along the axis at each strip, times -1 for a rotor or
        propeller, over Omega R, in the strips' order.
    """
    along = np.array([s.flow @ axis for s in strips], dtype=np.float64)
    return -POWER_SENSE[kind] * along / (omega * radius)


def disc_map_table(name: str, samples: list, *, radius: float, r: np.ndarray) -> pd.DataFrame:
    """Sectional loads of every blade at every sampled azimuth: the map of the rotor disc.

    Parameters
    ----------
    name : str
        Body name.
    samples : list of dict
        One per step (those of the last full revolution), each with
        ``azimuth_deg`` (B,), the blade azimuths psi, and ``dT_dr_N_per_m``,
        ``inflow_ratio``, ``alpha_deg`` (B, n) in the strips' order.
    radius : float
        R [m].
    r : ndarray, shape (n,)
        Section radius [m], in the strips' order.

    Returns
    -------
    pandas.DataFrame
        One row per sample, blade and strip, sorted by blade, azimuth and
        radius: ``body``, ``blade`` (1-based), ``azimuth_deg`` (psi, 0 to
        360), ``r_m``, ``r_over_R``, ``normal_force_N_per_m`` (the section
        force along the axis per unit radius, dT/dr), ``inflow_ratio``
        (:func:`local_inflow`) and ``alpha_deg`` (effective angle of attack).

    Examples
    --------
    >>> one = {"azimuth_deg": np.array([90.0]), "dT_dr_N_per_m": np.array([[3.0, 5.0]]),
    ...        "inflow_ratio": np.array([[0.05, 0.04]]), "alpha_deg": np.array([[6.0, 4.0]])}
    >>> t = disc_map_table("rotor", [one], radius=1.0, r=np.array([0.8, 0.4]))
    >>> t[["azimuth_deg", "r_over_R", "normal_force_N_per_m"]].values.tolist()
    [[90.0, 0.4, 5.0], [90.0, 0.8, 3.0]]
    """
    frames = []
    for sample in samples:
        for k, psi in enumerate(sample["azimuth_deg"]):
            frames.append(pd.DataFrame({
                "body": name, "blade": k + 1, "azimuth_deg": float(psi), "r_m": r, "r_over_R": r / radius,
                "normal_force_N_per_m": sample["dT_dr_N_per_m"][k], "inflow_ratio": sample["inflow_ratio"][k],
                "alpha_deg": sample["alpha_deg"][k]}))
    table = pd.concat(frames, ignore_index=True)
    return table.sort_values(["blade", "azimuth_deg", "r_m"], kind="stable", ignore_index=True)


#: Highest harmonic of the azimuth that :func:`blade_harmonics_table` reports.
MAX_HARMONIC = 4
#: A harmonic smaller than this fraction of the quantity's largest one has no phase (NaN).
NO_PHASE = 1e-9


def blade_harmonics_table(name: str, samples: list, *, r: np.ndarray, dr: np.ndarray,
                          max_harmonic: int = MAX_HARMONIC) -> pd.DataFrame:
    """Harmonics of blade 1's loads over the azimuth psi, from the samples of a revolution.

    Each quantity q is fitted by least squares as q(psi) = q_0 + sum_n (q_nc
    cos n psi + q_ns sin n psi), n = 1 .. ``max_harmonic`` (fewer when the
    samples cannot resolve them: 2n + 1 samples at least).

    Parameters
    ----------
    name : str
        Body name.
    samples : list of dict
        As for :func:`disc_map_table` (``azimuth_deg`` (B,) and
        ``dT_dr_N_per_m`` (B, n) are used).
    r, dr : ndarray, shape (n,)
        Section radius and strip width [m], in the strips' order.
    max_harmonic : int
        Highest harmonic n.

    Returns
    -------
    pandas.DataFrame
        Rows for ``thrust_N`` (the blade's force along the axis) and
        ``flap_moment_Nm`` (its moment about the hub, sum of r dT: the
        out-of-plane root moment) and each harmonic: ``body``,
        ``quantity``, ``harmonic``, ``cos``, ``sin`` (q_nc, q_ns; for n = 0
        the mean and 0), ``amplitude`` and ``phase_deg``, with q_nc cos n
        psi + q_ns sin n psi = amplitude cos(n psi - phase); the phase is
        NaN where the amplitude is below :data:`NO_PHASE` times the largest
        amplitude of the quantity (round-off has no phase to speak of).

    Examples
    --------
    >>> psi = np.arange(0.0, 360.0, 30.0)
    >>> samples = [{"azimuth_deg": np.array([p]), "dT_dr_N_per_m": np.array([[10.0 + 2.0 * np.sin(np.radians(p))]])}
    ...            for p in psi]
    >>> t = blade_harmonics_table("rotor", samples, r=np.array([0.5]), dr=np.array([1.0]), max_harmonic=2)
    >>> t[t["quantity"] == "thrust_N"][["harmonic", "amplitude", "phase_deg"]].round(9).values.tolist()
    [[0.0, 10.0, 0.0], [1.0, 2.0, 90.0], [2.0, 0.0, nan]]
    """
    psi = np.radians([float(s["azimuth_deg"][0]) for s in samples])
    force = np.array([s["dT_dr_N_per_m"][0] for s in samples]) * dr          # (samples, n)
    values = {"thrust_N": force.sum(axis=1), "flap_moment_Nm": force @ r}
    top = min(max_harmonic, (len(samples) - 1) // 2)
    basis = [np.ones_like(psi)]
    for n in range(1, top + 1):
        basis += [np.cos(n * psi), np.sin(n * psi)]
    basis = np.column_stack(basis)
    rows = []
    for quantity, q in values.items():
        coef = np.linalg.lstsq(basis, q, rcond=None)[0]
        pairs = [(float(coef[0]), 0.0)] + [(float(coef[2 * n - 1]), float(coef[2 * n])) for n in range(1, top + 1)]
        largest = max(float(np.hypot(c, s_)) for c, s_ in pairs)
        for n, (c, s_) in enumerate(pairs):
            amplitude = float(np.hypot(c, s_))
            phase = float(np.degrees(np.arctan2(s_, c))) + 0.0 if amplitude > NO_PHASE * largest else float("nan")
            rows.append({"body": name, "quantity": quantity, "harmonic": n, "cos": c, "sin": s_,
                         "amplitude": amplitude, "phase_deg": phase})
    return pd.DataFrame(rows)


def power_split(kind: str, omega: float, torque_induced: float, torque_profile: float) -> dict:
    """``induced_power_W`` and ``profile_power_W`` from the shaft torque's two parts (module notes).

    Parameters
    ----------
    kind : {"rotor", "propeller", "turbine"}
        Sets the sign of the induced power (:data:`POWER_SENSE`).
    omega : float
        Rotation rate [rad/s].
    torque_induced, torque_profile : float
        Shaft torque of the pressure and the profile forces [N m] (positive
        when the shaft must supply it).

    Examples
    --------
    >>> power_split("turbine", 10.0, -3.0, 0.5)
    {'induced_power_W': 30.0, 'profile_power_W': 5.0}
    """
    return {"induced_power_W": POWER_SENSE[kind] * omega * torque_induced,
            "profile_power_W": omega * torque_profile}


def shaft_torques(kind: str, omega: float, induced_power: float, profile_power: float) -> tuple[float, float]:
    """The inverse of :func:`power_split`: the shaft torque's pressure and profile parts [N m]."""
    return POWER_SENSE[kind] * induced_power / omega, profile_power / omega


def coefficients(kind: str, *, thrust: float, torque: float, omega: float, radius: float,
                 density: float, speed: float, mu: float = 0.0, climb_ratio: float = 0.0) -> dict:
    """Dimensional loads and coefficients of one rotor in the convention of ``kind``.

    Parameters
    ----------
    kind : {"rotor", "propeller", "turbine"}
        Which set of coefficients (module notes).
    thrust : float
        T along the axis [N].
    torque : float
        Shaft torque Q [N m].
    omega : float
        Rotation rate [rad/s], positive.
    radius : float
        R [m].
    density : float
        rho [kg/m^3].
    speed : float
        Propeller: flight speed along the axis [m/s]; turbine: wind speed
        [m/s]; unused for a rotor.
    mu, climb_ratio : float
        Advance and climb ratios (:func:`freestream_ratios`); a rotor's
        figure of merit is NaN unless :func:`near_hover`.

    Returns
    -------
    dict
        The columns of :data:`KIND_COLUMNS` for ``kind`` (NaN where a
        coefficient is undefined, e.g. an efficiency at zero power).
    """
    power = omega * torque
    area = np.pi * radius ** 2
    if kind == "rotor":
        tip = omega * radius
        ct = thrust / (density * area * tip ** 2)
        cp = power / (density * area * tip ** 3)
        fm = ct ** 1.5 / (np.sqrt(2.0) * cp) if cp > 0 and near_hover(mu, climb_ratio, ct) else float("nan")
        return {"thrust_N": thrust, "torque_Nm": torque, "power_W": power, "CT": ct,
                "CQ": torque / (density * area * tip ** 2 * radius), "CP": cp, "FM": fm}
    if kind == "propeller":
        n = omega / (2.0 * np.pi)
        d = 2.0 * radius
        return {"thrust_N": thrust, "torque_Nm": torque, "power_W": power,
                "CT": thrust / (density * n ** 2 * d ** 4), "CP": power / (density * n ** 3 * d ** 5),
                "J": speed / (n * d),
                "efficiency": _nan_div(thrust * speed, power) if power > 0 else float("nan")}
    if kind == "turbine":
        extracted = POWER_SENSE[kind] * power
        q = 0.5 * density * area * speed ** 2
        return {"power_W": extracted, "thrust_N": thrust, "torque_Nm": POWER_SENSE[kind] * torque,
                "CP": _nan_div(extracted, q * speed), "CT": _nan_div(thrust, q),
                "tip_speed_ratio": _nan_div(omega * radius, speed)}
    raise ValueError(kind)


def strip_distributions(strips, *, dr: np.ndarray, hub: np.ndarray, axis: np.ndarray,
                        spin: int) -> dict:
    """Section values of every blade and strip at one step, as arrays.

    Parameters
    ----------
    strips : list of StripLoads
        One per blade, B of them, n strips each.
    dr : ndarray, shape (n,)
        Strip width [m], in the strips' order.
    hub, axis : ndarray, shape (3,)
        Hub centre [m] and unit thrust axis.
    spin : int
        +1 or -1.

    Returns
    -------
    dict of ndarray, each shape (B, n)
        ``gamma_m2_s`` (bound circulation), ``cl``, ``cd``, ``alpha_deg``
        (effective angle of attack), ``dT_dr_N_per_m`` (thrust per unit
        radius, the force along the axis) and ``dQ_dr_N`` (shaft torque per
        unit radius), in the strips' order.
    """
    out = {k: [] for k in ("gamma_m2_s", "cl", "cd", "alpha_deg", "dT_dr_N_per_m", "dQ_dr_N")}
    for s in strips:
        f = s.force_pressure + s.force_profile
        out["gamma_m2_s"].append(s.gamma)
        out["cl"].append(s.cl)
        out["cd"].append(s.cd)
        out["alpha_deg"].append(np.degrees(s.alpha_effective))
        out["dT_dr_N_per_m"].append((f @ axis) / dr)
        out["dQ_dr_N"].append(-spin * (np.cross(s.points - hub, f) @ axis) / dr)
    return {k: np.asarray(v, dtype=np.float64).reshape(len(strips), -1) for k, v in out.items()}


def radial_table(name: str, strips, *, radius: float, r: np.ndarray, dr: np.ndarray,
                 pitch_deg: np.ndarray, hub: np.ndarray, axis: np.ndarray, spin: int,
                 azimuth_deg: np.ndarray | None = None) -> pd.DataFrame:
    """Radial distributions of every blade: circulation, cl, angles, dT/dr and dQ/dr.

    Parameters
    ----------
    name : str
        Body name.
    strips : list of StripLoads
        One per blade.
    radius : float
        R [m].
    r, dr : ndarray, shape (n,)
        Blade coordinate of each strip's section and the strip width [m],
        in the strips' order.
    pitch_deg : ndarray, shape (n,) or (B, n)
        Section pitch (collective + twist, and cyclic) [deg], in the
        strips' order; one row for every blade or one per blade.
    hub, axis : ndarray, shape (3,)
        Hub centre [m] and unit thrust axis.
    spin : int
        +1 or -1.
    azimuth_deg : ndarray, shape (B,), optional
        Each blade's azimuth psi [deg], written as ``azimuth_deg``.

    Returns
    -------
    pandas.DataFrame
        One row per blade and strip: ``body``, ``blade`` (1-based),
        (``azimuth_deg``), ``strip``, ``r_m``, ``r_over_R``, ``chord_m``, ``gamma_m2_s``,
        ``cl``, ``cd``, ``pitch_deg``, ``alpha_deg`` (effective),
        ``inflow_angle_deg`` (pitch minus effective angle of attack: the
        angle of the local flow, induced velocity included, below the
        blade's plane of rotation), ``dT_dr_N_per_m``, ``dQ_dr_N`` (shaft
        torque per unit radius).
    """
    d = strip_distributions(strips, dr=dr, hub=hub, axis=axis, spin=spin)
    pitch = np.broadcast_to(np.asarray(pitch_deg, dtype=np.float64), (len(strips), r.shape[0]))
    frames = []
    for k, s in enumerate(strips):
        where = {"body": name, "blade": k + 1}
        if azimuth_deg is not None:
            where["azimuth_deg"] = float(azimuth_deg[k])
        frames.append(pd.DataFrame({
            **where, "strip": np.arange(r.shape[0]), "r_m": r,
            "r_over_R": r / radius, "chord_m": s.chord, "gamma_m2_s": d["gamma_m2_s"][k], "cl": d["cl"][k],
            "cd": d["cd"][k], "pitch_deg": pitch[k], "alpha_deg": d["alpha_deg"][k],
            "inflow_angle_deg": pitch[k] - d["alpha_deg"][k],
            "dT_dr_N_per_m": d["dT_dr_N_per_m"][k], "dQ_dr_N": d["dQ_dr_N"][k],
        }).sort_values("r_m"))
    return pd.concat(frames, ignore_index=True)


def averaged_radial_table(name: str, samples: list, *, radius: float, r: np.ndarray, chord: np.ndarray,
                          pitch_deg: np.ndarray) -> pd.DataFrame:
    """Radial loading averaged over steps and blades: a rotor's revolution-averaged loading.

    Parameters
    ----------
    name : str
        Body name.
    samples : list of dict
        :func:`strip_distributions` of successive steps (those of the last
        full revolution), each array shape (B, n).
    radius : float
        R [m].
    r, chord, pitch_deg : ndarray, shape (n,)
        Section radius [m], chord [m] and pitch (collective + twist) [deg],
        in the strips' order.

    Returns
    -------
    pandas.DataFrame
        One row per strip, root to tip: ``body``, ``r_over_R``, ``r_m``,
        ``chord_m``, ``pitch_deg``, then the means over every sample and
        blade of ``gamma_m2_s``, ``cl``, ``cd``, ``alpha_deg``,
        ``dT_dr_N_per_m`` and ``dQ_dr_N``; ``inflow_angle_deg`` = pitch
        minus the mean ``alpha_deg``; ``steps_averaged`` (samples) and
        ``blades_averaged``.

    Examples
    --------
    >>> step = {"gamma_m2_s": np.array([[1.0, 2.0], [3.0, 4.0]])}
    >>> t = averaged_radial_table("rotor", [step], radius=1.0, r=np.array([0.4, 0.8]),
    ...                           chord=np.array([0.1, 0.1]), pitch_deg=np.array([8.0, 4.0]))
    >>> t["gamma_m2_s"].tolist(), int(t["blades_averaged"].iloc[0])
    ([2.0, 3.0], 2)
    """
    order = np.argsort(r)
    table = pd.DataFrame({"body": name, "r_over_R": r[order] / radius, "r_m": r[order],
                          "chord_m": chord[order], "pitch_deg": pitch_deg[order]})
    for key in samples[0]:
        table[key] = np.mean([s[key] for s in samples], axis=(0, 1))[order]
    if "alpha_deg" in table:
        table["inflow_angle_deg"] = table["pitch_deg"] - table["alpha_deg"]
    table["steps_averaged"] = len(samples)
    table["blades_averaged"] = samples[0][next(iter(samples[0]))].shape[0]
    return table


def last_revolution(frame: pd.DataFrame, steps_per_revolution: int) -> pd.DataFrame:
    """The rows of the last full revolution (the last ``steps_per_revolution`` rows), or all if fewer."""
    return frame.iloc[-steps_per_revolution:] if len(frame) >= steps_per_revolution else frame
