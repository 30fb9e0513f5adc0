"""The linear-response (transport) coefficients against published closed forms, limits and relations
derived here.

The package's matrix (``Result.response_matrix``, per unit length; slit values per unit width) relates the
fluxes (Q, I, J_s) to the forces (X_P, E, X_s); ``Result.ion_response_matrix`` does the same ion by ion
(Q, J_i) against (X_P, X_i). Index 0 is the volume flow / solvent force, index 1 the current / field.

Everything here is independent of the package's arithmetic: physical constants come from
``scipy.constants``, the solvent is a plain ``Solvent`` with eps_r = 78.4 and eta = 0.89 mPa s (no
correlations), Debye lengths and bulk conductivities are recomputed, and the reference profiles
(Gouy-Chapman, Debye-Hueckel, the counter-ion-only slit) are integrated here with scipy quadrature or in
closed form.

Identities used throughout (derived once, here)
-----------------------------------------------
With uniform eps and eta and no slip the EO velocity is u_eo = -(eps E / eta)(zeta - psi) (Stokes with
Poisson's rho_e = -eps lap(psi); common practice). Hence, for equal walls:

* M10 = M01 = int u_eo dA / E = -(eps / eta) int (zeta - psi) dA.
* The EO-convection part of the conductance, int rho_e u_eo dA / E = (eps / eta) int eps lap(psi) (zeta - psi)
  dA = (eps^2 / eta) int |grad psi|^2 dA (integration by parts; the boundary term carries zeta - psi = 0 at
  the walls and grad psi = 0 on the axis or mid-plane).
* The conduction part, (F^2 / RT) sum_i z_i^2 D_i int c_i dA (Nernst-Einstein).
* M00 = H^3 / (12 eta) per unit width (plane Poiseuille), pi a^4 / (8 eta) (Hagen-Poiseuille).
"""

from __future__ import annotations

import dataclasses
import itertools
import math
from functools import cache

import numpy as np
import pytest
from scipy import constants
from scipy.integrate import quad
from scipy.optimize import brentq, minimize_scalar
from scipy.special import iv

import edl_solver as edl

TEMPERATURE = 298.15
SOLVENT = edl.Solvent(temperature=TEMPERATURE, relative_permittivity=78.4, viscosity=0.89e-3)
EPS = 78.4 * constants.epsilon_0
ETA = 0.89e-3
VT = constants.k * TEMPERATURE / constants.e  # kT/e, V
FARADAY = constants.e * constants.N_A
RT = constants.R * TEMPERATURE

# infinite-dilution diffusivities, m^2/s (CRC Handbook, from memory; see REFERENCES.md)
D_NA, D_K, D_CA, D_CL = 1.334e-9, 1.957e-9, 0.792e-9, 2.032e-9


# ----------------------------------------------------------------------------------------------------------
# helpers and independent references
# ----------------------------------------------------------------------------------------------------------

def electrolyte(*ions: tuple[str, int, float, float], pH: float | None = None) -> edl.Electrolyte:
    """Electrolyte of explicit (name, valence, concentration mol/m^3, diffusivity m^2/s) ions."""
    return edl.Electrolyte(tuple(edl.Ion(name=n, valence=z, concentration=c, diffusivity=d) for n, z, c, d in ions),
                           pH=pH)


def salt(c: float, d_plus: float = D_K, d_minus: float = D_CL) -> edl.Electrolyte:
    """1:1 salt of concentration c (mol/m^3) with the given diffusivities."""
    return electrolyte(("M+", 1, c, d_plus), ("X-", -1, c, d_minus))


def debye_length(ions: edl.Electrolyte) -> float:
    """lambda_D = sqrt(eps RT / (F^2 sum z^2 c)) (common practice)."""
    return math.sqrt(EPS * RT / (FARADAY**2 * sum(i.valence**2 * i.concentration for i in ions.ions)))


def conductivity(ions: edl.Electrolyte) -> float:
    """Bulk conductivity K = (F^2 / RT) sum z^2 D c, S/m (Nernst-Einstein; common practice)."""
    return FARADAY**2 / RT * sum(i.valence**2 * i.diffusivity * i.concentration for i in ions.ions)


def concentration_for(kappa_h: float, half_size: float, valences: tuple[int, ...], ratios: tuple[float, ...]
                      ) -> float:
    """Scale c of an electrolyte with ion concentrations ratios * c that gives kappa * half_size = kappa_h."""
    debye = half_size / kappa_h
    return EPS * RT / (FARADAY**2 * debye**2 * sum(z * z * r for z, r in zip(valences, ratios)))


def normalised(matrix: np.ndarray) -> np.ndarray:
    """D^-1/2 M D^-1/2, D = |diag M|: the entries of a transport matrix span many decades."""
    size = np.sqrt(np.abs(np.diag(matrix)))
    return matrix / np.outer(size, size)


def asymmetry(matrix: np.ndarray) -> float:
    """max |M_ij - M_ji| / sqrt(|M_ii M_jj|)."""
    scaled = normalised(matrix)
    return float(np.max(np.abs(scaled - scaled.T)))


def relative(a: float, b: float) -> float:
    return abs(a - b) / abs(b)


@cache
def gouy_chapman_moments(zeta_hat: float) -> tuple[float, float, float, float]:
    """Moments of one Gouy-Chapman layer of a 1:1 electrolyte, lengths in lambda_D (Gouy 1910; Chapman 1913):
    psi(s) = 4 artanh(tanh(zeta/4) e^-s) and its first integral psi' = -2 sinh(psi/2).

    Returns int_0^inf of psi, exp(-psi) - 1 (cation excess), exp(psi) - 1 (anion excess) and psi'^2.
    """
    t = math.tanh(zeta_hat / 4.0)

    def psi(s: float) -> float:
        return 4.0 * math.atanh(t * math.exp(-s))

    def integral(f) -> float:
        return quad(f, 0.0, 60.0, epsabs=0.0, epsrel=1e-13, limit=200)[0]

    return (integral(psi), integral(lambda s: math.expm1(-psi(s))), integral(lambda s: math.expm1(psi(s))),
            integral(lambda s: 4.0 * math.sinh(psi(s) / 2.0) ** 2))


def counterion_only_slit(sigma: float, half_height: float, valence: int, diffusivity: float
                         ) -> tuple[float, float, float]:
    """The kappa h -> 0 limit of a slit at fixed wall charge: counter-ions only, exact.

    Derivation (y from the mid-plane, w = z e (phi - phi_m) / kT for counter-ions of valence z): Poisson
    w'' = -(z^2 e^2 N_A c_m / eps kT) e^-w, with c = c_m e^-w. Then w = 2 ln cos(K y) with
    2 K^2 = z^2 e^2 N_A c_m / (eps kT) (check: w'' = -2 K^2 sec^2 = -2 K^2 e^-w), so c = c_m sec^2(K y).
    Charge balance z F int c dy = 2 |sigma| gives z F c_m 2 tan(K h) / K = 2 |sigma|, i.e.
    K h tan(K h) = z e |sigma| h / (2 eps kT) =: beta. (The slit form of the counter-ion-only solution of
    Langmuir and of Engstroem & Wennerstroem 1978, from memory; derived here.)

    * Conduction: (F^2 / RT) z^2 D int c dy = (z F D / RT) 2 |sigma| = 2 mu |sigma|, mu = z e D / kT, whatever
      the profile (the counter-charge per unit width is exactly -2 sigma).
    * EO convection: (eps^2 / eta) int phi'^2 dy = (eps^2 / eta)(kT / z e)^2 int 4 K^2 tan^2(K y) dy
      = (8 eps^2 K / eta)(kT / z e)^2 (tan(K h) - K h).
    * For beta << 1 the charge is uniform, rho = |sigma| / h, the EO profile parabolic, and the convection
      term tends to 2 sigma^2 h / (3 eta) = sigma^2 H / (3 eta) (from (tan x - x) ~ x^3 / 3, x^2 ~ beta).

    Returns
    -------
    conduction, eo_convection (S per unit width), beta
    """
    beta = valence * abs(sigma) * half_height / (2.0 * EPS * VT)
    x = brentq(lambda v: v * math.tan(v) - beta, 0.0, 0.5 * math.pi * (1.0 - 1e-15), xtol=1e-300, rtol=1e-15)
    k = x / half_height
    conduction = 2.0 * abs(sigma) * valence * FARADAY * diffusivity / RT
    convection = 8.0 * EPS**2 * k / ETA * (VT / valence) ** 2 * (math.tan(x) - x)
    return conduction, convection, beta


def counterion_only_profiles(sigma: float, half_height: float, diffusivity: float
                             ) -> tuple[float, float]:
    """Ion-level coefficients of the 1:1 counter-ion-only slit (see ``counterion_only_slit``), per unit width:
    L_+P = int c u_P dy with eta u_P'' = -1, and L_++ = int c u_+ dy + (D / RT) int c dy with eta u_+'' = -c.

    u_P = (h^2 - y^2) / (2 eta); u_+ = (c_m / (eta K^2)) ln(cos K y / cos K h) (check: u_+'' = -(c_m / eta)
    sec^2 K y, u_+(+-h) = 0)."""
    beta = abs(sigma) * half_height / (2.0 * EPS * VT)
    x = brentq(lambda v: v * math.tan(v) - beta, 0.0, 0.5 * math.pi * (1.0 - 1e-15), xtol=1e-300, rtol=1e-15)
    k = x / half_height
    c_m = 2.0 * k * k * EPS * VT / FARADAY

    def conc(y: float) -> float:
        return c_m / math.cos(k * y) ** 2

    def integral(f) -> float:
        return quad(f, -half_height, half_height, epsabs=0.0, epsrel=1e-13)[0]

    l_plus_p = integral(lambda y: conc(y) * (half_height**2 - y * y) / (2.0 * ETA))
    l_plus_plus = integral(lambda y: conc(y) * c_m / (ETA * k * k) * math.log(math.cos(k * y) / math.cos(x))) \
        + diffusivity / RT * integral(conc)
    return l_plus_p, l_plus_plus


# ----------------------------------------------------------------------------------------------------------
# 1. Onsager reciprocity and the second law
# ----------------------------------------------------------------------------------------------------------

KCL = salt(1.0)
STERIC_KCL = edl.Electrolyte(tuple(edl.Ion(name=n, concentration=100.0, diameter=0.7e-9) for n in ("K+", "Cl-")))
RECIPROCITY_CASES = {
    "slit-pb-zeta": lambda: edl.Case(geometry=edl.Slit(height=20e-9), electrolyte=KCL, wall=edl.Wall(zeta=-0.1),
                                     solvent=SOLVENT),
    "capillary-pb-sigma": lambda: edl.Case(geometry=edl.Capillary(radius=10e-9), electrolyte=KCL,
                                           wall=edl.Wall(charge_density=-0.02), solvent=SOLVENT),
    "asymmetric-slit-slip": lambda: edl.Case(
        geometry=edl.Slit(height=20e-9), electrolyte=salt(10.0),
        wall=(edl.Wall(zeta=-0.08, slip_length=2e-9), edl.Wall(charge_density=0.01, slip_length=0.5e-9)),
        solvent=SOLVENT),
    "slit-dh-cacl2": lambda: edl.Case(geometry=edl.Slit(height=15e-9),
                                      electrolyte=electrolyte(("Ca2+", 2, 1.0, D_CA), ("Cl-", -1, 2.0, D_CL)),
                                      wall=edl.Wall(zeta=-0.01), solvent=SOLVENT, model="dh"),
    "capillary-dh-sigma": lambda: edl.Case(geometry=edl.Capillary(radius=6e-9), electrolyte=KCL,
                                           wall=edl.Wall(charge_density=-2e-4), solvent=SOLVENT, model="dh"),
    "slit-steric": lambda: edl.Case(geometry=edl.Slit(height=10e-9), electrolyte=STERIC_KCL,
                                    wall=edl.Wall(zeta=-0.2), solvent=SOLVENT, model="steric"),
    "capillary-silica-slip": lambda: edl.Case(geometry=edl.Capillary(radius=8e-9),
                                              electrolyte=edl.Electrolyte.from_ions({"K+": 1, "Cl-": 1}, pH=7),
                                              wall=edl.Wall.silica(slip_length=1e-9), solvent=SOLVENT),
    "slit-silica-cacl2": lambda: edl.Case(geometry=edl.Slit(height=12e-9),
                                          electrolyte=edl.Electrolyte.from_ions({"Ca2+": 0.5, "Cl-": 1}, pH=7),
                                          wall=edl.Wall.silica(), solvent=SOLVENT),
    "slit-viscoelectric": lambda: edl.Case(geometry=edl.Slit(height=10e-9),
                                           electrolyte=edl.Electrolyte.from_ions({"K+": 100, "Cl-": 100}),
                                           wall=edl.Wall(zeta=-0.12), solvent=edl.Water(viscoelectric=True)),
    "asymmetric-viscoelectric-slip": lambda: edl.Case(
        geometry=edl.Slit(height=8e-9), electrolyte=edl.Electrolyte.from_ions({"K+": 50, "Cl-": 50}),
        wall=(edl.Wall(charge_density=-0.05, slip_length=1e-9), edl.Wall(zeta=-0.02)),
        solvent=edl.Water(viscoelectric=True)),
    "capillary-three-ions": lambda: edl.Case(
        geometry=edl.Capillary(radius=12e-9),
        electrolyte=electrolyte(("K+", 1, 1.0, D_K), ("Ca2+", 2, 0.5, D_CA), ("Cl-", -1, 2.0, D_CL)),
        wall=edl.Wall(charge_density=-0.03), solvent=SOLVENT),
    "slit-three-ions-dh": lambda: edl.Case(
        geometry=edl.Slit(height=9e-9),
        electrolyte=electrolyte(("Na+", 1, 2.0, D_NA), ("Ca2+", 2, 1.0, D_CA), ("Cl-", -1, 4.0, D_CL)),
        wall=edl.Wall(zeta=0.008), solvent=SOLVENT, model="dh"),
}


@pytest.mark.parametrize("name", list(RECIPROCITY_CASES))
def test_onsager_reciprocity_and_second_law(name: str) -> None:
    """Onsager (1931): both matrices are symmetric; second law (common practice): the dissipation
    Q X_P + sum_i J_i X_i = X^T L X is positive for every nonzero force, so L is positive definite.

    The 3 x 3 matrix follows from the ion matrix by the forces of a field and a salt gradient at fixed
    composition: X_i = z_i F E + X_s / sum(nu) (X_i = -d mu~_i/dx, mu_s = sum nu_i mu_i), with the conjugate
    fluxes I = F sum z_i J_i and J_s = sum J_i / sum(nu); hence M = B^T L B with B built here from the
    valences and the stoichiometry nu_i = c_i / min c. B has full column rank for these electrolytes, so M is
    positive definite too."""
    field, gradient = 1e4, -1e5
    case = dataclasses.replace(RECIPROCITY_CASES[name](), field=field, pressure_gradient=gradient)
    result = edl.solve(case)
    ion_matrix, matrix = result.ion_response_matrix, result.response_matrix
    n = len(case.electrolyte.ions)
    assert ion_matrix.shape == (n + 1, n + 1) and matrix.shape == (3, 3)
    assert result.summary["reciprocity_residual"] <= 1e-8
    assert asymmetry(ion_matrix) <= 1e-8
    assert asymmetry(matrix) <= 1e-8
    for m in (ion_matrix, matrix):
        symmetric = normalised(0.5 * (m + m.T))
        np.linalg.cholesky(symmetric)  # raises LinAlgError unless positive definite
        assert np.linalg.eigvalsh(symmetric).min() > 1e-10
    # the reduced matrix is the projection of the ion matrix on (X_P, E, X_s)
    valence = np.array([ion.valence for ion in case.electrolyte.ions], dtype=float)
    bulk = np.array([ion.concentration for ion in case.electrolyte.ions])
    basis = np.zeros((n + 1, 3))
    basis[0, 0] = 1.0
    basis[1:, 1] = valence * FARADAY
    basis[1:, 2] = 1.0 / np.sum(bulk / bulk.min())
    projected = basis.T @ ion_matrix @ basis
    size = np.sqrt(np.outer(np.diag(matrix), np.diag(matrix)))
    assert np.max(np.abs(projected - matrix) / size) <= 1e-10
    # the matrix against the flows and currents of the case's own drives (a separate path in the package: the
    # EO flow there is solved with the charge density as body force, not summed over the ions)
    s = result.summary
    assert s["flow_rate_eo"] == pytest.approx(matrix[0, 1] * field, rel=1e-8)
    assert s["flow_rate_pressure"] == pytest.approx(matrix[0, 0] * -gradient, rel=1e-8)
    assert s["streaming_current"] == pytest.approx(matrix[1, 0] * -gradient, rel=1e-8)
    assert s["current_per_field"] == pytest.approx(matrix[1, 1], rel=1e-8)
    assert s["conduction_current"] + s["eo_convection_current"] == pytest.approx(matrix[1, 1] * field, rel=1e-8)


# ----------------------------------------------------------------------------------------------------------
# 2. Thin-layer limits (kappa h >= 500)
# ----------------------------------------------------------------------------------------------------------

THIN_ZETA = -0.05
THIN_SALT = salt(10.0, D_NA, D_CL)  # NaCl: its bulk diffusion potential is large enough to compare against


@cache
def thin_case(kappa_h: int) -> tuple[edl.Case, edl.Result]:
    height = 2.0 * kappa_h * debye_length(THIN_SALT)
    case = edl.Case(geometry=edl.Slit(height=height), electrolyte=THIN_SALT, wall=edl.Wall(zeta=THIN_ZETA),
                    solvent=SOLVENT)
    return case, edl.solve(case)


def wide_slit_matrix(height: float, zeta: float, ions: edl.Electrolyte) -> tuple[float, float, float]:
    """(M00, M10, M11) of a symmetric slit whose two Gouy-Chapman layers do not overlap (1:1 electrolyte).

    Derivation (per unit width, corrections exp(-kappa h) only, since a plane layer has no curvature):
    M00 = H^3 / (12 eta); M10 = -(eps / eta)(zeta H - 2 lambda (kT/e) m_psi); M11 = K H
    + (F^2 / RT) c 2 lambda (D+ m+ + D- m-) + 2 (eps^2 / eta)(kT/e)^2 m_E / lambda, with the layer moments
    m of ``gouy_chapman_moments`` (conduction excess of each ion, and the EO-convection identity of the
    module docstring, once per wall).
    """
    cation, anion = sorted(ions.ions, key=lambda i: -i.valence)
    debye = debye_length(ions)
    m_psi, m_plus, m_minus, m_field = gouy_chapman_moments(zeta / VT)
    m00 = height**3 / (12.0 * ETA)
    m10 = -(EPS / ETA) * (zeta * height - 2.0 * debye * VT * m_psi)
    m11 = (conductivity(ions) * height
           + FARADAY**2 / RT * cation.concentration * 2.0 * debye * (cation.diffusivity * m_plus
                                                                    + anion.diffusivity * m_minus)
           + 2.0 * EPS**2 / ETA * VT**2 * m_field / debye)
    return m00, m10, m11


def test_gouy_chapman_moments_closed_forms() -> None:
    """The reference moments against their closed forms: excess int (e^-+psi - 1) = 2 (e^-+zeta/2 - 1) and
    int psi'^2 = 8 sinh^2(zeta/4) (from the first integral psi' = -2 sinh(psi/2); derived: substitute
    ds = dpsi / psi'); guards the reference used below."""
    for zeta_hat in (-6.0, -1.9, 0.7):
        _, m_plus, m_minus, m_field = gouy_chapman_moments(zeta_hat)
        assert m_plus == pytest.approx(2.0 * math.expm1(-zeta_hat / 2.0), rel=1e-11)
        assert m_minus == pytest.approx(2.0 * math.expm1(zeta_hat / 2.0), rel=1e-11)
        assert m_field == pytest.approx(8.0 * math.sinh(zeta_hat / 4.0) ** 2, rel=1e-11)


@pytest.mark.parametrize("kappa_h", [500, 1000])
def test_thin_layer_limit_smoluchowski_conductance_and_pump(kappa_h: int) -> None:
    """At kappa h = 500 and 1000 (h = H/2):

    * Smoluchowski streaming potential dV/dp = eps zeta / (eta K), K the bulk conductivity (REFERENCES:
      Smoluchowski 1903), to ~1/kappa h: the relative deviation is bounded by 5 / kappa h;
    * conductance per length -> K H, also to ~1/kappa h (surface conduction and EO convection);
    * EO pump pressure per voltage -> the thin-layer value -12 eps zeta / H^2 (plug flow over Poiseuille);
    * each full value equals the exact wide-slit form (``wide_slit_matrix``) to the solver's stated 1e-6;
    * the package's thin-layer values are the closed forms themselves.
    """
    case, result = thin_case(kappa_h)
    s, m = result.summary, result.response_matrix
    height = case.geometry.height
    assert s["kappa_h"] == pytest.approx(kappa_h, rel=1e-9)
    k_bulk = conductivity(THIN_SALT)
    smoluchowski = EPS * THIN_ZETA / (ETA * k_bulk)
    pump = -12.0 * EPS * THIN_ZETA / height**2
    m00, m10, m11 = wide_slit_matrix(height, THIN_ZETA, THIN_SALT)
    # full solution -> thin-layer values, with deviations O(1/kappa h)
    assert relative(s["streaming_potential_coefficient"], smoluchowski) < 5.0 / kappa_h
    assert relative(s["conductance_per_length"], k_bulk * height) < 5.0 / kappa_h
    assert relative(s["eo_pump_pressure_per_voltage"], pump) < 5.0 / kappa_h
    # ... and exactly the wide-slit forms (Gouy-Chapman layers)
    assert m[0, 0] == pytest.approx(m00, rel=1e-6)
    assert m[1, 0] == pytest.approx(m10, rel=1e-6)
    assert m[1, 1] == pytest.approx(m11, rel=1e-6)
    assert s["streaming_potential_coefficient"] == pytest.approx(-m10 / m11, rel=1e-6)
    assert s["eo_pump_pressure_per_voltage"] == pytest.approx(m10 / m00, rel=1e-6)
    # the package's thin-layer counterparts
    assert s["thin_layer_streaming_potential_coefficient"] == pytest.approx(smoluchowski, rel=1e-10)
    assert s["thin_layer_conductance_per_length"] == pytest.approx(k_bulk * height, rel=1e-10)
    assert s["thin_layer_eo_pump_pressure_per_voltage"] == pytest.approx(pump, rel=1e-10)
    # Henderson value of the thin-layer diffusion potential (see test 7)
    assert s["thin_layer_diffusion_potential"] == pytest.approx(-VT * (D_NA - D_CL) / (D_NA + D_CL), rel=1e-10)


THIN_ERRORS = ("conductance_per_length", "streaming_potential_coefficient", "eo_pump_pressure_per_voltage",
               "diffusioosmotic_flow", "diffusion_potential", "cation_transference", "max_efficiency")


def test_thin_layer_errors_fall_as_one_over_kappa_h() -> None:
    """The thin-layer model is the leading term of a matched expansion in 1/kappa h (common practice), so
    its relative errors fall as 1/kappa h: doubling kappa h from 500 to 1000 halves them (within 2 %; the
    next term is O(1/kappa h) relative). The electroviscous ratio is special: 1/(1 - q^2) - 1 ~ q^2 is
    itself O(1/kappa h^2) and the thin-layer q^2 is off by O(1/kappa h) relative, so its error falls as
    1/kappa h^3 (factor 8). The errors of the three coefficients with exact wide-slit forms are checked
    against those forms too."""
    _, small = thin_case(500)
    case, large = thin_case(1000)
    for key in THIN_ERRORS:
        e500 = small.summary[f"thin_layer_{key}_error"]
        e1000 = large.summary[f"thin_layer_{key}_error"]
        assert abs(e500) < 0.1 and abs(e1000) < 0.05, key
        assert e500 / e1000 == pytest.approx(2.0, rel=0.02), key
    ratio = (small.summary["thin_layer_electroviscous_ratio_error"]
             / large.summary["thin_layer_electroviscous_ratio_error"])
    assert ratio == pytest.approx(8.0, rel=0.02)
    _, m10, m11 = wide_slit_matrix(case.geometry.height, THIN_ZETA, THIN_SALT)
    thin_m10 = -EPS * THIN_ZETA * case.geometry.height / ETA
    thin_m11 = conductivity(THIN_SALT) * case.geometry.height
    s = large.summary
    assert s["thin_layer_conductance_per_length_error"] == pytest.approx(thin_m11 / m11 - 1.0, rel=1e-5)
    assert s["thin_layer_eo_pump_pressure_per_voltage_error"] == pytest.approx(thin_m10 / m10 - 1.0, rel=1e-5)
    assert s["thin_layer_streaming_potential_coefficient_error"] == pytest.approx(
        (thin_m10 / thin_m11) / (m10 / m11) - 1.0, rel=1e-5)


# ----------------------------------------------------------------------------------------------------------
# 3. Strong overlap: the conductance plateau
# ----------------------------------------------------------------------------------------------------------

def overlap_case(sigma: float, half_height: float, kappa_h: float, divalent: bool = False) -> edl.Case:
    if divalent:  # CaCl2, Ca2+ the counter-ion of a negative wall
        c = concentration_for(kappa_h, half_height, (2, -1), (1.0, 2.0))
        ions = electrolyte(("Ca2+", 2, c, D_CA), ("Cl-", -1, 2.0 * c, D_CL))
    else:
        c = concentration_for(kappa_h, half_height, (1, -1), (1.0, 1.0))
        ions = salt(c)
    return edl.Case(geometry=edl.Slit(height=2.0 * half_height), electrolyte=ions,
                    wall=edl.Wall(charge_density=sigma), solvent=SOLVENT)


@pytest.mark.parametrize(("sigma", "half_height", "divalent"), [
    (-1e-3, 5e-9, False),  # beta = 0.14: nearly uniform counter-ions
    (-0.05, 5e-9, False),  # beta = 7: counter-ions piled at the walls, EO convection ~ 40 % of G
    (-1e-3, 5e-9, True),
    (-0.05, 5e-9, True),
])
def test_overlap_limit_is_counterion_only_slit(sigma: float, half_height: float, divalent: bool) -> None:
    """kappa h = 0.01 at fixed sigma: G L per unit width = 2 mu |sigma| + (8 eps^2 K / eta)(kT/ze)^2
    (tan Kh - Kh) (``counterion_only_slit``, derived there), mu = z e D / kT of the counter-ion.

    Co-ions are the only neglected term: with c_bar = 2 |sigma| / (z F H) the mean counter-ion
    concentration, the co-ions are ~c0^2 / c_bar, a relative share ~(c0 / c_bar)^2 < 1e-5 here, so
    1e-4 is asserted."""
    case = overlap_case(sigma, half_height, 0.01, divalent)
    result = edl.solve(case)
    assert result.summary["kappa_h"] == pytest.approx(0.01, rel=1e-9)
    z, diffusivity = (2, D_CA) if divalent else (1, D_K)
    conduction, convection, _ = counterion_only_slit(sigma, half_height, z, diffusivity)
    c_bar = 2.0 * abs(sigma) / (z * FARADAY * 2.0 * half_height)
    assert (max(i.concentration for i in case.electrolyte.ions) / c_bar) ** 2 < 1e-5
    assert result.summary["conductance_per_length"] == pytest.approx(conduction + convection, rel=1e-4)
    # the counter-charge per unit width is exactly -2 sigma (charge balance): the conduction part alone
    assert result.summary["wall_charge_density"] == pytest.approx(sigma, rel=1e-8)


def test_overlap_uniform_charge_closed_form() -> None:
    """Small beta = e |sigma| h / (2 eps kT) (= 0.014 here): the counter-charge is uniform, rho = |sigma| / h,
    the EO flow parabolic, and G L = 2 mu |sigma| + sigma^2 H / (3 eta) per unit width (derived in
    ``counterion_only_slit``): within 1e-3 at kappa h = 0.01, as asked; and 2 mu |sigma| alone misses the
    convection share (~2.4e-3 here), so the EO term is really checked."""
    sigma, half_height = -2e-4, 2.5e-9
    result = edl.solve(overlap_case(sigma, half_height, 0.01))
    mobility = constants.e * D_K / (constants.k * TEMPERATURE)
    conduction = 2.0 * mobility * abs(sigma)
    uniform = conduction + sigma**2 * 2.0 * half_height / (3.0 * ETA)
    conductance = result.summary["conductance_per_length"]
    assert conductance == pytest.approx(uniform, rel=1e-3)
    assert relative(conductance, conduction) > 2e-3


STEIN_CONCENTRATIONS = (1e-3, 1e-2, 1e-1, 1.0, 10.0, 100.0, 1000.0)  # mol/m^3 = mM


def test_stein_conductance_plateau_and_bulk_line() -> None:
    """Stein, Kruithof & Dekker 2004 (Phys. Rev. Lett. 93, 035901, from memory): the conductance of a
    charged nanochannel follows the bulk line K H at high concentration and levels off at low concentration
    at a plateau set by the wall charge. Slit H = 100 nm, sigma = -10 mC/m^2, KCl 1e-3 ... 1e3 mM.

    Checks: G rises monotonically with c; at 1e-3 mM G equals the counter-ion-only plateau (test above)
    to 1e-4 and barely changes over the lowest decade (log-log slope < 1e-3); at 1e3 mM G / (K H) - 1 < 1e-3
    and the slope over the highest decade is 1 within 1 %; G >= 2 mu |sigma| always (conduction of the
    excess counter-ions alone, plus positive co-ion and convection terms)."""
    sigma, half_height = -0.01, 50e-9
    conductances, bulk = [], []
    for c in STEIN_CONCENTRATIONS:
        ions = salt(c)
        case = edl.Case(geometry=edl.Slit(height=2.0 * half_height), electrolyte=ions,
                        wall=edl.Wall(charge_density=sigma), solvent=SOLVENT)
        conductances.append(edl.solve(case).summary["conductance_per_length"])
        bulk.append(conductivity(ions) * 2.0 * half_height)
    g = np.array(conductances)
    conduction, convection, _ = counterion_only_slit(sigma, half_height, 1, D_K)
    assert np.all(np.diff(g) > 0)
    assert np.all(g >= conduction)
    assert g[0] == pytest.approx(conduction + convection, rel=1e-4)
    slope = np.diff(np.log(g)) / np.diff(np.log(STEIN_CONCENTRATIONS))
    assert abs(slope[0]) < 1e-3
    assert slope[-1] == pytest.approx(1.0, rel=0.01)
    assert g[-1] == pytest.approx(bulk[-1], rel=1e-3)
    assert g[0] > 1e3 * bulk[0]  # far above the bulk line where the wall charge governs


# ----------------------------------------------------------------------------------------------------------
# 4. Debye-Hueckel closed forms: Rice & Whitehead (capillary) and the slit analogue
# ----------------------------------------------------------------------------------------------------------

def dh_forms(geometry: str, kr: float, zeta: float, ions: edl.Electrolyte, size: float
             ) -> dict[str, float]:
    """The space-charge coefficients of the Debye-Hueckel model (c_i = c_i0 (1 - z_i e psi / kT)), exact.

    Capillary of radius a, X = kappa a, psi = zeta I0(kappa r) / I0(X) (Rice & Whitehead 1965, J. Phys.
    Chem. 69, 4017):
      mean psi / zeta = 2 I1 / (X I0) =: 1 - f, so M10 = -(eps zeta pi a^2 / eta) f;
      int |grad psi|^2 dA = zeta^2 kappa^2 (2 pi / kappa^2 I0^2) int_0^X x I1^2 dx
      = pi a^2 kappa^2 zeta^2 g, g = (I1/I0)^2 + 2 I1 / (X I0) - 1
      (from int x I1^2 dx = (x^2/2)(I1^2 - I0 I2) and I2 = I0 - 2 I1 / x; checked by quadrature below).
    Slit of half-height h, X = kappa h, psi = zeta cosh(kappa y) / cosh X (Burgreen & Nakache 1964):
      mean psi / zeta = tanh X / X, f = 1 - tanh X / X; int psi'^2 dy = H kappa^2 zeta^2 g,
      g = (tanh X / X - sech^2 X) / 2.
    Then M11 = K A (1 + b g) - (F^2 / RT)(sum z^3 D c) zeta_hat A (1 - f) with b = eps^2 kappa^2 zeta^2 /
    (eta K) (the linear conduction term vanishes for a symmetric salt with equal D), and q^2 =
    M10^2 / (M00 M11). For the capillary with equal D this is Rice & Whitehead's result as recalled (from
    memory): dV/dp = (eps zeta / eta K) f / (1 + b g) -- their denominator 1 - b (1 - 2 I1/(X I0)
    - I1^2/I0^2) is 1 + b g -- and the apparent viscosity eta_a / eta = 1 / (1 - 8 b f^2 / (X^2 (1 + b g))),
    which is 1 / (1 - q^2) with M00 = pi a^4 / (8 eta).
    """
    debye = debye_length(ions)
    x = size / debye
    kappa = 1.0 / debye
    k_bulk = conductivity(ions)
    b = EPS**2 * kappa**2 * zeta**2 / (ETA * k_bulk)
    if geometry == "capillary":
        area = math.pi * size**2
        ratio = iv(1, x) / iv(0, x)
        mean = 2.0 * ratio / x
        g = ratio**2 + 2.0 * ratio / x - 1.0
        m00 = math.pi * size**4 / (8.0 * ETA)
        field2 = 2.0 * math.pi * quad(lambda r: (zeta * kappa * iv(1, kappa * r) / iv(0, x)) ** 2 * r,
                                      0.0, size, epsabs=0.0, epsrel=1e-12)[0]
    else:
        area = 2.0 * size
        th = math.tanh(x)
        mean = th / x
        g = 0.5 * (th / x - 1.0 / math.cosh(x) ** 2)
        m00 = area**3 / (12.0 * ETA)
        field2 = quad(lambda y: (zeta * kappa * math.sinh(kappa * y) / math.cosh(x)) ** 2, -size, size,
                      epsabs=0.0, epsrel=1e-12)[0]
    assert field2 == pytest.approx(area * kappa**2 * zeta**2 * g, rel=1e-9)  # guards the closed form of g
    f = 1.0 - mean
    odd = sum(i.valence**3 * i.diffusivity * i.concentration for i in ions.ions)
    m10 = -EPS * zeta * area / ETA * f
    m11 = k_bulk * area * (1.0 + b * g) - FARADAY**2 / RT * odd * (zeta / VT) * area * mean
    q2 = m10**2 / (m00 * m11)
    return {"m00": m00, "m10": m10, "m11": m11, "q2": q2, "area": area, "b": b, "g": g, "f": f, "x": x}


@pytest.mark.parametrize("geometry", ["capillary", "slit"])
@pytest.mark.parametrize("kappa_size", [0.5, 2.0, 8.0])
@pytest.mark.parametrize("equal_d", [True, False])
def test_debye_hueckel_streaming_and_electroviscous_closed_forms(geometry: str, kappa_size: float,
                                                                 equal_d: bool) -> None:
    """model="dh", zeta = -10 mV: coupling M10 (and the streaming-potential coefficient) to 1e-6, the
    electroviscous ratio - 1 = q^2 / (1 - q^2) to 1e-5, against ``dh_forms`` (Rice & Whitehead 1965 for the
    capillary; the slit analogue with tanh(kappa h)/(kappa h) derived there). equal_d=False uses KCl, whose
    conduction has the O(zeta) term of the linearised concentrations."""
    zeta = -0.01
    ions = salt(1.0, 2.0e-9, 2.0e-9) if equal_d else salt(1.0, D_K, D_CL)
    size = kappa_size * debye_length(ions)
    shape = edl.Capillary(radius=size) if geometry == "capillary" else edl.Slit(height=2.0 * size)
    result = edl.solve(edl.Case(geometry=shape, electrolyte=ions, wall=edl.Wall(zeta=zeta), solvent=SOLVENT,
                                model="dh"))
    ref = dh_forms(geometry, kappa_size, zeta, ions, size)
    m, s = result.response_matrix, result.summary
    assert ref["x"] == pytest.approx(kappa_size, rel=1e-12)
    assert m[0, 0] == pytest.approx(ref["m00"], rel=1e-8)
    assert m[1, 0] == pytest.approx(ref["m10"], rel=1e-6)
    assert s["eo_pump_flow_per_field"] == pytest.approx(ref["m10"], rel=1e-6)
    assert s["streaming_potential_coefficient"] == pytest.approx(-ref["m10"] / ref["m11"], rel=1e-6)
    assert s["electroviscous_ratio"] - 1.0 == pytest.approx(ref["q2"] / (1.0 - ref["q2"]), rel=1e-5)
    if geometry == "capillary" and equal_d:  # Rice & Whitehead's printed forms, as recalled
        k_bulk = conductivity(ions)
        rw_streaming = EPS * zeta / (ETA * k_bulk) * ref["f"] / (1.0 + ref["b"] * ref["g"])
        rw_viscosity = 1.0 / (1.0 - 8.0 * ref["b"] * ref["f"] ** 2 / (kappa_size**2 * (1.0 + ref["b"] * ref["g"])))
        assert s["streaming_potential_coefficient"] == pytest.approx(rw_streaming, rel=1e-6)
        assert s["electroviscous_ratio"] - 1.0 == pytest.approx(rw_viscosity - 1.0, rel=1e-5)


@pytest.mark.parametrize("geometry", ["capillary", "slit"])
def test_poisson_boltzmann_small_zeta_adds_surface_conduction(geometry: str) -> None:
    """The full (PB) space-charge model to O(zeta^2): the coupling is the DH one (+O(zeta^3)), but the
    conduction gains the excess (F^2 / RT) sum z^4 D c int psi_hat^2 / 2 dA from exp(-z psi) = 1 - z psi
    + z^2 psi^2 / 2 (derived here; Rice & Whitehead's bulk conductivity and the package's "dh" model drop
    it). For equal D this is (K / 2) int psi_hat^2 dA, with int psi_hat^2 dA = zeta_hat^2 pi a^2 (1 - I1^2/I0^2)
    (capillary; int x I0^2 dx = (x^2/2)(I0^2 - I1^2)) and zeta_hat^2 (H/2)(sech^2 X + tanh X / X) (slit).
    At kappa a = 2 it is 3 to 5 times the EO-convection term b g, so the check tells the two forms apart.
    zeta_hat = -0.02: relative agreement of M11 / (K A) - 1 and of q^2 to a few zeta_hat^2."""
    zeta = -0.02 * VT
    ions = salt(1.0, 2.0e-9, 2.0e-9)
    x = 2.0
    size = x * debye_length(ions)
    shape = edl.Capillary(radius=size) if geometry == "capillary" else edl.Slit(height=2.0 * size)
    result = edl.solve(edl.Case(geometry=shape, electrolyte=ions, wall=edl.Wall(zeta=zeta), solvent=SOLVENT))
    ref = dh_forms(geometry, x, zeta, ions, size)
    zeta_hat = zeta / VT
    if geometry == "capillary":
        psi2 = zeta_hat**2 * (1.0 - (iv(1, x) / iv(0, x)) ** 2)  # per unit area
    else:
        psi2 = zeta_hat**2 * 0.5 * (1.0 / math.cosh(x) ** 2 + math.tanh(x) / x)
    k_area = conductivity(ions) * ref["area"]
    excess = ref["b"] * ref["g"] + 0.5 * psi2
    m = result.response_matrix
    assert m[1, 1] / k_area - 1.0 == pytest.approx(excess, rel=3 * zeta_hat**2)
    assert abs(m[1, 1] / k_area - 1.0 - ref["b"] * ref["g"]) > 0.5 * excess  # DH alone would fail
    assert m[1, 0] == pytest.approx(ref["m10"], rel=zeta_hat**2)
    q2 = ref["m10"] ** 2 / (ref["m00"] * k_area * (1.0 + excess))
    assert result.summary["electroviscous_ratio"] - 1.0 == pytest.approx(q2 / (1.0 - q2), rel=3 * zeta_hat**2)


# ----------------------------------------------------------------------------------------------------------
# 5. Energy conversion
# ----------------------------------------------------------------------------------------------------------

CONVERSION_CASES = {
    "overlapped-slit": lambda: edl.Case(geometry=edl.Slit(height=10e-9), electrolyte=salt(1.0),
                                        wall=edl.Wall(charge_density=-0.02), solvent=SOLVENT,
                                        pressure_gradient=-1e6),
    "capillary-silica": lambda: edl.Case(geometry=edl.Capillary(radius=15e-9),
                                         electrolyte=edl.Electrolyte.from_ions({"K+": 0.3, "Cl-": 0.3}, pH=7),
                                         wall=edl.Wall.silica(), solvent=SOLVENT, pressure_gradient=3e5),
    "wide-slit-slip": lambda: edl.Case(geometry=edl.Slit(height=100e-9), electrolyte=salt(10.0),
                                       wall=edl.Wall(charge_density=-0.05, slip_length=5e-9), solvent=SOLVENT,
                                       pressure_gradient=-2e5),
}


@pytest.mark.parametrize("name", list(CONVERSION_CASES))
def test_energy_conversion_by_direct_load_optimisation(name: str) -> None:
    """Pressure-driven flow powering an electrical load (linear irreversible thermodynamics, Kedem & Caplan
    1965, from memory; van der Heyden et al. 2007, Nano Lett. 7, 1022, from memory): with the (Q, I) vs
    (X_P, E) block, Q = M00 X_P + M01 E and I = M10 X_P + M11 E; the load sets r = E / X_P and the
    efficiency is output over input power, -I E / (Q X_P) = -(M10 + M11 r) r / (M00 + M01 r), positive for r
    between 0 and -M10 / M11 (open circuit). Maximised numerically here, it must equal ``max_efficiency``.
    The output power -I E = -(M10 + M11 r) r X_P^2 is maximal where its derivative vanishes (found by a
    root search), with X_P = -dp/dx of the case: it must equal ``max_power_per_length``, and the efficiency
    there ``efficiency_at_max_power``."""
    case = CONVERSION_CASES[name]()
    result = edl.solve(case)
    m = result.response_matrix
    m00, m01, m10, m11 = m[0, 0], m[0, 1], m[1, 0], m[1, 1]
    s = result.summary

    def efficiency(r: float) -> float:
        return -(m10 + m11 * r) * r / (m00 + m01 * r)

    open_circuit = -m10 / m11
    lo, hi = sorted((0.0, open_circuit))
    best = minimize_scalar(lambda r: -efficiency(r), bounds=(lo, hi), method="bounded",
                           options={"xatol": 1e-14 * abs(open_circuit)})
    assert best.success
    assert efficiency(best.x) == pytest.approx(s["max_efficiency"], rel=1e-8)
    assert 1e-4 < s["max_efficiency"] < 1.0  # a real conversion, below the second-law bound
    x_p = -case.pressure_gradient
    load = brentq(lambda r: -(m10 + 2.0 * m11 * r), lo, hi, xtol=1e-300, rtol=1e-15)  # d(power)/dr = 0
    power = -(m10 + m11 * load) * load * x_p**2
    assert power == pytest.approx(s["max_power_per_length"], rel=1e-8)
    assert efficiency(load) == pytest.approx(s["efficiency_at_max_power"], rel=1e-8)
    # no other load gives more power
    for r in np.linspace(lo, hi, 41):
        assert -(m10 + m11 * r) * r * x_p**2 <= power * (1.0 + 1e-12)


# ----------------------------------------------------------------------------------------------------------
# 6. Transference
# ----------------------------------------------------------------------------------------------------------

BULK_ELECTROLYTES = {
    "NaCl": lambda: electrolyte(("Na+", 1, 10.0, D_NA), ("Cl-", -1, 10.0, D_CL)),
    "CaCl2": lambda: electrolyte(("Ca2+", 2, 10.0, D_CA), ("Cl-", -1, 20.0, D_CL)),
    "KCl+CaCl2": lambda: electrolyte(("K+", 1, 5.0, D_K), ("Ca2+", 2, 1.0, D_CA), ("Cl-", -1, 7.0, D_CL)),
}


def uncharged(ions: edl.Electrolyte, geometry: str = "slit") -> edl.Result:
    shape = edl.Slit(height=200e-9) if geometry == "slit" else edl.Capillary(radius=100e-9)
    return edl.solve(edl.Case(geometry=shape, electrolyte=ions, wall=edl.Wall(zeta=0.0), solvent=SOLVENT))


@pytest.mark.parametrize("geometry", ["slit", "capillary"])
@pytest.mark.parametrize("name", list(BULK_ELECTROLYTES))
def test_transference_in_uncharged_channel_is_bulk(name: str, geometry: str) -> None:
    """Uncharged wide channel: t+ = sum_cations z^2 D c / sum z^2 D c (Hittorf transference of the bulk;
    common practice), to 1e-6 (e.g. NaCl 0.396); the selectivity is 2 t+ - 1."""
    ions = BULK_ELECTROLYTES[name]()
    s = uncharged(ions, geometry).summary
    weights = [(i.valence, i.valence**2 * i.diffusivity * i.concentration) for i in ions.ions]
    t_plus = sum(w for z, w in weights if z > 0) / sum(w for _, w in weights)
    assert s["cation_transference"] == pytest.approx(t_plus, rel=1e-6)
    assert s["selectivity"] == pytest.approx(2.0 * t_plus - 1.0, rel=1e-6)
    if name == "NaCl":
        assert s["cation_transference"] == pytest.approx(0.396, abs=1e-3)


def test_transference_tends_to_one_in_overlapped_charged_channel() -> None:
    """Slit H = 4 nm, sigma = -50 mC/m^2, KCl 10 ... 0.01 mM (kappa h 0.66 ... 0.02): the co-ions are excluded
    (Donnan), t+ -> 1 and the selectivity -> 1. The co-ion concentration goes as c0^2 / c_bar (c_bar the
    mean counter-ion concentration, fixed by sigma), so 1 - t+ falls 100-fold per decade of c0 (derived:
    Donnan c+ c- = c0^2 with c+ ~ c_bar)."""
    deficits = []
    for c in (10.0, 1.0, 0.1, 0.01):
        s = edl.solve(edl.Case(geometry=edl.Slit(height=4e-9), electrolyte=salt(c),
                               wall=edl.Wall(charge_density=-0.05), solvent=SOLVENT)).summary
        assert 0.0 < 1.0 - s["cation_transference"] < 0.01
        assert s["selectivity"] == pytest.approx(2.0 * s["cation_transference"] - 1.0, abs=1e-14)
        deficits.append(1.0 - s["cation_transference"])
    assert deficits[-1] < 1e-8
    for a, b in itertools.pairwise(deficits[1:]):
        assert a / b == pytest.approx(100.0, rel=0.01)


# ----------------------------------------------------------------------------------------------------------
# 7. Diffusion potential
# ----------------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("name", list(BULK_ELECTROLYTES))
def test_diffusion_potential_of_uncharged_channel_is_henderson(name: str) -> None:
    """Uncharged channel, zero current and no pressure difference (``_summary.lab_quantities``): with
    g = d ln c/dx at fixed composition each ion feels X_i = -RT g + z_i F E; with no charge and no
    flow J_i = (D_i c_i / RT) X_i A, and the current I = F sum z_i J_i = 0 gives
    E = (RT / F) g sum z D c / sum z^2 D c. The potential
    V = -int E dx then changes by dV / d ln c = -(kT/e) sum z D c / sum z^2 D c (Planck 1890 / Henderson
    1907 for uniform composition ratios), i.e. -(kT/e)(D+ - D-)/(D+ + D-) for a 1:1 salt: +5.33 mV for NaCl,
    where the faster Cl- runs ahead. To 1e-6."""
    ions = BULK_ELECTROLYTES[name]()
    s = uncharged(ions).summary
    henderson = -VT * sum(i.valence * i.diffusivity * i.concentration for i in ions.ions) / sum(
        i.valence**2 * i.diffusivity * i.concentration for i in ions.ions)
    assert s["diffusion_potential"] == pytest.approx(henderson, rel=1e-6)
    if name == "NaCl":
        assert s["diffusion_potential"] == pytest.approx(-VT * (D_NA - D_CL) / (D_NA + D_CL), rel=1e-6)
        assert s["diffusion_potential"] == pytest.approx(5.33e-3, rel=1e-3)


def test_diffusion_potential_of_ideally_selective_channel_is_nernst() -> None:
    """Slit H = 4 nm, sigma = -50 mC/m^2, KCl 1 ... 0.01 mM: dV/d ln c -> -kT/e (Nernst; REFERENCES).

    First-order correction, derived: the co-ions enter the current only at O((c0/c_bar)^2), so
    I = F (L_+P X_P + L_++ X_+) with X_+ = -RT g + F E and the osmotic solvent force X_P = 2 RT c0 g of the
    bulk gradient; I = 0 gives dV / d ln c = -(kT/e)(1 - 2 c0 L_+P / L_++), with L_+P and L_++ of the
    counter-ion-only slit (``counterion_only_profiles``, by quadrature). The deviation from Nernst must match
    this to 2 % x (c0 / 1 mM) (the residual is second order in c0) and fall 10-fold per decade of c0."""
    sigma, half_height = -0.05, 2e-9
    l_plus_p, l_plus_plus = counterion_only_profiles(sigma, half_height, D_K)
    deviations = []
    for c in (1.0, 0.1, 0.01):
        result = edl.solve(edl.Case(geometry=edl.Slit(height=2.0 * half_height), electrolyte=salt(c),
                                    wall=edl.Wall(charge_density=sigma), solvent=SOLVENT))
        potential = result.summary["diffusion_potential"]
        predicted = -VT * (1.0 - 2.0 * c * l_plus_p / l_plus_plus)
        assert (potential + VT) / (predicted + VT) - 1.0 == pytest.approx(0.0, abs=0.02 * c)  # c in mM
        # the ion-level coefficients themselves, against the quadrature of the counter-ion-only slit
        assert result.ion_response_matrix[0, 1] == pytest.approx(l_plus_p, rel=1e-3)
        deviations.append(potential / -VT - 1.0)
    assert abs(deviations[-1]) < 1e-4
    for a, b in itertools.pairwise(deviations):
        assert a / b == pytest.approx(10.0, rel=0.02)
