"""Finite ion size (steric model), hydrodynamic slip and the viscoelectric effect against independent references.

References are built in ``tests/reference_models.py`` (which imports nothing from ``edl_solver``) from closed
forms and first integrals derived there and below; every check names its source.

Units and conventions: 1:1 KCl, T = 298.15 K, eps_r = 78.4, eta_0 = 0.89 mPa s; Debye units (psi = e phi / kT,
lengths in lambda_D) inside the references; slit of full height H = 2h, y from 0 to H; field E along +x; the
thin-layer slip velocity is -eps zeta E / eta. Onsager reciprocity in the form used throughout: the streaming
current per driving force -dp/dx equals the EO flow rate per field E.

Tolerances follow the solver's contract (``Numerics.accuracy``: relative error of summary values, 1e-6 by
default) or the accuracy asked for in the test. ``scipy.constants`` ships CODATA 2022 (eps_0 = 8.8541878188e-12
F/m); the package must use the same value for the 1e-8 and 1e-9 checks to hold.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.model import thin_layer, walls
from tests import reference_models as rm

T = 298.15  # K
EPS_R = 78.4  # water at 25 degC (from memory)
ETA = 0.89e-3  # Pa s, water at 25 degC (from memory)
EPS = EPS_R * rm.VACUUM_PERMITTIVITY
VT = rm.thermal_voltage(T)  # kT/e, V
FIELD = 1e4  # V/m
GRAD = -1e5  # Pa/m
DIAMETER = 0.7e-9  # m, a hydrated K+/Cl- size (common practice)


def solvent(viscoelectric: float = 0.0) -> edl.Solvent:
    return edl.Solvent(temperature=T, relative_permittivity=EPS_R, viscosity=ETA,
                       viscoelectric_coefficient=viscoelectric)


def kcl(concentration: float, diameter: float | None = None) -> edl.Electrolyte:
    """1:1 electrolyte, mol/m^3 per ion; a common diameter for the steric model."""
    return edl.Electrolyte([edl.Ion(name="K+", concentration=concentration, diameter=diameter),
                            edl.Ion(name="Cl-", concentration=concentration, diameter=diameter)])


def slit(height: float, wall, electrolyte: edl.Electrolyte, model: str = "pb", accuracy: float = 1e-6,
         viscoelectric: float = 0.0, field: float = FIELD, pressure_gradient: float = GRAD) -> edl.Result:
    case = edl.Case(geometry=edl.Slit(height=height), electrolyte=electrolyte, wall=wall,
                    solvent=solvent(viscoelectric), model=model, field=field, pressure_gradient=pressure_gradient,
                    numerics=edl.Numerics(accuracy=accuracy))
    return edl.solve(case)


def reciprocity_mismatch(result: edl.Result) -> float:
    """(I_streaming / (-dp/dx)) / (Q_eo / E) - 1 (Onsager 1931)."""
    s, case = result.summary, result.case
    return (s["streaming_current"] / -case.pressure_gradient) / (s["flow_rate_eo"] / case.field) - 1.0


# ================================================================================================
# 1. Finite ion size: the lattice-gas (Bikerman) model
# ================================================================================================


def test_first_integral_reference_limits() -> None:
    """The reference itself: nu -> 0 gives the Burgreen & Nakache (1964) PB first integral, and a wide slit the
    Grahame (1947) charge 2 sinh(zeta/2) and the Gouy-Chapman mid-plane potential 8 tanh(zeta/4) e^{-K}
    (two superposed Gouy (1910) / Chapman (1913) tails, from memory); the steric Grahame relation (3) of
    reference_models has the closed-form inverse used below."""
    pb = rm.symmetric_slit(-4.0, 12.0)
    assert pb.wall_charge == pytest.approx(2.0 * math.sinh(-2.0), rel=1e-10)
    assert pb.midplane == pytest.approx(8.0 * math.tanh(-1.0) * math.exp(-12.0), rel=1e-4)
    tiny = rm.symmetric_slit(-4.0, 1.5, nu=1e-12)
    exact = rm.symmetric_slit(-4.0, 1.5)
    assert tiny.midplane == pytest.approx(exact.midplane, rel=1e-9)
    assert tiny.wall_charge == pytest.approx(exact.wall_charge, rel=1e-9)
    sigma = rm.steric_grahame_charge_si(-0.2, 100.0, DIAMETER, T, EPS_R)
    assert rm.steric_grahame_zeta_si(sigma, 100.0, DIAMETER, T, EPS_R) == pytest.approx(-0.2, rel=1e-13)


def test_steric_tends_to_pb_with_error_cubic_in_diameter() -> None:
    """The crowding factor D = 1 + nu (cosh psi - 1) enters only through nu = 2 c N_A d^3 (Kilic, Bazant &
    Ajdari 2007), so steric - PB = nu * (first-order response) + O(nu^2): halving d divides the difference by
    2^3. Observed exponent log2(diff(2d) / diff(d)) for the centre potential, wall charge, EO flow and
    conduction current; nu (cosh zeta - 1) = 2.6e-3 at the finest d, so the O(nu^2) correction is ~0.3 %."""
    keys = ("centre_potential", "wall_charge_density", "flow_rate_eo", "conduction_current")
    wall, height, conc = edl.Wall(zeta=-0.15), 5e-9, 100.0
    pb = slit(height, wall, kcl(conc, DIAMETER), model="pb", accuracy=1e-10)
    diffs = {}
    for d in (0.2e-9, 0.1e-9, 0.05e-9):
        steric = slit(height, wall, kcl(conc, d), model="steric", accuracy=1e-10)
        diffs[d] = np.array([steric.summary[k] - pb.summary[k] for k in keys])
    coarse = np.log2(diffs[0.2e-9] / diffs[0.1e-9])
    fine = np.log2(diffs[0.1e-9] / diffs[0.05e-9])
    assert np.all(np.abs(fine - 3.0) < 0.03), f"observed exponents {fine} (coarser pair {coarse}), expected 3"
    assert np.all(np.abs(fine - 3.0) < np.abs(coarse - 3.0)), "the exponent must approach 3 as d -> 0"
    relative = np.abs(diffs[0.05e-9] / np.array([pb.summary[k] for k in keys]))
    assert np.all(relative < 1e-3), f"steric at d = 0.05 nm still {relative} away from PB"


@pytest.mark.parametrize("zeta_hat", [-15.0, 15.0])
def test_steric_concentrations_never_exceed_close_packing(zeta_hat: float) -> None:
    """Lattice gas: c_i = c e^{-z_i psi} / (1 + nu (cosh psi - 1)) < 2c/nu = 1/(N_A d^3) for every psi (Bikerman
    1942; Kilic, Bazant & Ajdari 2007), and the counter-ion saturates at the wall: at |zeta| = 15 kT/e,
    c_counter / c_max = e^{15} / (e^{15} + 2/nu - 2 + e^{-15}) ~ 1 - 1.4e-5 for 100 mM and d = 0.7 nm.
    Plain PB puts e^{15} c = 3.3e8 mol/m^3 there, 7e4 times close packing."""
    conc, height = 100.0, 20e-9
    wall = edl.Wall(zeta=zeta_hat * VT)
    steric = slit(height, wall, kcl(conc, DIAMETER), model="steric")
    pb = slit(height, wall, kcl(conc, DIAMETER), model="pb")
    c_max = rm.close_packing(DIAMETER)
    nu = rm.packing_fraction(conc, DIAMETER)
    expected = math.exp(15.0) / (math.exp(15.0) + 2.0 / nu - 2.0 + math.exp(-15.0))
    assert np.max(steric.profiles.concentration) <= c_max * (1.0 + 1e-12)
    counter = 0 if zeta_hat < 0 else 1
    wall_value = steric.profiles.concentration[counter, -1] / c_max
    assert wall_value == pytest.approx(expected, rel=1e-12)
    assert np.max(pb.profiles.concentration) > 1e4 * c_max  # the check can tell the models apart


@pytest.mark.parametrize(("conc", "height", "zeta_hat"), [
    (100.0, 5e-9, -200e-3 / VT),  # overlapping layers, moderate crowding
    (500.0, 3e-9, 8.0),  # positive wall, denser bulk (nu = 0.21)
    (100.0, 5e-9, -15.0),  # saturated layer
])
def test_steric_symmetric_slit_matches_first_integral(conc: float, height: float, zeta_hat: float) -> None:
    """Mid-plane potential and wall charge against the steric first integral (reference_models eq. (2)):
    psi'^2 = (2/nu) ln[D(psi)/D(psi_m)], D = 1 + nu (cosh psi - 1), nu = 2 c N_A d^3, with psi_m from
    int_{psi_m}^{zeta} dpsi / |psi'| = kappa h (Kilic, Bazant & Ajdari 2007 route). Tolerance: the default
    accuracy, 1e-6."""
    result = slit(height, edl.Wall(zeta=zeta_hat * VT), kcl(conc, DIAMETER), model="steric")
    debye = rm.debye_length_si(conc, T, EPS_R)
    ref = rm.symmetric_slit(zeta_hat, 0.5 * height / debye, rm.packing_fraction(conc, DIAMETER))
    assert result.summary["centre_potential"] == pytest.approx(ref.midplane * VT, rel=1e-6)
    assert result.summary["wall_charge_density"] == pytest.approx(ref.wall_charge * EPS * VT / debye, rel=1e-6)


@pytest.mark.parametrize("kind", ["potential", "charge"])
def test_steric_isolated_wall_grahame(kind: str) -> None:
    """Isolated wall: sigma^2 = 2 eps (kT/d^3) ln(1 + nu (cosh(e zeta/kT) - 1)), nu = 2 c N_A d^3 for 1:1
    (derived as eq. (3) of reference_models; it matches the general form (kT/d^3) ln(1 + sum_i nu_i (e^{-z_i psi}
    - 1)), nu_i = c_i N_A d^3, since nu_+ (e^{-psi} - 1) + nu_- (e^{psi} - 1) = nu (cosh psi - 1); Kilic,
    Bazant & Ajdari 2007, from memory). The thin-layer model uses it (1e-12), a wide slit (kappa h = 52) reaches
    it (1e-6), and with slip its slip velocity is -(eps E/eta)(zeta + b sigma / eps) (Joly et al. 2004, from
    memory)."""
    conc, slip_length = 100.0, 1e-9
    if kind == "potential":
        zeta = -0.2
        sigma = rm.steric_grahame_charge_si(zeta, conc, DIAMETER, T, EPS_R)
        wall = edl.Wall(zeta=zeta, slip_length=slip_length)
    else:
        sigma = -0.3
        zeta = rm.steric_grahame_zeta_si(sigma, conc, DIAMETER, T, EPS_R)
        wall = edl.Wall(charge_density=sigma, slip_length=slip_length)
    result = slit(100e-9, wall, kcl(conc, DIAMETER), model="steric", accuracy=1e-8)
    thin_zeta, thin_sigma = walls.isolated_wall(wall, result.case.electrolyte, result.case.solvent, "steric")
    assert thin_zeta == pytest.approx(zeta, rel=1e-12)
    assert thin_sigma == pytest.approx(sigma, rel=1e-12)
    assert result.summary["thin_layer_zeta"] == pytest.approx(zeta, rel=1e-12)
    assert result.summary["zeta"] == pytest.approx(zeta, rel=1e-6)
    assert result.summary["wall_charge_density"] == pytest.approx(sigma, rel=1e-6)
    slip_speed = -EPS * FIELD / ETA * (zeta + slip_length * sigma / EPS)
    assert result.summary["hs_velocity"] == pytest.approx(slip_speed, rel=1e-12)


# ================================================================================================
# 2. Hydrodynamic (Navier) slip
# ================================================================================================


@pytest.mark.parametrize(("conc", "height", "zeta", "slip_length"), [
    (10.0, 20e-9, -0.05, 5e-9),
    (1.0, 30e-9, 0.03, 2e-9),
])
def test_dh_slit_eo_with_slip_closed_form(conc: float, height: float, zeta: float, slip_length: float) -> None:
    """Debye-Hueckel slit, equal walls with slip b. Derivation: eta u'' = -rho_e E = eps E phi'' (Stokes and
    Poisson), u' = phi' = 0 on the mid-plane, so u = (eps E / eta)(phi + C); Navier u(h) = -b u'(h) (inward
    normal -y) with eps phi'(h) = sigma gives u = -(eps E / eta)[zeta - phi(y) + b sigma / eps], phi = zeta
    cosh(kappa y') / cosh(kappa h) (y' from the mid-plane), sigma = eps kappa zeta tanh(kappa h) (Burgreen &
    Nakache 1964 potential; slip term as Joly et al. 2004, from memory). Flow rate Q = -(eps zeta E / eta) H
    [1 - tanh(kappa h)/(kappa h) + b kappa tanh(kappa h)]. Profile to 1e-6 of the wall slip speed, Q to 1e-8,
    and the streaming current of the same closed form (Onsager 1931) to 1e-8."""
    debye = rm.debye_length_si(conc, T, EPS_R)
    ref = rm.LinearSlitFlow(height, debye, (zeta, zeta), (slip_length, slip_length), EPS, ETA)
    profile = slit(height, edl.Wall(zeta=zeta, slip_length=slip_length), kcl(conc), model="dh", accuracy=1e-8)
    y = profile.profiles.coordinate
    wall_speed = abs(ref.eo_per_field(np.array([0.0]))[0] * FIELD)
    kh = 0.5 * height / debye
    # the reference's wall value is |b sigma E / eta|, sigma = eps kappa zeta tanh(kappa h)
    assert wall_speed == pytest.approx(abs(slip_length * EPS * zeta * math.tanh(kh) / debye * FIELD / ETA), rel=1e-12)
    deviation = np.max(np.abs(profile.profiles.velocity_eo - FIELD * ref.eo_per_field(y))) / wall_speed
    assert deviation < 1e-6, f"EO profile off by {deviation:.2g} of the slip speed"
    flow = slit(height, edl.Wall(zeta=zeta, slip_length=slip_length), kcl(conc), model="dh", accuracy=1e-10)
    closed = -EPS * zeta * FIELD / ETA * height * (1.0 - math.tanh(kh) / kh + slip_length / debye * math.tanh(kh))
    assert ref.eo_flow_per_field() * FIELD == pytest.approx(closed, rel=1e-12)
    assert flow.summary["flow_rate_eo"] == pytest.approx(closed, rel=1e-8)
    assert flow.summary["wall_charge_density"] == pytest.approx(EPS * zeta * math.tanh(kh) / debye, rel=1e-8)
    assert flow.summary["streaming_current"] / -GRAD == pytest.approx(closed / FIELD, rel=1e-8)


@pytest.mark.parametrize("slip_length", [0.0, 2e-9, 50e-9])
def test_poiseuille_with_slip(slip_length: float) -> None:
    """Plane Poiseuille flow with equal Navier slip b: Q = -(dp/dx) H^3 / (12 eta) (1 + 6 b / H) (derived in
    reference_models.poiseuille_slip_flow; common practice), profile u = -(dp/dx)(h^2 - y'^2)/(2 eta) -
    b (dp/dx) h / eta. Flow rate to 1e-9, profile to 1e-9 of its maximum (the scheme is exact for a quadratic)."""
    height = 20e-9
    result = slit(height, edl.Wall(zeta=-0.05, slip_length=slip_length), kcl(10.0), model="pb", accuracy=1e-8)
    expected = rm.poiseuille_slip_flow(GRAD, height, ETA, slip_length)
    assert result.summary["flow_rate_pressure"] == pytest.approx(expected, rel=1e-9)
    y = result.profiles.coordinate
    h = 0.5 * height
    closed = -GRAD * (h**2 - (y - h) ** 2) / (2.0 * ETA) - slip_length * GRAD * h / ETA
    scale = np.max(np.abs(closed))
    assert np.max(np.abs(result.profiles.velocity_pressure - closed)) < 1e-9 * scale


@pytest.mark.parametrize(("model", "wall"), [
    ("pb", edl.Wall(zeta=-0.12, slip_length=3e-9)),
    ("steric", edl.Wall(charge_density=-0.2, slip_length=10e-9)),
    ("pb", (edl.Wall(zeta=-0.1, slip_length=4e-9), edl.Wall(zeta=0.04))),
])
def test_reciprocity_with_slip(model: str, wall) -> None:
    """Onsager (1931): streaming current per -dp/dx equals EO flow per field; slip keeps the Stokes operator
    self-adjoint (the Navier term b^-1 u v is symmetric), so the identity holds to round-off (1e-10)."""
    result = slit(10e-9, wall, kcl(100.0, DIAMETER), model=model)
    assert abs(reciprocity_mismatch(result)) < 1e-10


def test_wide_channel_eo_ratio_with_slip() -> None:
    """Wide channel, small zeta: the thin-layer slip velocity is -eps zeta E / eta (1 + b/lambda_D) (Joly, Ybert,
    Trizac & Bocquet 2004, from memory); with Grahame's sigma = sqrt(8 c N_A eps kT) sinh(e zeta/2kT) (Grahame
    1947) exactly -(eps E/eta)(zeta + b sigma/eps). The full/thin flow ratio follows from the DH closed form of
    test_dh_slit_eo_with_slip_closed_form: [1 - tanh(kh)/(kh) + b kappa tanh(kh)] / (1 + b kappa)
    -> 1 - 1 / (kappa h (1 + b kappa)) -> 1. At zeta = -1 mV the PB corrections are O((e zeta/kT)^2) ~ 1.5e-3
    relative to the 1/(kappa h) term."""
    conc, zeta, slip_length = 10.0, -1e-3, 2e-9
    debye = rm.debye_length_si(conc, T, EPS_R)
    ratios = []
    for kh in (100.0, 1000.0):
        result = slit(2.0 * kh * debye, edl.Wall(zeta=zeta, slip_length=slip_length), kcl(conc), model="pb")
        sigma = math.sqrt(8.0 * conc * rm.AVOGADRO * EPS * rm.BOLTZMANN * T) * math.sinh(0.5 * zeta / VT)
        assert result.summary["hs_velocity"] == pytest.approx(
            -EPS * FIELD / ETA * (zeta + slip_length * sigma / EPS), rel=1e-12)
        assert result.summary["hs_velocity"] == pytest.approx(
            -EPS * zeta * FIELD / ETA * (1.0 + slip_length / debye), rel=1e-4)
        shortfall = 1.0 - result.summary["eo_ratio"]
        assert shortfall * kh * (1.0 + slip_length / debye) == pytest.approx(1.0, rel=3e-3)
        ratios.append(result.summary["eo_ratio"])
        dh = slit(2.0 * kh * debye, edl.Wall(zeta=zeta, slip_length=slip_length), kcl(conc), model="dh",
                  accuracy=1e-10)
        exact = (1.0 - math.tanh(kh) / kh + slip_length / debye * math.tanh(kh)) / (1.0 + slip_length / debye)
        assert dh.summary["eo_ratio"] == pytest.approx(exact, rel=1e-8)
    assert abs(1.0 - ratios[1]) < 1e-3
    assert abs(1.0 - ratios[1]) < 0.11 * abs(1.0 - ratios[0])


def test_slip_on_one_wall_of_asymmetric_slit() -> None:
    """DH slit between zeta_0 = -60 mV with slip b = 3 nm (y = 0) and zeta_H = +20 mV without slip (y = H).
    Derivation: phi = [zeta_0 sinh(kappa (H - y)) + zeta_H sinh(kappa y)] / sinh(kappa H) (DH); eta u'' = eps E
    phi'' gives u = (eps E/eta)(phi + alpha y + beta), pressure flow u = (dp/dx) y^2/(2 eta) + alpha y + beta,
    with u(0) = b u'(0), u(H) = 0 fixing alpha, beta (reference_models.navier_constants). Profiles to 1e-6 of
    their maximum, flow rates to 1e-8, the wall charges eps dphi/dn to 1e-8; the thin-layer slip velocities
    are -(eps E/eta)(zeta + b sigma/eps) with the isolated DH charge sigma = eps kappa zeta (Joly et al. 2004,
    from memory) on the slipping wall and -eps zeta E / eta on the other (Smoluchowski 1903)."""
    conc, height, zetas, slips = 10.0, 20e-9, (-0.06, 0.02), (3e-9, 0.0)
    walls = (edl.Wall(zeta=zetas[0], slip_length=slips[0]), edl.Wall(zeta=zetas[1]))
    result = slit(height, walls, kcl(conc), model="dh", accuracy=1e-10)
    debye = rm.debye_length_si(conc, T, EPS_R)
    ref = rm.LinearSlitFlow(height, debye, zetas, slips, EPS, ETA)
    y = result.profiles.coordinate
    eo = FIELD * ref.eo_per_field(y)
    assert np.max(np.abs(result.profiles.velocity_eo - eo)) < 1e-6 * np.max(np.abs(eo))
    pressure = GRAD * ref.pressure_per_gradient(y)
    assert np.max(np.abs(result.profiles.velocity_pressure - pressure)) < 1e-6 * np.max(np.abs(pressure))
    assert result.profiles.velocity_eo[0] == pytest.approx(eo[0], rel=1e-6)  # the slip velocity itself
    assert result.profiles.velocity_eo[-1] == 0.0
    assert result.summary["flow_rate_eo"] == pytest.approx(FIELD * ref.eo_flow_per_field(), rel=1e-8)
    assert result.summary["flow_rate_pressure"] == pytest.approx(GRAD * ref.pressure_flow_per_gradient(), rel=1e-8)
    assert result.summary["wall_charge_density"] == pytest.approx(ref.wall_charges(), rel=1e-8)
    assert result.summary["hs_velocity"] == pytest.approx(
        (-EPS * zetas[0] * FIELD / ETA * (1.0 + slips[0] / debye), -EPS * zetas[1] * FIELD / ETA), rel=1e-12)
    assert abs(reciprocity_mismatch(result)) < 1e-10
    # the thin-layer model's Poiseuille flow with the same slip lengths (its own closed form)
    assert thin_layer.poiseuille_per_gradient(result.case.geometry, ETA, slips) == pytest.approx(
        -ref.pressure_flow_per_gradient(), rel=1e-12)


# ================================================================================================
# 3. Viscoelectric effect, eta = eta_0 (1 + f |grad phi|^2)
# ================================================================================================


def test_zero_viscoelectric_recovers_closed_form() -> None:
    """f = 0: uniform viscosity, no slip, so u_eo = -(eps E / eta)(zeta - phi) exactly (common practice;
    Stokes + Poisson), to 1e-9 of the Helmholtz-Smoluchowski speed; Water(viscoelectric=False) is f = 0 and
    Water(viscoelectric=True) the Lyklema & Overbeek (1961) value 1.0e-15 m^2/V^2 (from memory)."""
    assert edl.Water(temperature=T).viscoelectric_coefficient == 0.0
    assert edl.Water(temperature=T, viscoelectric=True).viscoelectric_coefficient == pytest.approx(1.0e-15)
    zeta = -0.1
    result = slit(20e-9, edl.Wall(zeta=zeta), kcl(10.0), model="pb", viscoelectric=0.0)
    closed = -EPS * FIELD / ETA * (zeta - result.profiles.potential)
    scale = abs(EPS * zeta * FIELD / ETA)
    assert np.max(np.abs(result.profiles.velocity_eo - closed)) < 1e-9 * scale


def _viscoelectric_flows(model: str, conc: float, height: float, zeta: float, coefficients) -> list[edl.Result]:
    return [slit(height, edl.Wall(zeta=zeta), kcl(conc), model=model, accuracy=1e-10, viscoelectric=f)
            for f in coefficients]


@pytest.mark.parametrize("model", ["dh", "pb"])
def test_viscoelectric_first_order_expansion(model: str) -> None:
    """Symmetric slit, eta = eta_0 (1 + f phi'^2) (Lyklema & Overbeek 1961, from memory). Debye units,
    f_hat = f (kT / (e lambda_D))^2, u in eps E kT / (e eta_0): (eta_hat u')' = psi'' and u' = psi' = 0 on the
    mid-plane give u' = psi' / (1 + f_hat psi'^2) = psi' - f_hat psi'^3 + f_hat^2 psi'^5 - ...; the potential
    does not depend on f. With u(K) = 0, int_0^K u dx = -int_0^K x u' dx, so per unit width

        Q(f) = Q(0) + f_hat U J_3 - f_hat^2 U J_5 + O(f_hat^3),   J_p = int_0^K x psi'^p dx,
        U = 2 lambda_D eps E kT / (e eta_0),

    J_p in closed form for DH (reference_models.dh_viscoelectric_moment) and by quadrature of the Burgreen &
    Nakache (1964) first integral for PB. Checks: the first-order mismatch m = (Q(f) - Q(0)) / (f dQ/df) - 1
    is O(f) (halves with f), and the remainder matches the second-order term to relative O(f); J_3 has the
    sign of zeta, so the effect lowers the EO flow."""
    conc, height, zeta = 10.0, 20e-9, -0.05
    debye = rm.debye_length_si(conc, T, EPS_R)
    kh = 0.5 * height / debye
    field_unit = (VT / debye) ** 2  # f_hat / f
    if model == "dh":
        j3, j5 = (rm.dh_viscoelectric_moment(zeta / VT, kh, p) for p in (3, 5))
        wall_field = zeta / VT * math.tanh(kh)
    else:
        ref = rm.symmetric_slit(zeta / VT, kh)
        j3, j5 = ref.viscoelectric_moment(3), ref.viscoelectric_moment(5)
        wall_field = ref.wall_charge
    unit = 2.0 * debye * EPS * FIELD * VT / ETA
    # f_hat psi'(wall)^2 = 1e-3 and 2e-3: the largest relative change of viscosity
    small = 1e-3 / (wall_field**2 * field_unit)
    base, one, two = _viscoelectric_flows(model, conc, height, zeta, (0.0, small, 2.0 * small))
    q0 = base.summary["flow_rate_eo"]
    mismatch, second = [], []
    for f, result in ((small, one), (2.0 * small, two)):
        change = result.summary["flow_rate_eo"] - q0
        first = unit * f * field_unit * j3
        mismatch.append(change / first - 1.0)
        second.append((change - first) / (-unit * (f * field_unit) ** 2 * j5))
        assert change < 0.0 < q0  # lowers the EO flow
        assert abs(reciprocity_mismatch(result)) < 1e-10
    assert abs(mismatch[0]) < 2e-3
    assert mismatch[1] / mismatch[0] == pytest.approx(2.0, rel=0.01), f"mismatches {mismatch}, expected linear in f"
    assert second[0] == pytest.approx(1.0, abs=2e-3), f"second-order ratios {second}"
    assert abs(second[1] - 1.0) == pytest.approx(2.0 * abs(second[0] - 1.0), rel=0.05)


@pytest.mark.parametrize(("model", "coefficient"), [("dh", 1e-15), ("pb", 1e-15), ("pb", 1e-14)])
def test_viscoelectric_flow_rate_against_quadrature(model: str, coefficient: float) -> None:
    """Beyond the expansion: Q = -U int_0^K x psi' / (1 + f_hat psi'^2) dx exactly (derivation in
    test_viscoelectric_first_order_expansion), for the water value f = 1e-15 m^2/V^2 (Lyklema & Overbeek 1961,
    from memory) where f_hat psi'^2 reaches 0.27-0.37 at the wall, and ten times it. DH: psi = zeta cosh x /
    cosh K integrated by scipy quad; PB: the first-integral reference. Tolerance 1e-8 (accuracy 1e-10); the
    effect must lower the flow, and reciprocity (Onsager 1931) survives the variable viscosity (1e-10)."""
    from scipy import integrate

    conc, height, zeta = 10.0, 20e-9, -0.05
    debye = rm.debye_length_si(conc, T, EPS_R)
    kh = 0.5 * height / debye
    f_hat = coefficient * (VT / debye) ** 2
    unit = 2.0 * debye * EPS * FIELD * VT / ETA
    if model == "dh":
        amplitude = zeta / VT / math.cosh(kh)

        def integrand(x: float) -> float:
            gradient = amplitude * math.sinh(x)
            return x * gradient / (1.0 + f_hat * gradient**2)

        expected = -unit * integrate.quad(integrand, 0.0, kh, epsabs=0.0, epsrel=1e-13, limit=200)[0]
    else:
        expected = unit * rm.symmetric_slit(zeta / VT, kh).eo_flow(f_hat)
    base, result = _viscoelectric_flows(model, conc, height, zeta, (0.0, coefficient))
    assert result.summary["flow_rate_eo"] == pytest.approx(expected, rel=1e-8)
    assert 0.0 < result.summary["flow_rate_eo"] < base.summary["flow_rate_eo"]
    assert abs(reciprocity_mismatch(result)) < 1e-10


def test_thin_layer_counterpart_ignores_viscoelectric_effect() -> None:
    """The thin-layer slip velocity is -eps zeta E / eta_0 (Smoluchowski 1903) whatever f (the project's
    stated thin-layer model), so hs_velocity and the thin-layer flow rate do not change with f, while the full
    flow drops."""
    wall = edl.Wall(zeta=-0.08)
    plain = slit(30e-9, wall, kcl(10.0), viscoelectric=0.0)
    viscous = slit(30e-9, wall, kcl(10.0), viscoelectric=1e-15)
    for key in ("hs_velocity", "thin_layer_flow_rate_eo", "thin_layer_zeta"):
        assert viscous.summary[key] == plain.summary[key]
    assert viscous.summary["flow_rate_eo"] < 0.95 * plain.summary["flow_rate_eo"]
    assert viscous.summary["eo_ratio"] < plain.summary["eo_ratio"]


# ================================================================================================
# All three together
# ================================================================================================


@pytest.mark.parametrize(("model", "height", "zeta", "slip_length"), [
    ("dh", 5e-9, -0.1, 2e-9),
    ("steric", 20e-9, -0.3, 5e-9),  # the example of the package's documentation
    ("steric", 5e-9, -0.2, 2e-9),
])
def test_slip_with_viscoelectric_effect_against_quadrature(model: str, height: float, zeta: float,
                                                            slip_length: float) -> None:
    """Navier slip + viscoelectric water (100 mM, f = 1e-15 m^2/V^2), DH or steric layer (d = 0.7 nm): the EO
    flow rate from u' = psi' / (1 + f_hat psi'^2) and u(K) = -b_hat u'(K), i.e. int_0^K u dx = K u(K) -
    int_0^K x u' dx (derivation in reference_models.SymmetricSlit.eo_flow), with the DH closed-form potential
    (reference_models.dh_eo_flow) or the steric first integral (Kilic, Bazant & Ajdari 2007). The slip
    velocity is -b_hat sigma_hat / (1 + f_hat sigma_hat^2): the viscosity AT the wall, where the field is
    sigma / eps. Tolerance: the default accuracy 1e-6, which the solver promises for every summary value
    (slip alone and the viscoelectric effect alone meet it: the tests above)."""
    conc, f, field = 100.0, 1e-15, 1e3
    debye = rm.debye_length_si(conc, T, EPS_R)
    kh, f_hat, b_hat = 0.5 * height / debye, f * (VT / debye) ** 2, slip_length / debye
    if model == "dh":
        reduced = rm.dh_eo_flow(zeta / VT, kh, f_hat, b_hat)
    else:
        reduced = rm.symmetric_slit(zeta / VT, kh, rm.packing_fraction(conc, DIAMETER)).eo_flow(f_hat, b_hat)
    expected = 2.0 * debye * EPS * field * VT / ETA * reduced
    stalled = ""
    try:
        result = slit(height, edl.Wall(zeta=zeta, slip_length=slip_length), kcl(conc, DIAMETER), model=model,
                      viscoelectric=f, field=field)
    except edl.ConvergenceError as err:
        stalled = str(err)
    if stalled:
        pytest.fail(f"slip + viscoelectric: the grid refinement stalls (an error term of low order): {stalled}")
    error = result.summary["flow_rate_eo"] / expected - 1.0
    assert abs(error) < 1e-6, (f"EO flow off by {error:.2g} (solver's own estimate "
                               f"{result.summary['error_estimate']:.1g})")
    assert abs(reciprocity_mismatch(result)) < 1e-10
