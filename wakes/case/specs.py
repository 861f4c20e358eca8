"""Case files: a TOML schema in frozen dataclasses, checked key by key.

A case file describes one simulation: the fluid, the freestream, named
bodies, the wake model, the time stepping, the solver and the outputs. It
is read with :mod:`tomllib`; every key is checked for type, unit and range,
unknown keys are rejected with a "did you mean", and defaults (some worked
out from the rest of the case, such as the time step) are filled in. The
resolved case can be written back as TOML (:meth:`Case.to_toml`), which is
what a run folder records.

Units are SI; angles are in degrees. Example::

    title = "elliptic wing"
    [freestream]
    speed = 10.0
    angle_of_attack = 5.0
    [bodies.wing]
    type = "wing"
    span = 8.0
    chord = {law = "elliptic", root = 1.2732}

Body types are registered in :data:`BODY_TYPES` (name -> spec class); a
spec class is a frozen dataclass with a ``type`` field and the hooks
``check``, ``resolve``, ``suggest_dt`` and ``suggest_steps_float``.
"""

from __future__ import annotations

import dataclasses
import difflib
import math
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..aero.clearance import contact_point, disc_triangles, wing_triangles
from ..aero.flap import FlapHinge
from ..aero.geometry import SPACINGS, Distribution, WingPlanform, rotation_matrix
from ..aero.ground import GroundPlane
from ..aero.gust import GUST_SHAPES, Gust, upward_normal
from ..aero.polars import OUT_OF_RANGE_MODES, has_mach_column
from ..aero.rotor import (
    BLADE_SPACINGS,
    RotorGeometry,
    blade_turn_deg,
    dt_for_turn,
    is_axial_flow,
)
from ..aero.rotor_loads import ROTOR_KINDS
from ..aero.sections import (
    BUILTIN_SECTIONS,
    COMPRESSIBILITY_RULES,
    DEFAULT_MACH_LIMIT,
    MACH_OUT_OF_RANGE_MODES,
    MAX_MACH_LIMIT,
    make_polar,
)
from ..aero.wake import SEA_LEVEL_KINEMATIC_VISCOSITY
from ..aero.wing_motion import HarmonicMotion
from ..errors import CaseError
from ..induction.api import METHODS
from ..induction.smoothing import CORE_MODELS, PARTICLE_KERNELS
from ..vortex.dynamics import STRETCHING_SCHEMES
from .schema import (
    Context,
    accepted_text,
    dump_toml,
    in_range,
    key,
    merge,
    parse_section,
    plain_default,
    public_fields,
    range_words,
    read_toml,
    short,
    tidy,
    to_plain,
)

WAKE_MODELS = ("filaments", "particles")
WAKE_MOTIONS = ("free", "frozen")
WING_MODELS = ("lifting-line", "vortex-lattice")
# Initial core radius / smallest mean chord: common practice (5-20 %); tip-vortex cores measured
# near model-rotor blades are about 5-10 % of the chord (Leishman 2006, Principles of Helicopter
# Aerodynamics, 2nd ed.; from memory).
DEFAULT_CORE_CHORDS = 0.1
DEFAULT_WAKE_SPANS = 3.0    # default run length: wake this many spans long (downwash within ~1 %)
DEFAULT_SNAPSHOTS = 15       # wake snapshots of a run by default: an animation, not a copy per step
_NAME = re.compile(r"[A-Za-z0-9_-]{1,64}")
SCHEDULER_ADDRESS = re.compile(r"(?:tcp|tls)://(?:[A-Za-z0-9_.-]+|\[[0-9A-Fa-f:.]+\]):([0-9]{1,5})")

# Ranges of the case keys. They are typo guards, wide enough for anything from an insect-sized
# model wing to the largest wind turbines, and they keep every product the time loop forms
# finite (our choice, not from a reference).
MIN_LENGTH = 1e-4          # shortest length [m]: span, chord, radius
MAX_LENGTH = 1e4           # longest length [m]: span, chord, radius, core radius
MAX_COORDINATE = 1e5       # largest position coordinate [m]: wing position, rotor hub, ground point
MAX_REFERENCE_POINT = MAX_COORDINATE + 10 * MAX_LENGTH  # a point on a body: position plus a swept size [m]
MAX_SPEED = 1000.0         # freestream speed and blade tip speed [m/s]; the method is incompressible
MIN_DT, MAX_DT = 1e-9, 3600.0   # time step range [s]
MAX_STEPS = 10_000_000     # most time steps of a run
MAX_DEFAULT_STEPS = MAX_STEPS  # a default step count above this means the sizes or speeds are a typo
MAX_REVOLUTIONS = 1e5      # longest rotor run, kept wake, fade and start-up [revolutions]
MAX_ANGLE = 360.0          # largest orientation angle [deg]
MAX_EDDY_FACTOR = 1e-2     # largest a1 of the eddy-viscosity factor (measured values are of order 1e-4)


# ----------------------------------------------------------------- sections

@dataclass(frozen=True, kw_only=True)
class FluidSpec:
    """[fluid]: the fluid at rest far away."""

    density: float = key(1.225, "fluid density (ISA sea level by default)", "kg/m^3",
                         above=0.0, minimum=1e-4, maximum=2e4)
    kinematic_viscosity: float = key(SEA_LEVEL_KINEMATIC_VISCOSITY, "kinematic viscosity nu (ISA sea level)", "m^2/s",
                                     minimum=0.0, maximum=1.0)
    # 340.3 m/s: ISA sea level (ICAO 1993). The range spans a heavy gas such as sulphur
    # hexafluoride (about 135 m/s) to water (about 1480 m/s); both figures from memory.
    speed_of_sound: float = key(340.3, "speed of sound, for the sections' Mach numbers (ISA sea level)",
                                "m/s", minimum=100.0, maximum=2000.0)


MAX_GUST_TIME = 1e7         # latest (and earliest, negated) gust arrival time [s]: a typo guard


@dataclass(frozen=True, kw_only=True)
class GustSpec:
    """[freestream.gust]: a gust frozen in the freestream (none by default).

    The gust velocity ``amplitude`` f(xi) along ``direction`` is added to the
    onset flow; xi is the distance its front has travelled past a point.
    The front is the plane normal to the freestream that reaches the most
    upstream point of the bodies (a wing's leading edge) at ``arrival_time``
    and moves downstream at the freestream speed. f = 1 for 0 < xi < length
    (sharp-edged; no length: it stays on), (1 - cos(2 pi xi / length))/2
    (one-minus-cosine), 0 elsewhere (:mod:`wakes.aero.gust`).
    """

    shape: str = key("none", "gust profile along the freestream", kind="str", choices=GUST_SHAPES)
    amplitude: float = key(0.0, "gust velocity (the peak of a one-minus-cosine gust), along direction; "
                           "below the freestream speed", "m/s", minimum=-MAX_SPEED, maximum=MAX_SPEED)
    length: float | None = key(None, "gust length along the freestream (sharp-edged: none, the gust stays "
                               "on; one-minus-cosine: required)", "m", above=0.0, minimum=MIN_LENGTH,
                               maximum=MAX_COORDINATE)
    direction: tuple | None = key(None, "direction of the gust velocity, normal to the freestream (default: "
                                  "normal to it in its vertical plane, upwards)", kind="vec3",
                                  minimum=-1e6, maximum=1e6)
    arrival_time: float = key(0.0, "time the gust front reaches the most upstream point of the bodies",
                              "s", minimum=-MAX_GUST_TIME, maximum=MAX_GUST_TIME)

    _KEYS = ("amplitude", "length", "direction", "arrival_time")

    def after_parse(self, raw: dict, where: str, ctx) -> GustSpec:
        if self.shape == "none":
            given = [k for k in self._KEYS if k in raw]
            if given:
                ctx.fail(f"{where}.{given[0]} applies to a gust only; set {where}.shape to "
                         f"{' or '.join(repr(s) for s in GUST_SHAPES[1:])}")
        if self.shape == "one-minus-cosine" and self.length is None:
            ctx.fail(f"{where}.length is required for shape = \"one-minus-cosine\": the gust's length "
                     "along the freestream [m], greater than 0")
        if self.direction is not None:
            _check_direction(self.direction, f"{where}.direction", "the gust velocity's direction", ctx)
        return self

    def omitted(self) -> set:
        return set(self._KEYS) if self.shape == "none" else set()

    def check(self, case: Case, where: str, ctx) -> None:
        """The gust must suit the freestream and the bodies (after both are parsed)."""
        if self.shape == "none":
            return
        v = case.freestream.vector()
        speed = float(np.linalg.norm(v))
        rotors = [b.name for b in case.bodies if b.type != "wing"]
        if rotors:
            ctx.fail(f"{where} acts on wings only; bodies.{rotors[0]} is a {case.body(rotors[0]).type} "
                     "(remove the gust or the rotor)")
        if not abs(self.amplitude) < speed:
            ctx.fail(f"{where}.amplitude = {self.amplitude:g} m/s must be smaller in size than the "
                     f"freestream speed ({speed:.4g} m/s): the gust would turn the flow by 45 deg or more")
        if self.direction is None:
            if upward_normal(v) is None:
                ctx.fail(f"{where}.direction is needed: the freestream is vertical, so no default "
                         "direction normal to it and upwards exists; give a vector normal to it")
        else:
            d = np.asarray(self.direction, dtype=np.float64)
            along = abs(float(d @ v)) / (np.linalg.norm(d) * speed)
            if along > GUST_NORMAL_TOLERANCE:
                ctx.fail(f"{where}.direction {list(self.direction)} must be normal to the freestream "
                         f"{[round(float(x), 6) for x in v]} m/s; it has {along:.3g} of its length along "
                         f"it (at most {GUST_NORMAL_TOLERANCE:g}): a frozen gust along the flow would not "
                         "conserve mass")


GUST_NORMAL_TOLERANCE = 1e-6
"""Largest cosine between a gust's direction and the freestream accepted as normal (ours)."""


@dataclass(frozen=True, kw_only=True)
class FreestreamSpec:
    """[freestream]: the undisturbed flow, by speed and angles or as a vector.

    velocity = speed (cos a cos b, -sin b, sin a cos b) in the global frame:
    a positive angle of attack a brings the flow from below, a positive
    sideslip b from the right (+y).
    """

    speed: float = key(0.0, "freestream speed", "m/s", minimum=0.0, maximum=MAX_SPEED)
    angle_of_attack: float = key(0.0, "angle of the flow above the x axis", "deg",
                                 minimum=-90.0, maximum=90.0)
    sideslip: float = key(0.0, "angle of the flow from the right (+y) side", "deg",
                          minimum=-90.0, maximum=90.0)
    velocity: tuple | None = key(None, "freestream velocity vector instead of speed and angles "
                                 f"(at most {MAX_SPEED:g} m/s long)", "m/s", kind="vec3",
                                 minimum=-MAX_SPEED, maximum=MAX_SPEED)
    gust: GustSpec = key(GustSpec(), "a gust frozen in the freestream", kind="table")

    def after_parse(self, raw: dict, where: str, ctx) -> FreestreamSpec:
        if self.velocity is not None and not np.linalg.norm(self.velocity) <= MAX_SPEED:
            ctx.fail(f"{where}.velocity {list(self.velocity)} is {np.linalg.norm(self.velocity):.4g} m/s "
                     f"long; at most {MAX_SPEED:g} m/s is accepted")
        return self

    def vector(self) -> np.ndarray:
        """Freestream velocity in the global frame [m/s], shape (3,)."""
        if self.velocity is not None:
            return np.asarray(self.velocity, dtype=np.float64)
        a, b = math.radians(self.angle_of_attack), math.radians(self.sideslip)
        return self.speed * np.array([math.cos(a) * math.cos(b), -math.sin(b), math.sin(a) * math.cos(b)])

    def omitted(self) -> set:
        out = {"speed", "angle_of_attack", "sideslip"} if self.velocity is not None else {"velocity"}
        return out | ({"gust"} if self.gust.shape == "none" else set())


@dataclass(frozen=True, kw_only=True)
class TimeSpec:
    """[time]: time stepping."""

    dt: float | None = key(None, "time step (default: a wake panel of a quarter mean chord)", "s",
                           above=0.0, minimum=MIN_DT, maximum=MAX_DT, resolved=True)
    steps: int | None = key(None, "number of time steps (default: a wake three spans long)",
                            kind="int", minimum=1, maximum=MAX_STEPS, resolved=True)


@dataclass(frozen=True, kw_only=True)
class SolverSpec:
    """[solver]: the bound-circulation solve at each step."""

    tolerance: float = key(1e-6, "largest scaled residual accepted (circulation / (c V / 2))",
                           above=0.0, minimum=1e-14, maximum=0.1)
    max_iterations: int = key(50, "Newton iterations allowed per step", kind="int", minimum=1,
                               maximum=10_000)
    relaxation: float = key(1.0, "under-relaxation factor of each Newton step", above=0.0, minimum=0.01,
                           maximum=1.0)


@dataclass(frozen=True, kw_only=True)
class WakeSpec:
    """[wake]: how the shed wake is stored and moved."""

    model: str = key("filaments", "keep the wake as a vortex lattice, or convert it to particles",
                     kind="str", choices=WAKE_MODELS)
    motion: str = key("free", "free: moves with the local velocity; frozen: with the freestream (and gust)",
                      kind="str", choices=WAKE_MOTIONS)
    core: str = key("lamb-oseen", "filament core model", kind="str", choices=CORE_MODELS)
    core_radius: float | None = key(None, "initial core radius (default: 0.1 x smallest mean chord)",
                                    "m", above=0.0, minimum=1e-6, maximum=MAX_LENGTH, resolved=True)
    core_growth: float = key(1.0, "eddy-viscosity factor delta of the core growth law (1: laminar)",
                             minimum=0.0, maximum=1e5)
    core_eddy_factor: float = key(0.0, "a1 in delta = 1 + a1 abs(circulation) / kinematic viscosity, the "
                                  "core growth factor of each vortex from its circulation (0: delta = "
                                  "core_growth; rotor tip vortices: about 6.5e-5, Bhagwat & Leishman "
                                  "2000, from memory)", minimum=0.0, maximum=MAX_EDDY_FACTOR)
    particle_kernel: str = key("gaussian", "particle smoothing kernel", kind="str",
                               choices=PARTICLE_KERNELS)
    particle_overlap: float = key(1.3, "particle radius / length of the segment it replaces",
                                  above=0.0, minimum=0.1, maximum=10.0)
    near_wake_steps: int = key(8, "wake rows kept as filaments before conversion (particles)",
                               kind="int", minimum=1, maximum=100_000)
    stretching: str = key("transposed", "particle stretching scheme (free wake)", kind="str",
                          choices=STRETCHING_SCHEMES)
    cores_at_surfaces: bool = key(False, "surfaces see wake filament cores (false: singular lines)",
                                  kind="bool")
    max_age: float = key(float("inf"), "wake older than this is removed (inf: kept)", "s", above=0.0,
                         maximum=1e9, allow_inf=True)
    induction: str = key("auto", "summation method of wakes.induce for the wake", kind="str",
                         choices=METHODS)
    induction_tolerance: float = key(1e-6, "relative velocity error aimed at by the treecode",
                                     above=0.0, minimum=1e-10, maximum=0.1)

    def after_parse(self, raw: dict, where: str, ctx) -> WakeSpec:
        if self.core_eddy_factor > 0.0 and "core_growth" in raw:
            ctx.fail(f"{where}.core_growth and {where}.core_eddy_factor are both given: core_growth is a "
                     "fixed factor delta, core_eddy_factor sets delta = 1 + a1 abs(circulation) / nu from each "
                     "vortex's circulation; give one of them")
        return self

    def omitted(self) -> set:
        return {"core_growth"} if self.core_eddy_factor > 0.0 else set()


@dataclass(frozen=True, kw_only=True)
class OutputSpec:
    """[output]: what a run writes besides loads.csv, sections.csv and summary.json."""

    wake: bool = key(True, "write the final wake (wake_segments.csv, wake_particles.csv)", kind="bool")
    checkpoint_every: int = key(0, "write a checkpoint to resume from every this many steps "
                                "(0: only on interruption or instability)", kind="int",
                                minimum=0, maximum=10 ** 9)
    snapshot_every: int | None = key(None, "write the wake to wake/*.vtp every this many steps "
                                     "(default: about 15 snapshots a run; 0: the final wake only)",
                                     kind="int", minimum=0, maximum=10 ** 9, resolved=True)


@dataclass(frozen=True, kw_only=True)
class GroundSpec:
    """[ground]: a flat ground, by the mirror images of every vortex element
    (:mod:`wakes.aero.ground`); no ground unless ``point`` is given."""

    point: tuple | None = key(None, "a point of the ground plane (none: no ground)", "m", kind="vec3",
                              minimum=-MAX_COORDINATE, maximum=MAX_COORDINATE)
    normal: tuple = key((0.0, 0.0, 1.0), "normal of the ground plane, from the ground into the air",
                        kind="vec3", minimum=-1e6, maximum=1e6)

    def plane(self):
        """The ground as a :class:`wakes.aero.ground.GroundPlane`, or None."""
        return None if self.point is None else GroundPlane(np.asarray(self.point), np.asarray(self.normal))

    def after_parse(self, raw: dict, where: str, ctx) -> GroundSpec:
        _check_direction(self.normal, f"{where}.normal", "from the ground into the air", ctx)
        return self


@dataclass(frozen=True, kw_only=True)
class ClusterSpec:
    """[cluster]: Dask workers that share the wake's induction once the wake is large
    (:class:`wakes.cluster.WakeCluster`); results equal a one-process run to round-off."""

    scheduler: str = key("", "address of a running Dask scheduler, tcp://HOST:PORT (empty: this "
                         "process only)", kind="str")
    min_wake: int = key(50_000, "wake elements (segments + particles) from which the wake's "
                        "induction goes to the workers", kind="int", minimum=1, maximum=10 ** 12)

    def after_parse(self, raw: dict, where: str, ctx) -> ClusterSpec:
        m = SCHEDULER_ADDRESS.fullmatch(self.scheduler)
        if self.scheduler and not (m and 1 <= int(m.group(1)) <= 65535):
            ctx.fail(f"{where}.scheduler must be an address tcp://HOST:PORT or tls://HOST:PORT such "
                     f"as 'tcp://10.0.0.5:8786', port 1 to 65535 (or empty); got {short(self.scheduler)}")
        return self


MAX_TRIM_FORCE = 1e9         # largest trim target force [N] (and moment [N m] per metre of radius)
MAX_TRIM_ITERATIONS = 50


@dataclass(frozen=True, kw_only=True)
class TrimSpec:
    """[bodies.NAME.trim]: loads the rotor's pitch controls are found for before ``wakes run`` runs it.

    Each target given moves one control (:mod:`wakes.trim`): the collective
    for the first, then cyclic_cos and cyclic_sin; none given, no trim.
    """

    thrust: float | None = key(None, "target thrust, averaged over the last revolution", "N",
                               minimum=-MAX_TRIM_FORCE, maximum=MAX_TRIM_FORCE)
    roll_moment: float | None = key(None, "target hub roll moment (summary roll_moment)", "N m",
                                    minimum=-MAX_TRIM_FORCE * MAX_LENGTH, maximum=MAX_TRIM_FORCE * MAX_LENGTH)
    pitch_moment: float | None = key(None, "target hub pitch moment (summary pitch_moment)", "N m",
                                     minimum=-MAX_TRIM_FORCE * MAX_LENGTH, maximum=MAX_TRIM_FORCE * MAX_LENGTH)
    max_iterations: int = key(8, "Newton steps at most, each a full run", kind="int", minimum=1,
                              maximum=MAX_TRIM_ITERATIONS)

    def targets(self) -> dict:
        """Summary key -> target of every target given, in the order thrust, roll, pitch."""
        named = (("thrust_N", self.thrust), ("roll_moment_Nm", self.roll_moment),
                 ("pitch_moment_Nm", self.pitch_moment))
        return {k: float(v) for k, v in named if v is not None}


MAX_FLAP_INERTIA = 1e7       # largest blade flap inertia accepted [kg m^2] (a typo guard; ours)
MAX_FLAP_SPRING = 1e12       # stiffest hinge spring accepted [N m/rad] (a typo guard; ours)
#: Largest nominal aerodynamic flap damping per step, gamma (Omega dt)/8, accepted: the flap step
#: is stable below 1 (wakes.aero.flap); half of it leaves room for a damping above the nominal
#: (lift slope, chord law, root cut-out). Ours.
MAX_FLAP_DAMPING_STEP = 0.5


@dataclass(frozen=True, kw_only=True)
class FlapSpec:
    """[bodies.NAME.flap]: rigid blade flapping about a hinge (none without ``inertia``).

    Each blade turns about a hinge at ``hinge_offset`` from the hub centre,
    restrained by a spring unloaded at the rotor's ``precone``, driven by
    its air loads and held out by the centrifugal force
    (:mod:`wakes.aero.flap`). The blade's mass is taken as uniform between
    the hinge and the tip.
    """

    inertia: float | None = key(None, "flap inertia of one blade about its hinge; given: the blades "
                                "flap", "kg m^2", above=0.0, minimum=1e-12, maximum=MAX_FLAP_INERTIA)
    hinge_offset: float = key(0.0, "distance of the flap hinge from the hub centre along the blade, at "
                              "most the root cut-out", "m", minimum=0.0, maximum=MAX_LENGTH)
    spring: float = key(0.0, "hinge spring, unloaded at the precone; negative only while the "
                        "centrifugal stiffness outweighs it", "N m/rad", minimum=-MAX_FLAP_SPRING,
                        maximum=MAX_FLAP_SPRING)

    @property
    def flaps(self) -> bool:
        """Whether the blades flap (an inertia is given)."""
        return self.inertia is not None

    def after_parse(self, raw: dict, where: str, ctx) -> FlapSpec:
        # a resolved case writes the table back with its defaults: only a hinge or spring set counts
        given = sorted(k for k in ("hinge_offset", "spring") if getattr(self, k) != 0.0)
        if self.inertia is None and given:
            ctx.fail(f"{where}.inertia must be given for flapping blades (a positive number, kg m^2, "
                     f"the blade's flap inertia about its hinge); got {', '.join(given)} without it")
        return self


DEFAULT_MOTION_STEPS = 32
"""Time steps a period of a wing's motion gets by default (ours), when the chord gives a longer step."""

MIN_MOTION_STEPS = 8
"""Fewest time steps a period of a wing's prescribed motion is resolved by (ours: fewer
samples than this leave the lift's first harmonic, its amplitude and phase, ill-defined)."""


@dataclass(frozen=True, kw_only=True)
class WingMotionSpec:
    """[bodies.NAME.motion]: prescribed harmonic plunge and pitch of a wing (none by default).

    z = plunge_amplitude sin(2 pi f t) along the body z axis, theta =
    pitch_amplitude sin(2 pi f t + pitch_lead) nose up about an axis along
    the span through the root chord at ``pitch_axis``.
    """

    plunge_amplitude: float = key(0.0, "plunge amplitude, along the body z axis (up)", "m",
                                  minimum=0.0, maximum=MAX_LENGTH)
    pitch_amplitude: float = key(0.0, "pitch amplitude, nose up", "deg", minimum=0.0, maximum=45.0)
    frequency: float = key(0.0, "frequency of the motion (0: none)", "Hz", minimum=0.0, maximum=1e5)
    pitch_lead: float = key(0.0, "phase by which the pitch leads the plunge", "deg",
                            minimum=-MAX_ANGLE, maximum=MAX_ANGLE)
    pitch_axis: float = key(0.25, "pitch axis: fraction of the root chord behind its leading edge",
                            minimum=-10.0, maximum=10.0)

    @property
    def moves(self) -> bool:
        """Whether there is any motion."""
        return self.frequency > 0.0 and (self.plunge_amplitude > 0.0 or self.pitch_amplitude > 0.0)

    def after_parse(self, raw: dict, where: str, ctx) -> WingMotionSpec:
        if self.frequency == 0.0 and (self.plunge_amplitude > 0.0 or self.pitch_amplitude > 0.0):
            ctx.fail(f"{where}.frequency must be positive for a plunge or pitch amplitude; got 0 "
                     f"(plunge_amplitude = {self.plunge_amplitude:g} m, pitch_amplitude = "
                     f"{self.pitch_amplitude:g} deg)")
        return self


@dataclass(frozen=True, kw_only=True)
class AirfoilSpec:
    """[bodies.NAME.airfoil]: the section polar: built in, a CSV table or thin-airfoil theory."""

    section: str | None = key(None, "built-in section polar instead of a table or thin-airfoil keys",
                              kind="str", choices=tuple(BUILTIN_SECTIONS))
    polar: str | None = key(None, "CSV polar table (alpha_deg, cl, cd; with a mach column: tables by "
                            "Mach number), relative to the case file", kind="path")
    out_of_range: str = key("error", "angles outside the table: error, blend to flat plate, or "
                            "Viterna-Corrigan to +-180 deg", kind="str", choices=OUT_OF_RANGE_MODES)
    post_stall_aspect_ratio: float | None = key(None, "viterna: aspect ratio giving cd at 90 deg "
                                                "(default: rotor R/c; wing 2-D)", above=0.0, maximum=1000.0)
    post_stall_cd_max: float | None = key(None, "viterna: cd at 90 deg instead of the aspect ratio",
                                          minimum=0.5, maximum=3.0)
    compressibility: str = key("none", "rule correcting the low-speed polar to the local Mach number",
                               kind="str", choices=COMPRESSIBILITY_RULES)
    mach_limit: float = key(DEFAULT_MACH_LIMIT, "highest Mach number the rule is used at",
                            above=0.0, maximum=MAX_MACH_LIMIT)
    mach_out_of_range: str = key("error", "Mach numbers above mach_limit or outside a Mach table: "
                                 "error, or hold the end value", kind="str", choices=MACH_OUT_OF_RANGE_MODES)
    lift_slope: float = key(2 * math.pi, "thin airfoil: section lift slope", "1/rad", above=0.0,
                            minimum=0.1, maximum=20.0)
    zero_lift_angle: float = key(0.0, "thin airfoil: zero-lift angle", "deg",
                                 minimum=-30.0, maximum=30.0)
    cd0: float = key(0.0, "thin airfoil: drag polar cd = cd0 + cd2 cl^2", minimum=0.0, maximum=2.0)
    cd2: float = key(0.0, "thin airfoil: drag polar cd = cd0 + cd2 cl^2", minimum=0.0, maximum=10.0)

    _THIN = ("lift_slope", "zero_lift_angle", "cd0", "cd2")
    _TABLE = ("out_of_range", "post_stall_aspect_ratio", "post_stall_cd_max")

    def _table(self) -> str | None:
        """Which key names a table: "section", "polar" or None (thin airfoil)."""
        return "section" if self.section is not None else "polar" if self.polar is not None else None

    def _mach_table(self) -> bool:
        return self.polar is not None and has_mach_column(self.polar)

    def after_parse(self, raw: dict, where: str, ctx) -> AirfoilSpec:
        if self.section is not None and self.polar is not None:
            ctx.fail(f"{where}.section: give either a built-in section or a polar table, not both "
                     f"(section = {raw['section']!r}, polar = {raw['polar']!r})")
        table = self._table()
        if table is not None:
            both = [k for k in self._THIN if k in raw]
            if both:
                ctx.fail(f"{where}.{both[0]}: give either a polar table or thin-airfoil "
                         f"coefficients, not both ({table} = {raw[table]!r})")
        else:
            given = [k for k in self._TABLE if k in raw]
            if given:
                ctx.fail(f"{where}.{given[0]} applies to a polar table only; set {where}.polar or "
                         f"{where}.section")
        post = [k for k in ("post_stall_aspect_ratio", "post_stall_cd_max") if k in raw]
        if len(post) == 2:
            ctx.fail(f"{where}.post_stall_cd_max: give post_stall_aspect_ratio or post_stall_cd_max, "
                     "not both")
        if post and self.out_of_range != "viterna":
            ctx.fail(f"{where}.{post[0]} applies to out_of_range = \"viterna\" only; got "
                     f"out_of_range = {self.out_of_range!r}")
        mach_table = self._mach_table()
        if mach_table and self.compressibility != "none":
            ctx.fail(f"{where}.compressibility = {self.compressibility!r}: the polar "
                     f"{raw['polar']!r} is already tabulated by Mach number; use \"none\"")
        if "mach_limit" in raw and self.compressibility == "none":
            ctx.fail(f"{where}.mach_limit applies to a compressibility rule only; set "
                     f"{where}.compressibility to \"prandtl-glauert\" or \"karman-tsien\"")
        if "mach_out_of_range" in raw and self.compressibility == "none" and not mach_table:
            ctx.fail(f"{where}.mach_out_of_range applies to a compressibility rule or a polar table "
                     f"with a mach column only")
        try:
            make_polar(self)
        except CaseError as exc:
            ctx.fail(f"{where}: {exc}")
        return self

    def omitted(self) -> set:
        out = set(self._THIN) if self._table() is not None else {"polar", "section", *self._TABLE}
        if self.compressibility == "none":
            out.add("mach_limit")
            if not self._mach_table():
                out.add("mach_out_of_range")
        return out


@dataclass(frozen=True, kw_only=True)
class WingSpec:
    """[bodies.NAME] with type = "wing": a fixed wing in the freestream."""

    type: str = key("wing", "body type", kind="str", choices=("wing",))
    model: str = key("lifting-line", "nonlinear lifting line with polars, or vortex lattice",
                     kind="str", choices=WING_MODELS)
    span: float = key(doc="tip-to-tip span, projected on the body y axis", unit="m",
                      above=0.0, minimum=MIN_LENGTH, maximum=MAX_LENGTH)
    chord: Distribution = key(doc="chord along the span", unit="m", kind="distribution",
                              above=0.0, minimum=MIN_LENGTH, maximum=MAX_LENGTH)
    twist: Distribution = key(Distribution.constant(0.0), "section incidence, nose up positive",
                              "deg", kind="distribution", minimum=-45.0, maximum=45.0)
    sweep: Distribution = key(Distribution.constant(0.0), "quarter-chord sweep, tips aft positive",
                              "deg", kind="distribution", minimum=-75.0, maximum=75.0)
    dihedral: Distribution = key(Distribution.constant(0.0), "quarter-chord dihedral, tips up positive",
                                 "deg", kind="distribution", minimum=-75.0, maximum=75.0)
    symmetric: bool = key(True, "tables give the right half (eta 0..1), mirrored to the left",
                          kind="bool")
    spanwise_panels: int = key(24, "panels over the full span", kind="int", minimum=2, maximum=400)
    spacing: str = key("cosine", "spanwise node spacing", kind="str", choices=SPACINGS)
    chordwise_panels: int | None = key(None, "panels along the chord (lifting line: 1; lattice: 4)",
                                       kind="int", minimum=1, maximum=64, resolved=True)
    position: tuple = key((0.0, 0.0, 0.0), "root quarter-chord point in the global frame", "m",
                          kind="vec3", minimum=-MAX_COORDINATE, maximum=MAX_COORDINATE)
    orientation: tuple = key((0.0, 0.0, 0.0), "rotation about global x, then y (nose up), then z",
                             "deg", kind="vec3", minimum=-MAX_ANGLE, maximum=MAX_ANGLE)
    reference_area: float | None = key(None, "area for coefficients (default: planform area)", "m^2",
                                       above=0.0, minimum=1e-9, maximum=MAX_LENGTH ** 2, resolved=True)
    reference_chord: float | None = key(None, "chord for the pitching-moment coefficient (default: "
                                        "mean aerodynamic chord)", "m", above=0.0, minimum=MIN_LENGTH,
                                        maximum=MAX_LENGTH, resolved=True)
    moment_reference: tuple | None = key(None, "point the pitching moment is taken about, global frame "
                                         "(default: quarter chord of the mean aerodynamic chord)", "m",
                                         kind="vec3", minimum=-MAX_REFERENCE_POINT,
                                         maximum=MAX_REFERENCE_POINT, resolved=True)
    airfoil: AirfoilSpec = key(AirfoilSpec(), "section polar", kind="table")
    motion: WingMotionSpec = key(WingMotionSpec(), "prescribed harmonic plunge and pitch", kind="table")
    name: str = field(default="wing", metadata=dict(internal=True))

    def planform(self) -> WingPlanform:
        """The wing's planform laws."""
        return WingPlanform(self.span, self.chord, self.twist, self.sweep, self.dihedral, self.symmetric)

    def mean_chord(self) -> float:
        """Planform area over span [m]."""
        return self.planform().area() / self.span

    def after_parse(self, raw: dict, where: str, ctx) -> WingSpec:
        for name in ("chord", "twist", "sweep", "dihedral"):
            problem = getattr(self, name).problem(self.symmetric)
            if problem:
                ctx.fail(f"{where}.{name}: {problem}")
        if self.model == "lifting-line" and self.chordwise_panels not in (None, 1):
            ctx.fail(f"{where}.chordwise_panels must be 1 for model = \"lifting-line\"; got "
                     f"{self.chordwise_panels} (use model = \"vortex-lattice\" for chordwise panels)")
        return self

    def outline(self) -> np.ndarray:
        """The planform as triangles in the global frame, shape (M, 3, 3) [m]."""
        return wing_triangles(self.planform(), n_span=self.spanwise_panels, spacing=self.spacing,
                              position=self.position, orientation_deg=self.orientation)

    def harmonic_motion(self) -> HarmonicMotion | None:
        """The prescribed motion (:class:`wakes.aero.wing_motion.HarmonicMotion`), None without one.

        The pitch axis runs along the body y axis through the root chord at
        ``motion.pitch_axis`` behind its leading edge.
        """
        m = self.motion
        if not m.moves:
            return None
        rot = rotation_matrix(self.orientation)
        planform = self.planform()
        root = np.zeros(1)
        chord = float(planform.chord(root, planform.symmetric)[0])
        along = (planform.chord_direction(root) @ rot.T)[0]
        point = np.asarray(self.position, dtype=np.float64) + (m.pitch_axis - 0.25) * chord * along
        return HarmonicMotion(plunge=m.plunge_amplitude, pitch=math.radians(m.pitch_amplitude),
                              frequency=m.frequency, pitch_lead=math.radians(m.pitch_lead),
                              axis_point=point, span_axis=rot @ np.array([0.0, 1.0, 0.0]),
                              up=rot @ np.array([0.0, 0.0, 1.0]))

    def check(self, case: Case, where: str, ctx) -> None:
        ground = case.ground.plane()
        if ground is not None:
            corners = self.outline().reshape(-1, 3)
            height = ground.height(corners)
            if not height.min() > 0.0:
                low = corners[int(np.argmin(height))]
                ctx.fail(f"{where} reaches through the ground plane ([ground] point and normal): its "
                         f"planform is {-height.min():.4g} m below it near ({low[0]:.4g}, {low[1]:.4g}, "
                         f"{low[2]:.4g}) m; the whole wing must be above the ground, on the side the "
                         f"normal points to (move {where}.position or [ground] point)")
        if np.linalg.norm(case.freestream.vector()) == 0.0:
            ctx.fail(f"{where}: a wing needs a freestream; [freestream] speed must be positive "
                     "(or velocity nonzero), got zero")
        motion = self.harmonic_motion()
        if motion is not None:
            self._check_motion(motion, case, where, ctx)

    def _check_motion(self, motion: HarmonicMotion, case: Case, where: str, ctx) -> None:
        """The wing must not overtake the wake it sheds, and the step must resolve the motion."""
        speed = float(np.linalg.norm(case.freestream.vector()))
        fastest = motion.largest_speed(self.outline().reshape(-1, 3))
        if not fastest < speed:
            ctx.fail(f"{where}.motion moves the wing at up to {fastest:.4g} m/s, not slower than the "
                     f"freestream ({speed:.4g} m/s): the wing would run into the wake it sheds; lower "
                     f"plunge_amplitude, pitch_amplitude or frequency until the motion's speed is below "
                     f"{speed:.4g} m/s")
        dt = case.time.dt
        period = 1.0 / motion.frequency
        if dt is not None and period / dt < MIN_MOTION_STEPS:
            ctx.fail(f"time.dt = {dt:g} s resolves a period of {where}.motion ({period:.4g} s) by "
                     f"{period / dt:.3g} steps; at least {MIN_MOTION_STEPS} are needed: dt must be at "
                     f"most {period / MIN_MOTION_STEPS:.4g} s")

    def resolve(self, case: Case) -> WingSpec:
        n_c = self.chordwise_panels or (1 if self.model == "lifting-line" else 4)
        area = self.reference_area or tidy(self.planform().area())
        mac, point = self.planform().mean_aerodynamic_chord()
        if self.moment_reference is None:
            point = rotation_matrix(self.orientation) @ point + np.asarray(self.position, dtype=np.float64)
            moment_reference = tuple(float(v) for v in point)
        else:
            moment_reference = self.moment_reference
        return dataclasses.replace(self, chordwise_panels=n_c, reference_area=area,
                                   reference_chord=self.reference_chord or mac, moment_reference=moment_reference)

    def suggest_dt(self, case: Case) -> float:
        speed = float(np.linalg.norm(case.freestream.vector()))
        dt = self.mean_chord() / (max(4, self.chordwise_panels or 1) * speed)
        if self.motion.moves:
            dt = min(dt, 1.0 / (DEFAULT_MOTION_STEPS * self.motion.frequency))
        return dt

    def suggest_steps_float(self, case: Case, dt: float) -> float:
        speed = float(np.linalg.norm(case.freestream.vector()))
        return DEFAULT_WAKE_SPANS * self.span / (speed * dt)

    def omitted(self) -> set:
        return set()

    def discretization(self) -> dict:
        """The counts of elements that resolve the wing, spanwise first: ``{key: count}``.

        A vortex lattice adds its chordwise panels; a lifting line has one.
        """
        counts = {"spanwise_panels": self.spanwise_panels}
        if self.model != "lifting-line":
            counts["chordwise_panels"] = self.chordwise_panels
        return counts


MAX_AZIMUTH_STEP = 30.0     # largest blade turn per step accepted [deg]; 5-10 advised (common practice)
MAX_CUTOUT = 0.9            # largest root cut-out / radius (our choice: a blade of a tenth of the radius)


@dataclass(frozen=True, kw_only=True)
class RotorSpec:
    """[bodies.NAME] with type = "rotor": a lift rotor, propeller or wind turbine.

    Chord and twist are laws along the blade in eta = (r - root_cutout) /
    (radius - root_cutout): 0 at the root cut-out, 1 at the tip. ``axis``
    is the thrust direction (downwind for a turbine); see
    :mod:`wakes.aero.rotor` for the frames.
    """

    type: str = key("rotor", "body type", kind="str", choices=("rotor",))
    kind: str = key("rotor", "coefficients reported: lift rotor, propeller or wind turbine",
                    kind="str", choices=ROTOR_KINDS)
    blades: int = key(doc="number of blades", kind="int", minimum=1, maximum=64)
    radius: float = key(doc="tip radius, along the blade from the hub centre", unit="m",
                        above=0.0, minimum=MIN_LENGTH, maximum=MAX_LENGTH)
    root_cutout: float = key(doc=f"radius where the lifting blade starts (at most {MAX_CUTOUT:g} x radius)",
                             unit="m", minimum=0.0, maximum=MAX_LENGTH)
    chord: Distribution = key(doc="chord along the blade (eta 0 at the root cut-out, 1 at the tip)",
                              unit="m", kind="distribution", above=0.0, minimum=MIN_LENGTH, maximum=MAX_LENGTH)
    twist: Distribution = key(Distribution.constant(0.0), "section pitch added to the collective, "
                              "along the blade", "deg", kind="distribution", minimum=-90.0, maximum=90.0)
    collective: float = key(0.0, "pitch of every section before twist, leading edge towards +axis",
                            "deg", minimum=-90.0, maximum=90.0)
    rpm: float = key(doc=f"rotational speed (blade tip speed at most {MAX_SPEED:g} m/s)", unit="rev/min",
                     above=0.0, minimum=0.1, maximum=1e6)
    spin: str = key("ccw", "ccw: counter-clockwise seen from the +axis side (right-handed about it)",
                    kind="str", choices=("ccw", "cw"))
    hub: tuple = key((0.0, 0.0, 0.0), "hub centre in the global frame", "m", kind="vec3",
                     minimum=-MAX_COORDINATE, maximum=MAX_COORDINATE)
    axis: tuple = key((0.0, 0.0, 1.0), "thrust direction (downwind for a turbine), not zero",
                      kind="vec3", minimum=-1e6, maximum=1e6)
    precone: float = key(0.0, "cone angle of the blades towards +axis", "deg",
                         minimum=-30.0, maximum=30.0)
    azimuth: float = key(0.0, "position of blade 1 at the start, from global +x projected on the "
                         "disc (+z if the axis lies along x)", "deg", minimum=-360.0, maximum=360.0)
    cyclic_cos: float = key(0.0, "cyclic pitch theta_1c: pitch added as theta_1c cos(psi), psi the "
                            "blade azimuth from downstream in the sense of rotation (README)", "deg",
                            minimum=-30.0, maximum=30.0)
    cyclic_sin: float = key(0.0, "cyclic pitch theta_1s: pitch added as theta_1s sin(psi) (90 deg: "
                            "the advancing blade)", "deg", minimum=-30.0, maximum=30.0)
    panels: int = key(16, "strips per blade", kind="int", minimum=2, maximum=200)
    spacing: str = key("cosine", "station spacing: cosine (root and tip), tip, uniform", kind="str",
                       choices=BLADE_SPACINGS)
    azimuth_step: float = key(10.0, "blade turn per time step when [time] dt is not given", "deg",
                              above=0.0, minimum=0.1, maximum=MAX_AZIMUTH_STEP)
    revolutions: float = key(10.0, "run length when [time] steps is not given", above=0.0,
                             maximum=MAX_REVOLUTIONS)
    wake_revolutions: float = key(6.0, "wake older than this many revolutions is removed (inf: kept)",
                                  above=0.0, maximum=MAX_REVOLUTIONS, allow_inf=True)
    wake_fade_revolutions: float = key(2.0, "revolutions before the wake is removed over which its "
                                       "circulation fades linearly to zero, at most half the kept wake "
                                       "(0: cut abruptly)",
                                       minimum=0.0, maximum=MAX_REVOLUTIONS)
    free_wake_revolutions: float = key(float("inf"), "wake older than this many revolutions moves "
                                       "rigidly with the mean velocity of the revolution before it (inf: "
                                       "all free)", above=0.0, maximum=MAX_REVOLUTIONS, allow_inf=True)
    rollup_age: float = key(360.0, "wake age where the blade's resolved sheet rolls up into a tip "
                            "vortex and inboard trailers (inf: never)", "deg", above=0.0,
                            maximum=360.0 * MAX_REVOLUTIONS, allow_inf=True)
    inboard_trailers: int = key(2, "trailers the inboard part of the rolled-up wake is gathered into "
                                "(0: not followed)", kind="int", minimum=0, maximum=32)
    symmetric_wake: bool = key(False, "keep the blades' wakes B-fold symmetric (axial flow only)",
                               kind="bool")
    startup_revolutions: float = key(2.0, "lift rotor: revolutions over which a start-up drift of "
                                     "the wake fades (0: none)", minimum=0.0,
                                     maximum=MAX_REVOLUTIONS)
    airfoil: AirfoilSpec = key(AirfoilSpec(), "section polar", kind="table")
    trim: TrimSpec = key(TrimSpec(), "target loads the controls are trimmed to", kind="table")
    flap: FlapSpec = key(FlapSpec(), "rigid blade flapping about a hinge", kind="table")
    name: str = field(default="rotor", metadata=dict(internal=True))

    def geometry(self, freestream=None) -> RotorGeometry:
        """The rotor's blades, hub and rotation; ``freestream`` [m/s] sets the azimuth origin.

        Without it (or with a freestream along the axis) the azimuth origin
        of the cyclic pitch is the hub frame's azimuth zero
        (:mod:`wakes.aero.rotor`).
        """
        return RotorGeometry(blades=self.blades, radius=self.radius, root_cutout=self.root_cutout,
                             chord=self.chord, twist=self.twist, collective=self.collective,
                             rpm=self.rpm, spin=1 if self.spin == "ccw" else -1, hub=self.hub,
                             axis=self.axis, precone=self.precone, azimuth0=self.azimuth,
                             panels=self.panels, spacing=self.spacing, cyclic_cos=self.cyclic_cos,
                             cyclic_sin=self.cyclic_sin, hinge_offset=self.flap.hinge_offset,
                             downstream=None if freestream is None else tuple(float(v) for v in freestream))

    def mean_chord(self) -> float:
        """Chord averaged along the blade [m]."""
        return self.geometry().mean_chord()

    def flap_hinge(self) -> FlapHinge | None:
        """The blades' flap hinge, spring and inertia, or None when they do not flap."""
        f = self.flap
        if not f.flaps:
            return None
        return FlapHinge(offset=f.hinge_offset, spring=f.spring, inertia=f.inertia, radius=self.radius,
                         rest_angle=math.radians(self.precone))

    def lock_number(self, density: float) -> float:
        """Nominal Lock number gamma = rho a c R^4 / I_b, a = 2 pi /rad and c the thrust-weighted chord.

        c = 3 int c r^2 dr / R^3 (as in the solidity); NaN when the blades do not flap.
        """
        if not self.flap.flaps:
            return float("nan")
        g = self.geometry()
        chord = g.solidity() * math.pi * self.radius / self.blades
        return density * 2.0 * math.pi * chord * self.radius ** 4 / self.flap.inertia

    def _check_flap(self, where: str, ctx) -> None:
        f, w = self.flap, f"{where}.flap"
        if not f.flaps:
            return
        if not f.hinge_offset <= self.root_cutout:
            ctx.fail(f"{w}.hinge_offset must be at most {where}.root_cutout = {self.root_cutout:g} m (the "
                     f"lifting blade lies outboard of the hinge); got {f.hinge_offset:g} m")
        hinge = self.flap_hinge()
        omega = 2.0 * math.pi * self.rpm / 60.0
        nu2 = hinge.frequency_ratio_squared(omega)
        if not nu2 > 0.0:
            least = -f.inertia * omega * omega * (nu2 - f.spring / (f.inertia * omega * omega))
            ctx.fail(f"{w}.spring = {f.spring:g} N m/rad makes the blade's flap stiffness negative "
                     f"(nu_beta^2 = {nu2:.4g}, the flap frequency ratio squared); the blade would not "
                     f"come back: {w}.spring must be above {least:.6g} N m/rad, where it cancels the "
                     f"centrifugal stiffness at {self.rpm:g} rpm")

    def after_parse(self, raw: dict, where: str, ctx) -> RotorSpec:
        if not self.root_cutout <= MAX_CUTOUT * self.radius:
            ctx.fail(f"{where}.root_cutout must be less than {where}.radius = {self.radius:g} m, at most "
                     f"{MAX_CUTOUT:g} x radius = {MAX_CUTOUT * self.radius:g} m (the blade runs from the "
                     f"cut-out to the tip); got {self.root_cutout:g} m")
        for name in ("chord", "twist"):
            problem = getattr(self, name).problem(True)
            if problem:
                ctx.fail(f"{where}.{name}: {problem}")
        _check_direction(self.axis, f"{where}.axis", "the thrust direction", ctx)
        tip_speed = 2.0 * math.pi * self.radius * self.rpm / 60.0
        if not tip_speed <= MAX_SPEED:
            ctx.fail(f"{where}: the blade tips move at {tip_speed:.4g} m/s ({where}.radius = "
                     f"{self.radius:g} m at {self.rpm:g} rpm); at most {MAX_SPEED:g} m/s is accepted: "
                     f"rpm must be at most {MAX_SPEED * 60.0 / (2.0 * math.pi * self.radius):.4g}")
        self._check_flap(where, ctx)
        return self

    def outline(self) -> np.ndarray:
        """The cone swept by the blades, hub centre to tip, as triangles, shape (M, 3, 3) [m]."""
        return disc_triangles(hub=self.hub, axis=self.axis, radius=self.radius, precone_deg=self.precone)

    def check(self, case: Case, where: str, ctx) -> None:
        ground = case.ground.plane()
        if ground is not None:
            a = np.asarray(self.axis, dtype=np.float64) / np.linalg.norm(self.axis)
            beta = math.radians(self.precone)
            across = math.sqrt(max(0.0, 1.0 - float(a @ ground.normal) ** 2))
            reach = self.radius * (math.cos(beta) * across + abs(math.sin(beta)))
            height = float(ground.height(np.asarray(self.hub, dtype=np.float64)))
            if not height > reach:
                ctx.fail(f"{where}.hub is {height:g} m above the ground plane ([ground] point and "
                         f"normal); its blades reach {reach:g} m towards the ground, so the hub must "
                         f"be more than {reach:g} m above it")
        dt = case.time.dt
        if dt is not None and blade_turn_deg(self.rpm, dt) > MAX_AZIMUTH_STEP:
            ctx.fail(f"time.dt = {dt:g} s turns the blades of {where} by "
                     f"{blade_turn_deg(self.rpm, dt):.3g} deg a step at {self.rpm:g} rpm; at most "
                     f"{MAX_AZIMUTH_STEP:g} deg is accepted (5-10 deg advised): dt must be at most "
                     f"{dt_for_turn(MAX_AZIMUTH_STEP, self.rpm):.4g} s")
        a = np.asarray(self.axis, dtype=np.float64)
        axial = float(case.freestream.vector() @ (a / np.linalg.norm(a)))
        if self.kind == "turbine" and not axial > 0.0:
            ctx.fail(f"{where}: a turbine needs wind blowing along its axis (downwind); the "
                     f"[freestream] velocity along {where}.axis is {axial:g} m/s, it must be positive")
        across = float(np.linalg.norm(np.cross(case.freestream.vector(), a / np.linalg.norm(a))))
        if self.symmetric_wake and not is_axial_flow(case.freestream.vector(), a):
            ctx.fail(f"{where}.symmetric_wake = true needs axial flow (hover, climb, axial wind); the "
                     f"[freestream] velocity has {across:g} m/s across {where}.axis")
        if self.flap.flaps:
            turn = math.radians(blade_turn_deg(self.rpm, step_of(case)))
            gamma = self.lock_number(case.fluid.density)
            if gamma * turn / 8.0 > MAX_FLAP_DAMPING_STEP:
                least = gamma * self.flap.inertia * turn / (8.0 * MAX_FLAP_DAMPING_STEP)
                most = math.degrees(8.0 * MAX_FLAP_DAMPING_STEP / gamma)
                ctx.fail(f"{where}.flap.inertia = {self.flap.inertia:g} kg m^2 is too light for the time "
                         f"step: the blades' nominal Lock number {gamma:.4g} times the step's turn "
                         f"({math.degrees(turn):.3g} deg) over 8 is {gamma * turn / 8.0:.3g}, at most "
                         f"{MAX_FLAP_DAMPING_STEP:g} is accepted (the flap step goes unstable near 1): "
                         f"{where}.flap.inertia must be at least {least:.4g} kg m^2, or the step "
                         f"shorter (time.dt at most {dt_for_turn(most, self.rpm):.4g} s, a turn of "
                         f"{most:.3g} deg: {where}.azimuth_step)")
        if self.kind == "propeller" and axial > 0.0:
            ctx.fail(f"{where}: a propeller's axis points forward, against the relative wind; the "
                     f"[freestream] velocity along {where}.axis is {axial:g} m/s, it must be zero "
                     "or negative")

    def resolve(self, case: Case) -> RotorSpec:
        return self

    def suggest_dt(self, case: Case) -> float:
        return dt_for_turn(self.azimuth_step, self.rpm)

    def suggest_steps_float(self, case: Case, dt: float) -> float:
        return self.revolutions * 60.0 / (self.rpm * dt) + 1.0

    def omitted(self) -> set:
        return set()

    def discretization(self) -> dict:
        """The counts of elements that resolve the blades: ``{"panels": strips per blade}``."""
        return {"panels": self.panels}


BODY_TYPES: dict[str, type] = {"wing": WingSpec, "rotor": RotorSpec}


@dataclass(frozen=True, kw_only=True)
class Case:
    """A fully checked case. Build it with :func:`load_case` or :func:`parse_case`.

    Attributes
    ----------
    title : str
        Free text naming the case.
    fluid, freestream, time, solver, wake, output, ground, cluster
        The sections of the case file.
    bodies : tuple
        Body specs (e.g. :class:`WingSpec`), each with its ``name``.
    source : str
        Where the case came from (file path or ``"<dict>"``).
    settings : tuple of str
        The ``--set KEY=VALUE`` texts applied over the case file
        (:func:`wakes.case.settings.load_case_with`).
    """

    title: str = key("", "free text naming the case", kind="str")
    fluid: FluidSpec = key(FluidSpec(), kind="table")
    freestream: FreestreamSpec = key(FreestreamSpec(), kind="table")
    time: TimeSpec = key(TimeSpec(), kind="table")
    solver: SolverSpec = key(SolverSpec(), kind="table")
    wake: WakeSpec = key(WakeSpec(), kind="table")
    output: OutputSpec = key(OutputSpec(), kind="table")
    ground: GroundSpec = key(GroundSpec(), kind="table")
    cluster: ClusterSpec = key(ClusterSpec(), kind="table")
    bodies: tuple = field(default=(), metadata=dict(kind="bodies"))
    source: str = field(default="<dict>", metadata=dict(internal=True))
    settings: tuple = field(default=(), metadata=dict(internal=True))

    def body(self, name: str):
        """The body spec called ``name``."""
        for b in self.bodies:
            if b.name == name:
                return b
        raise KeyError(name)

    def gust(self) -> Gust | None:
        """The freestream's gust (:class:`wakes.aero.gust.Gust`), None without one.

        Its front reaches the most upstream point of the bodies' planforms
        (at their mean position) at ``[freestream.gust] arrival_time``.
        """
        g = self.freestream.gust
        if g.shape == "none":
            return None
        v = self.freestream.vector()
        heading = v / np.linalg.norm(v)
        upstream = min(float(np.min(b.outline().reshape(-1, 3) @ heading)) for b in self.bodies)
        if g.direction is None:
            d = upward_normal(v)
        else:
            d = np.asarray(g.direction, dtype=np.float64)
            d = d / np.linalg.norm(d)
        return Gust(shape=g.shape, amplitude=g.amplitude, length=math.inf if g.length is None else g.length,
                    direction=d, freestream=v, upstream=upstream, arrival=g.arrival_time)

    def to_dict(self, relative_to=None) -> dict:
        """The case as nested plain data (what :meth:`to_toml` writes); file paths inside the
        folder ``relative_to`` relative to it."""
        return to_plain(self, relative_to)

    def to_toml(self, header: str = "", relative_to=None) -> str:
        """The resolved case as TOML text that :func:`load_case` reads back (from the folder
        ``relative_to``, when given, which then may be moved with the files it holds)."""
        return dump_toml(self.to_dict(relative_to), header)


# ----------------------------------------------------------------- parsing

MIN_DIRECTION = 1e-6   # shortest vector accepted as a direction (axis, ground normal)


def _check_direction(vector, where: str, meaning: str, ctx) -> None:
    """A direction vector must not be (nearly) zero; its length does not matter otherwise."""
    if not np.linalg.norm(vector) >= MIN_DIRECTION:
        ctx.fail(f"{where} must be a nonzero vector ({meaning}), at least {MIN_DIRECTION:g} long; "
                 f"got {list(vector)}")


def _parse_bodies(table, ctx) -> tuple:
    if not isinstance(table, dict) or not table:
        ctx.fail("the case needs at least one body: a table [bodies.NAME] with type = "
                 f"{' or '.join(map(repr, BODY_TYPES))}")
    out = []
    for name, body in table.items():
        where = f"bodies.{name}"
        if not isinstance(name, str) or not _NAME.fullmatch(name):
            ctx.fail(f"body name {short(name)} may hold only letters, digits, '-' and '_' "
                     "(1 to 64 of them)")
        if not isinstance(body, dict):
            ctx.fail(f"[{where}] must be a table; got {short(body)}")
        btype = body.get("type")
        if not isinstance(btype, str) or btype not in BODY_TYPES:
            close = difflib.get_close_matches(btype, BODY_TYPES, n=1, cutoff=0.6) if isinstance(btype, str) else []
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            ctx.fail(f"{where}.type must be one of {', '.join(map(repr, BODY_TYPES))}; "
                     f"got {short(btype)}{hint}")
        out.append(parse_section(BODY_TYPES[btype], body, where, ctx, extra={"name": name}))
    return tuple(out)


def parse_case(data: dict, *, source: str = "<dict>", base_dir=".") -> Case:
    """Check a case given as nested data (as :mod:`tomllib` returns it) and resolve defaults.

    Parameters
    ----------
    data : dict
        The case's tables and keys.
    source : str
        Name used in error messages (the file path).
    base_dir : str or Path
        Directory that relative file paths (polar tables) are taken from.

    Returns
    -------
    Case
        With every default filled in.

    Raises
    ------
    wakes.errors.CaseError
        Naming the source, the key, the bad value and what is accepted.
    """
    ctx = Context(source, Path(base_dir))
    if not isinstance(data, dict):
        ctx.fail(f"a case must be a table of keys; got {type(data).__name__}")
    data = dict(data)
    bodies_raw = data.pop("bodies", None)
    case = parse_section(Case, data, "", ctx)
    if "title" not in data and source != "<dict>":
        case = dataclasses.replace(case, title=Path(source).stem)
    fs = case.freestream
    raw_fs = data.get("freestream", {})
    if fs.velocity is not None:
        both = [k for k in ("speed", "angle_of_attack", "sideslip") if k in raw_fs]
        if both:
            ctx.fail(f"freestream: give either velocity or {both[0]} (speed and angles), not both")
    bodies = _parse_bodies(bodies_raw, ctx)
    case = dataclasses.replace(case, bodies=bodies, source=source)
    for b in bodies:
        b.check(case, f"bodies.{b.name}", ctx)
    case.freestream.gust.check(case, "freestream.gust", ctx)
    _check_clearance(bodies, ctx)
    return _resolve(case)


def _check_clearance(bodies, ctx) -> None:
    """No two bodies overlap or touch (:mod:`wakes.aero.clearance`)."""
    outlines = [b.outline() for b in bodies]
    for i in range(len(bodies)):
        for j in range(i + 1, len(bodies)):
            p = contact_point(outlines[i], outlines[j])
            if p is not None:
                a, b = bodies[i], bodies[j]
                ctx.fail(f"bodies.{a.name} and bodies.{b.name} overlap near ({p[0]:.4g}, {p[1]:.4g}, "
                         f"{p[2]:.4g}) m: {_occupies(a)} meets {_occupies(b)}; move one of them "
                         "(a wing's position, a rotor's hub) so that they are apart")


def _occupies(body) -> str:
    return (f"the planform of {body.name}" if body.type == "wing"
            else f"the disc swept by the blades of {body.name}")


def step_of(case: Case) -> float:
    """The time step [s] of a case: ``[time] dt`` or, not given, the shortest its bodies suggest."""
    if case.time.dt is not None:
        return case.time.dt
    return tidy(min(b.suggest_dt(case) for b in case.bodies))


def _resolve(case: Case) -> Case:
    """Fill the defaults that depend on the rest of the case."""
    bodies = tuple(b.resolve(case) for b in case.bodies)
    case = dataclasses.replace(case, bodies=bodies)
    wake = case.wake
    if wake.core_radius is None:
        chord = min(b.mean_chord() for b in bodies)
        wake = dataclasses.replace(wake, core_radius=tidy(DEFAULT_CORE_CHORDS * chord))
    time = case.time
    dt = step_of(case)
    if not (math.isfinite(dt) and MIN_DT <= dt <= MAX_DT):
        raise CaseError(f"{case.source}: [time] dt: the default step from the case's sizes and speeds is "
                        f"{dt:g} s, outside the accepted {MIN_DT:g} to {MAX_DT:g} s; give [time] dt, a "
                        "number of seconds in that range")
    if time.steps is None:
        wanted = max(b.suggest_steps_float(case, dt) for b in bodies)
        if not (math.isfinite(wanted) and wanted <= MAX_DEFAULT_STEPS):
            raise CaseError(f"{case.source}: [time] steps: the default from the case's sizes and speeds "
                            f"is {wanted:g} steps (more than {MAX_DEFAULT_STEPS:,}); give [time] steps, "
                            f"a whole number from 1 to {MAX_STEPS:,}")
        steps = max(1, int(math.ceil(wanted - 1e-9)))
    else:
        steps = time.steps
    output = case.output
    if output.snapshot_every is None:
        output = dataclasses.replace(output, snapshot_every=math.ceil(steps / DEFAULT_SNAPSHOTS))
    case = dataclasses.replace(case, wake=wake, time=TimeSpec(dt=dt, steps=steps), output=output)
    _check_worked_out(case)
    return case


def _check_worked_out(case: Case) -> None:
    """Values worked out from the rest of the case keep their keys' ranges too: the resolved
    case a run folder records must read back."""
    tables = [(name, getattr(case, name)) for name in ("time", "wake", "output")]
    tables += [(f"bodies.{b.name}", b) for b in case.bodies]
    for where, table in tables:
        for f in public_fields(type(table)):
            value = getattr(table, f.name)
            meta = f.metadata
            if not meta.get("resolved") or value is None or meta.get("kind") not in ("float", "int"):
                continue
            if not (math.isfinite(value) and in_range(value, meta)):
                raise CaseError(f"{case.source}: {where}.{f.name} worked out from the rest of the case is "
                                f"{value:g}, outside its range ({range_words(meta)}); give {where}.{f.name} "
                                "or change the sizes and speeds it comes from")


def load_case(path, overrides: dict | None = None) -> Case:
    """Read, check and resolve a case file.

    Parameters
    ----------
    path : str or Path
        The TOML case file.
    overrides : dict, optional
        Nested keys merged over the file's before checking, e.g.
        ``{"time": {"dt": 0.01}, "bodies": {"wing": {"spanwise_panels": 48}}}``.

    Returns
    -------
    Case

    Raises
    ------
    wakes.errors.CaseError
        Missing file, TOML syntax error (with line and column), unknown key,
        wrong type or out-of-range value; the message names file and key.

    Examples
    --------
    >>> import wakes.case
    >>> case = wakes.case.load_case("cases/validation/elliptic-wing.toml")
    >>> case.body("wing").span
    8.0
    """
    data = read_toml(path)
    if overrides:
        data = merge(data, overrides)
    return parse_case(data, source=str(path), base_dir=Path(path).resolve().parent)


# ----------------------------------------------------------------- writing

# ----------------------------------------------------------------- reference

def case_reference() -> str:
    """Markdown reference of every case key, generated from the schema."""
    sections = [("", Case)] + [(f.name, type(f.default)) for f in public_fields(Case)
                               if f.metadata.get("kind") == "table"]
    sections += [(f"bodies.NAME] (type = \"{t}\")", cls) for t, cls in BODY_TYPES.items()]
    sections.insert(sections.index(("freestream", FreestreamSpec)) + 1, ("freestream.gust", GustSpec))
    sections += [("bodies.NAME.airfoil", AirfoilSpec), ("bodies.NAME.motion] (type = \"wing\")", WingMotionSpec),
                 ("bodies.NAME.trim] (type = \"rotor\")", TrimSpec),
                 ("bodies.NAME.flap] (type = \"rotor\")", FlapSpec)]
    out = []
    for name, cls in sections:
        out.append(f"\n### [{name}" + ("" if name.endswith(")") else "]") if name else "\n### top level")
        out.append("")
        out.append("| key | unit | default | accepted | meaning |")
        out.append("|---|---|---|---|---|")
        for f in public_fields(cls):
            m = f.metadata
            if m.get("kind") == "table":
                continue
            if f.default is dataclasses.MISSING:
                default = "required"
            elif m.get("resolved"):
                default = "worked out"
            else:
                default = f"`{plain_default(f.default)}`" if f.default is not None else "none"
            out.append(f"| `{f.name}` | {m.get('unit', '')} | {default} | {accepted_text(m)} | {m.get('doc', '')} |")
    return "\n".join(out).lstrip("\n") + "\n"
