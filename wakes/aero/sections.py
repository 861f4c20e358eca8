"""Section models that depend on the Mach number, and the built-in sections.

Two ways to give a section's lift at the local Mach number M of each strip
(M = |V_2D| / a, the speed in the section plane over the speed of sound):

* :class:`CompressiblePolar` -- a low-speed polar corrected by a similarity
  rule of linearised subsonic flow:

  - Prandtl-Glauert (Glauert 1928, Proc. R. Soc. A 118; memory for the
    volume): cl = cl0 / beta, beta = sqrt(1 - M^2).
  - Karman-Tsien (Tsien 1939, J. Aeronaut. Sci. 6; von Karman 1941,
    J. Aeronaut. Sci. 8; memory for the volumes), a rule for the pressure
    coefficient, Cp = Cp0 / (beta + k Cp0), k = M^2 / (2 (1 + beta)).
    Applied to a section, it needs the pressures on each surface; we take
    the simplest loading that carries cl0, a uniform chordwise loading with
    Cp0 = -cl0/2 on the upper and +cl0/2 on the lower surface (thickness
    ignored), which gives

        cl = cl0 beta / (beta^2 - (k cl0 / 2)^2)

    (our derivation from the rule). It equals Prandtl-Glauert to first
    order in cl0 and raises the lift above it at finite cl0, as the rule
    raises the suction side's pressure coefficient. (The form sometimes
    seen, cl = cl0 / (beta + k cl0), lowers positive lift below
    Prandtl-Glauert and is not used.)

  Where they hold: attached, subcritical flow -- below the critical Mach
  number, where the flow somewhere on the section first reaches sonic speed
  (:func:`critical_mach`) -- on a thin section at small perturbation. A
  polar does not know its critical Mach number, so the correction refuses
  (or, if asked, holds at) Mach numbers above a stated ``mach_limit``,
  0.7 by default: the critical Mach number of the NACA 0012 at zero lift,
  from its low-speed minimum pressure coefficient of about -0.43 (the value
  of Anderson's worked example in *Fundamentals of Aerodynamics*; memory),
  is 0.74 by Prandtl-Glauert and 0.72 by Karman-Tsien (:func:`critical_mach`),
  and lift lowers it further (0.58 at Cp0 = -1.0, Karman-Tsien). Lower the limit for a
  thicker or more loaded section. Drag is left at its low-speed value
  (below the critical Mach number the profile drag is mostly skin friction,
  which changes little; common practice), and the rules are applied to the
  whole extended polar, including post-stall angles where no similarity
  rule has a basis. The Mach number from the rule also moves lift with the
  section speed: :meth:`CompressiblePolar.evaluate_mach` returns dcl/dM.

* :class:`MachTablePolar` -- measured or computed tables at several Mach
  numbers, interpolated linearly in M (read with :func:`load_mach_table`).

Built-in sections (:func:`builtin_polar`): ``"naca0012"``, a low-speed NACA
0012 table near a Reynolds number of 2 million built from published data
by ``tools/make_naca0012_polar.py`` (each value's source is in the file).
"""

from __future__ import annotations

from importlib import resources
from pathlib import Path

import numpy as np
from scipy.optimize import brentq

from ..errors import CaseError, InputError
from ..io.tables import read_numeric_table
from .polars import (
    PolarRangeError,
    TablePolar,
    ThinAirfoilPolar,
    at_mach,
    has_mach_column,
    load_polar_table,
    mach_of,
)

GAMMA_AIR = 1.4                       # ratio of specific heats of air
COMPRESSIBILITY_RULES = ("none", "prandtl-glauert", "karman-tsien")
MACH_OUT_OF_RANGE_MODES = ("error", "hold")
DEFAULT_MACH_LIMIT = 0.7              # see the module notes
MAX_MACH_LIMIT = 0.9                  # the Karman-Tsien lift stays finite for |cl0| < 3 up to here
MACH_TABLE_COLUMNS = ("mach", "alpha_deg", "cl", "cd")
BUILTIN_SECTIONS = {"naca0012": "naca0012.csv"}


def prandtl_glauert(cl0, mach):
    """Prandtl-Glauert lift: cl = cl0 / sqrt(1 - M^2) and its derivatives.

    Parameters
    ----------
    cl0 : ndarray
        Low-speed lift coefficient.
    mach : ndarray
        Mach number, 0 <= M < 1 (same shape or broadcastable).

    Returns
    -------
    cl, dcl_dcl0, dcl_dmach : ndarray

    Examples
    --------
    >>> cl, f, _ = prandtl_glauert(1.0, 0.44)
    >>> round(float(f), 4)
    1.1136
    """
    m = np.asarray(mach, dtype=np.float64)
    beta = np.sqrt(1.0 - m * m)
    cl0 = np.asarray(cl0, dtype=np.float64)
    return cl0 / beta, 1.0 / beta + 0.0 * cl0, cl0 * m / beta ** 3


def karman_tsien(cl0, mach):
    """Karman-Tsien lift on a uniform chordwise loading (see the module notes), with derivatives.

    cl = cl0 beta / (beta^2 - h^2), h = k cl0 / 2, k = M^2 / (2 (1 + beta)).

    Parameters
    ----------
    cl0 : ndarray
        Low-speed lift coefficient.
    mach : ndarray
        Mach number, 0 <= M <= 0.9.

    Returns
    -------
    cl, dcl_dcl0, dcl_dmach : ndarray

    Examples
    --------
    >>> cl, _, _ = karman_tsien(0.5, 0.44)
    >>> round(float(cl), 5), round(0.5 / (1 - 0.44 ** 2) ** 0.5, 5)
    (0.55691, 0.55679)
    """
    m = np.asarray(mach, dtype=np.float64)
    cl0 = np.asarray(cl0, dtype=np.float64)
    beta = np.sqrt(1.0 - m * m)
    k = m * m / (2.0 * (1.0 + beta))
    h = 0.5 * k * cl0
    d = beta * beta - h * h
    cl = cl0 * beta / d
    dcl_dcl0 = beta / d + cl0 * beta * h * k / (d * d)
    dbeta = -m / np.where(beta > 0.0, beta, 1.0)
    dk = m / (1.0 + beta) - m * m * dbeta / (2.0 * (1.0 + beta) ** 2)
    dd = 2.0 * beta * dbeta - 2.0 * h * (0.5 * cl0 * dk)
    dcl_dmach = cl0 * (dbeta * d - beta * dd) / (d * d)
    return cl, dcl_dcl0, dcl_dmach


RULES = {"prandtl-glauert": prandtl_glauert, "karman-tsien": karman_tsien}


def sonic_pressure_coefficient(mach: float, gamma: float = GAMMA_AIR) -> float:
    """Pressure coefficient where the local flow is sonic, free stream at ``mach`` (isentropic)."""
    m2 = mach * mach
    return 2.0 / (gamma * m2) * (((2.0 + (gamma - 1.0) * m2) / (gamma + 1.0)) ** (gamma / (gamma - 1.0)) - 1.0)


def critical_mach(cp_min0: float, rule: str = "karman-tsien", gamma: float = GAMMA_AIR) -> float:
    """Critical Mach number from a section's low-speed minimum pressure coefficient.

    Solves Cp(M) = Cp*(M): the rule carries the low-speed minimum Cp0 to
    Mach M, and Cp* is the isentropic pressure coefficient of sonic flow
    (the construction of e.g. Anderson, *Fundamentals of Aerodynamics*,
    ch. 11, whose NACA 0012 example takes Cp0 = -0.43 and Prandtl-Glauert
    and reads 0.74; memory).

    Parameters
    ----------
    cp_min0 : float
        Low-speed minimum pressure coefficient, negative.
    rule : {"karman-tsien", "prandtl-glauert"}
        Compressibility rule applied to Cp0.

    Examples
    --------
    >>> round(critical_mach(-0.43, "prandtl-glauert"), 2), round(critical_mach(-0.43), 2)
    (0.74, 0.72)
    """
    if not cp_min0 < 0.0:
        raise InputError(f"minimum pressure coefficient must be negative; got {cp_min0!r}")
    if rule not in RULES:
        raise InputError(f"rule must be one of {', '.join(map(repr, RULES))}; got {rule!r}")
    kt = rule == "karman-tsien"

    def gap(m):
        beta = np.sqrt(1.0 - m * m)
        den = beta + (m * m / (1.0 + beta) * cp_min0 / 2.0 if kt else 0.0)
        if den <= 0.0:  # the rule has broken down: far beyond sonic
            return -np.inf
        return cp_min0 / den - sonic_pressure_coefficient(m, gamma)

    # gap > 0 at low Mach (Cp* -> -infinity); the first sign change is the critical Mach number
    grid = np.linspace(0.01, 0.99, 99)
    first = next(i for i, m in enumerate(grid) if gap(m) <= 0.0)
    return float(brentq(gap, grid[first - 1], grid[first], xtol=1e-12))


class CompressiblePolar:
    """A low-speed polar evaluated at a local Mach number through a similarity rule.

    Parameters
    ----------
    base : polar
        The low-speed polar (ThinAirfoilPolar or TablePolar); its angle
        handling (error, flat-plate, Viterna-Corrigan) is kept.
    rule : {"prandtl-glauert", "karman-tsien"}
        The similarity rule (see the module notes for where each holds).
    mach_limit : float
        Largest Mach number accepted, 0 < limit <= 0.9 (default 0.7).
    mach_out_of_range : {"error", "hold"}
        Above the limit: raise :class:`PolarRangeError` naming the section's
        angle and Mach number, or evaluate the rule at the limit (dcl/dM = 0
        there).

    Examples
    --------
    >>> import numpy as np
    >>> from wakes.aero.polars import ThinAirfoilPolar
    >>> p = CompressiblePolar(ThinAirfoilPolar(), "prandtl-glauert")
    >>> cl, cd, dcl = p.evaluate(np.radians([4.0]), np.array([0.6]))
    >>> round(float(dcl[0] / (2 * np.pi)), 4)
    1.25
    """

    def __init__(self, base, rule: str = "prandtl-glauert", *, mach_limit: float = DEFAULT_MACH_LIMIT,
                 mach_out_of_range: str = "error"):
        if rule not in RULES:
            raise InputError(f"compressibility rule must be one of {', '.join(map(repr, RULES))}; got {rule!r}")
        if not (np.isfinite(mach_limit) and 0.0 < mach_limit <= MAX_MACH_LIMIT):
            raise InputError(f"mach_limit must be above 0 and at most {MAX_MACH_LIMIT:g} (the rules need "
                             f"subcritical flow); got {mach_limit!r}")
        if mach_out_of_range not in MACH_OUT_OF_RANGE_MODES:
            raise InputError(f"mach_out_of_range must be one of {', '.join(map(repr, MACH_OUT_OF_RANGE_MODES))}; "
                             f"got {mach_out_of_range!r}")
        self.base, self.rule = base, rule
        self.mach_limit, self.mach_out_of_range = float(mach_limit), mach_out_of_range
        self._rule = RULES[rule]

    @property
    def name(self) -> str:
        return f"{self.base.name} with {self.rule}"

    def __repr__(self) -> str:
        return (f"CompressiblePolar({self.base!r}, {self.rule!r}, mach_limit={self.mach_limit:g}, "
                f"mach_out_of_range={self.mach_out_of_range!r})")

    def evaluate(self, alpha: np.ndarray, mach=None):
        """cl, cd and dcl/dalpha [1/rad] at angles ``alpha`` [rad] and Mach numbers ``mach`` (None: 0)."""
        return self.evaluate_mach(alpha, mach)[:3]

    def evaluate_mach(self, alpha: np.ndarray, mach):
        """cl, cd, dcl/dalpha [1/rad] and dcl/dM at ``alpha`` [rad] and ``mach``, each of alpha's shape.

        Raises
        ------
        PolarRangeError
            For a Mach number above the limit with ``mach_out_of_range =
            "error"``, or an angle the base polar rejects.
        """
        a = np.asarray(alpha, dtype=np.float64)
        m = np.zeros_like(a) if mach is None else np.broadcast_to(np.asarray(mach, dtype=np.float64), a.shape)
        over = m > self.mach_limit
        if over.any() and self.mach_out_of_range == "error":
            i = int(np.argmax(over.ravel()))
            deg = float(np.degrees(a.ravel()[i]))
            raise PolarRangeError(
                f"polar '{self.name}' holds up to Mach {self.mach_limit:g} (subcritical flow); Mach "
                f"{mach_of(m, i):.3g} was met at an angle of {deg:.3g} deg (lower the speed, use a table "
                f"by Mach number, or set mach_out_of_range = \"hold\")", i, deg, mach_of(m, i))
        cl0, cd, dcl0 = self.base.evaluate(a, m)
        me = np.minimum(m, self.mach_limit)
        cl, f_cl0, f_m = self._rule(cl0, me)
        return cl, cd, f_cl0 * dcl0, np.where(over, 0.0, f_m)

    def alpha_for_cl(self, cl: np.ndarray) -> np.ndarray:
        """Angle [rad] giving ``cl`` on the low-speed polar (used for vortex-lattice profile drag)."""
        return self.base.alpha_for_cl(cl)


class MachTablePolar:
    """Polar tables at several Mach numbers, interpolated linearly in Mach.

    Parameters
    ----------
    machs : array_like, shape (K,)
        Mach numbers of the tables, strictly increasing, K >= 2.
    tables : sequence of TablePolar, length K
        The table at each Mach number.
    name : str
        For messages.
    mach_out_of_range : {"error", "hold"}
        Outside [machs[0], machs[-1]]: raise :class:`PolarRangeError`, or use
        the nearest end table (dcl/dM = 0 there).

    Examples
    --------
    >>> import numpy as np
    >>> t = [TablePolar(np.radians([-10.0, 10.0]), [-s, s], [0.01, 0.01]) for s in (1.0, 1.2)]
    >>> p = MachTablePolar([0.3, 0.5], t)
    >>> cl, cd, dcl, dcl_dm = p.evaluate_mach(np.radians([5.0]), np.array([0.4]))
    >>> round(float(cl[0]), 6), round(float(dcl_dm[0]), 6)
    (0.55, 0.5)
    """

    def __init__(self, machs, tables, *, name: str = "Mach table", mach_out_of_range: str = "error"):
        self.machs = np.ascontiguousarray(machs, dtype=np.float64)
        self.tables = tuple(tables)
        self.name = name
        if self.machs.ndim != 1 or self.machs.shape[0] < 2 or len(self.tables) != self.machs.shape[0]:
            raise InputError(f"polar '{name}' needs at least two Mach numbers, one table each")
        if (np.diff(self.machs) <= 0.0).any() or self.machs[0] < 0.0 or self.machs[-1] >= 1.0:
            raise InputError(f"polar '{name}': Mach numbers must increase strictly within 0 to 1; "
                             f"got {', '.join(f'{m:g}' for m in self.machs)}")
        if mach_out_of_range not in MACH_OUT_OF_RANGE_MODES:
            raise InputError(f"mach_out_of_range must be one of {', '.join(map(repr, MACH_OUT_OF_RANGE_MODES))}; "
                             f"got {mach_out_of_range!r}")
        self.mach_out_of_range = mach_out_of_range

    def __repr__(self) -> str:
        return (f"MachTablePolar({self.name!r}, Mach {self.machs[0]:g} to {self.machs[-1]:g} in "
                f"{self.machs.shape[0]} tables, mach_out_of_range={self.mach_out_of_range!r})")

    def evaluate(self, alpha: np.ndarray, mach=None):
        """cl, cd and dcl/dalpha [1/rad]; ``mach`` None is the lowest tabulated Mach number's table."""
        if mach is None:
            mach = self.machs[0]
        return self.evaluate_mach(alpha, mach)[:3]

    def evaluate_mach(self, alpha: np.ndarray, mach):
        """cl, cd, dcl/dalpha [1/rad] and dcl/dM at ``alpha`` [rad] and ``mach``, each of alpha's shape."""
        a = np.asarray(alpha, dtype=np.float64)
        m = np.broadcast_to(np.asarray(mach, dtype=np.float64), a.shape)
        m0, m1 = self.machs[0], self.machs[-1]
        outside = (m < m0) | (m > m1)
        if outside.any() and self.mach_out_of_range == "error":
            i = int(np.argmax(outside.ravel()))
            deg = float(np.degrees(a.ravel()[i]))
            raise PolarRangeError(
                f"polar '{self.name}' covers Mach {m0:g} to {m1:g}; Mach {mach_of(m, i):.3g} was met at "
                f"an angle of {deg:.3g} deg (add a table at that Mach number or set "
                f"mach_out_of_range = \"hold\")", i, deg, mach_of(m, i))
        mc = np.clip(m, m0, m1)
        k = np.clip(np.searchsorted(self.machs, mc, side="right") - 1, 0, self.machs.shape[0] - 2)
        out = [np.empty_like(a) for _ in range(4)]
        for j in np.unique(k):
            sel = k == j
            dm = self.machs[j + 1] - self.machs[j]
            w = (mc[sel] - self.machs[j]) / dm
            lo = self.tables[j].evaluate(a[sel], m[sel])
            hi = self.tables[j + 1].evaluate(a[sel], m[sel])
            for o, x0, x1 in zip(out[:3], lo, hi):
                o[sel] = (1.0 - w) * x0 + w * x1
            out[3][sel] = np.where(outside[sel], 0.0, (hi[0] - lo[0]) / dm)
        return tuple(out)

    def alpha_for_cl(self, cl: np.ndarray) -> np.ndarray:
        """Angle [rad] giving ``cl`` on the lowest Mach number's table."""
        return self.tables[0].alpha_for_cl(cl)


def load_mach_table(path, *, out_of_range: str = "error", mach_out_of_range: str = "error",
                    cd_max: float | None = None, aspect_ratio: float | None = None) -> MachTablePolar:
    """Read a polar CSV with columns ``mach``, ``alpha_deg``, ``cl``, ``cd`` into a :class:`MachTablePolar`.

    The rows of one Mach number are contiguous with strictly increasing
    angles, and the Mach numbers of successive blocks increase strictly.

    Raises
    ------
    wakes.errors.CaseError
        A malformed file; the message names the file and line.
    """
    cols = read_numeric_table(path, MACH_TABLE_COLUMNS, what="polar table", with_lines=True)
    mach, alpha, line = cols["mach"], cols["alpha_deg"], cols["line"]
    starts = np.flatnonzero(np.diff(mach) != 0.0) + 1
    blocks = np.split(np.arange(mach.shape[0]), starts)
    machs = [float(mach[b[0]]) for b in blocks]
    for b0, b1 in zip(blocks[:-1], blocks[1:]):
        if mach[b1[0]] < mach[b0[0]]:
            raise CaseError(f"polar table '{path}', line {line[b1[0]]}: mach = {mach[b1[0]]:g} follows "
                            f"{mach[b0[0]]:g}; group the rows by increasing Mach number")
    if len(set(machs)) != len(machs):
        raise CaseError(f"polar table '{path}': the rows of one Mach number must be contiguous")
    tables = []
    for mk, b in zip(machs, blocks):
        if b.shape[0] < 2:
            raise CaseError(f"polar table '{path}', line {line[b[0]]}: Mach {mk:g} has a single row; at least "
                            "two angles are needed to interpolate")
        step = np.diff(alpha[b])
        if (step <= 0.0).any():
            j = b[int(np.flatnonzero(step <= 0.0)[0]) + 1]
            raise CaseError(f"polar table '{path}', line {line[j]}: alpha_deg = {alpha[j]:g} does not exceed the "
                            f"previous angle of Mach {mk:g}; angles must increase strictly")
        try:
            tables.append(TablePolar(np.radians(alpha[b]), cols["cl"][b], cols["cd"][b],
                                     name=f"{Path(path).name}, Mach {mk:g}", out_of_range=out_of_range,
                                     cd_max=cd_max, aspect_ratio=aspect_ratio))
        except InputError as exc:
            raise CaseError(f"polar table '{path}': {exc}") from None
    try:
        return MachTablePolar(machs, tables, name=Path(path).name, mach_out_of_range=mach_out_of_range)
    except InputError as exc:
        raise CaseError(f"polar table '{path}': {exc}") from None


def builtin_polar_path(name: str) -> Path:
    """The CSV file of built-in section ``name``."""
    if name not in BUILTIN_SECTIONS:
        raise InputError(f"unknown built-in section {name!r}; known: {', '.join(map(repr, BUILTIN_SECTIONS))}")
    return Path(str(resources.files("wakes.aero") / "data" / BUILTIN_SECTIONS[name]))


def builtin_polar(name: str, *, out_of_range: str = "error", cd_max: float | None = None,
                  aspect_ratio: float | None = None) -> TablePolar:
    """A built-in low-speed section polar (see :data:`BUILTIN_SECTIONS`).

    Parameters
    ----------
    name : str
        ``"naca0012"``.
    out_of_range, cd_max, aspect_ratio
        Angle handling beyond the table (see :class:`wakes.aero.polars.TablePolar`).

    Examples
    --------
    >>> import numpy as np
    >>> p = builtin_polar("naca0012", out_of_range="viterna")
    >>> cl, cd, _ = p.evaluate(np.radians([0.0, 90.0, 180.0]))
    >>> [round(float(x), 4) for x in cl], round(float(cd[1]), 2)
    ([0.0, 0.0, -0.0], 2.01)
    """
    return load_polar_table(builtin_polar_path(name), out_of_range=out_of_range, cd_max=cd_max,
                            aspect_ratio=aspect_ratio)


def with_compressibility(polar, rule: str, *, mach_limit: float = DEFAULT_MACH_LIMIT,
                         mach_out_of_range: str = "error"):
    """``polar`` corrected by ``rule`` ("none" returns it unchanged; see :class:`CompressiblePolar`)."""
    if rule == "none":
        return polar
    if isinstance(polar, MachTablePolar):
        raise InputError(f"polar '{polar.name}' is already tabulated by Mach number; a compressibility rule "
                         f"({rule!r}) would count compressibility twice: use \"none\"")
    return CompressiblePolar(polar, rule, mach_limit=mach_limit, mach_out_of_range=mach_out_of_range)


def make_polar(airfoil, *, aspect_ratio: float | None = None):
    """The polar an airfoil spec asks for.

    It lives here, not in :mod:`wakes.aero.polars`, as it needs both
    modules. A built-in section (``section``), a CSV table (``polar``; by Mach
    number if it has a ``mach`` column) or thin-airfoil theory, corrected
    by the ``compressibility`` rule if one is named.

    Parameters
    ----------
    airfoil : wakes.case.specs.AirfoilSpec
        The ``[bodies.NAME.airfoil]`` table of a case.
    aspect_ratio : float, optional
        Blade aspect ratio for the Viterna-Corrigan post-stall drag when the
        spec gives neither ``post_stall_aspect_ratio`` nor
        ``post_stall_cd_max`` (a rotor passes R/c); None: the 2-D value.

    Raises
    ------
    wakes.errors.CaseError
        A table that cannot be read, or a rule that does not apply to it.
    """
    section = getattr(airfoil, "section", None)
    rule = getattr(airfoil, "compressibility", "none")
    ar = getattr(airfoil, "post_stall_aspect_ratio", None) or aspect_ratio
    tail = dict(out_of_range=airfoil.out_of_range, cd_max=getattr(airfoil, "post_stall_cd_max", None),
                aspect_ratio=ar)
    mach_mode = getattr(airfoil, "mach_out_of_range", "error")
    try:
        if section is not None:
            base = builtin_polar(section, **tail)
        elif airfoil.polar is not None and has_mach_column(airfoil.polar):
            base = load_mach_table(airfoil.polar, mach_out_of_range=mach_mode, **tail)
        elif airfoil.polar is not None:
            base = load_polar_table(airfoil.polar, **tail)
        else:
            base = ThinAirfoilPolar(lift_slope=airfoil.lift_slope,
                                    zero_lift_angle=np.radians(airfoil.zero_lift_angle),
                                    cd0=airfoil.cd0, cd2=airfoil.cd2)
        return with_compressibility(base, rule, mach_limit=getattr(airfoil, "mach_limit", DEFAULT_MACH_LIMIT),
                                    mach_out_of_range=mach_mode)
    except InputError as exc:
        raise CaseError(str(exc)) from None


__all__ = ["BUILTIN_SECTIONS", "COMPRESSIBILITY_RULES", "CompressiblePolar", "MACH_OUT_OF_RANGE_MODES",
           "MachTablePolar", "PolarRangeError", "at_mach", "builtin_polar", "critical_mach", "karman_tsien",
           "load_mach_table", "make_polar", "prandtl_glauert", "with_compressibility"]
