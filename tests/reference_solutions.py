"""Independent reference solutions for the equilibrium double layer and electroosmosis.

This module is deliberately independent of ``edl_solver`` (it imports nothing from it) so that the
solver can be tested against something outside the project: published closed forms, and
high-precision solutions of the nonlinear Poisson-Boltzmann (PB) equation built here with mpmath.

Conventions (dimensionless unless the function name ends in ``_si``)
--------------------------------------------------------------------
* Symmetric z:z electrolyte of bulk concentration c (mol/m^3) per ion.
* Reduced potential ``psi = z e phi / (k T)``, with ``phi = 0`` in the reservoir.
* Lengths in Debye lengths ``lambda_D = sqrt(eps k T / (e^2 N_A sum_i z_i^2 c_i))``; ``kappa = 1/lambda_D``.
* The PB equation then reads ``psi'' = sinh(psi)`` (planar) and
  ``(1/r)(r psi')' = sinh(psi)`` (cylindrical); its Debye-Hückel (DH) linearisation ``sinh psi -> psi``.
* Slit: half-height ``h`` (= kappa H / 2), ``x`` measured from the mid-plane, ``0 <= x <= h``.
  Capillary: radius ``a`` (= kappa R), ``r`` from the axis.
* Reduced wall charge ``sigma_hat = d psi / dn`` at the wall (n: outward normal from the fluid into the
  wall), so that ``sigma_hat`` and ``zeta`` have the same sign.  Dimensionally
  ``sigma = sigma_hat * eps k T / (z e lambda_D) = sigma_hat * sqrt(2 eps k T N_A c)``.

Sign conventions of the SI translations match the solver contract: charge density
``rho_e = sum_i z_i e N_A c_i exp(-z_i e phi / kT)``, Poisson ``eps phi'' = -rho_e``, EO velocity
``u_EO = -(eps E / eta)(zeta - phi)`` (uniform eps, eta, no slip), slit pressure flow
``u_p = -(dp/dx)/(2 eta) y (H - y)``, capillary ``u_p = -(dp/dx)/(4 eta)(a^2 - r^2)``.

Precision
---------
Closed forms are evaluated in mpmath at the working precision (default 30 digits).  The nonlinear
slit reference (:func:`pb_slit`) reaches about 25 significant digits (checked in
``tests/test_reference_solutions.py`` against mpmath tanh-sinh quadrature, a Jacobi-elliptic closed
form of the profile, and self-convergence), far below the 1e-6 .. 1e-8 tolerances of the solver tests.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass
from functools import cache, lru_cache

import mpmath as mp
from scipy import constants as _sc
from scipy import optimize as _opt

Real = float | int | str | mp.mpf

#: Physical constants, CODATA 2018 through ``scipy.constants`` (SI).
ELEMENTARY_CHARGE: float = _sc.e
BOLTZMANN: float = _sc.k
AVOGADRO: float = _sc.N_A
VACUUM_PERMITTIVITY: float = _sc.epsilon_0

#: Default number of significant digits of the mpmath references.
DEFAULT_DPS: int = 30
#: Extra digits carried internally (guards the cancellations ``zeta - psi`` and ``zeta - psi_m``).
_GUARD_DPS: int = 15
#: Chebyshev nodes per panel of the composite rule of :func:`pb_slit`.
DEFAULT_NODES: int = 32


# ---------------------------------------------------------------------------------------------
# Gouy-Chapman single wall and Grahame relations
# ---------------------------------------------------------------------------------------------


def gouy_chapman_potential(distance: Real, zeta: Real) -> mp.mpf:
    r"""Reduced potential at ``distance`` (in Debye lengths) from a single charged plane.

    .. math:: \psi(x) = 4\,\operatorname{artanh}\!\left[\tanh(\zeta/4)\, e^{-x}\right]

    Exact solution of ``psi'' = sinh psi`` on the half-line with ``psi(0) = zeta``,
    ``psi(inf) = 0``.  Source: Gouy (1910), J. Phys. Théor. Appl. 9, 457; Chapman (1913),
    Phil. Mag. 25, 475 (from memory).

    Parameters
    ----------
    distance : real
        Distance from the wall in Debye lengths, ``>= 0``.
    zeta : real
        Reduced wall potential ``z e zeta / kT``.

    Returns
    -------
    mpf
        The reduced potential.
    """
    return 4 * mp.atanh(mp.tanh(mp.mpf(zeta) / 4) * mp.exp(-mp.mpf(distance)))


def grahame_charge(zeta: Real) -> mp.mpf:
    r"""Reduced Gouy-Chapman wall charge of a symmetric z:z electrolyte.

    .. math:: \hat\sigma = \psi'(0^+) = 2 \sinh(\zeta/2)

    i.e. ``sigma = sqrt(8 c N_A eps k T) sinh(z e zeta / 2kT)``.  Source: Grahame (1947),
    Chem. Rev. 41, 441, eq. for the diffuse-layer charge (from memory).
    """
    return 2 * mp.sinh(mp.mpf(zeta) / 2)


def grahame_zeta(sigma_hat: Real) -> mp.mpf:
    r"""Inverse of :func:`grahame_charge`: :math:`\zeta = 2\,\operatorname{arsinh}(\hat\sigma/2)`.

    Source: Grahame (1947), Chem. Rev. 41, 441 (from memory).
    """
    return 2 * mp.asinh(mp.mpf(sigma_hat) / 2)


def debye_length_si(
    valences: Sequence[int], concentrations: Sequence[float], temperature: float, relative_permittivity: float
) -> float:
    r"""Debye length of a bulk electrolyte (m).

    .. math:: \lambda_D = \sqrt{\varepsilon k T / (e^2 N_A \textstyle\sum_i z_i^2 c_i)}

    with ``c_i`` in mol/m^3 and ``eps = eps_r eps_0``.  Common practice (definition of the
    Debye-Hückel screening length; Debye & Hückel 1923, Phys. Z. 24, 185 (from memory)).
    """
    eps = relative_permittivity * VACUUM_PERMITTIVITY
    ionic = sum(z * z * c for z, c in zip(valences, concentrations, strict=True))
    return math.sqrt(eps * BOLTZMANN * temperature / (ELEMENTARY_CHARGE**2 * AVOGADRO * ionic))


def grahame_charge_density_si(
    zeta: float,
    valences: Sequence[int],
    concentrations: Sequence[float],
    temperature: float,
    relative_permittivity: float,
) -> float:
    r"""Diffuse-layer charge (C/m^2) of a single wall for an arbitrary electroneutral electrolyte.

    .. math:: \sigma^2 = 2\varepsilon k T N_A \sum_i c_i\left(e^{-z_i e \zeta / kT} - 1\right),
              \qquad \operatorname{sign}\sigma = \operatorname{sign}\zeta

    First integral of the one-dimensional PB equation,
    ``(eps/2) phi'^2 = kT N_A sum c_i (e^{-z_i e phi/kT} - 1)``, evaluated at the wall.
    Source: Grahame (1947), Chem. Rev. 41, 441 (from memory).

    Parameters
    ----------
    zeta : float
        Wall potential (V) relative to the reservoir.
    valences, concentrations : sequences
        Ion valences and bulk concentrations (mol/m^3); must be electroneutral.
    temperature : float
        Temperature (K).
    relative_permittivity : float
        Relative permittivity of the solvent.

    Returns
    -------
    float
        Wall charge density (C/m^2), same sign as ``zeta``.
    """
    eps = relative_permittivity * VACUUM_PERMITTIVITY
    with mp.workdps(DEFAULT_DPS):
        beta = mp.mpf(ELEMENTARY_CHARGE) / (mp.mpf(BOLTZMANN) * temperature)
        total = mp.fsum(c * mp.expm1(-z * beta * zeta) for z, c in zip(valences, concentrations, strict=True))
        value = mp.sqrt(2 * eps * BOLTZMANN * temperature * AVOGADRO * total)
    return float(mp.sign(zeta) * value)


def grahame_zeta_si(
    charge_density: float,
    valences: Sequence[int],
    concentrations: Sequence[float],
    temperature: float,
    relative_permittivity: float,
) -> float:
    """Wall potential (V) of a single wall of given charge (C/m^2).

    Inverse of :func:`grahame_charge_density_si`.

    Solved with Brent's method to a relative tolerance of 1e-15 (the map is monotone).  Source:
    Grahame (1947), Chem. Rev. 41, 441 (from memory).
    """
    if charge_density == 0.0:
        return 0.0
    thermal = BOLTZMANN * temperature / ELEMENTARY_CHARGE

    def residual(zeta: float) -> float:
        args = (valences, concentrations, temperature, relative_permittivity)
        return grahame_charge_density_si(zeta, *args) - charge_density

    bound = thermal
    while residual(math.copysign(bound, charge_density)) * math.copysign(1.0, charge_density) < 0:
        bound *= 2.0
    lo, hi = sorted((0.0, math.copysign(bound, charge_density)))
    return float(_opt.brentq(residual, lo, hi, xtol=1e-300, rtol=1e-15, maxiter=500))


# ---------------------------------------------------------------------------------------------
# Debye-Hückel closed forms (dimensionless)
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class LinearChannel:
    """Dimensionless Debye-Hückel summary of a slit (half-height ``size``) or capillary (radius ``size``).

    Attributes
    ----------
    size : mpf
        ``h`` (slit half-height) or ``a`` (capillary radius), in Debye lengths.
    zeta : mpf
        Reduced wall potential.
    centre : mpf
        Potential on the mid-plane / axis.
    mean_potential : mpf
        Cross-section mean of the potential.
    eo_ratio : mpf
        Mean EO velocity divided by the Helmholtz-Smoluchowski velocity, ``1 - mean/zeta``.
    wall_charge : mpf
        Reduced wall charge ``d psi/dn``.
    streaming : mpf
        Slit: ``int_0^h psi (h^2 - x^2) dx``; capillary: ``int_0^a psi (a^2 - r^2) r dr``.
    """

    size: mp.mpf
    zeta: mp.mpf
    centre: mp.mpf
    mean_potential: mp.mpf
    eo_ratio: mp.mpf
    wall_charge: mp.mpf
    streaming: mp.mpf


def dh_slit(h: Real, zeta: Real, dps: int = DEFAULT_DPS) -> LinearChannel:
    r"""Debye-Hückel slit of half-height ``h`` with both walls at ``zeta``.

    .. math::
        \psi = \zeta \frac{\cosh x}{\cosh h},\quad
        \bar\psi = \zeta\frac{\tanh h}{h},\quad
        \frac{\bar u_{EO}}{u_{HS}} = 1 - \frac{\tanh h}{h},\quad
        \hat\sigma = \zeta \tanh h

    Source: Burgreen & Nakache (1964), J. Phys. Chem. 68, 1084 (DH limit of their slit solution).

    The streaming integral is derived here by integrating by parts twice with
    ``int x^2 cosh x dx = x^2 sinh x - 2x cosh x + 2 sinh x``:

    .. math:: \int_0^h \psi\,(h^2 - x^2)\,dx = \frac{\zeta}{\cosh h}\left(2h\cosh h - 2\sinh h\right)
              = 2\zeta\,(h - \tanh h).
    """
    with mp.workdps(dps + _GUARD_DPS):  # guard digits: h - tanh h cancels for small h
        h, zeta = mp.mpf(h), mp.mpf(zeta)
        th = mp.tanh(h)
        return LinearChannel(
            size=h,
            zeta=zeta,
            centre=zeta / mp.cosh(h),
            mean_potential=zeta * th / h,
            eo_ratio=1 - th / h,
            wall_charge=zeta * th,
            streaming=2 * zeta * (h - th),
        )


def dh_slit_zeta_from_charge(h: Real, sigma_hat: Real, dps: int = DEFAULT_DPS) -> mp.mpf:
    r"""Wall potential of a DH slit of reduced wall charge: :math:`\zeta = \hat\sigma/\tanh h`.

    Source: Burgreen & Nakache (1964), J. Phys. Chem. 68, 1084 (DH limit).
    """
    with mp.workdps(dps):
        return mp.mpf(sigma_hat) / mp.tanh(mp.mpf(h))


def dh_capillary(a: Real, zeta: Real, dps: int = DEFAULT_DPS) -> LinearChannel:
    r"""Debye-Hückel cylindrical capillary of radius ``a`` with wall potential ``zeta``.

    .. math::
        \psi = \zeta\frac{I_0(r)}{I_0(a)},\quad
        \bar\psi = \frac{2\zeta I_1(a)}{a I_0(a)},\quad
        \frac{\bar u_{EO}}{u_{HS}} = 1 - \frac{2 I_1(a)}{a I_0(a)},\quad
        \hat\sigma = \zeta\frac{I_1(a)}{I_0(a)}

    Source: Rice & Whitehead (1965), J. Phys. Chem. 69, 4017.

    The streaming integral follows from ``int r I0 dr = r I1`` and
    ``int r^3 I0 dr = r^3 I1 - 2 r^2 I2`` (from ``d(r^n I_n)/dr = r^n I_{n-1}``):

    .. math:: \int_0^a \psi\,(a^2 - r^2)\,r\,dr = 2\zeta a^2 \frac{I_2(a)}{I_0(a)}.
    """
    with mp.workdps(dps + _GUARD_DPS):  # guard digits: 1 - 2 I1/(a I0) cancels for small a
        a, zeta = mp.mpf(a), mp.mpf(zeta)
        i0, i1, i2 = mp.besseli(0, a), mp.besseli(1, a), mp.besseli(2, a)
        return LinearChannel(
            size=a,
            zeta=zeta,
            centre=zeta / i0,
            mean_potential=2 * zeta * i1 / (a * i0),
            eo_ratio=1 - 2 * i1 / (a * i0),
            wall_charge=zeta * i1 / i0,
            streaming=2 * zeta * a**2 * i2 / i0,
        )


def dh_capillary_zeta_from_charge(a: Real, sigma_hat: Real, dps: int = DEFAULT_DPS) -> mp.mpf:
    r"""Wall potential of a DH capillary with reduced charge: :math:`\zeta = \hat\sigma I_0(a)/I_1(a)`.

    Source: Rice & Whitehead (1965), J. Phys. Chem. 69, 4017.
    """
    with mp.workdps(dps):
        a = mp.mpf(a)
        return mp.mpf(sigma_hat) * mp.besseli(0, a) / mp.besseli(1, a)


# ---------------------------------------------------------------------------------------------
# Nonlinear symmetric slit: first-integral (Burgreen-Nakache) route in mpmath
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class SlitPB:
    """High-precision dimensionless summary of a symmetric PB slit (half-section ``0 <= x <= h``).

    Attributes
    ----------
    zeta : mpf
        Reduced wall potential.
    h : mpf
        Half-height in Debye lengths (the requested one).
    centre : mpf
        Mid-plane potential ``psi_m``.
    wall_charge : mpf
        ``sigma_hat = sign(zeta) sqrt(2 (cosh zeta - cosh psi_m))``.
    int_psi : mpf
        ``int_0^h psi dx``.
    int_zeta_minus_psi : mpf
        ``int_0^h (zeta - psi) dx`` (computed without cancellation).
    int_cosh : mpf
        ``int_0^h cosh psi dx``.
    int_cosh_minus_one : mpf
        ``int_0^h (cosh psi - 1) dx`` (excess ion sum, without cancellation).
    int_sinh : mpf
        ``int_0^h sinh psi dx`` (equals ``wall_charge`` by Gauss's law; not imposed).
    int_stream : mpf
        ``int_0^h sinh(psi) (h^2 - x^2) dx``, computed directly from the profile.
    h_quadrature : mpf
        ``int dx`` recomputed by the quadrature at the converged ``psi_m`` (consistency check).
    """

    zeta: mp.mpf
    h: mp.mpf
    centre: mp.mpf
    wall_charge: mp.mpf
    int_psi: mp.mpf
    int_zeta_minus_psi: mp.mpf
    int_cosh: mp.mpf
    int_cosh_minus_one: mp.mpf
    int_sinh: mp.mpf
    int_stream: mp.mpf
    h_quadrature: mp.mpf

    @property
    def mean_potential(self) -> mp.mpf:
        """Cross-section mean potential ``(1/h) int_0^h psi dx``."""
        return self.int_psi / self.h

    @property
    def eo_ratio(self) -> mp.mpf:
        """Mean EO velocity over the HS velocity, ``1 - mean(psi)/zeta = int (zeta - psi) dx / (h zeta)``."""
        if self.zeta == 0:
            return mp.mpf(0)
        return self.int_zeta_minus_psi / (self.h * self.zeta)


_Vec = tuple[mp.mpf, ...]


@cache
def _cheb_rule(n: int, dps: int) -> tuple[_Vec, _Vec, tuple[_Vec, ...]]:
    """Chebyshev (first-kind) nodes on [-1, 1], Fejér weights and right-cumulative integration matrix.

    Returns ``(t, w, m)`` with ascending nodes ``t_j``, ``int_{-1}^{1} f ~ sum_j w_j f_j`` and
    ``int_{t_j}^{1} f ~ sum_i m[j][i] f_i``, both exact for polynomials of degree ``< n``
    (integration of the Chebyshev interpolant; common practice, cf. Trefethen, *Approximation Theory
    and Approximation Practice*, 2013 (from memory)).
    """
    with mp.workdps(dps):
        phi = [mp.pi - (2 * j + 1) * mp.pi / (2 * n) for j in range(n)]  # ascending t = cos(phi)
        t = [mp.cos(p) for p in phi]
        # Interpolation coefficients: c_k = sum_i C[k][i] f_i.
        coef = [[(1 if k else mp.mpf(1) / 2) * 2 * mp.cos(k * p) / n for p in phi] for k in range(n)]

        def antiderivative(k: int, theta: mp.mpf) -> mp.mpf:
            """Antiderivative of T_k at t = cos(theta), via T_m(cos theta) = cos(m theta)."""

            def cheb(m: int) -> mp.mpf:
                return mp.cos(m * theta)

            if k == 0:
                return cheb(1)
            if k == 1:
                return cheb(2) / 4
            return (cheb(k + 1) / (k + 1) - cheb(k - 1) / (k - 1)) / 2

        upper = [antiderivative(k, mp.mpf(0)) for k in range(n)]  # t = 1
        lower = [antiderivative(k, +mp.pi) for k in range(n)]  # t = -1
        weights = tuple(mp.fsum((upper[k] - lower[k]) * coef[k][i] for k in range(n)) for i in range(n))
        matrix = []
        for pj in phi:
            diff = [upper[k] - antiderivative(k, pj) for k in range(n)]
            matrix.append(tuple(mp.fsum(diff[k] * coef[k][i] for k in range(n)) for i in range(n)))
        return tuple(t), weights, tuple(matrix)


@dataclass(frozen=True)
class _Panel:
    kind: str  # "s": psi = psi_m cosh s (near the mid-plane); "psi": psi itself (near the wall)
    a: mp.mpf
    b: mp.mpf


def _panels(psi_m: mp.mpf, delta: mp.mpf) -> tuple[list[_Panel], mp.mpf]:
    """Composite layout of ``[psi_m, zeta]`` (``delta = zeta - psi_m``), ordered from mid-plane to wall.

    Near the mid-plane ``psi - psi_m = 2 psi_m sinh^2(s/2)`` removes the square-root end-point
    singularity of ``dx = dpsi / sqrt(2(cosh psi - cosh psi_m))`` and makes ``dx/ds`` close to 1 even
    when ``psi_m`` is astronomically small (wide channels); panels are graded geometrically away from
    the end of that part.  The rest (``psi - psi_m > 1``) uses ``psi`` itself, with panels no wider than
    half their distance to the branch point ``psi_m`` (and at most 2).
    """
    d_c = min(delta, mp.mpf(1))
    s_c = 2 * mp.asinh(mp.sqrt(d_c / (2 * psi_m)))
    cuts = [s_c]
    step = mp.mpf(1)
    while cuts[-1] - step > step / 2:
        cuts.append(cuts[-1] - step)
        if len(cuts) > 2:  # widths 1, 1, 2, 4, ... away from s_c
            step *= 2
    cuts.append(mp.mpf(0))
    panels = [_Panel("s", cuts[i + 1], cuts[i]) for i in range(len(cuts) - 2, -1, -1)]
    lo, zeta = psi_m + d_c, psi_m + delta
    while lo < zeta:
        width = min(mp.mpf(2), (lo - psi_m) / 2)
        hi = zeta if zeta - lo < 1.5 * width else lo + width
        panels.append(_Panel("psi", lo, hi))
        lo = hi
    return panels, s_c


def _nodes(
    panel: _Panel, psi_m: mp.mpf, delta: mp.mpf, s_c: mp.mpf, n: int, dps: int
) -> list[tuple[mp.mpf, mp.mpf, mp.mpf]]:
    """Per node: ``(d, zeta_minus_psi, dx/dv)`` with ``d = psi - psi_m``, all free of cancellation."""
    t, _, _ = _cheb_rule(n, dps)
    half = (panel.b - panel.a) / 2
    out = []
    for tj in t:
        v = panel.a + half * (1 + tj)
        to_end = half * (1 - tj)  # panel.b - v, exactly
        if panel.kind == "s":
            sh = mp.sinh(v / 2)
            d = 2 * psi_m * sh * sh
            dpsi_dv = psi_m * mp.sinh(v)
            # (s_c - s) splits into (panel end -> s_c) + (node -> panel end).
            gap = (s_c - panel.b) + to_end
            # zeta - psi = (delta - d_c) + (d_c - d), d_c - d = 2 psi_m sinh((s_c - s)/2) sinh((s_c + s)/2).
            d_c = min(delta, mp.mpf(1))
            zmp = (delta - d_c) + 2 * psi_m * mp.sinh(gap / 2) * mp.sinh((s_c + v) / 2)
        else:
            d = v - psi_m
            dpsi_dv = mp.mpf(1)
            zmp = (psi_m + delta - panel.b) + to_end
        if d == 0:  # mid-plane: limit of psi_m sinh s / g as s -> 0
            out.append((d, zmp, mp.sqrt(psi_m / (2 * mp.sinh(psi_m)))))
            continue
        g = 2 * mp.sqrt(mp.sinh(psi_m + d / 2) * mp.sinh(d / 2))  # sqrt(2 (cosh psi - cosh psi_m))
        out.append((d, zmp, dpsi_dv / g))
    return out


def _half_height(psi_m: mp.mpf, delta: mp.mpf, n: int, dps: int) -> mp.mpf:
    """``h = int_{psi_m}^{zeta} dpsi / sqrt(2 (cosh psi - cosh psi_m))`` (Burgreen & Nakache 1964)."""
    panels, s_c = _panels(psi_m, delta)
    _, w, _ = _cheb_rule(n, dps)
    total = mp.mpf(0)
    for p in panels:
        nodes = _nodes(p, psi_m, delta, s_c, n, dps)
        total += (p.b - p.a) / 2 * mp.fsum(wi * node[2] for wi, node in zip(w, nodes, strict=True))
    return total


def _integrals(psi_m: mp.mpf, delta: mp.mpf, n: int, dps: int) -> dict[str, mp.mpf]:
    """All half-section integrals at given ``psi_m`` and ``delta = zeta - psi_m`` (``zeta > 0``)."""
    panels, s_c = _panels(psi_m, delta)
    _, w, cum = _cheb_rule(n, dps)
    per_panel = []
    for p in panels:
        nodes = _nodes(p, psi_m, delta, s_c, n, dps)
        half = (p.b - p.a) / 2
        dxdv = [node[2] for node in nodes]
        # Distance from the node to the end of its panel, measured in x.
        to_panel_end = [half * mp.fsum(m_ji * f for m_ji, f in zip(row, dxdv, strict=True)) for row in cum]
        length = half * mp.fsum(wi * f for wi, f in zip(w, dxdv, strict=True))
        per_panel.append((p, nodes, half, to_panel_end, length))
    h_total = mp.fsum(item[4] for item in per_panel)
    sums = {k: [] for k in ("h", "psi", "zmp", "cosh", "cm1", "sinh", "stream")}
    beyond = mp.mpf(0)  # x-distance from the end of the current panel to the wall
    for _, nodes, half, to_panel_end, length in reversed(per_panel):
        for wi, (d, zmp, f), tail in zip(w, nodes, to_panel_end, strict=True):
            weight = half * wi * f
            psi = psi_m + d
            sh = mp.sinh(psi)
            dist = beyond + tail  # distance from the wall, h - x
            sums["h"].append(weight)
            sums["psi"].append(weight * psi)
            sums["zmp"].append(weight * zmp)
            sums["cosh"].append(weight * mp.cosh(psi))
            sums["cm1"].append(weight * 2 * mp.sinh(psi / 2) ** 2)
            sums["sinh"].append(weight * sh)
            sums["stream"].append(weight * sh * dist * (2 * h_total - dist))  # h^2 - x^2 = T (2h - T)
        beyond += length
    return {k: mp.fsum(v) for k, v in sums.items()}


def _solve_increasing(func, lo: mp.mpf, hi: mp.mpf, tol: mp.mpf, max_iter: int = 200) -> mp.mpf:
    """Root of an increasing function bracketed by ``[lo, hi]`` (Illinois regula falsi + bisection)."""
    f_lo, f_hi = func(lo), func(hi)
    if f_lo > 0 or f_hi < 0:
        raise ValueError("root not bracketed")
    side = 0
    for _ in range(max_iter):
        if hi - lo < tol:
            break
        x = hi - f_hi * (hi - lo) / (f_hi - f_lo)
        if not lo < x < hi:
            x = (lo + hi) / 2
        fx = func(x)
        if fx == 0:
            return x
        if fx < 0:
            lo, f_lo = x, fx
            if side == -1:
                f_hi /= 2
            side = -1
        else:
            hi, f_hi = x, fx
            if side == 1:
                f_lo /= 2
            side = 1
        if abs(fx) < tol:
            return x
    return (lo + hi) / 2


def _bracket(func, guess: mp.mpf) -> tuple[mp.mpf, mp.mpf]:
    """Expand a bracket around ``guess`` for an increasing ``func`` (steps of 1, 2, 4, ...)."""
    step = mp.mpf(1)
    lo = hi = guess
    if func(guess) < 0:
        while func(hi) < 0:
            lo, hi = hi, hi + step
            step *= 2
    else:
        while func(lo) > 0:
            lo, hi = lo - step, lo
            step *= 2
    return lo, hi


def _finish(zeta: mp.mpf, h: mp.mpf, psi_m: mp.mpf, delta: mp.mpf, sign: int, n: int, dps: int) -> SlitPB:
    ints = _integrals(psi_m, delta, n, dps)
    # sqrt(2 (cosh zeta - cosh psi_m)) = 2 sqrt(sinh((zeta + psi_m)/2) sinh(delta/2))
    sigma = 2 * mp.sqrt(mp.sinh(psi_m + delta / 2) * mp.sinh(delta / 2))
    return SlitPB(
        zeta=sign * zeta,
        h=h,
        centre=sign * psi_m,
        wall_charge=sign * sigma,
        int_psi=sign * ints["psi"],
        int_zeta_minus_psi=sign * ints["zmp"],
        int_cosh=ints["cosh"],
        int_cosh_minus_one=ints["cm1"],
        int_sinh=sign * ints["sinh"],
        int_stream=sign * ints["stream"],
        h_quadrature=ints["h"],
    )


def _zero_slit(h: mp.mpf) -> SlitPB:
    zero = mp.mpf(0)
    return SlitPB(zero, h, zero, zero, zero, zero, h, zero, zero, zero, h)


def _rounded(ref: SlitPB, dps: int) -> SlitPB:
    with mp.workdps(dps):
        return SlitPB(**{k: +getattr(ref, k) for k in ref.__dataclass_fields__})


@lru_cache(maxsize=4096)
def _pb_slit_cached(zeta: mp.mpf, h: mp.mpf, dps: int, n: int) -> SlitPB:
    wdps = dps + _GUARD_DPS
    with mp.workdps(wdps):
        if zeta == 0:
            return _zero_slit(h)
        sign, z = (1, zeta) if zeta > 0 else (-1, -zeta)
        log_h = mp.log(h)

        # psi_m = z / (1 + e^p), delta = z - psi_m = z / (1 + e^-p); log h(p) is increasing in p.
        def residual(p: mp.mpf) -> mp.mpf:
            return mp.log(_half_height(z / (1 + mp.exp(p)), z / (1 + mp.exp(-p)), n, wdps)) - log_h

        # Initial guess from the asymptotes: two superposed Gouy-Chapman tails (wide) or
        # psi ~ psi_m + sinh(psi_m) x^2 / 2 (narrow).
        wide = 8 * mp.tanh(z / 4) * mp.exp(-h)
        narrow = mp.sinh(z) * h**2 / 2
        guess = mp.log(z / wide - 1) if wide < z / 2 else mp.log(narrow / z)
        lo, hi = _bracket(residual, guess)
        p = _solve_increasing(residual, lo, hi, mp.mpf(10) ** (-(dps + 5)))
        psi_m, delta = z / (1 + mp.exp(p)), z / (1 + mp.exp(-p))
        return _rounded(_finish(z, h, psi_m, delta, sign, n, wdps), dps)


def pb_slit(zeta: Real, h: Real, dps: int = DEFAULT_DPS, nodes: int = DEFAULT_NODES) -> SlitPB:
    r"""Nonlinear symmetric PB slit at fixed wall potential, to about ``dps - 5`` significant digits.

    Solves ``psi'' = sinh psi`` on ``0 <= x <= h`` with ``psi'(0) = 0``, ``psi(h) = zeta`` through the
    first integral

    .. math:: \left(\frac{d\psi}{dx}\right)^2 = 2(\cosh\psi - \cosh\psi_m), \qquad
              h = \int_{\psi_m}^{\zeta} \frac{d\psi}{\sqrt{2(\cosh\psi - \cosh\psi_m)}},

    (Burgreen & Nakache 1964, J. Phys. Chem. 68, 1084), solved for the mid-plane potential ``psi_m`` on a
    logistic parametrisation ``psi_m = zeta/(1 + e^p)`` (robust from ``psi_m ~ e^{-1000}`` to
    ``psi_m -> zeta``).  Every integral ``int f(psi) dx`` is a quadrature in ``psi`` (see
    :func:`_panels`); the streaming integral ``int sinh psi (h^2 - x^2) dx`` needs ``x(psi)``, obtained
    by spectral cumulative integration of ``dx/dpsi`` on the same nodes — it is *not* obtained from the
    reciprocity identity ``int sinh psi (h^2 - x^2) dx = 2 int (zeta - psi) dx``.

    Parameters
    ----------
    zeta : real
        Reduced wall potential ``z e zeta / kT`` (any sign; results are odd/even in it).
    h : real
        Half-height in Debye lengths, ``> 0`` (tested for 1e-2 .. 1e3).
    dps : int
        Decimal digits of the result (internally ``dps + 15``).
    nodes : int
        Chebyshev nodes per panel (convergence checks use a larger value).

    Returns
    -------
    SlitPB
        The summary integrals over the half-section.
    """
    with mp.workdps(dps + _GUARD_DPS):
        z, hh = mp.mpf(zeta), mp.mpf(h)
    if hh <= 0:
        raise ValueError(f"h must be positive, got {h!r}")
    return _pb_slit_cached(z, hh, dps, nodes)


@lru_cache(maxsize=4096)
def _pb_slit_charge_cached(sigma: mp.mpf, h: mp.mpf, dps: int, n: int) -> SlitPB:
    wdps = dps + _GUARD_DPS
    with mp.workdps(wdps):
        if sigma == 0:
            return _zero_slit(h)
        sign, s = (1, sigma) if sigma > 0 else (-1, -sigma)
        log_h = mp.log(h)

        def state(q: mp.mpf) -> tuple[mp.mpf, mp.mpf]:
            psi_m = mp.exp(q)
            # cosh zeta - cosh psi_m = s^2/2  <=>  2 sinh(psi_m + delta/2) sinh(delta/2) = s^2/2.
            zeta = mp.acosh(mp.cosh(psi_m) + s * s / 2)
            delta = zeta - psi_m
            # Newton polish of delta on the cancellation-free form.
            for _ in range(3):
                f = 2 * mp.sinh(psi_m + delta / 2) * mp.sinh(delta / 2) - s * s / 2
                df = mp.sinh(psi_m + delta)
                delta -= f / df
            return psi_m, delta

        def residual(q: mp.mpf) -> mp.mpf:  # increasing in q = -log psi_m
            psi_m, delta = state(-q)
            return mp.log(_half_height(psi_m, delta, n, wdps)) - log_h

        zeta_gc = grahame_zeta(s)
        wide = 8 * mp.tanh(zeta_gc / 4) * mp.exp(-h)
        narrow = mp.asinh(s / h)
        guess = -mp.log(max(wide, narrow))
        lo, hi = _bracket(residual, guess)
        q = _solve_increasing(residual, lo, hi, mp.mpf(10) ** (-(dps + 5)))
        psi_m, delta = state(-q)
        return _rounded(_finish(psi_m + delta, h, psi_m, delta, sign, n, wdps), dps)


def pb_slit_fixed_charge(
    sigma_hat: Real, h: Real, dps: int = DEFAULT_DPS, nodes: int = DEFAULT_NODES
) -> SlitPB:
    r"""Nonlinear symmetric PB slit at fixed reduced wall charge ``sigma_hat`` (both walls).

    Unknowns ``psi_m`` and ``zeta`` with :math:`\hat\sigma^2 = 2(\cosh\zeta - \cosh\psi_m)` (first
    integral at the wall) and the same half-height integral as :func:`pb_slit`
    (Burgreen & Nakache 1964, J. Phys. Chem. 68, 1084).  The root is found in ``log psi_m``
    (``h`` decreases monotonically with ``psi_m`` at fixed charge).

    Parameters
    ----------
    sigma_hat : real
        Reduced wall charge ``d psi/dn`` (sign of the wall potential).
    h : real
        Half-height in Debye lengths.
    dps, nodes : int
        As in :func:`pb_slit`.

    Returns
    -------
    SlitPB
        Summary; ``zeta`` is the resulting wall potential.
    """
    with mp.workdps(dps + _GUARD_DPS):
        s, hh = mp.mpf(sigma_hat), mp.mpf(h)
    if hh <= 0:
        raise ValueError(f"h must be positive, got {h!r}")
    return _pb_slit_charge_cached(s, hh, dps, nodes)


def pb_slit_profile(ref: SlitPB, x: Real, dps: int = DEFAULT_DPS, nodes: int = DEFAULT_NODES) -> mp.mpf:
    r"""Reduced potential ``psi(x)`` of a solved slit (:func:`pb_slit`), ``x`` from the mid-plane.

    Inverts :math:`x(\psi) = \int_{\psi_m}^{\psi} d\psi' / \sqrt{2(\cosh\psi' - \cosh\psi_m)}`
    (Burgreen & Nakache 1964) by Newton's method on the panel variable, with ``dx/dv`` as derivative
    and a fresh Chebyshev-Fejér rule on each partial panel.

    Parameters
    ----------
    ref : SlitPB
        Solved slit.
    x : real
        Position from the mid-plane, ``0 <= x <= h``.
    dps, nodes : int
        Precision and nodes per panel.

    Returns
    -------
    mpf
        ``psi(x)`` (sign of ``ref.zeta``).
    """
    wdps = dps + _GUARD_DPS
    with mp.workdps(wdps):
        x = mp.mpf(x)
        if ref.zeta == 0:
            return mp.mpf(0)
        sign = 1 if ref.zeta > 0 else -1
        psi_m = abs(ref.centre)
        delta = abs(ref.zeta) - psi_m
        if not 0 <= x <= ref.h:
            raise ValueError(f"x must lie in [0, h], got {x}")
        panels, s_c = _panels(psi_m, delta)
        _, w, _ = _cheb_rule(nodes, wdps)

        def partial(p: _Panel, b: mp.mpf) -> mp.mpf:
            sub = _Panel(p.kind, p.a, b)
            vals = _nodes(sub, psi_m, delta, s_c, nodes, wdps)
            return (b - p.a) / 2 * mp.fsum(wi * v[2] for wi, v in zip(w, vals, strict=True))

        def rate(p: _Panel, v: mp.mpf) -> tuple[mp.mpf, mp.mpf]:
            node = _nodes(_Panel(p.kind, v, v), psi_m, delta, s_c, 1, wdps)[0]
            return node[0], node[2]

        start = mp.mpf(0)
        for p in panels:
            length = partial(p, p.b)
            if start + length >= x or p is panels[-1]:
                break
            start += length
        target = x - start
        lo, hi = p.a, p.b
        v = p.a + (p.b - p.a) * min(max(target / length, mp.mpf(0)), mp.mpf(1))
        tol = mp.mpf(10) ** (-(dps + 3))
        for _ in range(100):
            f = partial(p, v) - target
            if f < 0:
                lo = v
            else:
                hi = v
            _, slope = rate(p, v)
            step = f / slope
            nxt = v - step
            if not lo <= nxt <= hi:
                nxt = (lo + hi) / 2
            if abs(nxt - v) < tol * max(1, abs(v)):
                v = nxt
                break
            v = nxt
        d, _ = rate(p, v)
        return +(sign * (psi_m + d))


def elliptic_slit_profile(psi_m: Real, x: Real, dps: int = DEFAULT_DPS) -> mp.mpf:
    r"""Closed-form symmetric PB slit profile in Jacobi elliptic functions (for cross-checks).

    With ``q = e^psi`` the first integral becomes ``q'^2 = q (q - e^{psi_m})(q - e^{-psi_m})``, solved by

    .. math:: \psi(x) = \psi_m
              - 2\ln \operatorname{cd}\!\left(\tfrac12 e^{\psi_m/2} x \,\middle|\, m = e^{-2\psi_m}\right)

    for ``psi_m > 0`` (derived here; cf. the elliptic-function solutions of the slit PB equation in
    Verwey & Overbeek 1948, *Theory of the Stability of Lyophobic Colloids*, ch. IV (from memory)).
    Usable while ``1 - m`` is representable, i.e. not for very wide channels.  Evaluated at
    ``max(dps, mp.dps) + 15`` digits so that it can be differentiated numerically with ``mp.diff``.
    """
    with mp.workdps(max(dps, mp.mp.dps) + _GUARD_DPS):
        psi_m, x = mp.mpf(psi_m), mp.mpf(x)
        cd = mp.ellipfun("cd", mp.exp(psi_m / 2) * x / 2, m=mp.exp(-2 * psi_m))
        return +(psi_m - 2 * mp.log(cd))


# ---------------------------------------------------------------------------------------------
# SI translations (solver summary keys)
# ---------------------------------------------------------------------------------------------


def symmetric_slit_summary_si(
    ref: SlitPB,
    valence: int,
    concentration: float,
    diffusivities: tuple[float, float],
    temperature: float,
    relative_permittivity: float,
    viscosity: float,
    field: float,
    pressure_gradient: float,
) -> dict[str, float]:
    r"""Translate a dimensionless :class:`SlitPB` (z:z electrolyte) into the solver's SI summary values.

    With ``lambda`` the Debye length, ``phi_T = kT/(z e)``, ``H = 2 h lambda`` and ``G = dp/dx``:

    * ``wall_charge_density = sigma_hat eps phi_T / lambda``;
    * ``mean_velocity_eo = -(eps E / eta) phi_T int (zeta - psi) dx / h``; ``flow_rate_eo = H`` times it;
    * ``flow_rate_pressure = -G H^3 / (12 eta)`` (plane Poiseuille flow; common practice);
    * ``conduction_current = E (e^2 N_A / kT) z^2 c 2 lambda``
      ``* [(D_+ + D_-) int cosh psi + (D_- - D_+) int sinh psi]``
      from ``c_+ = c e^{-psi}``, ``c_- = c e^{psi}``;
    * ``streaming_current = int rho_e u_p dy = (eps phi_T G lambda / eta) int sinh psi (h^2 - x^2) dx``,
      from ``rho_e = -2 z e N_A c sinh psi = -(eps phi_T / lambda^2) sinh psi`` and
      ``u_p = -G/(2 eta) lambda^2 (h^2 - x^2)`` (``y(H - y) = lambda^2 (h^2 - x^2)``).

    Parameters
    ----------
    ref : SlitPB
        Dimensionless reference.
    valence : int
        ``z > 0`` of the z:z salt.
    concentration : float
        Bulk salt concentration (mol/m^3), equal for both ions.
    diffusivities : (float, float)
        ``(D_cation, D_anion)`` in m^2/s.
    temperature, relative_permittivity, viscosity, field, pressure_gradient : float
        K, -, Pa s, V/m, Pa/m.

    Returns
    -------
    dict
        Keys as in the solver's ``result.summary``.
    """
    z, c = valence, concentration
    eps = relative_permittivity * VACUUM_PERMITTIVITY
    lam = debye_length_si([z, -z], [c, c], temperature, relative_permittivity)
    phi_t = BOLTZMANN * temperature / (z * ELEMENTARY_CHARGE)
    h = float(ref.h)
    height = 2 * h * lam
    zeta = float(ref.zeta) * phi_t
    hs = -eps * zeta * field / viscosity
    mean_u = -eps * field / viscosity * phi_t * float(ref.int_zeta_minus_psi) / h
    d_plus, d_minus = diffusivities
    ions = (d_plus + d_minus) * float(ref.int_cosh) + (d_minus - d_plus) * float(ref.int_sinh)
    mobility_factor = ELEMENTARY_CHARGE**2 * AVOGADRO / (BOLTZMANN * temperature)  # Nernst-Einstein
    conduction = field * mobility_factor * z * z * c * 2 * lam * ions
    return {
        "debye_length": lam,
        "zeta": zeta,
        "wall_charge_density": float(ref.wall_charge) * eps * phi_t / lam,
        "centre_potential": float(ref.centre) * phi_t,
        "mean_potential": float(ref.mean_potential) * phi_t,
        "hs_velocity": hs,
        "mean_velocity_eo": mean_u,
        "eo_ratio": float(ref.eo_ratio),
        "flow_rate_eo": mean_u * height,
        "flow_rate_pressure": -pressure_gradient * height**3 / (12 * viscosity),
        "conduction_current": conduction,
        "streaming_current": eps * phi_t * pressure_gradient * lam / viscosity * float(ref.int_stream),
    }


def dh_summary_si(
    geometry: str,
    size: float,
    zeta: float,
    debye_length: float,
    relative_permittivity: float,
    viscosity: float,
    field: float,
    pressure_gradient: float,
) -> dict[str, float]:
    r"""SI summary of the Debye-Hückel slit (``size`` = full height H) or capillary (``size`` = radius).

    In DH the charge density is ``rho_e = -eps phi / lambda^2`` for any electrolyte, so the potential
    scales with ``zeta`` (V) directly.  Closed forms: Burgreen & Nakache (1964) (slit), Rice &
    Whitehead (1965) (capillary); Poiseuille flow ``-G H^3/(12 eta)`` per width (slit) and
    ``-pi G a^4/(8 eta)`` (capillary; Hagen 1839, Poiseuille 1840 (from memory)).  Streaming current
    (derived in :func:`dh_slit`, :func:`dh_capillary`):
    slit ``(eps G lambda / eta) * 2 zeta (h - tanh h)``, capillary ``pi eps G lambda^2 zeta a^2 I2/(eta I0)``.

    Returns
    -------
    dict
        Keys ``debye_length, zeta, wall_charge_density, centre_potential, mean_potential, eo_ratio,
        hs_velocity, mean_velocity_eo, flow_rate_eo, flow_rate_pressure, streaming_current``.
    """
    eps = relative_permittivity * VACUUM_PERMITTIVITY
    lam = debye_length
    hs = -eps * zeta * field / viscosity
    if geometry == "slit":
        ref = dh_slit(size / (2 * lam), zeta)
        area = size
        flow_p = -pressure_gradient * size**3 / (12 * viscosity)
        stream = eps * pressure_gradient * lam / viscosity * float(ref.streaming)
    elif geometry == "capillary":
        ref = dh_capillary(size / lam, zeta)
        area = math.pi * size**2
        flow_p = -math.pi * pressure_gradient * size**4 / (8 * viscosity)
        stream = math.pi * eps * pressure_gradient * lam**2 / (2 * viscosity) * float(ref.streaming)
    else:
        raise ValueError(f"geometry must be 'slit' or 'capillary', got {geometry!r}")
    mean_u = hs * float(ref.eo_ratio)
    return {
        "debye_length": lam,
        "zeta": zeta,
        "wall_charge_density": eps * float(ref.wall_charge) / lam,
        "centre_potential": float(ref.centre),
        "mean_potential": float(ref.mean_potential),
        "eo_ratio": float(ref.eo_ratio),
        "hs_velocity": hs,
        "mean_velocity_eo": mean_u,
        "flow_rate_eo": mean_u * area,
        "flow_rate_pressure": flow_p,
        "streaming_current": stream,
    }


# ---------------------------------------------------------------------------
# Thin-layer validity of a slit with thin nonlinear layers
# ---------------------------------------------------------------------------


def gouy_chapman_boundary(zeta_hat: float, tau: float) -> float:
    """kh where the thin-layer EO error of a slit with thin nonlinear layers equals tau.

    Gouy (1910), Chapman (1913): psi = 4 artanh(g exp(-kx)), g = tanh(zeta/4) (in kT/e, 1:1 salt). With
    u_eo = -(eps E/eta)(zeta - psi) the error is <psi>/(zeta - <psi>), and for kh >> 1 the section mean
    <psi> = (1/kh) int_0^inf 4 artanh(g e^-t) dt = 4 chi_2(g)/kh (substitute s = g e^-t; Legendre's chi
    function chi_2(g) = (Li2(g) - Li2(-g))/2; derived here). Overlap corrections are O(exp(-kh)).
    """
    g = mp.tanh(mp.mpf(zeta_hat) / 4)
    chi2 = (mp.polylog(2, g) - mp.polylog(2, -g)) / 2
    return float(4 * chi2 * (1 + tau) / (tau * zeta_hat))
