"""The Gaussian smoothing factor g(t) = q(rho)/rho^3, t = rho^2.

q(rho) = erf(rho/sqrt 2) - sqrt(2/pi) rho exp(-rho^2/2) is the Gaussian
kernel's smoothing function (zeta proportional to exp(-rho^2/2)).
"""

import math

from numba import njit

SQRT_2_OVER_PI = math.sqrt(2.0 / math.pi)
# Beyond t = 81 (rho = 9) erf(rho/sqrt2) = 1 and rho e^(-rho^2/2) < 1e-16:
# the kernel equals the singular one to round-off.
_T_FAR = 81.0
# Below t = 2 the closed form of g' loses digits to cancellation; the series
# sum (-t/2)^n/(n! (2n+3)) needs 24 terms there for round-off.
_T_SERIES = 2.0
_N_SERIES = 24
_G_SERIES = tuple(SQRT_2_OVER_PI * (-0.5) ** n / (math.factorial(n) * (2 * n + 3))
                  for n in range(_N_SERIES))


@njit(inline="always", cache=True)
def gaussian_g(t):
    """Return g(t) = q(rho)/rho^3 and dg/dt for t = rho^2 >= 0."""
    if t < _T_SERIES:
        g = 0.0
        dg = 0.0
        for n in range(_N_SERIES - 1, -1, -1):
            g = g * t + _G_SERIES[n]
            if n >= 1:
                dg = dg * t + n * _G_SERIES[n]
        return g, dg
    rho = math.sqrt(t)
    if t > _T_FAR:
        g = 1.0 / (t * rho)
        return g, -1.5 * g / t
    e = SQRT_2_OVER_PI * math.exp(-0.5 * t)
    g = (math.erf(rho / math.sqrt(2.0)) - e * rho) / (t * rho)
    return g, 0.5 * (e - 3.0 * g) / t
