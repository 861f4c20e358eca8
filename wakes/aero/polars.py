"""Airfoil polars: section lift and drag coefficients against angle of attack.

Two kinds, both evaluated on arrays of angles in radians:

* :class:`ThinAirfoilPolar` -- cl = a (alpha - alpha_0) with a = 2 pi by
  default (thin-airfoil theory; Glauert 1926, *The Elements of Aerofoil and
  Airscrew Theory*), and a simple drag polar cd = cd0 + cd2 cl^2. Past
  +-90 degrees (flow from the trailing edge, a rotor's reverse-flow region)
  the law is taken in the reversed angle, the forward section at the
  supplementary angle, cl(alpha) = -cl(+-180 deg - alpha), as the
  Viterna-Corrigan tables do (:mod:`wakes.aero.post_stall`).
* :class:`TablePolar` -- a CSV table of cl and cd against alpha, linearly
  interpolated. Outside the table an angle is an error, or, if asked, the
  table is extended towards flat-plate values or by the Viterna-Corrigan
  extrapolation to +-180 degrees (see :class:`TablePolar` and
  :mod:`wakes.aero.post_stall`).

Every polar returns ``(cl, cd, dcl_dalpha)`` from ``evaluate(alpha, mach=None)``
so the lifting-line solver can build its Newton Jacobian. These two are
low-speed polars: they take a Mach number only to name it in messages.
Mach-dependent polars (compressibility rules, tables by Mach number) live in
:mod:`wakes.aero.sections` and also offer ``evaluate_mach(alpha, mach)``,
which adds dcl/dMach.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import CaseError, InputError, PolarRangeError
from ..io.tables import read_numeric_table
from .post_stall import ViternaCorrigan, cd_max_from_aspect_ratio, check_extendable, extend_to_180, reversed_flow_angle

POLAR_COLUMNS = ("alpha_deg", "cl", "cd")
OUT_OF_RANGE_MODES = ("error", "flat-plate", "viterna")     # the modes the case schema offers
TABLE_OUT_OF_RANGE_MODES = OUT_OF_RANGE_MODES                # all a TablePolar accepts
_EXTEND_CHOICES = " or ".join(f'"{m}"' for m in OUT_OF_RANGE_MODES if m != "error")
FLAT_PLATE_BLEND = np.radians(10.0)  # angle over which a table blends into flat-plate values


def mach_of(mach, i: int) -> float | None:
    """Entry ``i`` of ``mach`` (an array, a scalar or None) as a float, or None."""
    if mach is None:
        return None
    m = np.ravel(mach)
    return float(m[i] if m.size > 1 else m[0])


def at_mach(mach, i: int) -> str:
    """The words ' at Mach M' for entry ``i`` of ``mach``; empty if no Mach number is known."""
    m = mach_of(mach, i)
    return "" if m is None else f" at Mach {m:.3g}"


@dataclass(frozen=True)
class ThinAirfoilPolar:
    """Thin-airfoil lift with a parabolic drag polar.

    Parameters
    ----------
    lift_slope : float
        Section lift-curve slope a [1/rad]; 2 pi for a thin airfoil.
    zero_lift_angle : float
        alpha_0 [rad].
    cd0, cd2 : float
        Drag polar cd = cd0 + cd2 cl^2 (zero: inviscid).

    Examples
    --------
    >>> import numpy as np
    >>> cl, cd, dcl = ThinAirfoilPolar().evaluate(np.radians([5.0, 175.0]))
    >>> [round(float(x), 4) for x in cl]
    [0.5483, -0.5483]
    """

    lift_slope: float = 2.0 * np.pi
    zero_lift_angle: float = 0.0
    cd0: float = 0.0
    cd2: float = 0.0

    @property
    def name(self) -> str:
        return "thin airfoil"

    def evaluate(self, alpha: np.ndarray, mach=None):
        """Return cl, cd and dcl/dalpha [1/rad] at angles ``alpha`` [rad], each shape of alpha.

        ``mach`` is accepted and ignored: this is a low-speed polar.
        """
        alpha = np.asarray(alpha, dtype=np.float64)
        # reversed flow (|alpha| > 90 deg): the forward law at the supplementary angle, sign turned
        ref, mirrored = reversed_flow_angle(alpha)
        cl = self.lift_slope * (ref - self.zero_lift_angle)
        cl = np.where(mirrored, -cl, cl)
        cd = self.cd0 + self.cd2 * cl * cl
        return cl, cd, np.full_like(alpha, self.lift_slope)

    def alpha_for_cl(self, cl: np.ndarray) -> np.ndarray:
        """Angle [rad] at which the polar gives lift coefficient ``cl``."""
        return self.zero_lift_angle + np.asarray(cl, dtype=np.float64) / self.lift_slope


class TablePolar:
    """A tabulated polar read from CSV, linearly interpolated.

    Parameters
    ----------
    alpha : array_like, shape (K,)
        Angles of attack [rad], strictly increasing, K >= 2.
    cl, cd : array_like, shape (K,)
        Lift and drag coefficients at those angles.
    name : str
        Where the table came from (file name), for messages.
    out_of_range : {"error", "flat-plate", "viterna"}
        "error" raises :class:`PolarRangeError` for an angle outside the
        table. "flat-plate" blends linearly, over 10 degrees beyond each end,
        from the end value to the flat-plate coefficients cl = sin 2 alpha,
        cd = 2 sin^2 alpha (normal-force coefficient 2 sin alpha; common
        practice for post-stall estimates), and uses those beyond.
        "viterna" continues the table from its end angles by the
        Viterna-Corrigan extrapolation to +-90 degrees, joined to the
        table's end segments with a continuous slope and mirrors it for
        reversed flow to +-180 degrees (:mod:`wakes.aero.post_stall`); the
        table must end 5 to 85 degrees from zero on both sides.
    cd_max : float, optional
        Drag at 90 degrees for "viterna"; default from ``aspect_ratio``.
    aspect_ratio : float, optional
        Blade aspect ratio for Viterna & Corrigan's cd_max = 1.11 + 0.018 AR;
        None (default) takes the two-dimensional value 2.01.

    Notes
    -----
    The CSV file has a header row naming at least ``alpha_deg``, ``cl`` and
    ``cd``; ``#`` starts a comment line. Use :func:`load_polar_table`.
    """

    def __init__(self, alpha, cl, cd, *, name: str = "table", out_of_range: str = "error",
                 cd_max: float | None = None, aspect_ratio: float | None = None):
        self.alpha = np.ascontiguousarray(alpha, dtype=np.float64)
        self.cl = np.ascontiguousarray(cl, dtype=np.float64)
        self.cd = np.ascontiguousarray(cd, dtype=np.float64)
        self.name = name
        if out_of_range not in TABLE_OUT_OF_RANGE_MODES:
            raise InputError(f"out_of_range must be one of {', '.join(map(repr, TABLE_OUT_OF_RANGE_MODES))}; "
                             f"got {out_of_range!r}")
        self.out_of_range = out_of_range
        n = self.alpha.shape[0]
        if n < 2 or self.cl.shape != (n,) or self.cd.shape != (n,):
            raise InputError(f"polar '{name}' needs at least two rows of alpha, cl and cd of one length")
        steps = np.diff(self.alpha)
        if (steps <= 0).any():
            k = int(np.argmax(steps <= 0)) + 1
            raise InputError(f"polar '{name}': alpha_deg must increase strictly; row {k + 1} "
                             f"({np.degrees(self.alpha[k]):g}) follows row {k} "
                             f"({np.degrees(self.alpha[k - 1]):g})")
        self._slope_cl = np.diff(self.cl) / steps
        self._fits = None
        if out_of_range == "viterna":
            lo, hi = self.alpha[0], self.alpha[-1]
            check_extendable(lo, hi, name)
            cdm = cd_max_from_aspect_ratio(aspect_ratio) if cd_max is None else float(cd_max)
            if lo > -np.pi or hi < np.pi:
                slope_cd = np.diff(self.cd) / steps
                self._fits = (ViternaCorrigan(lo, self.cl[0], self.cd[0], cdm,
                                              end_slope=(self._slope_cl[0], slope_cd[0])),
                              ViternaCorrigan(hi, self.cl[-1], self.cd[-1], cdm,
                                              end_slope=(self._slope_cl[-1], slope_cd[-1])))

    def __repr__(self) -> str:
        lo, hi = np.degrees(self.alpha[[0, -1]])
        return f"TablePolar({self.name!r}, {lo:g} to {hi:g} deg, out_of_range={self.out_of_range!r})"

    @property
    def alpha_range(self) -> tuple[float, float]:
        """First and last tabulated angle [rad]."""
        return float(self.alpha[0]), float(self.alpha[-1])

    def evaluate(self, alpha: np.ndarray, mach=None):
        """Return cl, cd and dcl/dalpha [1/rad] at angles ``alpha`` [rad].

        ``mach`` (same shape as alpha, or None) does not change the
        coefficients; it is named in the message of an angle out of range.

        Raises
        ------
        PolarRangeError
            With ``out_of_range = "error"``, for the first angle outside the table.
        """
        a = np.asarray(alpha, dtype=np.float64)
        lo, hi = self.alpha[0], self.alpha[-1]
        outside = (a < lo) | (a > hi)
        if outside.any() and self.out_of_range == "error":
            i = int(np.argmax(outside.ravel()))
            bad = float(np.degrees(a.ravel()[i]))
            raise PolarRangeError(
                f"polar '{self.name}' covers {np.degrees(lo):g} to {np.degrees(hi):g} deg; "
                f"an angle of {bad:.3g} deg{at_mach(mach, i)} was met (extend the table or set "
                f"out_of_range = {_EXTEND_CHOICES})", i, bad, mach_of(mach, i))
        return self._inside(a) if not outside.any() else self._with_extension(a, outside)

    def _inside(self, a):
        """Linear interpolation (and the segment slope) at angles inside the table."""
        k = np.clip(np.searchsorted(self.alpha, a, side="right") - 1, 0, self.alpha.shape[0] - 2)
        return np.interp(a, self.alpha, self.cl), np.interp(a, self.alpha, self.cd), self._slope_cl[k]

    def _with_extension(self, a, outside):
        cl, cd, dcl = self._inside(a)
        if self.out_of_range == "flat-plate":
            return self._extend(a, cl, cd, dcl, a < self.alpha[0], a > self.alpha[-1])
        if self._fits is not None:
            sel = outside
            cl[sel], cd[sel], dcl[sel] = extend_to_180(a[sel], self._inside, self.alpha[0], self.alpha[-1],
                                                       *self._fits)
        return cl, cd, dcl

    def _extend(self, a, cl, cd, dcl, below, above):
        """Blend into flat-plate coefficients beyond the table ends."""
        cl, cd, dcl = cl.copy(), cd.copy(), dcl.copy()
        for mask, end, sign in ((below, 0, -1.0), (above, -1, 1.0)):
            if not mask.any():
                continue
            x = a[mask]
            w = np.clip(sign * (x - self.alpha[end]) / FLAT_PLATE_BLEND, 0.0, 1.0)
            dw = np.where(w < 1.0, sign / FLAT_PLATE_BLEND, 0.0)
            cl_fp, dcl_fp = np.sin(2 * x), 2 * np.cos(2 * x)
            cd_fp = 2 * np.sin(x) ** 2
            cl[mask] = (1 - w) * self.cl[end] + w * cl_fp
            cd[mask] = (1 - w) * self.cd[end] + w * cd_fp
            dcl[mask] = dw * (cl_fp - self.cl[end]) + w * dcl_fp
        return cl, cd, dcl

    def alpha_for_cl(self, cl: np.ndarray) -> np.ndarray:
        """Angle [rad] giving lift coefficient ``cl`` on the table's rising lift curve.

        Uses the run of strictly rising cl that contains the smallest |cl|;
        a cl beyond that run takes the angle at its end (used only to pick
        the profile drag of vortex-lattice strips).
        """
        rising = np.diff(self.cl) > 0
        k0 = int(np.argmin(np.abs(self.cl)))
        k0 = min(k0, rising.shape[0] - 1)
        lo = k0
        while lo > 0 and rising[lo - 1]:
            lo -= 1
        hi = k0
        while hi < rising.shape[0] and rising[hi]:
            hi += 1
        if hi == lo:  # no rising part at all: fall back to the whole table
            lo, hi = 0, rising.shape[0]
        return np.interp(np.asarray(cl, dtype=np.float64), self.cl[lo:hi + 1], self.alpha[lo:hi + 1])


def load_polar_table(path, *, out_of_range: str = "error", cd_max: float | None = None,
                     aspect_ratio: float | None = None) -> TablePolar:
    """Read a polar CSV (columns ``alpha_deg``, ``cl``, ``cd``) into a :class:`TablePolar`.

    Parameters
    ----------
    path : str or Path
        The CSV file.
    out_of_range : {"error", "flat-plate", "viterna"}
        What to do with angles outside the table (see :class:`TablePolar`).
    cd_max, aspect_ratio : float, optional
        Post-stall drag for "viterna" (see :class:`TablePolar`).

    Raises
    ------
    wakes.errors.CaseError
        Missing file or columns, non-numeric values, fewer than two rows or
        angles that do not increase strictly; the message names the file.
    """
    cols = read_numeric_table(path, POLAR_COLUMNS, what="polar table", with_lines=True)
    alpha, line = cols["alpha_deg"], cols["line"]
    if alpha.shape[0] < 2:
        raise CaseError(f"polar table '{path}', line {line[0]}: a single data row; at least two "
                        "angles are needed to interpolate")
    step = np.diff(alpha)
    if (step <= 0.0).any():
        k = int(np.flatnonzero(step <= 0.0)[0]) + 1
        what = "repeats" if step[k - 1] == 0.0 else "is below"
        raise CaseError(f"polar table '{path}', line {line[k]}: alpha_deg = {alpha[k]:g} {what} "
                        f"the angle of line {line[k - 1]}; angles must increase strictly")
    try:
        return TablePolar(np.radians(cols["alpha_deg"]), cols["cl"], cols["cd"],
                          name=Path(path).name, out_of_range=out_of_range, cd_max=cd_max,
                          aspect_ratio=aspect_ratio)
    except InputError as exc:
        raise CaseError(f"polar table '{path}': {exc}") from None


class SectionPolars:
    """The polars of all sections of one lifting surface, evaluated together.

    Parameters
    ----------
    polars : sequence of polar objects
        Distinct polars (ThinAirfoilPolar, TablePolar or a Mach-dependent
        polar of :mod:`wakes.aero.sections`).
    index : array_like of int, shape (n,)
        Which polar each of the n sections uses.
    speed_of_sound : float, optional
        Speed of sound of the fluid [m/s]. With it, :meth:`evaluate_at_speed`
        evaluates each section at its local Mach number M = |V_2D| / a;
        without it (default) every section is at M = 0, the low-speed polar.
    """

    def __init__(self, polars, index, *, speed_of_sound: float | None = None):
        self.polars = tuple(polars)
        self.index = np.asarray(index, dtype=np.int64)
        if speed_of_sound is not None and not (np.isfinite(speed_of_sound) and speed_of_sound > 0.0):
            raise InputError(f"speed of sound must be a positive number of m/s; got {speed_of_sound!r}")
        self.speed_of_sound = None if speed_of_sound is None else float(speed_of_sound)

    @classmethod
    def uniform(cls, polar, n: int, *, speed_of_sound: float | None = None) -> SectionPolars:
        """All ``n`` sections use one polar."""
        return cls((polar,), np.zeros(n, dtype=np.int64), speed_of_sound=speed_of_sound)

    def evaluate(self, alpha: np.ndarray, mach=None):
        """cl, cd, dcl/dalpha for every section, shape (n,); errors carry the section index."""
        return self._each(alpha, mach, with_mach_slope=False)[:3]

    def evaluate_at_speed(self, alpha: np.ndarray, speed: np.ndarray):
        """Coefficients at the local Mach number of every section.

        Parameters
        ----------
        alpha : ndarray, shape (n,)
            Angles of attack [rad].
        speed : ndarray, shape (n,)
            Section speed |V_2D| [m/s] (the velocity in the section plane).

        Returns
        -------
        cl, cd, dcl_dalpha, dcl_dspeed : ndarray, shape (n,)
            dcl_dalpha in 1/rad, dcl_dspeed in s/m (zero without a speed of
            sound or for a Mach-independent polar).
        """
        if self.speed_of_sound is None:
            cl, cd, dcl = self.evaluate(alpha)
            return cl, cd, dcl, np.zeros_like(cl)
        mach = np.asarray(speed, dtype=np.float64) / self.speed_of_sound
        cl, cd, dcl, dcl_dm = self._each(alpha, mach, with_mach_slope=True)
        return cl, cd, dcl, dcl_dm / self.speed_of_sound

    def _each(self, alpha, mach, with_mach_slope: bool):
        alpha = np.asarray(alpha, dtype=np.float64)
        if mach is not None:
            mach = np.broadcast_to(np.asarray(mach, dtype=np.float64), alpha.shape)
        if len(self.polars) == 1:
            return _evaluate(self.polars[0], alpha, mach, with_mach_slope)
        out = [np.empty_like(alpha) for _ in range(4)]
        for k, polar in enumerate(self.polars):
            sel = np.flatnonzero(self.index == k)
            if sel.size == 0:
                continue
            try:
                res = _evaluate(polar, alpha[sel], None if mach is None else mach[sel], with_mach_slope)
            except PolarRangeError as exc:
                raise PolarRangeError(str(exc), int(sel[exc.index]), exc.alpha_deg, exc.mach) from None
            for o, r in zip(out, res):
                o[sel] = r
        return tuple(out)

    def alpha_for_cl(self, cl: np.ndarray) -> np.ndarray:
        """Angle [rad] per section giving ``cl`` (see the polar classes)."""
        out = np.empty_like(cl)
        for k, polar in enumerate(self.polars):
            sel = self.index == k
            out[sel] = polar.alpha_for_cl(cl[sel])
        return out


def _evaluate(polar, alpha, mach, with_mach_slope: bool):
    """(cl, cd, dcl/dalpha, dcl/dMach) of one polar; the last is zero for a low-speed polar."""
    if with_mach_slope and hasattr(polar, "evaluate_mach"):
        return polar.evaluate_mach(alpha, mach)
    cl, cd, dcl = polar.evaluate(alpha, mach)
    return cl, cd, dcl, np.zeros_like(cl)


def has_mach_column(path) -> bool:
    """Whether the header row of the CSV file ``path`` names a ``mach`` column (False if unreadable)."""
    try:
        with open(path, encoding="utf-8-sig") as fh:
            for raw in fh:
                line = raw.split("#", 1)[0].strip()
                if line:
                    return "mach" in [f.strip() for f in line.split(",")]
    except (OSError, UnicodeDecodeError):
        pass
    return False
