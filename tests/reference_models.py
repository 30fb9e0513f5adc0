"""Independent references for finite ion size, hydrodynamic slip and the viscoelectric effect.

Like ``tests/reference_solutions.py`` this module imports nothing from ``edl_solver``: every value here is
built from a closed form or a first integral derived in the docstrings, with the constants of
``scipy.constants`` (CODATA 2018 / exact SI 2019).

Conventions (dimensionless unless a name ends in ``_si``)
---------------------------------------------------------
* Symmetric 1:1 electrolyte of bulk concentration c (mol/m^3) per ion; reduced potential psi = e phi / kT.
* Lengths in Debye lengths lambda_D = sqrt(eps kT / (2 e^2 N_A c)); the symmetric slit has half-height K
  (= kappa h) and x runs from the mid-plane (x = 0) to the wall (x = K).
* Reduced wall charge sigma_hat = d psi / dn at the wall, n pointing from the liquid into the wall, so that
  sigma and zeta share their sign: sigma = sigma_hat eps kT / (e lambda_D).
* Velocities in units of eps E kT / (e eta_0) (electroosmosis, field E along +x) so that with uniform
  viscosity and no slip u = psi - zeta, i.e. u_si = -(eps E / eta)(zeta - phi).

Poisson-Boltzmann with finite ion size (lattice gas; Bikerman 1942; Kilic, Bazant & Ajdari 2007, Phys. Rev.
E 75, 021502)
----------------------------------------------------------------------------------------------------------
c_pm = c exp(-+psi) / D(psi), D = 1 + nu (cosh psi - 1), nu = 2 c N_A d^3 (the bulk volume fraction of ions
on a lattice of cell d^3).  Poisson eps phi'' = -e N_A (c_+ - c_-) becomes, in Debye units,

    psi'' = sinh(psi) / D(psi).                                                   (1)

Since d/dpsi ln D = nu sinh(psi) / D, multiplying (1) by psi' and integrating from the mid-plane, where
psi' = 0 and psi = psi_m, gives the first integral

    psi'^2 = F(psi) = (2 / nu) ln[D(psi) / D(psi_m)]                              (2)

(nu -> 0: F -> 2 (cosh psi - cosh psi_m), the Burgreen & Nakache 1964 first integral of plain PB).  The
half-height follows by one quadrature, K = int_{psi_m}^{zeta} dpsi / |psi'| (which fixes psi_m), and the
wall charge is sigma_hat = sign(zeta) sqrt(F(zeta)).  For an isolated wall (psi_m = 0, D(0) = 1), in SI,

    sigma^2 = eps^2 (kT/e)^2 kappa^2 F(zeta) = 2 eps (kT / d^3) ln(1 + nu (cosh(e zeta / kT) - 1)),     (3)

using kappa^2 = 2 e^2 N_A c / (eps kT) and kappa^2 / nu = e^2 / (eps kT d^3): the steric Grahame relation
(Kilic, Bazant & Ajdari 2007, from memory).

Every quadrature substitutes psi = psi_m + Delta s^2 (Delta = zeta - psi_m), which removes the inverse
square-root singularity of 1/|psi'| at the mid-plane (F ~ F'(psi_m) Delta s^2 there), and evaluates
cosh psi - cosh psi_m = 2 sinh((psi + psi_m)/2) sinh((psi - psi_m)/2) without cancellation.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import constants as sc
from scipy import integrate, optimize

ELEMENTARY_CHARGE = sc.e
BOLTZMANN = sc.k
AVOGADRO = sc.N_A
VACUUM_PERMITTIVITY = sc.epsilon_0

_QUAD = {"epsabs": 0.0, "epsrel": 1e-13, "limit": 400}


# ------------------------------------------------------------------------------------------------
# SI helpers
# ------------------------------------------------------------------------------------------------


def thermal_voltage(temperature: float) -> float:
    """kT/e, V."""
    return BOLTZMANN * temperature / ELEMENTARY_CHARGE


def debye_length_si(concentration: float, temperature: float, relative_permittivity: float) -> float:
    """lambda_D = sqrt(eps kT / (2 e^2 N_A c)) of a 1:1 electrolyte, m (common practice)."""
    eps = relative_permittivity * VACUUM_PERMITTIVITY
    return math.sqrt(eps * BOLTZMANN * temperature / (2.0 * ELEMENTARY_CHARGE**2 * AVOGADRO * concentration))


def packing_fraction(concentration: float, diameter: float) -> float:
    """nu = 2 c N_A d^3 of a 1:1 electrolyte (Kilic, Bazant & Ajdari 2007)."""
    return 2.0 * concentration * AVOGADRO * diameter**3


def close_packing(diameter: float) -> float:
    """Largest concentration of the lattice gas, 1 / (N_A d^3), mol/m^3 (one ion per cell d^3)."""
    return 1.0 / (AVOGADRO * diameter**3)


def steric_grahame_charge_si(zeta: float, concentration: float, diameter: float, temperature: float,
                             relative_permittivity: float) -> float:
    """Isolated-wall charge, C/m^2, from (3): sigma = sign(zeta) sqrt(2 eps (kT/d^3) ln(1 + nu (cosh - 1)))."""
    eps = relative_permittivity * VACUUM_PERMITTIVITY
    nu = packing_fraction(concentration, diameter)
    psi = zeta / thermal_voltage(temperature)
    pressure = BOLTZMANN * temperature / diameter**3 * math.log1p(2.0 * nu * math.sinh(0.5 * psi) ** 2)
    return math.copysign(math.sqrt(2.0 * eps * pressure), zeta)


def steric_grahame_zeta_si(charge: float, concentration: float, diameter: float, temperature: float,
                           relative_permittivity: float) -> float:
    """Inverse of :func:`steric_grahame_charge_si`: (3) solved for zeta in closed form,
    cosh(e zeta / kT) = 1 + (exp(sigma^2 d^3 / (2 eps kT)) - 1) / nu."""
    eps = relative_permittivity * VACUUM_PERMITTIVITY
    nu = packing_fraction(concentration, diameter)
    excess = math.expm1(charge**2 * diameter**3 / (2.0 * eps * BOLTZMANN * temperature)) / nu
    # cosh(psi) - 1 = excess  =>  psi = 2 asinh(sqrt(excess / 2))
    return math.copysign(2.0 * math.asinh(math.sqrt(0.5 * excess)), charge) * thermal_voltage(temperature)


# ------------------------------------------------------------------------------------------------
# Symmetric slit from the first integral (2)
# ------------------------------------------------------------------------------------------------


def field_squared(psi_m: float, offset: float, nu: float) -> float:
    """F = psi'^2 of (2) at psi = psi_m + ``offset``; nu = 0 is plain Poisson-Boltzmann, 2 (cosh psi - cosh psi_m).

    The offset is passed apart so that cosh psi - cosh psi_m = 2 sinh(psi_m + offset/2) sinh(offset/2) keeps
    its relative precision however close psi comes to psi_m.
    """
    difference = 2.0 * math.sinh(psi_m + 0.5 * offset) * math.sinh(0.5 * offset)
    if nu == 0.0:
        return 2.0 * difference
    crowd_m = 1.0 + 2.0 * nu * math.sinh(0.5 * psi_m) ** 2
    return 2.0 / nu * math.log1p(nu * difference / crowd_m)


def _half_height(psi_m: float, zeta: float, nu: float) -> float:
    """K(psi_m) = int_{psi_m}^{zeta} dpsi / |psi'| with psi = psi_m + Delta s^2."""
    delta = zeta - psi_m

    def integrand(s: float) -> float:
        return 2.0 * abs(delta) * s / math.sqrt(field_squared(psi_m, delta * s * s, nu))

    return integrate.quad(integrand, 0.0, 1.0, **_QUAD)[0]


@dataclass(frozen=True)
class SymmetricSlit:
    """Reference solution of a symmetric slit with both walls at potential ``zeta`` (Debye units).

    Attributes
    ----------
    zeta, half_height, nu : float
        Inputs: reduced wall potential, K = kappa h, packing fraction (0: plain PB).
    midplane : float
        psi_m.
    wall_charge : float
        sigma_hat = sign(zeta) sqrt(F(zeta)).
    """

    zeta: float
    half_height: float
    nu: float
    midplane: float
    wall_charge: float

    def _offset_gradient(self, s: float) -> float:
        """|psi'| at psi = psi_m + Delta s^2."""
        return math.sqrt(field_squared(self.midplane, (self.zeta - self.midplane) * s * s, self.nu))

    def wall_gradient(self) -> float:
        """psi'(K), the reduced wall field (= sigma_hat)."""
        return math.copysign(self._offset_gradient(1.0), self.zeta - self.midplane)

    def _moment(self, weight, primitive=None) -> float:
        """int_0^K x psi' w(psi) dx for a weight w(psi = psi_m + Delta s^2) given as ``weight(s)``.

        With dpsi = psi' dx the integral is int_{psi_m}^{zeta} x(psi) w dpsi, and by parts
        (x(psi_m) = 0, x(zeta) = K) it is K G(zeta) - int_{psi_m}^{zeta} G(psi) / psi' dpsi with
        G(psi) = int_{psi_m}^{psi} w dpsi: two nested one-dimensional quadratures in s (one when G is
        known in closed form, ``primitive(s)``).
        """
        delta = self.zeta - self.midplane

        def big_g(s: float) -> float:
            if primitive is not None:
                return primitive(s)
            return integrate.quad(lambda t: weight(t) * 2.0 * delta * t, 0.0, s, **_QUAD)[0]

        def outer(s: float) -> float:
            return big_g(s) * 2.0 * abs(delta) * s / self._offset_gradient(s)

        return self.half_height * big_g(1.0) - integrate.quad(outer, 0.0, 1.0, **_QUAD)[0]

    def eo_flow(self, viscoelectric: float = 0.0, slip: float = 0.0) -> float:
        """Dimensionless EO flow per half section, int_0^K u dx, for eta = eta_0 (1 + f psi'^2) and Navier slip.

        Derivation: the Stokes equation (eta u')' = -rho_e E with Poisson eps phi'' = -rho_e gives, in the
        units of the module docstring, (eta_hat u')' = psi''; with u' = psi' = 0 on the mid-plane,
        u' = psi' g(psi), g = 1 / (1 + f_hat F(psi)) (f_hat = f (kT / (e lambda_D))^2, here ``viscoelectric``).
        The slip condition at x = K (the inward normal is -x) reads u(K) = -b_hat u'(K) (b_hat = ``slip``,
        in Debye lengths). Integrating by parts, int_0^K u dx = K u(K) - int_0^K x u' dx, and the moment is
        evaluated by ``_moment`` with w = g. f = 0 and b = 0 give int_0^K (psi - zeta) dx, i.e. the closed
        form u = psi - zeta.
        """
        def g(s: float) -> float:
            return 1.0 / (1.0 + viscoelectric * self._offset_gradient(s) ** 2)

        wall_velocity = -slip * self.wall_gradient() * g(1.0)
        delta = self.zeta - self.midplane
        primitive = (lambda s: delta * s * s) if viscoelectric == 0.0 else None  # G = psi - psi_m when g = 1
        return self.half_height * wall_velocity - self._moment(g, primitive)

    def viscoelectric_moment(self, power: int = 3) -> float:
        """J_p = int_0^K x psi'^p dx for odd p (``_moment`` with w = psi'^(p-1) = F^((p-1)/2))."""
        half = (power - 1) // 2
        return self._moment(lambda s: self._offset_gradient(s) ** (2 * half))


def symmetric_slit(zeta: float, half_height: float, nu: float = 0.0) -> SymmetricSlit:
    """Solve K(psi_m) = ``half_height`` for the mid-plane potential (Brent's method on t = psi_m / zeta in
    (0, 1); K decreases from infinity at t = 0 to 0 at t = 1)."""
    if zeta == 0.0:
        return SymmetricSlit(0.0, half_height, nu, 0.0, 0.0)

    def mismatch(t: float) -> float:
        return _half_height(t * zeta, zeta, nu) - half_height

    low = 0.5
    while mismatch(low) < 0.0:
        low *= 0.5
    t = optimize.brentq(mismatch, low, 1.0 - 1e-12, xtol=1e-16, rtol=1e-15, maxiter=500)
    psi_m = t * zeta
    charge = math.copysign(math.sqrt(field_squared(psi_m, zeta - psi_m, nu)), zeta)
    return SymmetricSlit(zeta, half_height, nu, psi_m, charge)


# ------------------------------------------------------------------------------------------------
# Debye-Hueckel slit and plane Poiseuille flow with Navier slip (SI)
# ------------------------------------------------------------------------------------------------


def navier_constants(g0: float, dg0: float, gh: float, dgh: float, height: float, slip_bottom: float,
                     slip_top: float) -> tuple[float, float]:
    """(alpha, beta) of u = g(y) + alpha y + beta on 0 <= y <= H with Navier slip on both walls.

    The inward normal is +y at the bottom and -y at the top, so u(0) = b_0 u'(0) and u(H) = -b_H u'(H):
    beta - b_0 alpha = b_0 g'(0) - g(0) and beta + (H + b_H) alpha = -b_H g'(H) - g(H).
    """
    a = np.array([[-slip_bottom, 1.0], [height + slip_top, 1.0]])
    rhs = np.array([slip_bottom * dg0 - g0, -slip_top * dgh - gh])
    alpha, beta = np.linalg.solve(a, rhs)
    return float(alpha), float(beta)


@dataclass(frozen=True)
class LinearSlitFlow:
    """Debye-Hueckel slit of height H between walls at zeta_0 (y = 0) and zeta_H (y = H), with slip lengths.

    DH potential: phi'' = kappa^2 phi, so phi = [zeta_0 sinh(kappa (H - y)) + zeta_H sinh(kappa y)] / sinh(kappa H).
    EO flow: eta u'' = -rho_e E = eps E phi'' (Poisson), so u = (eps E / eta)(phi + alpha y + beta) with the
    Navier constants of :func:`navier_constants`; for equal walls and equal slip b (alpha = 0) this is
    u = -(eps E / eta)[zeta - phi + b sigma / eps], sigma = eps phi'(H) = eps kappa zeta tanh(kappa H / 2).
    Pressure flow: eta u'' = dp/dx, u = (dp/dx) y^2 / (2 eta) + alpha y + beta.
    """

    height: float
    debye_length: float
    zeta: tuple[float, float]
    slip: tuple[float, float]
    permittivity: float
    viscosity: float

    def potential(self, y: np.ndarray) -> np.ndarray:
        """phi(y), V."""
        kappa, big_h = 1.0 / self.debye_length, self.height
        z0, zh = self.zeta
        return (z0 * np.sinh(kappa * (big_h - y)) + zh * np.sinh(kappa * y)) / math.sinh(kappa * big_h)

    def potential_gradient(self, y: float) -> float:
        """phi'(y), V/m."""
        kappa, big_h = 1.0 / self.debye_length, self.height
        z0, zh = self.zeta
        return kappa * (-z0 * math.cosh(kappa * (big_h - y)) + zh * math.cosh(kappa * y)) / math.sinh(kappa * big_h)

    def wall_charges(self) -> tuple[float, float]:
        """(sigma_0, sigma_H) = eps dphi/dn, n into the wall (-y at the bottom, +y at the top), C/m^2."""
        return (-self.permittivity * self.potential_gradient(0.0),
                self.permittivity * self.potential_gradient(self.height))

    def _eo_constants(self) -> tuple[float, float]:
        z0, zh = self.zeta
        return navier_constants(z0, self.potential_gradient(0.0), zh, self.potential_gradient(self.height),
                                self.height, *self.slip)

    def eo_per_field(self, y: np.ndarray) -> np.ndarray:
        """u_eo / E, m^2/(V s)."""
        alpha, beta = self._eo_constants()
        return self.permittivity / self.viscosity * (self.potential(y) + alpha * y + beta)

    def eo_flow_per_field(self) -> float:
        """Q_eo / E per unit width, m^3/(V s): int phi dy = (zeta_0 + zeta_H) tanh(kappa H / 2) / kappa."""
        alpha, beta = self._eo_constants()
        kappa, big_h = 1.0 / self.debye_length, self.height
        mean = sum(self.zeta) * math.tanh(0.5 * kappa * big_h) / kappa
        return self.permittivity / self.viscosity * (mean + 0.5 * alpha * big_h**2 + beta * big_h)

    def _pressure_constants(self) -> tuple[float, float]:
        big_h = self.height
        # g = y^2 / 2 per unit (dp/dx)/eta
        return navier_constants(0.0, 0.0, 0.5 * big_h**2, big_h, big_h, *self.slip)

    def pressure_per_gradient(self, y: np.ndarray) -> np.ndarray:
        """u_p / (dp/dx), m^2/(Pa s)."""
        alpha, beta = self._pressure_constants()
        return (0.5 * y**2 + alpha * y + beta) / self.viscosity

    def pressure_flow_per_gradient(self) -> float:
        """Q_p / (dp/dx) per unit width, m^3/(Pa s)."""
        alpha, beta = self._pressure_constants()
        big_h = self.height
        return (big_h**3 / 6.0 + 0.5 * alpha * big_h**2 + beta * big_h) / self.viscosity


def poiseuille_slip_flow(pressure_gradient: float, height: float, viscosity: float, slip: float) -> float:
    """Plane Poiseuille flow rate per unit width with equal Navier slip b on both walls, m^2/s.

    eta u'' = dp/dx on -h < y < h, u'(0) = 0: u = (dp/dx)(y^2 - h^2) / (2 eta) + C; at y = h the inward
    normal is -y, so u(h) = -b u'(h) = -b (dp/dx) h / eta = C. Then
    Q = int u dy = -(dp/dx) 2 h^3 / (3 eta) - 2 b h^2 (dp/dx) / eta = -(dp/dx) H^3 / (12 eta) (1 + 6 b / H).
    """
    return -pressure_gradient * height**3 / (12.0 * viscosity) * (1.0 + 6.0 * slip / height)


def dh_viscoelectric_moment(zeta: float, half_height: float, power: int) -> float:
    """J_p = int_0^K x psi'^p dx for the Debye-Hueckel slit psi = zeta cosh x / cosh K, p = 3 or 5 (Debye units).

    psi' = A sinh x, A = zeta / cosh K; sinh^3 = (sinh 3x - 3 sinh x) / 4, sinh^5 = (sinh 5x - 5 sinh 3x
    + 10 sinh x) / 16, and int_0^K x sinh(a x) dx = K cosh(a K) / a - sinh(a K) / a^2.
    """
    k = half_height
    amplitude = zeta / math.cosh(k)

    def moment(a: float) -> float:
        return k * math.cosh(a * k) / a - math.sinh(a * k) / a**2

    if power == 3:
        return amplitude**3 * (moment(3.0) - 3.0 * moment(1.0)) / 4.0
    if power == 5:
        return amplitude**5 * (moment(5.0) - 5.0 * moment(3.0) + 10.0 * moment(1.0)) / 16.0
    raise ValueError(f"power: {power!r}, expected 3 or 5")


def dh_eo_flow(zeta: float, half_height: float, viscoelectric: float = 0.0, slip: float = 0.0) -> float:
    """int_0^K u dx for the Debye-Hueckel slit psi = zeta cosh x / cosh K (Debye units) with eta = eta_0 (1 + f_hat
    psi'^2) and slip b_hat: u' = psi' / (1 + f_hat psi'^2), u(K) = -b_hat u'(K), int_0^K u dx = K u(K) -
    int_0^K x u' dx (as in :meth:`SymmetricSlit.eo_flow`), by scipy quad."""
    amplitude = zeta / math.cosh(half_height)

    def gradient(x: float) -> float:
        slope = amplitude * math.sinh(x)
        return slope / (1.0 + viscoelectric * slope * slope)

    moment = integrate.quad(lambda x: x * gradient(x), 0.0, half_height, **_QUAD)[0]
    return half_height * (-slip * gradient(half_height)) - moment
