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
* ``FAR_P``, ``FAR_Q``: S(rho) = erfcx(rho/sqrt2) + sqrt(2/pi) rho on
  [RHO_NEAR, RHO_FAR], so that 1 - q(rho) = E S(rho), as a ratio
  P(v)/Q(v) of degrees 5 and 4 in v = (rho - RHO_NEAR)/h (h the half-width
  of the interval). The error that matters is the one in q, E |dS| / q,
  so the fit is weighted by E/q: S needs full precision only near
  RHO_NEAR. The ratio is fitted about the interval's centre (where the
  linearized fit converges) and then re-expanded in v, where every
  coefficient is positive, so P and Q are sums of positive terms. The
  kernel folds Q into the one division it needs anyway (see
  ``wakes/induction/gaussian.py``): 10 coefficients and no extra division
  where a polynomial needed 16 for the same error.
* ``NEAR_M``, ``NEAR_N``: the Kummer series M(t) = sum t^m/(2m+3)!! and
  N(t) = sum t^m/(2m+5)!! on [0, RHO_NEAR^2], relative error; then
  g(t) = q/rho^3 = sqrt(2/pi) E M(t) and g'(t) = -1.5 sqrt(2/pi) E N(t)
  (both series have positive terms, so nothing cancels; Abramowitz &
  Stegun 1964, 7.1.6 for erf as e^{-x^2} times a positive series).

Near-minimax fits: weighted least squares on Chebyshev points refined by
Lawson's iteration; for the ratio, the linearized problem (P - S Q, with
the weight divided by the last iterate's Q) in the same iteration. Usage::

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
N_COEFFS = {"EXP": 12, "NEAR_M": 16, "NEAR_N": 16}
FAR_DEGREES = (5, 4)                # of P and Q

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


def fit_ratio(fun, weight, a, b, m, n, n_iter=40):
    """Near-minimax weighted ratio P/Q, deg P = m, deg Q = n, in v = (x - a)/h.

    Fitted in u = (x - c)/h about the centre c with Q(0) = 1, then both
    re-expanded in v = u + 1 (exact binomial shift, before rounding).
    Returns P's and Q's coefficients in v, h, the max weighted error and the
    max of the weighted rounding amplification w S (sum|p_k v^k|/P +
    sum|q_k v^k|/Q) on a fine grid.
    """
    a, b = mp.mpf(a), mp.mpf(b)
    c, h = (a + b) / 2, (b - a) / 2
    n_pts = 8 * (m + n) + 80
    xs = [c + h * mp.cos(mp.pi * (k + 0.5) / n_pts) for k in range(n_pts)]
    us = [(x - c) / h for x in xs]
    base_w = [weight(x) for x in xs]
    f = [fun(x) for x in xs]
    lawson = [mp.mpf(1)] * n_pts
    q_val = [mp.mpf(1)] * n_pts
    for _ in range(n_iter):
        A = mp.matrix(n_pts, m + 1 + n)
        y = mp.matrix(n_pts, 1)
        for i, u in enumerate(us):
            w = base_w[i] * mp.sqrt(lawson[i]) / q_val[i]
            for j in range(m + 1):
                A[i, j] = w * u**j
            for j in range(1, n + 1):
                A[i, m + j] = -w * f[i] * u**j
            y[i] = w * f[i]
        sol = mp.qr_solve(A, y)[0]
        p = [sol[j] for j in range(m + 1)]
        q = [mp.mpf(1)] + [sol[m + j] for j in range(1, n + 1)]
        q_val = [mp.polyval(q[::-1], u) for u in us]
        err = [abs(base_w[i] * (mp.polyval(p[::-1], u) / q_val[i] - f[i])) for i, u in enumerate(us)]
        total = mp.fsum(lw * e for lw, e in zip(lawson, err))
        lawson = [lw * e / total for lw, e in zip(lawson, err)]

    def shift(cs):     # coefficients of sum c_j (v - 1)^j in powers of v
        return [mp.fsum(cs[j] * mp.binomial(j, k) * (-1) ** (j - k) for j in range(k, len(cs)))
                for k in range(len(cs))]

    p, q = [float(v) for v in shift(p)], [float(v) for v in shift(q)]   # what the table stores
    worst, amp = mp.mpf(0), mp.mpf(0)
    for k in range(2001):
        x = a + (b - a) * k / 2000
        v = (x - a) / h
        pv = mp.polyval([mp.mpf(t) for t in p[::-1]], v)
        qv = mp.polyval([mp.mpf(t) for t in q[::-1]], v)
        worst = max(worst, abs(weight(x) * (pv / qv - fun(x))))
        sums = (mp.fsum(abs(mp.mpf(t) * v**j) for j, t in enumerate(p)) / abs(pv)
                + mp.fsum(abs(mp.mpf(t) * v**j) for j, t in enumerate(q)) / abs(qv))
        amp = max(amp, weight(x) * abs(pv / qv) * sums)
    return p, q, float(h), float(worst), float(amp)


def build():
    t_near = RHO_NEAR**2
    out = {}
    out["EXP"] = fit(mp.exp, lambda r: 1 / mp.exp(r), -EXP_HALF_WIDTH, EXP_HALF_WIDTH,
                     N_COEFFS["EXP"], scaled=False)
    out["FAR"] = fit_ratio(far_s, lambda r: mp.exp(-r * r / 2) / q_of_rho(r), RHO_NEAR, RHO_FAR,
                           *FAR_DEGREES)
    out["NEAR_M"] = fit(lambda t: kummer(t, 3), lambda t: 1 / kummer(t, 3), 0, t_near,
                        N_COEFFS["NEAR_M"], scaled=False)
    out["NEAR_N"] = fit(lambda t: kummer(t, 5), lambda t: 1 / kummer(t, 5), 0, t_near,
                        N_COEFFS["NEAR_N"], scaled=False)
    return out


def table_text(out) -> str:
    lines = ["# BEGIN GENERATED by tools/fit_gaussian_kernel.py -- do not edit by hand"]
    for name, res in out.items():
        if name == "FAR":
            p, q, h, worst, amp = res
            lines.append(f"# FAR: P/Q with {len(p)} and {len(q)} coefficients in v = (rho - RHO_NEAR)/h,")
            lines.append(f"# max weighted error {worst:.1e}, weighted rounding amplification {amp:.2f}")
            lines.append(f"FAR_INV_H = {1.0 / h!r}")
            tables = (("FAR_P", p), ("FAR_Q", q))
        else:
            coef, c, h, worst, cond = res
            lines.append(f"# {name}: {len(coef)} coefficients, max weighted error {worst:.1e}, "
                         f"rounding amplification {cond:.2f}")
            tables = ((name, coef),)
        for label, coef in tables:
            lines.append(f"{label}_COEFFS = (")
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
