"""Commented starting cases for ``wakes new``: a wing, a lift rotor, a propeller, a wind turbine.

Each template is an invented demo scenario that runs as written in a
minute or two on a laptop; the comments say what each key means and which
way to change it. The rotor, propeller and turbine templates need the
``rotor`` body type; if it is not registered in
:data:`wakes.case.BODY_TYPES` their request fails with a message saying so.
"""

from __future__ import annotations

import os
from pathlib import Path

from .aero.rotor_loads import ROTOR_KINDS
from .case import BODY_TYPES
from .errors import InputError
from .io import atomic

CAUTION = ("# Results are engineering estimates: confirm them by test and licensed engineering\n"
           "# judgement; local codes and airworthiness regulations govern.\n")

_WING = '''# wakes case: a fixed wing (invented demo: a 2.4 m span trainer glider at 12 m/s).
{caution}
title = "demo wing, 12 m/s, 5 deg"

[fluid]
density = 1.225                 # kg/m^3, sea level
kinematic_viscosity = 1.46e-5   # m^2/s

[freestream]
speed = 12.0                    # m/s
angle_of_attack = 5.0           # deg; positive: flow from below

[bodies.wing]                   # any name; one table per body
type = "wing"
model = "lifting-line"          # or "vortex-lattice" (chordwise panels, thin surfaces)
span = 2.4                      # m, tip to tip
chord = {{law = "linear", root = 0.28, tip = 0.16}}   # m; also a number, or law = "elliptic"
twist = {{law = "linear", root = 0.0, tip = -2.0}}    # deg, washout at the tips
spanwise_panels = 16            # more panels: finer span loading, slower steps
spacing = "cosine"              # crowd panels at the tips

[bodies.wing.airfoil]           # thin-airfoil section; or polar = "my-section.csv"
lift_slope = 6.2832             # 1/rad
cd0 = 0.010                     # profile drag cd = cd0 + cd2 cl^2
cd2 = 0.008

[wake]
model = "filaments"             # or "particles" far from the wing
motion = "free"                 # "frozen" convects with the freestream only (faster)

[time]
dt = 0.02                       # s: a wake row of 0.24 m, about one mean chord
steps = 40                      # wake 9.6 m long, four spans
'''

_ROTOR = '''# wakes case: a {what} (invented demo: {scenario}).
{caution}
title = "{title}"

[fluid]
density = 1.225                 # kg/m^3, sea level
kinematic_viscosity = 1.46e-5   # m^2/s

[freestream]
{freestream}

[bodies.{name}]
type = "rotor"
kind = "{kind}"                 # which coefficients are reported: rotor, propeller or turbine
blades = {blades}
radius = {radius}               # m, tip radius
root_cutout = {cutout}          # m, where the lifting blade starts
chord = {chord}                 # m; eta = 0 at the cut-out, 1 at the tip
twist = {twist}{twist_note}
collective = {collective}       # deg
rpm = {rpm}                     # rev/min
axis = {axis}                   # thrust direction (downwind for a turbine)
panels = 12                     # strips per blade
azimuth_step = 15.0             # deg of blade turn per step; 5-10 for final numbers
revolutions = {revolutions}    # run length: {run_note}
wake_revolutions = {wake_revs}  # wake older than this is removed: {wake_note}

[bodies.{name}.airfoil]         # thin-airfoil section; or polar = "my-section.csv"
lift_slope = 6.2832             # 1/rad
cd0 = 0.009
cd2 = 0.006

[wake]
model = "filaments"
motion = "free"
core = "vatistas2"              # tip-vortex core model
core_radius = {core_radius}{core_note}
cores_at_surfaces = true
'''

_TWIST_NOTE = "                 # deg, added to the collective"

_ROTOR_KINDS = {
    "rotor": dict(what="lift rotor in hover", scenario="a 0.8 m radius two-bladed camera-drone rotor",
                  title="demo lift rotor in hover", name="rotor", kind="rotor",
                  freestream="speed = 0.0                     # m/s: hover",
                  blades=2, radius=0.8, cutout=0.12, chord=0.07,
                  twist='{law = "linear", root = 8.0, tip = -4.0}', twist_note=_TWIST_NOTE, collective=8.0,
                  rpm=1600.0, axis="[0.0, 0.0, 1.0]", revolutions=16.0,
                  run_note="the loads settle once the start-up wake has been cut away",
                  wake_revs=8.0,
                  wake_note=("about 2 R of wake; a shorter one\n"
                             "                                # under-predicts the inflow and the "
                             "induced power (cost grows with it)"),
                  core_radius=0.03,
                  core_note=("              # m, about 0.4 chord; with thinner cores the other blade's\n"
                             "                                # tip vortex, passing close below each blade, makes "
                             "the thrust jitter")),
    "propeller": dict(what="propeller in axial flight",
                      scenario="a 0.3 m radius three-bladed propeller of a small survey aircraft",
                      title="demo propeller, 20 m/s", name="propeller", kind="propeller",
                      freestream="speed = 20.0                    # m/s, flight speed along +x",
                      blades=3, radius=0.3, cutout=0.05, chord='{law = "linear", root = 0.045, tip = 0.025}',
                      twist='{law = "linear", root = 20.0, tip = -8.0}', twist_note=_TWIST_NOTE,
                      collective=18.0, rpm=4200.0,
                      axis="[-1.0, 0.0, 0.0]     # forward, against the relative wind",
                      revolutions=3.0, run_note="the flight speed carries the start-up wake away quickly",
                      wake_revs=2.0, wake_note="about 1.6 R of wake, its faded end counted half (cost grows with it)",
                      core_radius=0.0035, core_note="            # m, 0.1 x mean chord"),
    "turbine": dict(what="wind turbine", scenario="a 5 m radius three-bladed farm turbine",
                    title="demo wind turbine, 8 m/s", name="turbine", kind="turbine",
                    freestream="speed = 8.0                     # m/s, wind along +x",
                    blades=3, radius=5.0, cutout=0.6, chord='{law = "linear", root = 0.55, tip = 0.2}',
                    twist=('{law = "table", eta = [0.0, 0.25, 0.5, 0.75, 1.0], '
                           'values = [-23.0, -15.0, -7.5, -3.0, 1.0]}'),
                    twist_note=("\n# deg, added to the collective. With the axis downwind a section meets the "
                                "wind at its pitch\n# plus the inflow angle: a turbine blade's pitch is "
                                "negative inboard, where the\n# inflow is steep (the usual turbine "
                                "convention with the sign changed)."),
                    collective=0.0, rpm=90.0,
                    axis="[1.0, 0.0, 0.0]      # downwind", revolutions=10.0,
                    run_note="the wind carries the start-up wake away",
                    wake_revs=8.0,
                    wake_note=("about 6 R of wake; a shorter one\n"
                               "                                # under-predicts the slowing of the wind "
                               "and over-predicts the power"),
                    core_radius=0.0375, core_note="           # m, 0.1 x mean chord"),
}

TEMPLATE_KINDS = ("wing", "rotor", "propeller", "turbine")


def available_kinds() -> tuple[str, ...]:
    """The template kinds whose body type exists in this installation."""
    out = ["wing"] if "wing" in BODY_TYPES else []
    if "rotor" in BODY_TYPES:
        out += [k for k in ("rotor", "propeller", "turbine") if k in ROTOR_KINDS]
    return tuple(out)


def template_text(kind: str) -> str:
    """The commented case text of a template.

    Parameters
    ----------
    kind : {"wing", "rotor", "propeller", "turbine"}

    Returns
    -------
    str
        TOML text that :func:`wakes.case.load_case` accepts.

    Raises
    ------
    wakes.errors.InputError
        For an unknown kind, or one whose body type is not available.

    Examples
    --------
    >>> text = template_text("wing")
    >>> 'type = "wing"' in text
    True
    """
    if kind not in TEMPLATE_KINDS:
        raise InputError(f"template kind {kind!r} is unknown; accepted: {', '.join(TEMPLATE_KINDS)}")
    if kind not in available_kinds():
        raise InputError(f"template kind {kind!r} needs the 'rotor' body type, which this version "
                         f"of wakes does not have yet; available: {', '.join(available_kinds())}")
    if kind == "wing":
        return _WING.format(caution=CAUTION)
    return _ROTOR.format(caution=CAUTION, **_ROTOR_KINDS[kind])


def new_case(kind: str, path: str | os.PathLike, *, overwrite: bool = False) -> Path:
    """Write a commented template case that runs as written.

    Parameters
    ----------
    kind : {"wing", "rotor", "propeller", "turbine"}
        What the case describes.
    path : path-like
        The case file to write (conventionally ``.toml``).
    overwrite : bool
        Replace an existing file.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    wakes.errors.InputError
        For an unknown or unavailable kind, or when ``path`` exists and
        ``overwrite`` is false.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = new_case("wing", pathlib.Path(tempfile.mkdtemp()) / "wing.toml")
    >>> p.name
    'wing.toml'
    """
    text = template_text(kind)
    path = Path(path)
    if path.is_dir():
        raise InputError(f"case file {path}: is a folder; give a file name such as {path / (kind + '.toml')}")
    if path.exists() and not overwrite:
        raise InputError(f"case file {path} exists; choose another name or pass --overwrite")
    if not path.parent.is_dir():
        raise InputError(f"case file {path}: folder {path.parent} does not exist")
    return atomic.write_text(path, text)
