"""Series references for the rectangle W x H in Debye-Hueckel: the mean EO velocity and the pressure flow.

Derived here; series of the kind in Arulanandam & Li 2000, J. Colloid Interface Sci. 225, 421 (from memory).
Dimensionless: lengths in h = min(W, H)/2, potential in kT/e, the section is |x| < a, |y| < b with
a = W/(2h), b = H/(2h). Debye-Hueckel, psi = zeta on the walls:  lap psi = k^2 psi.  With phi = psi - zeta
(phi = 0 on the walls):  lap phi - k^2 phi = k^2 zeta. Expand in x in the cosines that vanish at x = +-a,
alpha_n = (2n+1) pi / (2a), with 1 = sum_n c_n cos(alpha_n x), c_n = 4 (-1)^n / ((2n+1) pi); each mode solves
f'' - beta_n^2 f = k^2 zeta c_n, f(+-b) = 0, beta_n^2 = alpha_n^2 + k^2, in closed form:
f_n = -(k^2 zeta c_n / beta_n^2) (1 - cosh(beta_n y) / cosh(beta_n b)). The x-mean of c_n cos(alpha_n x) is
w_n = 8 / ((2n+1)^2 pi^2) (sum w_n = 1), so

    <psi - zeta> = -zeta sum_n w_n (k^2 / beta_n^2) (1 - tanh(beta_n b) / (beta_n b)).

The first part sums in closed form, sum_n w_n k^2/beta_n^2 = 1 - tanh(k a)/(k a) (the same expansion of the slit
in x), which leaves one series whose terms fall as n^-5:

    <psi - zeta> = -zeta [1 - tanh(k a)/(k a) - sum_n w_n k^2 tanh(beta_n b) / (beta_n^3 b)].

The EO velocity in units of eps kT E / (e eta) is u = psi - zeta (Helmholtz-Smoluchowski sign), so this is the
mean EO velocity. Expanding in the short direction (a <= b) makes the terms fall fastest. The tail beyond N
terms is below k^2 (2a)^3 / (pi^5 b (2N+1)^4) (tanh <= 1, beta_n >= alpha_n); N is chosen so it is below
1e-16 of the leading term. Pressure flow (-lap u = 1, u = 0 on the walls; the k -> 0 limit of the same
algebra with the source 1): <u_p> = sum_n w_n / alpha_n^2 (1 - tanh(alpha_n b) / (alpha_n b)) (the classical
rectangular-duct series, e.g. White, Viscous Fluid Flow, from memory).
"""

from __future__ import annotations

import math

import numpy as np


def _terms(a: float, bound: float) -> np.ndarray:
    """Mode numbers 2n+1 up to where a tail bound of the form bound/(2N+1)^4 falls below 1e-17."""
    n_max = int((max(bound, 1e-300) / 1e-17) ** 0.25) + 16
    return 2.0 * np.arange(n_max, dtype=float) + 1.0


def mean_eo_velocity_dh(kappa_h: float, half_width: float, half_height: float, zeta: float) -> float:
    """Mean of psi - zeta over the section |x| < half_width, |y| < half_height (units of h), Debye-Hueckel.

    Parameters
    ----------
    kappa_h : float
        Inverse Debye length times h.
    half_width, half_height : float
        Half sides in units of h.
    zeta : float
        Wall potential in kT/e.

    Returns
    -------
    float
        The mean EO velocity in units of eps kT E / (e eta).
    """
    a, b = sorted((half_width, half_height))  # expand across the short side
    k2 = kappa_h * kappa_h
    odd = _terms(a, k2 * (2 * a) ** 3 / (math.pi**5 * b))
    alpha = odd * math.pi / (2 * a)
    beta = np.sqrt(alpha * alpha + k2)
    weights = 8.0 / (odd * odd * math.pi**2)
    ka = kappa_h * a
    slit = 1.0 - math.tanh(ka) / ka
    tail = weights * k2 * np.tanh(beta * b) / (beta**3 * b)
    return float(-zeta * (slit - math.fsum(tail[::-1])))


def mean_pressure_flow(half_width: float, half_height: float) -> float:
    """Mean of u_p with -lap u_p = 1, u_p = 0 on the walls (units of h^2 (-dp/dz) / eta)."""
    a, b = sorted((half_width, half_height))
    odd = _terms(a, 8 * a**2 / (math.pi**2 * b) * (2 * a / math.pi) ** 2)
    alpha = odd * math.pi / (2 * a)
    weights = 8.0 / (odd * odd * math.pi**2)
    terms = weights / alpha**2 * (1.0 - np.tanh(alpha * b) / (alpha * b))
    return float(math.fsum(terms[::-1]))


def _plain_series_mpmath(kappa_h: float, a: float, b: float) -> float:
    """The unaccelerated series (first form above) summed by mpmath.nsum at 30 digits: a check of the algebra."""
    import mpmath

    mpmath.mp.dps = 30

    def term(n: int) -> object:
        odd = 2 * n + 1
        beta = mpmath.sqrt((odd * mpmath.pi / (2 * a)) ** 2 + kappa_h**2)
        return 8 / (odd * mpmath.pi) ** 2 * kappa_h**2 / beta**2 * (1 - mpmath.tanh(beta * b) / (beta * b))

    return float(mpmath.nsum(term, [0, mpmath.inf]))


if __name__ == "__main__":
    print("<psi - zeta> / (-zeta), DH, rectangle W:H = aspect:1, h = H/2; fast series and mpmath check")
    for k in (1.0, 10.0, 100.0):
        for aspect in (1.0, 5.0, 20.0):
            fast = mean_eo_velocity_dh(k, aspect, 1.0, -1.0)
            check = _plain_series_mpmath(k, 1.0, aspect)
            print(f"kh={k:5g} 1:{aspect:<3g} {fast:.15f}  mpmath {check:.15f}  diff {fast - check:+.1e}")
    print(f"<u_p>: square {mean_pressure_flow(1.0, 1.0):.15f}; 1:1e6 {mean_pressure_flow(1e6, 1.0):.15f} (slit: 1/3)")
