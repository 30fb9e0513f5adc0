"""Self-checks of the independent reference library ``tests/reference_solutions.py``.

Every reference is checked against something computed another way: the ODE itself (mpmath numerical
differentiation), tanh-sinh quadrature on a different substitution, a Jacobi-elliptic closed form,
``scipy.integrate.solve_bvp``, and the limits (Debye-Hückel as zeta -> 0, Gouy-Chapman as h -> inf).
"""

from __future__ import annotations

import math

import mpmath as mp
import numpy as np
import pytest
from scipy import constants as sc
from scipy.integrate import quad, solve_bvp

from tests import reference_solutions as ref

T, EPS_R = 298.15, 78.4


@pytest.fixture(autouse=True)
def _high_precision():
    """Do the tests' own mpmath arithmetic at 50 digits (the references carry about 30)."""
    with mp.workdps(50):
        yield


def rel(a, b) -> mp.mpf:
    """Relative difference at high precision (absolute when the reference is zero)."""
    with mp.workdps(50):
        a, b = mp.mpf(a), mp.mpf(b)
        return abs(a - b) / abs(b) if b != 0 else abs(a)


# --- Gouy-Chapman and Grahame ------------------------------------------------------------------


@pytest.mark.parametrize("zeta", [0.3, 2.0, -7.0, 15.0])
def test_gouy_chapman_profile_solves_pb_and_gives_grahame_charge(zeta: float) -> None:
    # Gouy (1910), Chapman (1913): psi'' = sinh psi, psi(0) = zeta; Grahame (1947): -psi'(0) = 2 sinh(zeta/2).
    with mp.workdps(40):

        def psi(x):
            return ref.gouy_chapman_potential(x, zeta)

        assert rel(psi(0), zeta) < 1e-35
        for x in (0.05, 0.7, 3.0):
            assert abs(mp.diff(psi, x, 2) - mp.sinh(psi(x))) < 1e-25 * max(1, abs(mp.sinh(psi(x))))
        assert rel(-mp.diff(psi, 0), ref.grahame_charge(zeta)) < 1e-25
        assert rel(ref.grahame_zeta(ref.grahame_charge(zeta)), zeta) < 1e-25


@pytest.mark.parametrize("z", [1, 2, 3])
def test_grahame_si_symmetric_matches_closed_form(z: int) -> None:
    # Grahame (1947), Chem. Rev. 41, 441: sigma = sqrt(8 c N_A eps kT) sinh(z e zeta / 2kT).
    c, zeta = 12.0, -0.08
    eps = EPS_R * sc.epsilon_0
    expected = math.sqrt(8 * c * sc.N_A * eps * sc.k * T) * math.sinh(z * sc.e * zeta / (2 * sc.k * T))
    got = ref.grahame_charge_density_si(zeta, [z, -z], [c, c], T, EPS_R)
    assert got < 0
    assert got == pytest.approx(expected, rel=1e-13)
    # Reduced form: sigma = sigma_hat * eps (kT/ze) / lambda_D.
    lam = ref.debye_length_si([z, -z], [c, c], T, EPS_R)
    reduced = float(ref.grahame_charge(z * sc.e * zeta / (sc.k * T))) * eps * sc.k * T / (z * sc.e * lam)
    assert got == pytest.approx(reduced, rel=1e-13)


def test_debye_length_value() -> None:
    # 1 mM (1 mol/m^3) 1:1 electrolyte in water at 25 C: lambda_D = 9.6 nm (from memory; textbook value,
    # e.g. Israelachvili, Intermolecular and Surface Forces).
    assert ref.debye_length_si([1, -1], [1.0, 1.0], 298.15, 78.4) == pytest.approx(9.6e-9, rel=0.01)


def test_grahame_si_asymmetric_electrolyte_matches_numerical_pb() -> None:
    # Multi-ion Grahame relation (Grahame 1947) vs a boundary-value solve of the single-wall PB equation
    # for CaCl2 (2:1), in reduced units psi1 = e phi / kT, x in Debye lengths:
    # psi1'' = -sum z_i c_i exp(-z_i psi1) / sum z_i^2 c_i ; sigma_hat = -psi1'(0).
    valences, conc = np.array([2, -1]), np.array([5.0, 10.0])
    ionic = float(np.sum(valences**2 * conc))

    def rhs(x, y):
        charge = np.sum(valences[:, None] * conc[:, None] * np.exp(-valences[:, None] * y[0]), axis=0)
        return np.vstack([y[1], -charge / ionic])

    for zeta_red in (-3.0, 2.5):
        x = np.linspace(0, 40, 400)
        guess = np.vstack([zeta_red * np.exp(-x), -zeta_red * np.exp(-x)])
        bc = lambda a, b, z0=zeta_red: np.array([a[0] - z0, b[0]])  # noqa: E731
        sol = solve_bvp(rhs, bc, x, guess, tol=1e-10, max_nodes=200000)
        assert sol.status == 0
        sigma_hat = -sol.sol(0.0)[1]
        thermal = sc.k * T / sc.e
        lam = ref.debye_length_si(valences, conc, T, EPS_R)
        sigma = ref.grahame_charge_density_si(zeta_red * thermal, valences, conc, T, EPS_R)
        assert sigma / (EPS_R * sc.epsilon_0 * thermal / lam) == pytest.approx(sigma_hat, rel=1e-7)


ELECTROLYTES = [([1, -1], [10.0, 10.0]), ([2, -1], [5.0, 10.0]), ([3, -3], [1.0, 1.0])]


@pytest.mark.parametrize("valences,conc", ELECTROLYTES)
@pytest.mark.parametrize("zeta", [-0.2, -0.01, 0.05])
def test_grahame_zeta_si_inverts_charge(valences, conc, zeta: float) -> None:
    # Inverse of the Grahame (1947) relation by root finding.
    sigma = ref.grahame_charge_density_si(zeta, valences, conc, T, EPS_R)
    assert ref.grahame_zeta_si(sigma, valences, conc, T, EPS_R) == pytest.approx(zeta, rel=1e-12)


# --- Debye-Hückel closed forms -------------------------------------------------------------------


@pytest.mark.parametrize("h", [0.01, 0.1, 1.0, 10.0, 100.0])
def test_dh_slit_closed_forms_against_quadrature(h: float) -> None:
    # Burgreen & Nakache (1964), J. Phys. Chem. 68, 1084 (DH limit): psi = zeta cosh x / cosh h.
    zeta = -1.7
    d = ref.dh_slit(h, zeta)
    with mp.workdps(40):
        h = mp.mpf(h)

        def psi(x):
            return zeta * mp.cosh(x) / mp.cosh(h)

        x0 = mp.mpf(h) / 3
        assert abs(mp.diff(psi, x0, 2) - psi(x0)) < 1e-25 * abs(psi(x0)) + 1e-60
        assert rel(d.centre, psi(0)) < 1e-25
        assert rel(d.mean_potential, mp.quad(psi, [0, h]) / h) < 1e-25
        assert rel(d.eo_ratio, 1 - d.mean_potential / zeta) < 1e-25
        assert rel(d.wall_charge, mp.diff(psi, h)) < 1e-25
        assert rel(d.streaming, mp.quad(lambda x: psi(x) * (h**2 - x**2), [0, h])) < 1e-25
        assert rel(ref.dh_slit_zeta_from_charge(h, d.wall_charge), zeta) < 1e-25


@pytest.mark.parametrize("a", [0.1, 1.0, 10.0, 100.0])
def test_dh_capillary_closed_forms_against_quadrature(a: float) -> None:
    # Rice & Whitehead (1965), J. Phys. Chem. 69, 4017: psi = zeta I0(r)/I0(a) solves (1/r)(r psi')' = psi.
    zeta = 2.3
    d = ref.dh_capillary(a, zeta)
    with mp.workdps(40):
        a = mp.mpf(a)

        def psi(r):
            return zeta * mp.besseli(0, r) / mp.besseli(0, a)

        r0 = mp.mpf(a) / 2
        lap = mp.diff(psi, r0, 2) + mp.diff(psi, r0) / r0
        assert abs(lap - psi(r0)) < 1e-25 * abs(psi(r0))
        assert rel(d.centre, psi(0)) < 1e-25
        assert rel(d.mean_potential, 2 * mp.quad(lambda r: psi(r) * r, [0, a]) / a**2) < 1e-25
        assert rel(d.eo_ratio, 1 - d.mean_potential / zeta) < 1e-25
        assert rel(d.wall_charge, mp.diff(psi, a)) < 1e-25
        assert rel(d.streaming, mp.quad(lambda r: psi(r) * (a**2 - r**2) * r, [0, a])) < 1e-25
        assert rel(ref.dh_capillary_zeta_from_charge(a, d.wall_charge), zeta) < 1e-25


@pytest.mark.parametrize("geometry,size", [("slit", 40e-9), ("capillary", 15e-9)])
def test_dh_si_reciprocity(geometry: str, size: float) -> None:
    # Onsager (1931) reciprocity: I_streaming / (-dp/dx) = Q_EO / E, exact within DH.
    s = ref.dh_summary_si(geometry, size, -0.03, 5e-9, EPS_R, 0.89e-3, 1e4, -1e5)
    assert s["streaming_current"] / 1e5 == pytest.approx(s["flow_rate_eo"] / 1e4, rel=1e-13)


# --- Nonlinear slit: independent quadrature -------------------------------------------------------


def _quad_u(res: ref.SlitPB, weight) -> mp.mpf:
    """``int_0^h weight(psi) dx`` by tanh-sinh in ``u`` with ``psi = psi_m + u^2``.

    This substitution differs from the library's (which uses ``psi = psi_m cosh s`` and Chebyshev panels).
    """
    pm, zeta = abs(res.centre), abs(res.zeta)

    def dxdu(u):
        if u == 0:
            return mp.sqrt(2 * pm / mp.sinh(pm))
        # dx = dpsi / sqrt(2 (cosh psi - cosh psi_m)), written without cancellation.
        return u / mp.sqrt(mp.sinh(pm + u * u / 2) * mp.sinh(u * u / 2))

    return mp.quad(lambda u: weight(pm + u * u) * dxdu(u), [0, mp.sqrt(zeta - pm)])


MODERATE = [(1.0, 0.1), (2.0, 1.0), (4.0, 10.0), (10.0, 3.0), (15.0, 0.01), (15.0, 2.0)]


@pytest.mark.parametrize("zeta,h", MODERATE)
def test_pb_slit_against_tanh_sinh_quadrature(zeta: float, h: float) -> None:
    # First integral h = int dpsi / sqrt(2(cosh psi - cosh psi_m)) (Burgreen & Nakache 1964), re-integrated
    # with mpmath's tanh-sinh rule on an independent substitution.
    res = ref.pb_slit(zeta, h)
    with mp.workdps(35):
        assert rel(_quad_u(res, lambda p: 1), h) < 1e-25
        assert rel(_quad_u(res, lambda p: p), res.int_psi) < 1e-25
        assert rel(_quad_u(res, mp.cosh), res.int_cosh) < 1e-25
        assert rel(_quad_u(res, lambda p: 2 * mp.sinh(p / 2) ** 2), res.int_cosh_minus_one) < 1e-25
        assert rel(_quad_u(res, mp.sinh), res.int_sinh) < 1e-25
        assert rel(_quad_u(res, lambda p: zeta - p), res.int_zeta_minus_psi) < 1e-20
        # Wall charge from the first integral at the wall: sigma_hat^2 = 2 (cosh zeta - cosh psi_m).
        assert rel(res.wall_charge**2, 2 * (mp.cosh(zeta) - mp.cosh(res.centre))) < 1e-25


@pytest.mark.parametrize("zeta,h", [(2.0, 1.0), (10.0, 0.1)])
def test_pb_slit_streaming_integral_against_nested_quadrature(zeta: float, h: float) -> None:
    # int sinh(psi) (h^2 - x^2) dx with x(psi) from an inner tanh-sinh quadrature (slow: ~0.5 s, dps 20).
    res = ref.pb_slit(zeta, h)
    with mp.workdps(20):
        pm, u_wall = res.centre, mp.sqrt(res.zeta - res.centre)

        def dxdu(u):
            if u == 0:
                return mp.sqrt(2 * pm / mp.sinh(pm))
            return u / mp.sqrt(mp.sinh(pm + u * u / 2) * mp.sinh(u * u / 2))

        def integrand(u):
            dist = mp.quad(dxdu, [u, u_wall])  # h - x
            return mp.sinh(pm + u * u) * dist * (2 * h - dist) * dxdu(u)

        assert rel(mp.quad(integrand, [0, u_wall]), res.int_stream) < 1e-16


ELLIPTIC = [(1.0, 1.0), (2.0, 1.0), (4.0, 10.0), (12.0, 5.0), (15.0, 0.01), (-3.0, 2.0)]


@pytest.mark.parametrize("zeta,h", ELLIPTIC)
def test_pb_slit_profile_against_elliptic_closed_form(zeta: float, h: float) -> None:
    # Jacobi-elliptic solution psi = psi_m - 2 ln cd(e^{psi_m/2} x / 2 | e^{-2 psi_m}) (derived in the
    # library; cf. Verwey & Overbeek 1948).
    res = ref.pb_slit(zeta, h)
    sign = 1 if zeta > 0 else -1
    with mp.workdps(35):
        assert rel(sign * ref.elliptic_slit_profile(abs(res.centre), h), zeta) < 1e-25
        for frac in (0, 0.3, 0.9, 0.9999, 1):
            x = mp.mpf(frac) * h
            closed = sign * ref.elliptic_slit_profile(abs(res.centre), x)
            assert rel(ref.pb_slit_profile(res, x), closed) < 1e-25


def test_elliptic_profile_solves_pb() -> None:
    # The closed form itself satisfies psi'' = sinh psi and psi'(0) = 0.
    with mp.workdps(40):

        def psi(x):
            return ref.elliptic_slit_profile(0.7, x)

        assert abs(mp.diff(psi, 0)) < 1e-25
        for x in (0.1, 0.8, 2.0):
            assert abs(mp.diff(psi, x, 2) - mp.sinh(psi(x))) < 1e-25 * mp.sinh(psi(x))


KEYS = ("centre", "wall_charge", "int_psi", "int_zeta_minus_psi", "int_cosh", "int_sinh", "int_stream")


@pytest.mark.parametrize("zeta,h", [(1.0, 0.01), (15.0, 0.01), (4.0, 1.0), (10.0, 100.0), (15.0, 1000.0)])
def test_pb_slit_self_convergence(zeta: float, h: float) -> None:
    # Doubling-ish the nodes per panel changes nothing at the 1e-24 level (common practice).
    a, b = ref.pb_slit(zeta, h), ref.pb_slit(zeta, h, nodes=48)
    for key in KEYS:
        assert rel(getattr(a, key), getattr(b, key)) < 1e-24, key
    assert rel(a.h_quadrature, h) < 1e-24


def test_pb_slit_against_solve_bvp() -> None:
    # scipy.integrate.solve_bvp collocation (tol 1e-10) at zeta = 2, h = 1.
    x = np.linspace(0, 1, 50)
    sol = solve_bvp(
        lambda x, y: np.vstack([y[1], np.sinh(y[0])]),
        lambda a, b: np.array([a[1], b[0] - 2.0]),
        x,
        np.vstack([2 * np.ones_like(x), np.zeros_like(x)]),
        tol=1e-10,
        max_nodes=100000,
    )
    assert sol.status == 0
    res = ref.pb_slit(2, 1)

    def integral(f) -> float:
        return quad(lambda s: f(s, sol.sol(s)[0]), 0, 1, epsabs=0, epsrel=1e-13)[0]

    assert float(res.centre) == pytest.approx(sol.sol(0.0)[0], rel=1e-10)
    assert float(res.wall_charge) == pytest.approx(sol.sol(1.0)[1], rel=1e-10)
    assert float(res.int_psi) == pytest.approx(integral(lambda s, p: p), rel=1e-10)
    assert float(res.int_cosh) == pytest.approx(integral(lambda s, p: np.cosh(p)), rel=1e-10)
    assert float(res.int_stream) == pytest.approx(integral(lambda s, p: np.sinh(p) * (1 - s * s)), rel=1e-10)
    assert float(ref.pb_slit_profile(res, 0.5)) == pytest.approx(sol.sol(0.5)[0], rel=1e-10)


# --- Limits ---------------------------------------------------------------------------------------


@pytest.mark.parametrize("h", [0.01, 0.3, 1.0, 10.0, 100.0])
def test_pb_slit_tends_to_debye_huckel(h: float) -> None:
    # As zeta -> 0 the PB slit tends to the DH closed forms (Burgreen & Nakache 1964) with O(zeta^2) relative
    # corrections: at zeta = 1e-8 they agree to 1e-14, and the deviation quadruples when zeta doubles.
    tiny = 1e-8
    res, lin = ref.pb_slit(tiny, h), ref.dh_slit(h, tiny)
    assert rel(res.centre, lin.centre) < 1e-14
    assert rel(res.mean_potential, lin.mean_potential) < 1e-14
    assert rel(res.eo_ratio, lin.eo_ratio) < 1e-14
    assert rel(res.wall_charge, lin.wall_charge) < 1e-14
    assert rel(res.int_stream, lin.streaming) < 1e-14
    ratio = rel(ref.pb_slit(2e-3, h).eo_ratio, ref.dh_slit(h, 2e-3).eo_ratio) / rel(
        ref.pb_slit(1e-3, h).eo_ratio, ref.dh_slit(h, 1e-3).eo_ratio
    )
    assert ratio == pytest.approx(4.0, rel=1e-3)


@pytest.mark.parametrize("zeta", [1.0, 4.0, 15.0, -10.0])
@pytest.mark.parametrize("h", [100.0, 1000.0])
def test_pb_slit_tends_to_gouy_chapman(zeta: float, h: float) -> None:
    # Wide slit: wall charge -> Grahame (1947); near-wall profile -> Gouy (1910)/Chapman (1913);
    # mid-plane potential -> superposed tails 8 tanh(zeta/4) e^{-h} (linear superposition, common practice).
    res = ref.pb_slit(zeta, h)
    assert rel(res.wall_charge, ref.grahame_charge(zeta)) < 1e-25
    assert rel(res.centre, 8 * mp.tanh(mp.mpf(zeta) / 4) * mp.exp(-mp.mpf(h))) < 1e-25
    for dist in (0.0, 0.1, 1.0, 5.0):
        assert rel(ref.pb_slit_profile(res, mp.mpf(h) - dist), ref.gouy_chapman_potential(dist, zeta)) < 1e-24
    fixed = ref.pb_slit_fixed_charge(ref.grahame_charge(zeta), h)
    assert rel(fixed.zeta, zeta) < 1e-24


@pytest.mark.parametrize("zeta", [1.0, 4.0, 10.0, 15.0])
@pytest.mark.parametrize("h", [0.01, 1.0, 10.0, 1000.0])
def test_fixed_charge_round_trip(zeta: float, h: float) -> None:
    # The fixed-charge solve at the charge of the fixed-potential solution returns the same slit.
    res = ref.pb_slit(-zeta, h)
    back = ref.pb_slit_fixed_charge(res.wall_charge, h)
    assert rel(back.zeta, -zeta) < 1e-25
    assert rel(back.centre, res.centre) < 1e-24
    assert rel(back.int_stream, res.int_stream) < 1e-24


# --- Identities -----------------------------------------------------------------------------------


@pytest.mark.parametrize("zeta", [1.0, -4.0, 10.0, 15.0])
@pytest.mark.parametrize("h", [0.01, 0.1, 1.0, 10.0, 100.0, 1000.0])
def test_reciprocity_and_gauss_identities(zeta: float, h: float) -> None:
    # Integrating Poisson psi'' = sinh psi by parts (psi'(0) = 0, psi(h) = zeta):
    #   int_0^h sinh psi (h^2 - x^2) dx = [psi'(h^2 - x^2)]_0^h + 2 int x psi' dx = 2 h zeta - 2 int psi dx
    #                                   = 2 int_0^h (zeta - psi) dx,
    # the slit form of Onsager (1931) reciprocity (streaming current <-> EO flow); and Gauss's law
    # int_0^h sinh psi dx = psi'(h) = sigma_hat.  The library computes both sides independently.
    res = ref.pb_slit(zeta, h)
    assert rel(res.int_stream, 2 * res.int_zeta_minus_psi) < 1e-24
    assert rel(res.int_sinh, res.wall_charge) < 1e-24
    assert rel(res.int_psi + res.int_zeta_minus_psi, mp.mpf(zeta) * h) < 1e-24
    assert rel(res.int_cosh - res.int_cosh_minus_one, h) < 1e-24


def test_odd_even_symmetry_in_zeta() -> None:
    # psi -> -psi maps solutions to solutions (common practice).
    a, b = ref.pb_slit(7.0, 0.5), ref.pb_slit(-7.0, 0.5)
    for key in ("centre", "wall_charge", "int_psi", "int_sinh", "int_stream"):
        assert rel(getattr(b, key), -getattr(a, key)) < 1e-28
    assert rel(b.int_cosh, a.int_cosh) < 1e-28
    assert rel(b.eo_ratio, a.eo_ratio) < 1e-28


def test_symmetric_slit_si_translation() -> None:
    # SI translation: Onsager (1931) reciprocity in SI units, bulk conductance at zeta -> 0, and agreement
    # with the DH SI forms (Burgreen & Nakache 1964) at small zeta.
    z, c, d = 2, 3.0, (0.706e-9, 1.065e-9)
    field, grad, eta = 1e4, -1e5, 0.89e-3
    res = ref.pb_slit(-4.0, 2.0)
    s = ref.symmetric_slit_summary_si(res, z, c, d, T, EPS_R, eta, field, grad)
    assert s["streaming_current"] / -grad == pytest.approx(s["flow_rate_eo"] / field, rel=1e-13)
    lam = s["debye_length"]
    assert s["zeta"] == pytest.approx(-4.0 * sc.k * T / (z * sc.e), rel=1e-14)
    assert s["wall_charge_density"] < 0
    assert s["streaming_current"] / grad < 0  # negative walls: positive counter-charge carried downstream
    # Bulk conduction kappa_bulk H, kappa_bulk = (e^2 N_A / kT) z^2 c (D+ + D-)
    # (Nernst-Einstein; common practice).
    flat = ref.symmetric_slit_summary_si(ref.pb_slit(1e-9, 2.0), z, c, d, T, EPS_R, eta, field, grad)
    bulk = field * sc.e**2 * sc.N_A / (sc.k * T) * z * z * c * sum(d) * 4.0 * lam
    assert flat["conduction_current"] == pytest.approx(bulk, rel=1e-8)
    small = ref.symmetric_slit_summary_si(ref.pb_slit(-1e-4, 2.0), z, c, d, T, EPS_R, eta, field, grad)
    lin = ref.dh_summary_si("slit", 4.0 * lam, small["zeta"], lam, EPS_R, eta, field, grad)
    for key in lin:
        assert small[key] == pytest.approx(lin[key], rel=1e-8, abs=1e-300), key


def test_trivalent_scaling_of_the_si_translation() -> None:
    # z:z scaling psi = z e phi / kT: a wide 3:3 slit carries the Grahame (1947) charge of its wall potential.
    c = 2.0
    res = ref.pb_slit(-5.0, 100.0)
    s = ref.symmetric_slit_summary_si(res, 3, c, (0.619e-9, 0.896e-9), T, EPS_R, 0.89e-3, 1e4, -1e5)
    assert s["zeta"] == pytest.approx(-5.0 * sc.k * T / (3 * sc.e), rel=1e-14)
    grahame = ref.grahame_charge_density_si(s["zeta"], [3, -3], [c, c], T, EPS_R)
    assert s["wall_charge_density"] == pytest.approx(grahame, rel=1e-13)
    assert s["debye_length"] == pytest.approx(
        ref.debye_length_si([1, -1], [9 * c, 9 * c], T, EPS_R), rel=1e-14
    )
