"""Post-stall section coefficients to +-180 degrees: the Viterna-Corrigan extrapolation.

Viterna & Corrigan (1982, "Fixed pitch rotor performance of large horizontal
axis wind turbines", DOE/NASA Workshop on Large Horizontal Axis Wind
Turbines, NASA CP-2230; memory for the proceedings number) continue a
section's coefficients from a matching angle a_s (the stall angle, or the
last measured angle of a table) to 90 degrees as

    cd = B1 sin^2 a + B2 cos a,            B1 = cd_max,
                                           B2 = (cd_s - cd_max sin^2 a_s) / cos a_s,
    cl = A1 sin 2a + A2 cos^2 a / sin a,   A1 = B1 / 2,
                                           A2 = (cl_s - cd_max sin a_s cos a_s) sin a_s / cos^2 a_s,

where (cl_s, cd_s) are the coefficients at a_s, so both curves pass through
the last measured point, cl = 0 and cd = cd_max at 90 degrees, and

    cd_max = 1.11 + 0.018 AR   for a blade of aspect ratio AR <= 50,  2.01 above

(their empirical fit; memory for the constants, which are the ones quoted
wherever the method is used). Our choice: cd_max from the blade's aspect ratio
when the caller gives one, otherwise the two-dimensional limit 2.01 (AR > 50).

Beyond 90 degrees (reversed flow, trailing edge first) the section is taken to
behave as in forward flow at the supplementary angle:

    cl(a) = -cl(180 deg - a),   cd(a) = cd(180 deg - a)     for a > 90 deg,
    cl(a) = -cl(-180 deg - a),  cd(a) = cd(-180 deg - a)    for a < -90 deg.

A table usually ends near its maximum lift with its lift still rising, where
the curves above fall steeply: the lift slope would jump from positive to
strongly negative at a_s (a corner at cl_max on which a Newton solve of the
lifting line can cycle without converging). Given the table's end slopes,
the extension therefore starts as the table's last segment continued and
turns into the Viterna-Corrigan curves over :data:`JOIN_DEG` beyond a_s,
with the weight s = 10 x^3 - 15 x^4 + 6 x^5 (x the fraction of that band
crossed):

    cl = (1 - s) (cl_s + cl_s' (a - a_s)) + s cl_VC(a),   likewise cd,

so cl, its slope and its curvature are continuous at a_s and at a_s +
JOIN_DEG (the lifting line's artificial viscosity past stall follows the
slope, :mod:`wakes.aero.lifting_line`) and the peak is round (our choice;
the width is a modelling choice like the method itself, stated here, not
fitted to a case).

The reversed-flow rule below is exact for a flat plate (cl = sin 2a, cd = 2 sin^2 a obey it) and our
approximation for a profile with a round nose and a sharp tail. The table
itself supplies the small angles around +-180 degrees, so the curves are
continuous everywhere (at a_s, at +-90 and at +-180 degrees) and their slope is
finite: the matching angles are kept between 5 and 85 degrees, away from the
1/sin a and 1/cos a_s factors.
"""

from __future__ import annotations

import numpy as np

from ..errors import InputError

CD_MAX_2D = 2.01                 # Viterna & Corrigan's cd_max for AR > 50 (memory)
MATCH_RANGE_DEG = (5.0, 85.0)    # accepted |a_s|: keeps 1/sin a and 1/cos a_s bounded
JOIN_DEG = 4.0                   # band beyond a_s over which the table's end turns into the fit (ours)


def cd_max_from_aspect_ratio(aspect_ratio: float | None) -> float:
    """Viterna & Corrigan's (1982) post-stall drag at 90 degrees.

    Parameters
    ----------
    aspect_ratio : float or None
        Blade aspect ratio AR (rotor blade: radius over mean chord); None
        for two-dimensional data.

    Returns
    -------
    float
        cd_max = 1.11 + 0.018 AR for AR <= 50, else 2.01.

    Examples
    --------
    >>> round(cd_max_from_aspect_ratio(6.0), 3)
    1.218
    >>> cd_max_from_aspect_ratio(None)
    2.01
    """
    if aspect_ratio is None:
        return CD_MAX_2D
    ar = float(aspect_ratio)
    if not np.isfinite(ar) or ar <= 0.0:
        raise InputError(f"aspect ratio for the post-stall drag must be a positive number; got {aspect_ratio!r}")
    return 1.11 + 0.018 * ar if ar <= 50.0 else CD_MAX_2D


class ViternaCorrigan:
    """The Viterna-Corrigan curves on one side of zero, from a_s to +-90 degrees.

    Parameters
    ----------
    alpha_s : float
        Matching angle [rad], 5 to 85 degrees in magnitude, either sign.
    cl_s, cd_s : float
        Coefficients at ``alpha_s``.
    cd_max : float
        Drag at 90 degrees (see :func:`cd_max_from_aspect_ratio`).
    end_slope : tuple of float, optional
        The table's dcl/dalpha and dcd/dalpha [1/rad] at ``alpha_s``; with
        them the curves join the table smoothly over :data:`JOIN_DEG`
        (module notes), without them they start at ``alpha_s`` directly.

    Examples
    --------
    >>> import numpy as np
    >>> vc = ViternaCorrigan(np.radians(15.0), 1.3, 0.02, 2.01)
    >>> cl, cd, dcl = vc.evaluate(np.radians([15.0, 90.0]))
    >>> [round(float(x), 6) for x in cl], [round(float(x), 6) for x in cd]
    ([1.3, 0.0], [0.02, 2.01])
    """

    def __init__(self, alpha_s: float, cl_s: float, cd_s: float, cd_max: float, end_slope=None):
        lo, hi = np.radians(MATCH_RANGE_DEG)
        if not lo <= abs(alpha_s) <= hi:
            raise InputError(f"Viterna-Corrigan matching angle {np.degrees(alpha_s):.4g} deg is outside "
                             f"{MATCH_RANGE_DEG[0]:g} to {MATCH_RANGE_DEG[1]:g} deg in magnitude; the "
                             "table must reach past stall on both sides of zero")
        if not (np.isfinite(cd_max) and cd_max > 0.0):
            raise InputError(f"post-stall cd_max must be a positive number; got {cd_max!r}")
        s, c = np.sin(alpha_s), np.cos(alpha_s)
        self.alpha_s, self.cl_s, self.cd_s, self.cd_max = float(alpha_s), float(cl_s), float(cd_s), float(cd_max)
        self.b1 = cd_max
        self.b2 = (cd_s - cd_max * s * s) / c
        self.a1 = 0.5 * cd_max
        self.a2 = (cl_s - cd_max * s * c) * s / (c * c)
        self.end_slope = None if end_slope is None else (float(end_slope[0]), float(end_slope[1]))

    def evaluate(self, alpha: np.ndarray):
        """cl, cd and dcl/dalpha [1/rad] at ``alpha`` [rad], each of alpha's shape.

        Meant for angles between ``alpha_s`` and 90 degrees of the same sign
        (sin alpha must not vanish).
        """
        a = np.asarray(alpha, dtype=np.float64)
        s, c = np.sin(a), np.cos(a)
        cl = self.a1 * np.sin(2.0 * a) + self.a2 * c * c / s
        cd = self.b1 * s * s + self.b2 * c
        dcl = 2.0 * self.a1 * np.cos(2.0 * a) - self.a2 * c * (1.0 + s * s) / (s * s)
        if self.end_slope is None:
            return cl, cd, dcl
        # the smooth join with the table's last segment (module notes)
        side = np.sign(self.alpha_s)
        band = np.radians(JOIN_DEG)
        x = np.clip(side * (a - self.alpha_s) / band, 0.0, 1.0)
        w = x * x * x * (10.0 + x * (6.0 * x - 15.0))
        dw = side * 30.0 * x * x * (1.0 - x) ** 2 / band
        cl_line = self.cl_s + self.end_slope[0] * (a - self.alpha_s)
        cd_line = self.cd_s + self.end_slope[1] * (a - self.alpha_s)
        dcl = (1.0 - w) * self.end_slope[0] + w * dcl + dw * (cl - cl_line)
        cl = cl_line + w * (cl - cl_line)
        cd = cd_line + w * (cd - cd_line)
        return cl, cd, dcl


def check_extendable(lo: float, hi: float, name: str) -> None:
    """Raise InputError unless a table [lo, hi] (rad) can be extended by Viterna-Corrigan."""
    m0, m1 = np.radians(MATCH_RANGE_DEG)
    if lo <= -np.pi and hi >= np.pi:
        return  # covers the whole circle: nothing to extend
    if not (-m1 <= lo <= -m0 and m0 <= hi <= m1):
        raise InputError(f"polar '{name}' covers {np.degrees(lo):g} to {np.degrees(hi):g} deg; the "
                         f"Viterna-Corrigan extension needs both ends between {MATCH_RANGE_DEG[0]:g} and "
                         f"{MATCH_RANGE_DEG[1]:g} deg from zero (past stall, short of 90 deg)")


def reversed_flow_angle(alpha: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The forward angle a section in reversed flow behaves at (module notes) and where it applies.

    Parameters
    ----------
    alpha : ndarray
        Angles of attack [rad] in -180..180 deg.

    Returns
    -------
    ref : ndarray
        alpha within +-90 deg; the supplementary angle +-180 deg - alpha beyond.
    mirrored : ndarray of bool
        |alpha| > 90 deg, where cl(alpha) = -cl(ref) and cd(alpha) = cd(ref).

    Examples
    --------
    >>> ref, mirrored = reversed_flow_angle(np.radians([30.0, 170.0, -120.0]))
    >>> np.round(np.degrees(ref), 6).tolist(), mirrored.tolist()
    ([30.0, 10.0, -60.0], [False, True, True])
    """
    a = np.asarray(alpha, dtype=np.float64)
    half = 0.5 * np.pi
    return np.where(a > half, np.pi - a, np.where(a < -half, -np.pi - a, a)), np.abs(a) > half


def extend_to_180(alpha: np.ndarray, table, lo: float, hi: float, low_fit: ViternaCorrigan,
                  high_fit: ViternaCorrigan):
    """Coefficients at angles outside a table [lo, hi], to +-180 degrees.

    Parameters
    ----------
    alpha : ndarray, shape (n,)
        Angles [rad] outside [lo, hi]; any value (wrapped to -180..180 deg).
    table : callable
        ``table(a) -> (cl, cd, dcl)`` for angles inside [lo, hi].
    lo, hi : float
        Table ends [rad], lo < 0 < hi.
    low_fit, high_fit : ViternaCorrigan
        The fits matched at ``lo`` and ``hi``.

    Returns
    -------
    cl, cd, dcl : ndarray, shape (n,)
        dcl is d cl / d alpha [1/rad].
    """
    a = np.asarray(alpha, dtype=np.float64)
    a = np.mod(a + np.pi, 2.0 * np.pi) - np.pi
    ref, mirrored = reversed_flow_angle(a)
    cl, cd, dcl = (np.empty_like(a) for _ in range(3))
    for sel, fn in ((ref > hi, high_fit.evaluate), (ref < lo, low_fit.evaluate),
                    ((ref >= lo) & (ref <= hi), table)):
        if sel.any():
            cl[sel], cd[sel], dcl[sel] = fn(ref[sel])
    # cl = -f(ref) with d ref / d alpha = -1 where mirrored: the slope keeps its sign
    cl = np.where(mirrored, -cl, cl)
    return cl, cd, dcl
