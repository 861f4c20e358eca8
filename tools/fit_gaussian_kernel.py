"""Regenerate the polynomial tables of :mod:`wakes.induction.gaussian`.

The Gaussian smoothing kernel needs erf and exp, which numba does not
vectorize; ``wakes.induction.gaussian`` evaluates them from four fixed
polynomials instead. This script fits those polynomials in 40-digit
arithmetic (mpmath), prints their errors, and with ``--write`` rewrites the
table between the ``BEGIN/END GENERATED`` markers of ``gaussian.py``.

The four pieces (rho = |r|/sigma, t = rho^2, E = exp(-t/2)):

* ``EXP``: e^r for |r| <= ln2/2 + margin, relative error (exp by range
  reduction, Cody & Waite 1980, *Software Manual for the Elementary
  Functions*).
* ``FAR_S``: S(rho) = erfcx(rho/sqrt2) + sqrt(2/pi) rho on
  [RHO_NEAR, RHO_FAR], so that 1 - q(rho) = E S(rho). The error that
  matters is the one in q, E |dS| / q, so the fit is weighted by E/q:
  S needs full precision only near RHO_NEAR.
* ``NEAR_M``, ``NEAR_N``: the Kummer series M(t) = sum t^m/(2m+3)!! and
  N(t) = sum t^m/(2m+5)!! on [0, RHO_NEAR^2], relative error; then
  g(t) = q/rho^3 = sqrt(2/pi) E M(t) and g'(t) = -1.5 sqrt(2/pi) E N(t)
  (both series have positive terms, so nothing cancels; Abramowitz &
  Stegun 1964, 7.1.6 for erf as e^{-x^2} times a positive series).

Near-minimax fits: weighted least squares on Chebyshev points refined by
Lawson's iteration. Usage::

    python tools/fit_gaussian_kernel.py            # print errors
    python tools/fit_gaussian_kernel.py --write    # also update gaussian.py
"""

from __future__ import annotations

import argparse
import pathlib
import re

import mpmath as mp

mp.mp.dps = 40

RHO_NEAR = mp.mpf("2.25")          # near/far boundary in rho (keep equal to gaussian.py)
RHO_FAR = mp.sqrt(90)              # beyond t = 90 the kernel is singular to < 1e-17
EXP_HALF_WIDTH = mp.log(2) / 2 + mp.mpf("1e-3")   # |r| after range reduction, with margin
N_COEFFS = {"EXP": 12, "FAR_S": 16, "NEAR_M": 16, "NEAR_N": 16}

SQRT_2_OVER_PI = mp.sqrt(2 / mp.pi)


def double_factorial(k: int):
    out = mp.mpf(1)
    while k > 1:
        out *= k
        k -= 2
    return out


def kummer(t, offset: int):
    """sum_m t^m / (2m + offset)!!, summed to 40 digits (all terms positive)."""
    t = mp.mpf(t)
    total, m = mp.mpf(0), 0
    while True:
        term = t**m / double_factorial(2 * m + offset)
        total += term
        m += 1
        if m > 3 and term < mp.mpf(10) ** -45 * total:
            return total


def far_s(rho):
    x = rho / mp.sqrt(2)
    return mp.erfc(x) * mp.exp(x * x) + SQRT_2_OVER_PI * rho


def q_of_rho(rho):
    x = rho / mp.sqrt(2)
    return mp.erf(x) - SQRT_2_OVER_PI * rho * mp.exp(-x * x)


def fit(fun, weight, a, b, n_coeffs, scaled, n_iter=30):
    """Near-minimax weighted polynomial fit.

    Returns monomial coefficients in u = (x - c)/h (``scaled``) or in x, the
    max weighted error on a fine grid, and sum |a_k u^k| / |p| (the
    amplification of rounding in the evaluation).
    """
    a, b = mp.mpf(a), mp.mpf(b)
    c, h = ((a + b) / 2, (b - a) / 2) if scaled else (mp.mpf(0), mp.mpf(1))
    n_pts = 6 * n_coeffs + 60
    xs = [(a + b) / 2 + (b - a) / 2 * mp.cos(mp.pi * (k + 0.5) / n_pts) for k in range(n_pts)]
    base_w = [weight(x) for x in xs]
    f = [fun(x) for x in xs]
    lawson = [mp.mpf(1)] * n_pts
    for _ in range(n_iter):
        A = mp.matrix(n_pts, n_coeffs)
        y = mp.matrix(n_pts, 1)
        for i, x in enumerate(xs):
            w = base_w[i] * mp.sqrt(lawson[i])
            u = (x - c) / h
            for j in range(n_coeffs):
                A[i, j] = w * u**j
            y[i] = w * f[i]
        coef = [mp.qr_solve(A, y)[0][j] for j in range(n_coeffs)]
        err = [abs(base_w[i] * (mp.polyval(coef[::-1], (x - c) / h) - f[i]))
               for i, x in enumerate(xs)]
        total = mp.fsum(lw * e for lw, e in zip(lawson, err))
        lawson = [lw * e / total for lw, e in zip(lawson, err)]
    coef = [float(v) for v in coef]            # what the table stores
    worst, cond = mp.mpf(0), mp.mpf(0)
    for k in range(2001):
        x = a + (b - a) * k / 2000
        u = (x - c) / h
        p = mp.polyval([mp.mpf(v) for v in coef[::-1]], u)
        worst = max(worst, abs(weight(x) * (p - fun(x))))
        cond = max(cond, mp.fsum(abs(mp.mpf(v) * u**j) for j, v in enumerate(coef)) / abs(p))
    return coef, float(c), float(h), float(worst), float(cond)


def build():
    t_near = RHO_NEAR**2
    out = {}
    out["EXP"] = fit(mp.exp, lambda r: 1 / mp.exp(r), -EXP_HALF_WIDTH, EXP_HALF_WIDTH,
                     N_COEFFS["EXP"], scaled=False)
    out["FAR_S"] = fit(far_s, lambda r: mp.exp(-r * r / 2) / q_of_rho(r), RHO_NEAR, RHO_FAR,
                       N_COEFFS["FAR_S"], scaled=True)
    out["NEAR_M"] = fit(lambda t: kummer(t, 3), lambda t: 1 / kummer(t, 3), 0, t_near,
                        N_COEFFS["NEAR_M"], scaled=False)
    out["NEAR_N"] = fit(lambda t: kummer(t, 5), lambda t: 1 / kummer(t, 5), 0, t_near,
                        N_COEFFS["NEAR_N"], scaled=False)
    return out


def table_text(out) -> str:
    lines = ["# BEGIN GENERATED by tools/fit_gaussian_kernel.py -- do not edit by hand"]
    for name, (coef, c, h, worst, cond) in out.items():
        lines.append(f"# {name}: {len(coef)} coefficients, max weighted error {worst:.1e}, "
                     f"rounding amplification {cond:.2f}")
        if name == "FAR_S":
            lines.append(f"FAR_S_CENTER = {c!r}")
            lines.append(f"FAR_S_INV_HALF_WIDTH = {1.0 / h!r}")
        lines.append(f"{name}_COEFFS = (")
        lines.extend(f"    {v!r}," for v in coef)
        lines.append(")")
    lines.append("# END GENERATED")
    return "\n".join(lines)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--write", action="store_true", help="update wakes/induction/gaussian.py")
    args = parser.parse_args()
    text = table_text(build())
    print(text)
    if args.write:
        path = pathlib.Path(__file__).resolve().parents[1] / "wakes" / "induction" / "gaussian.py"
        src = path.read_text()
        new, n = re.subn(r"# BEGIN GENERATED.*?# END GENERATED", lambda _: text, src, flags=re.S)
        if n != 1:
            raise SystemExit(f"{path}: expected one generated block, found {n}")
        path.write_text(new)
        print(f"wrote {path}")


if __name__ == "__main__":
    main()
