"""``edl_solver.solve`` against references from outside the project.

References (see ``tests/reference_solutions.py``, which does not import ``edl_solver``):

* Gouy (1910) / Chapman (1913) single-wall profile and the Grahame (1947) charge relation, for wide slits;
* Debye-Hückel closed forms: Burgreen & Nakache (1964) slit, Rice & Whitehead (1965) capillary;
* the nonlinear symmetric slit from the first integral of Burgreen & Nakache (1964), in mpmath;
* Onsager (1931) reciprocity between streaming current and electroosmotic flow.

Slit sizes are given as ``kappa h`` with ``h`` the *half*-height (``H = 2 h lambda_D``); capillary sizes as
``kappa a`` with ``a`` the radius.  Failures print the case and, per summary key, the value, the reference
and the relative error.  Cases marked ``slow`` complete the nonlinear grid; the default run keeps a subset.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants as sc
from scipy.interpolate import CubicSpline

import edl_solver as edl
from tests import reference_solutions as ref

T = 298.15  # K
EPS_R = 78.4  # water at 25 C (from memory)
ETA = 0.89e-3  # Pa s, water at 25 C (from memory)
FIELD = 1e4  # V/m
GRAD = -1e5  # Pa/m
RTOL = 1e-6  # default accuracy of the solver (contract: target relative error of summary values)
THERMAL = sc.k * T / sc.e  # kT/e, V
EPS = EPS_R * sc.epsilon_0

# (name, valence, diffusivity m^2/s, stoichiometric factor); limiting ionic diffusivities at 25 C
# (from memory; CRC Handbook of Chemistry and Physics tables).  The references use the same values.
SALTS: dict[str, tuple[tuple[str, int, float, int], ...]] = {
    "KCl": (("K+", 1, 1.957e-9, 1), ("Cl-", -1, 2.032e-9, 1)),
    "MgSO4": (("Mg2+", 2, 0.706e-9, 1), ("SO4 2-", -2, 1.065e-9, 1)),
    "LaFe(CN)6": (("La3+", 3, 0.619e-9, 1), ("Fe(CN)6 3-", -3, 0.896e-9, 1)),
    "CaCl2": (("Ca2+", 2, 0.792e-9, 1), ("Cl-", -1, 2.032e-9, 2)),
}

# Salt concentration (mol/m^3) per kappa h, keeping H = 2 h lambda_D between ~1 nm and ~20 um.
CONC = {0.01: 0.01, 0.1: 0.1, 1.0: 1.0, 10.0: 10.0, 100.0: 100.0, 1000.0: 100.0}


# --- helpers -------------------------------------------------------------------------------------


def electrolyte(salt: str, c: float) -> edl.Electrolyte:
    """The salt at concentration ``c`` (mol/m^3 of formula units)."""
    return edl.Electrolyte(
        [edl.Ion(name=name, valence=z, concentration=n * c, diffusivity=d) for name, z, d, n in SALTS[salt]]
    )


def salt_lists(salt: str, c: float) -> tuple[list[int], list[float]]:
    """Valences and ion concentrations of the salt."""
    return [z for _, z, _, _ in SALTS[salt]], [n * c for _, _, _, n in SALTS[salt]]


def debye(salt: str, c: float) -> float:
    """Debye length (m) of the bulk electrolyte (common practice)."""
    return ref.debye_length_si(*salt_lists(salt, c), T, EPS_R)


def solve(geometry, salt: str, c: float, wall, model: str = "pb", accuracy: float | None = None):
    """Build the case through the public API and solve it."""
    kwargs = {}
    if accuracy is not None:
        kwargs["numerics"] = edl.Numerics(accuracy=accuracy)
    case = edl.Case(
        geometry=geometry,
        electrolyte=electrolyte(salt, c),
        wall=wall,
        solvent=edl.Solvent(temperature=T, relative_permittivity=EPS_R, viscosity=ETA),
        field=FIELD,
        pressure_gradient=GRAD,
        model=model,
        **kwargs,
    )
    return edl.solve(case)


def compare(summary: dict, expected: dict, keys, rtol: float, label: str, scales: dict | None = None) -> None:
    """Assert ``|got - want| <= rtol * scale`` per key (default scale ``|want|``); report all failures."""
    scales = scales or {}
    bad = []
    for key in keys:
        got, want = float(summary[key]), float(expected[key])
        scale = scales.get(key, abs(want))
        err = abs(got - want) / scale if scale > 0 else abs(got)
        if not err <= rtol:
            bad.append(f"  {key}: got {got!r}, reference {want!r}, relative error {err:.3e} > {rtol:g}")
    assert not bad, f"{label}\n" + "\n".join(bad)


def centre_scale(expected: dict) -> dict[str, float]:
    """Centre potential relative to itself, or to the wall potential when it is tiny (below 1 % of it)."""
    centre, zeta = abs(float(expected["centre_potential"])), abs(float(expected["zeta"]))
    return {"centre_potential": zeta if centre < 1e-2 * zeta else centre}


def with_thin_layer_zeta(expected: dict, zeta_thin: float) -> dict:
    """Thin-layer (HS) velocity and eo_ratio of a fixed-charge wall.

    The thin-layer slip model given the same wall *charge* has the isolated-wall potential of that charge
    (Grahame 1947 for PB, ``sigma lambda / eps`` for DH; common practice), not the potential the wall takes
    in the channel: ``hs_velocity = -eps zeta_thin E / eta``, ``eo_ratio = mean_velocity_eo / hs_velocity``.
    For fixed-potential walls the two coincide.  (Reading of the contract's "thin-layer mean velocity".)
    """
    out = dict(expected)
    out["hs_velocity"] = -EPS * zeta_thin * FIELD / ETA
    out["eo_ratio"] = expected["mean_velocity_eo"] / out["hs_velocity"]
    return out


# --- wide slit -> Gouy-Chapman / Grahame ------------------------------------------------------------

WIDE_KH = 1000.0  # half-height in Debye lengths


@pytest.mark.parametrize(
    "salt,zeta",
    [("KCl", -0.05), ("KCl", -0.15), ("MgSO4", -0.08), ("CaCl2", -0.06), ("CaCl2", 0.04)],
    ids=lambda v: str(v),
)
def test_wide_slit_wall_charge_matches_grahame(salt: str, zeta: float) -> None:
    # Grahame (1947), Chem. Rev. 41, 441: sigma^2 = 2 eps kT N_A sum c_i (exp(-z_i e zeta/kT) - 1), exact
    # for a single wall; the second wall is 2000 lambda_D away (interaction ~ e^{-2000}).
    c = 10.0
    lam = debye(salt, c)
    result = solve(edl.Slit(height=2 * WIDE_KH * lam), salt, c, edl.Wall(zeta=zeta))
    expected = {
        "debye_length": lam,
        "wall_charge_density": ref.grahame_charge_density_si(zeta, *salt_lists(salt, c), T, EPS_R),
    }
    compare(result.summary, expected, expected, RTOL, f"wide slit {salt} zeta={zeta} V")


@pytest.mark.parametrize(
    "salt,sigma", [("KCl", -0.02), ("KCl", -0.1), ("MgSO4", -0.05), ("CaCl2", 0.03)], ids=lambda v: str(v)
)
def test_wide_slit_fixed_charge_gives_grahame_zeta(salt: str, sigma: float) -> None:
    # Inverse Grahame (1947) relation for a single wall of fixed charge.
    c = 10.0
    lam = debye(salt, c)
    result = solve(edl.Slit(height=2 * WIDE_KH * lam), salt, c, edl.Wall(charge_density=sigma))
    expected = {"zeta": ref.grahame_zeta_si(sigma, *salt_lists(salt, c), T, EPS_R)}
    compare(result.summary, expected, expected, RTOL, f"wide slit {salt} sigma={sigma} C/m^2")


@pytest.mark.parametrize("salt,zeta", [("KCl", -0.05), ("KCl", -0.2), ("MgSO4", 0.1)], ids=lambda v: str(v))
def test_wide_slit_profile_near_walls_matches_gouy_chapman(salt: str, zeta: float) -> None:
    # Gouy (1910), Chapman (1913): psi = 4 artanh(tanh(zeta/4) e^{-d}) within 5 lambda_D of each wall, with
    # the solver profile interpolated by a cubic spline (4th order, below the solver's 2nd-order error).
    c = 10.0
    z = SALTS[salt][0][1]
    lam = debye(salt, c)
    height = 2 * WIDE_KH * lam
    result = solve(edl.Slit(height=height), salt, c, edl.Wall(zeta=zeta))
    y = np.asarray(result.profiles.coordinate, dtype=float)
    phi = np.asarray(result.profiles.potential, dtype=float)
    zeta_red = z * zeta / THERMAL
    distances = np.array([0.1, 0.25, 0.5, 1.0, 2.0, 3.5, 5.0])
    bad = []
    for side, dist_of_y in (("bottom", y), ("top", height - y)):
        near = dist_of_y <= 8 * lam
        order = np.argsort(dist_of_y[near])
        spline = CubicSpline(dist_of_y[near][order] / lam, phi[near][order])
        for d in distances:
            want = float(ref.gouy_chapman_potential(d, zeta_red)) * THERMAL / z
            got = float(spline(d))
            if not abs(got - want) <= 1e-5 * abs(zeta):
                bad.append(f"  {side} wall, d={d} lambda: got {got!r} V, GC {want!r} V")
    assert not bad, f"wide slit {salt} zeta={zeta} V: profile differs from Gouy-Chapman\n" + "\n".join(bad)


# --- Debye-Hückel model against closed forms --------------------------------------------------------

DH_SIZES = [0.1, 1.0, 10.0, 100.0]
DH_KEYS = (
    "debye_length",
    "centre_potential",
    "mean_potential",
    "eo_ratio",
    "hs_velocity",
    "mean_velocity_eo",
    "flow_rate_eo",
    "flow_rate_pressure",
)


def dh_geometry(kind: str, size: float, lam: float):
    """Slit of half-height ``size`` lambda_D or capillary of radius ``size`` lambda_D; with the SI size."""
    if kind == "slit":
        return edl.Slit(height=2 * size * lam), 2 * size * lam
    return edl.Capillary(radius=size * lam), size * lam


@pytest.mark.parametrize("kind", ["slit", "capillary"])
@pytest.mark.parametrize("size", DH_SIZES)
def test_dh_fixed_zeta_matches_closed_forms(kind: str, size: float) -> None:
    # Burgreen & Nakache (1964), J. Phys. Chem. 68, 1084 (slit); Rice & Whitehead (1965), J. Phys. Chem. 69,
    # 4017 (capillary): centre/mean potential, eo_ratio, wall charge; Poiseuille flow (common practice).
    c, zeta = CONC[size], -0.025
    lam = debye("KCl", c)
    geometry, si_size = dh_geometry(kind, size, lam)
    result = solve(geometry, "KCl", c, edl.Wall(zeta=zeta), model="dh")
    expected = ref.dh_summary_si(kind, si_size, zeta, lam, EPS_R, ETA, FIELD, GRAD)
    keys = (*DH_KEYS, "wall_charge_density")
    compare(result.summary, expected, keys, RTOL, f"DH {kind} kappa*size={size}", centre_scale(expected))


@pytest.mark.parametrize("kind", ["slit", "capillary"])
@pytest.mark.parametrize("size", DH_SIZES)
def test_dh_fixed_charge_matches_closed_forms(kind: str, size: float) -> None:
    # zeta = sigma_hat / tanh h (Burgreen & Nakache 1964); zeta = sigma_hat I0(a)/I1(a) (Rice & Whitehead
    # 1965), then the same closed forms as for fixed zeta.
    c = CONC[size]
    lam = debye("KCl", c)
    geometry, si_size = dh_geometry(kind, size, lam)
    sigma = -0.03 * EPS / lam * (math.tanh(size) if kind == "slit" else 0.5)
    sigma_volts = sigma * lam / EPS  # reduced charge lambda sigma / eps, in volts
    if kind == "slit":
        zeta = float(ref.dh_slit_zeta_from_charge(size, sigma_volts))
    else:
        zeta = float(ref.dh_capillary_zeta_from_charge(size, sigma_volts))
    result = solve(geometry, "KCl", c, edl.Wall(charge_density=sigma), model="dh")
    expected = with_thin_layer_zeta(
        ref.dh_summary_si(kind, si_size, zeta, lam, EPS_R, ETA, FIELD, GRAD), sigma_volts
    )
    keys = (*DH_KEYS, "zeta")
    label = f"DH {kind} kappa*size={size} sigma={sigma}"
    compare(result.summary, expected, keys, RTOL, label, centre_scale(expected))


@pytest.mark.parametrize("kind", ["slit", "capillary"])
@pytest.mark.parametrize("size", [0.1, 1.0, 10.0])
def test_dh_streaming_current_matches_closed_form(kind: str, size: float) -> None:
    # DH streaming current int rho_e u_p dA with the linearised charge rho_e = -eps phi / lambda^2:
    # slit (eps G lambda / eta) 2 zeta (h - tanh h), capillary pi eps G lambda^2 zeta a^2 I2(a)/(eta I0(a))
    # (derived from Burgreen & Nakache 1964 / Rice & Whitehead 1965 profiles, see reference_solutions).
    c, zeta = CONC[size], -0.025
    lam = debye("KCl", c)
    geometry, si_size = dh_geometry(kind, size, lam)
    result = solve(geometry, "KCl", c, edl.Wall(zeta=zeta), model="dh")
    expected = ref.dh_summary_si(kind, si_size, zeta, lam, EPS_R, ETA, FIELD, GRAD)
    compare(result.summary, expected, ("streaming_current",), RTOL, f"DH {kind} kappa*size={size}")


@pytest.mark.parametrize("kind", ["slit", "capillary"])
@pytest.mark.parametrize("size", [0.1, 1.0, 10.0])
def test_pb_small_zeta_approaches_dh(kind: str, size: float) -> None:
    # PB -> DH as zeta -> 0 with O(zeta^2) relative corrections (sinh psi = psi + psi^3/6 + ...): at
    # zeta = 0.01 kT/e the PB solution must lie within zeta^2 = 1e-4 (relative) of the DH closed forms
    # (Burgreen & Nakache 1964; Rice & Whitehead 1965).
    c = CONC[size]
    zeta_red = 0.01
    zeta = -zeta_red * THERMAL
    lam = debye("KCl", c)
    geometry, si_size = dh_geometry(kind, size, lam)
    result = solve(geometry, "KCl", c, edl.Wall(zeta=zeta), model="pb")
    expected = ref.dh_summary_si(kind, si_size, zeta, lam, EPS_R, ETA, FIELD, GRAD)
    keys = ("centre_potential", "mean_potential", "eo_ratio", "wall_charge_density", "streaming_current")
    compare(
        result.summary,
        expected,
        keys,
        zeta_red**2,
        f"PB vs DH {kind} kappa*size={size}",
        centre_scale(expected),
    )
    if kind == "slit":  # and to the exact nonlinear reference (Burgreen & Nakache 1964 first integral)
        exact = ref.symmetric_slit_summary_si(
            ref.pb_slit(-zeta_red, size), 1, c, (1.957e-9, 2.032e-9), T, EPS_R, ETA, FIELD, GRAD
        )
        compare(result.summary, exact, keys, RTOL, f"PB slit kappa*h={size} zeta=0.01", centre_scale(exact))


# --- nonlinear symmetric slit against the first-integral reference ----------------------------------

GRID_ZETA = [1.0, 4.0, 10.0, 15.0]  # reduced wall potential z e zeta / kT
GRID_KH = [0.01, 0.1, 1.0, 10.0, 100.0, 1000.0]  # half-height in Debye lengths
GRID_KEYS = (
    "debye_length",
    "zeta",
    "wall_charge_density",
    "centre_potential",
    "mean_potential",
    "hs_velocity",
    "mean_velocity_eo",
    "eo_ratio",
    "flow_rate_eo",
    "flow_rate_pressure",
    "conduction_current",
    "streaming_current",
)
# Default-run subset: spans every zeta, every kappa h, both salts and both wall conditions.
DEFAULT_GRID = {
    (1.0, 0.01, "KCl", "zeta"),
    (4.0, 1.0, "KCl", "zeta"),
    (10.0, 10.0, "MgSO4", "zeta"),
    (15.0, 1000.0, "KCl", "zeta"),
    (15.0, 0.1, "MgSO4", "charge"),
    (4.0, 100.0, "KCl", "charge"),
    (1.0, 1.0, "MgSO4", "charge"),
    (10.0, 0.01, "KCl", "charge"),
}


def _grid_params():
    params = [
        pytest.param(zr, kh, salt, bc, id=f"{salt}-zeta{zr:g}kT-kh{kh:g}-fixed_{bc}")
        if (zr, kh, salt, bc) in DEFAULT_GRID
        else pytest.param(
            zr, kh, salt, bc, id=f"{salt}-zeta{zr:g}kT-kh{kh:g}-fixed_{bc}", marks=pytest.mark.slow
        )
        for bc in ("zeta", "charge")
        for salt in ("KCl", "MgSO4")
        for zr in GRID_ZETA
        for kh in GRID_KH
    ]
    params.append(pytest.param(4.0, 1.0, "LaFe(CN)6", "zeta", id="LaFe(CN)6-zeta4kT-kh1-fixed_zeta"))
    return params


def nonlinear_case(zeta_red: float, kh: float, salt: str, bc: str):
    """Wall, geometry and SI reference of a symmetric slit with negative walls.

    Fixed charge uses the Grahame charge of the single wall at ``zeta_red``, ``-2 sinh(zeta_red/2)``
    (reduced), so the slit's wall potential differs from ``zeta_red`` in narrow channels, while the
    thin-layer potential (and so ``hs_velocity``, ``eo_ratio``) is ``-zeta_red``.
    """
    z = SALTS[salt][0][1]
    c = CONC[kh]
    lam = debye(salt, c)
    if bc == "zeta":
        res = ref.pb_slit(-zeta_red, kh)
    else:
        res = ref.pb_slit_fixed_charge(-ref.grahame_charge(zeta_red), kh)
    diffusivities = (SALTS[salt][0][2], SALTS[salt][1][2])
    expected = ref.symmetric_slit_summary_si(res, z, c, diffusivities, T, EPS_R, ETA, FIELD, GRAD)
    if bc == "zeta":
        wall = edl.Wall(zeta=expected["zeta"])
    else:
        wall = edl.Wall(charge_density=expected["wall_charge_density"])
        # The Grahame potential of this charge on an isolated wall is -zeta_red by construction.
        expected = with_thin_layer_zeta(expected, -zeta_red * THERMAL / z)
    return edl.Slit(height=2 * kh * lam), c, wall, expected


@pytest.mark.parametrize("zeta_red,kh,salt,bc", _grid_params())
def test_nonlinear_slit_matches_first_integral_reference(
    zeta_red: float, kh: float, salt: str, bc: str
) -> None:
    # Burgreen & Nakache (1964), J. Phys. Chem. 68, 1084: first integral psi'^2 = 2(cosh psi - cosh psi_m),
    # evaluated to ~25 digits in mpmath (reference_solutions.pb_slit / pb_slit_fixed_charge).
    geometry, c, wall, expected = nonlinear_case(zeta_red, kh, salt, bc)
    result = solve(geometry, salt, c, wall)
    label = f"PB slit {salt} zeta={zeta_red} kT/e kappa*h={kh} fixed {bc}"
    compare(result.summary, expected, GRID_KEYS, RTOL, label, centre_scale(expected))


@pytest.mark.parametrize(
    "zeta_red,kh,salt,bc", [(4.0, 1.0, "KCl", "zeta"), (10.0, 100.0, "MgSO4", "charge")], ids=["KCl", "MgSO4"]
)
def test_nonlinear_slit_high_accuracy(zeta_red: float, kh: float, salt: str, bc: str) -> None:
    # As above with Numerics(accuracy=1e-9): summary values within 1e-8 of the reference.
    geometry, c, wall, expected = nonlinear_case(zeta_red, kh, salt, bc)
    result = solve(geometry, salt, c, wall, accuracy=1e-9)
    label = f"PB slit (accuracy 1e-9) {salt} zeta={zeta_red} kT/e kappa*h={kh} fixed {bc}"
    compare(result.summary, expected, GRID_KEYS, 1e-8, label, centre_scale(expected))


# --- Onsager reciprocity ----------------------------------------------------------------------------

RECIPROCITY_CASES = [
    pytest.param("slit", "KCl", ("zeta", -0.06), "pb", id="slit-KCl-zeta"),
    pytest.param("slit", "KCl", ("charge", -0.02), "pb", id="slit-KCl-charge"),
    pytest.param("slit", "KCl", (("zeta", -0.08), ("zeta", -0.02)), "pb", id="slit-KCl-asymmetric-zeta"),
    pytest.param("slit", "KCl", (("zeta", -0.05), ("charge", 0.01)), "pb", id="slit-KCl-mixed-walls"),
    pytest.param("slit", "CaCl2", (("zeta", -0.04), ("zeta", 0.03)), "pb", id="slit-CaCl2-opposite-walls"),
    pytest.param("slit", "KCl", (("zeta", -0.03), ("zeta", -0.01)), "dh", id="slit-KCl-asymmetric-dh"),
    pytest.param("capillary", "KCl", ("zeta", -0.06), "pb", id="capillary-KCl-zeta"),
    pytest.param("capillary", "KCl", ("charge", -0.02), "pb", id="capillary-KCl-charge"),
    pytest.param("capillary", "CaCl2", ("zeta", -0.1), "pb", id="capillary-CaCl2-zeta"),
    pytest.param("capillary", "KCl", ("zeta", -0.03), "dh", id="capillary-KCl-dh"),
]


def make_wall(spec):
    """``("zeta", V)`` / ``("charge", C/m^2)``, or a (bottom, top) pair of those."""
    if isinstance(spec[0], tuple):
        return tuple(make_wall(s) for s in spec)
    kind, value = spec
    return edl.Wall(zeta=value) if kind == "zeta" else edl.Wall(charge_density=value)


@pytest.mark.parametrize("kind,salt,wall,model", RECIPROCITY_CASES)
def test_onsager_reciprocity(kind: str, salt: str, wall, model: str) -> None:
    # Onsager (1931), Phys. Rev. 37, 405 (from memory): streaming current per pressure gradient equals EO
    # flow per field, I_s / (-dp/dx) = Q_EO / E.  For the slit, integrating Poisson by parts gives both
    # sides as -(eps/eta) int (zeta_mean - phi) dy for any electrolyte and any pair of walls.
    c = 10.0
    lam = debye(salt, c)
    geometry = edl.Slit(height=6 * lam) if kind == "slit" else edl.Capillary(radius=3 * lam)
    s = solve(geometry, salt, c, make_wall(wall), model=model).summary
    lhs, rhs = s["streaming_current"] / -GRAD, s["flow_rate_eo"] / FIELD
    assert lhs != 0.0
    assert math.isclose(lhs, rhs, rel_tol=1e-8), (
        f"{kind} {salt} {wall} {model}: I_s/(-G) = {lhs!r}, Q_EO/E = {rhs!r}, "
        f"rel diff {abs(lhs / rhs - 1):.3e}"
    )
