"""Charge-regulating walls (acid-base sites, Stern layer, gate electrode) against references outside the project.

What is checked, and against what:

1. The returned wall state obeys the mass-action law of its sites and the Stern relation: recomputed here
   with an independent closed-form implementation (textbook acid-base equilibria with the Boltzmann factor
   of the proton at the charge plane; Behrens & Grier 2001, J. Chem. Phys. 115, 6716, from memory, use
   exactly this model for silica).
2. Wide channel, high salt: each wall is an isolated Gouy-Chapman layer, whose charge and potential obey the
   Grahame (1947, Chem. Rev. 41, 441) relation.
3. Silica trends (Behrens & Grier 2001, from memory) and the lowering of the dissociation by overlap.
4. A gate electrode in the Debye-Hückel model: capacitors in series (derived below; Burgreen & Nakache 1964
   and Rice & Whitehead 1965 give the DH profiles used).
5. Exact reduction of regulated walls to the plain fixed-charge wall in their limits.
6. Input errors name the field, on one line.
7. Robust convergence over pH 2-11, 0.01-100 mM and 2 nm - 10 um.

Conventions (the package contract): sigma = eps dphi/dn with n from the liquid into the wall, so sigma and
zeta share their sign; K = 10^-pK mol/L per deprotonation step; [H+]_0 = [H+]_bulk exp(-e psi_0 / kT).
The reference code below imports nothing from ``edl_solver``; constants are CODATA 2018 (scipy.constants).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants as sc
from scipy.special import i0e, i1e

import edl_solver as edl
from edl_solver.inputs.wall import Site

T = 298.15  # K
EPS_R = 78.4  # water at 25 C (from memory; an input here, so any value would do)
EPS = EPS_R * sc.epsilon_0  # F/m
VT = sc.k * T / sc.e  # thermal voltage kT/e, V
SOLVENT = edl.Solvent(temperature=T, relative_permittivity=EPS_R, viscosity=0.89e-3)
TIGHT = edl.Numerics(accuracy=1e-11)  # for checks of identities finer than the default 1e-6

SILANOL = Site(density="8 nm^-2", pK=7.5, charges=(0, -1), name="silanol")  # Behrens & Grier 2001 (from memory)
AMINE = Site(density="2 nm^-2", pK=9.0, charges=(1, 0), name="amine")
AMPHOTERIC = Site(density="5 nm^-2", pK=(4.0, 8.0), charges=(1, 0, -1), name="amphoteric")


# --- independent reference: site chemistry -------------------------------------------------------------


def proton_at_plane(pH: float, psi0: float) -> float:
    """[H+]_0 in mol/L at the charge plane: Boltzmann factor of the bulk proton concentration 10^-pH."""
    return 10.0 ** (-pH) * math.exp(-psi0 / VT)


def acid_charge(psi0: float, pH: float, pK: float, density: float) -> tuple[float, float]:
    """AH = A- + H+ (e.g. SiOH = SiO- + H+): K = [A-][H+]_0/[AH], so the dissociated fraction is
    alpha = 1/(1 + [H+]_0/K) and sigma = -e Gamma alpha. Returns (sigma, |charge| scale), C/m^2."""
    alpha = 1.0 / (1.0 + proton_at_plane(pH, psi0) / 10.0 ** (-pK))
    return -sc.e * density * alpha, sc.e * density * alpha


def base_charge(psi0: float, pH: float, pK: float, density: float) -> tuple[float, float]:
    """BH+ = B + H+ (amine): K = [B][H+]_0/[BH+], protonated fraction 1/(1 + K/[H+]_0), sigma = +e Gamma theta."""
    theta = 1.0 / (1.0 + 10.0 ** (-pK) / proton_at_plane(pH, psi0))
    return sc.e * density * theta, sc.e * density * theta


def amphoteric_charge(psi0: float, pH: float, pK1: float, pK2: float, density: float) -> tuple[float, float]:
    """SH2+ = SH + H+ (K1), SH = S- + H+ (K2). Three-state partition function with weights relative to SH2+:
    1, K1/h, K1 K2/h^2 (h = [H+]_0), so sigma = e Gamma (h^2 - K1 K2)/(h^2 + K1 h + K1 K2)."""
    h = proton_at_plane(pH, psi0)
    k1, k2 = 10.0 ** (-pK1), 10.0 ** (-pK2)
    z = h * h + k1 * h + k1 * k2
    return sc.e * density * (h * h - k1 * k2) / z, sc.e * density * (h * h + k1 * k2) / z


def site_charge(site: Site, psi0: float, pH: float) -> tuple[float, float]:
    """Charge of one kind of site by its closed form, chosen by the charges of its states."""
    if site.charges == (0, -1):
        return acid_charge(psi0, pH, site.pK, site.density)
    if site.charges == (1, 0):
        return base_charge(psi0, pH, site.pK, site.density)
    if site.charges == (1, 0, -1):
        return amphoteric_charge(psi0, pH, *site.pK, site.density)
    raise AssertionError(f"no reference for site charges {site.charges}")


def wall_charge(wall: edl.Wall, psi0: float, pH: float) -> tuple[float, float]:
    """Fixed part + sites at the charge-plane potential psi0 (V): (sigma, scale of the terms), C/m^2."""
    fixed = wall.charge_density or 0.0
    sigma, scale = fixed, abs(fixed)
    for site in wall.sites:
        q, s = site_charge(site, psi0, pH)
        sigma += q
        scale += s
    return sigma, scale


def grahame_charge(zeta: float, c: float) -> float:
    """sigma = sqrt(8 c N_A eps kT) sinh(e zeta / 2kT), 1:1 salt of c mol/m^3 (Grahame 1947, Chem. Rev. 41, 441)."""
    return math.sqrt(8.0 * c * sc.N_A * EPS * sc.k * T) * math.sinh(zeta / (2.0 * VT))


def kappa(c: float) -> float:
    """Inverse Debye length of a 1:1 salt, kappa^2 = 2 e^2 N_A c / (eps kT), 1/m (common practice)."""
    return math.sqrt(2.0 * sc.e**2 * sc.N_A * c / (EPS * sc.k * T))


def kcl(c: float, pH: float | None = None, water_ions: bool = False) -> edl.Electrolyte:
    return edl.Electrolyte.from_ions({"K+": c, "Cl-": c}, pH=pH, water_ions=water_ions)


def solve(geometry, electrolyte, wall, numerics=TIGHT, model="pb") -> dict:
    result = edl.solve(edl.Case(geometry=geometry, electrolyte=electrolyte, wall=wall, solvent=SOLVENT,
                                field=1e3, model=model, numerics=numerics))
    assert result.status == "converged", result.message
    return result.summary


# --- 1. site equilibrium and the Stern relation ----------------------------------------------------------

SILICA = edl.Wall.silica()
WALLS = {
    "silica": SILICA,
    "silica+fixed": edl.Wall(sites=(SILANOL,), charge_density="5 mC/m^2", stern_capacitance=2.9),
    "amine, Stern": edl.Wall(sites=(AMINE,), stern_capacitance=1.0),
    "amine, no Stern": edl.Wall(sites=(AMINE,)),
    "amphoteric": edl.Wall(sites=(AMPHOTERIC,), stern_capacitance=1.5),
    "amphoteric+fixed": edl.Wall(sites=(AMPHOTERIC,), charge_density="-2 mC/m^2", stern_capacitance=1.5),
    "silanol+amine": edl.Wall(sites=(SILANOL, AMINE), stern_capacitance=0.8),
}
SLIT = edl.Slit(height="40 nm")
# (wall, geometry, pH, KCl mol/m^3, water ions)
EQUILIBRIUM_CASES = [
    ("silica", SLIT, 4.0, 0.1, False),
    ("silica", SLIT, 7.0, 1.0, False),
    ("silica", SLIT, 10.0, 10.0, False),
    ("silica", SLIT, 4.0, 0.5, True),
    ("silica", edl.Capillary(radius="20 nm"), 8.0, 1.0, False),
    ("silica+fixed", SLIT, 7.0, 1.0, False),
    ("silica+fixed", edl.Capillary(radius="5 nm"), 3.0, 0.1, False),
    ("amine, Stern", SLIT, 6.0, 1.0, False),
    ("amine, Stern", edl.Capillary(radius="10 nm"), 10.0, 10.0, False),
    ("amine, no Stern", SLIT, 9.0, 0.1, False),
    ("amphoteric", SLIT, 3.0, 1.0, False),
    ("amphoteric", SLIT, 6.05, 1.0, False),  # near the point of zero charge (pK1 + pK2)/2 = 6
    ("amphoteric", SLIT, 9.5, 100.0, False),
    ("amphoteric+fixed", edl.Capillary(radius="50 nm"), 6.0, 0.1, False),
    ("silanol+amine", SLIT, 8.0, 1.0, False),
]


def _check_wall(label: str, wall: edl.Wall, pH: float, zeta: float, sigma: float, psi0: float | None,
                rtol: float) -> None:
    if wall.stern_capacitance is None:
        assert psi0 is None, f"{label}: a stern_potential without a Stern layer"
        psi0 = zeta
    else:
        # Stern layer, a plain capacitor between the charge plane and the diffuse layer: psi_0 - zeta = sigma/C_S
        assert psi0 - zeta == pytest.approx(sigma / wall.stern_capacitance, rel=rtol, abs=0.0), label
    expected, scale = wall_charge(wall, psi0, pH)
    assert abs(sigma - expected) <= rtol * scale, (
        f"{label}: sigma {sigma!r} C/m^2, mass-action law at psi_0 = {psi0!r} V gives {expected!r}; "
        f"relative mismatch {abs(sigma - expected) / scale:.2e}")


@pytest.mark.parametrize(("name", "geometry", "pH", "c", "water"), EQUILIBRIUM_CASES)
def test_site_equilibrium_and_stern_relation(name, geometry, pH, c, water):
    """sigma returned equals the site charge at psi_0 = zeta + sigma/C_S to 1e-10 (independent mass-action law)."""
    wall = WALLS[name]
    s = solve(geometry, kcl(c, pH, water), wall)
    psi0 = s.get("stern_potential")
    _check_wall(f"{name}, pH {pH}, {c} mM", wall, pH, s["zeta"], s["wall_charge_density"], psi0, 1e-10)
    # sign: sites set the sign of the charge; the acid wall at pH 10 is negative, the amine at pH 6 positive
    if name == "silica":
        assert s["wall_charge_density"] < 0.0 and s["zeta"] < 0.0
    if name.startswith("amine"):
        assert s["wall_charge_density"] > 0.0 and s["zeta"] > 0.0


@pytest.mark.parametrize(("bottom", "top_zeta", "pH"), [("silica", -0.02, 7.0), ("amphoteric", 0.03, 5.0),
                                                        ("amine, no Stern", -0.05, 8.0)])
def test_asymmetric_slit_regulated_bottom_fixed_top(bottom, top_zeta, pH):
    """Regulated bottom wall against a fixed-zeta top wall: the bottom obeys its chemistry, the top its zeta."""
    wall = WALLS[bottom]
    s = solve(edl.Slit(height="20 nm"), kcl(1.0, pH), (wall, edl.Wall(zeta=top_zeta)))
    zeta, sigma = s["zeta"], s["wall_charge_density"]
    assert zeta[1] == pytest.approx(top_zeta, rel=1e-12, abs=0.0)
    psi0 = s["stern_potential"][0] if "stern_potential" in s else None
    if psi0 is not None:
        assert math.isnan(s["stern_potential"][1])  # the fixed-potential wall has no Stern layer
    _check_wall(f"{bottom} / zeta {top_zeta} V", wall, pH, zeta[0], sigma[0], psi0, 1e-10)


def test_site_equilibrium_holds_to_the_default_accuracy():
    """At the default accuracy (1e-6) the returned (zeta, sigma) pair lies on the wall's charge-potential curve
    within that accuracy. (Potential and charge are Richardson-extrapolated separately, so the nonlinear
    relation between them holds only to the discretisation error, not to round-off; measured up to ~4e-8.)"""
    for pH in (5.0, 7.0, 9.0):
        for c in (0.1, 10.0, 100.0):
            s = solve(SLIT, kcl(c, pH), SILICA, numerics=edl.Numerics())
            _check_wall(f"silica pH {pH} {c} mM", SILICA, pH, s["zeta"], s["wall_charge_density"],
                        s["stern_potential"], 1e-6)


@pytest.mark.parametrize("pH", [6.0, 6.0 + 1e-9])
def test_point_of_zero_charge(pH):
    """Amphoteric site with pK 4 and 8 at pH (pK1 + pK2)/2 = 6: psi_0 = 0 gives h^2 = K1 K2, so the wall is
    uncharged and the whole channel at the reservoir potential (derived from the three-state partition
    function above). A pH sweep through the isoelectric point (common practice) must solve it; 1e-9 away the
    wall carries ~1e-15 C/m^2."""
    wall = WALLS["amphoteric"]
    s = solve(SLIT, kcl(1.0, pH), wall, numerics=edl.Numerics())
    assert abs(s["zeta"]) < 1e-9 and abs(s["wall_charge_density"]) < 1e-9
    _, scale = wall_charge(wall, 0.0, pH)
    expected, _ = wall_charge(wall, s["stern_potential"], pH)
    assert abs(s["wall_charge_density"] - expected) <= 1e-10 * scale


# --- 2. wide channel, high salt: Grahame ------------------------------------------------------------------


@pytest.mark.parametrize(("name", "pH"), [("silica", 5.0), ("silica", 9.0), ("amine, Stern", 7.0),
                                          ("amphoteric+fixed", 3.5)])
def test_wide_channel_obeys_grahame(name, pH):
    """kappa h ~ 5000 (10 um slit, 100 mM): the walls do not see each other (overlap ~ exp(-kappa h)), each
    is an isolated layer with sigma = sqrt(8 c N_A eps kT) sinh(e zeta/2kT) (Grahame 1947, Chem. Rev. 41,
    441), and the solver's zeta equals its own isolated-wall (thin-layer) zeta."""
    c = 100.0
    wall = WALLS[name]
    s = solve(edl.Slit(height="10 um"), kcl(c, pH), wall)
    assert s["kappa_h"] > 1000.0
    zeta, sigma = s["zeta"], s["wall_charge_density"]
    assert sigma == pytest.approx(grahame_charge(zeta, c), rel=1e-6, abs=0.0)
    assert zeta == pytest.approx(s["thin_layer_zeta"], rel=1e-6, abs=0.0)
    # and the pair is the chemistry's: an independent root of sites(psi_0) = Grahame(zeta)
    _check_wall(name, wall, pH, zeta, sigma, s.get("stern_potential"), 1e-9)


# --- 3. silica trends and overlap -------------------------------------------------------------------------


def test_silica_trends_with_pH_and_salt():
    """Behrens & Grier 2001 (J. Chem. Phys. 115, 6716; from memory): |sigma| of silica grows with pH and with
    salt (more salt screens the layer, lowers |psi_0| and lets more silanols dissociate); |zeta| grows with pH
    and falls with salt. Wide channel (isolated walls)."""
    phs = (4.0, 5.5, 7.0, 8.5, 10.0)
    salts = (0.1, 1.0, 10.0, 100.0)
    sigma = np.empty((len(phs), len(salts)))
    zeta = np.empty_like(sigma)
    for i, pH in enumerate(phs):
        for j, c in enumerate(salts):
            s = solve(edl.Slit(height="10 um"), kcl(c, pH), SILICA, numerics=edl.Numerics())
            sigma[i, j], zeta[i, j] = s["wall_charge_density"], s["zeta"]
    assert np.all(sigma < 0) and np.all(zeta < 0)
    assert np.all(np.diff(-sigma, axis=0) > 0), sigma  # |sigma| up with pH
    assert np.all(np.diff(-sigma, axis=1) > 0), sigma  # |sigma| up with salt
    assert np.all(np.diff(-zeta, axis=0) > 0), zeta  # |zeta| up with pH
    assert np.all(np.diff(-zeta, axis=1) < 0), zeta  # |zeta| down with salt
    # Order of magnitude at pH 7, 1 mM: the paper's curves show a few to a few tens of mC/m^2 there
    # (from memory); a generous band.
    assert 3e-3 < -sigma[2, 1] < 40e-3, sigma[2, 1]


def test_overlap_lowers_dissociation():
    """In a narrow slit the layers of the two walls overlap: the counter-charge must fit into the gap, the
    potential cannot relax to 0 at the centre (psi_centre -> psi_m != 0), so for a given charge |zeta| and
    |psi_0| are larger than at an isolated wall. A larger |psi_0| (negative wall) raises the proton
    concentration at the charge plane, [H+]_0 = [H+]_b exp(-e psi_0/kT), which pushes SiOH = SiO- + H+ back
    (charge regulation): |sigma| is smaller in a 5 nm than in a 500 nm slit at 0.1 mM (lambda_D ~ 30 nm), and
    falls monotonically as the slit narrows. (Derived here; a known trend of regulated nanochannels.)"""
    heights = ("500 nm", "100 nm", "30 nm", "10 nm", "5 nm")
    results = [solve(edl.Slit(height=h), kcl(0.1, 7.0), SILICA, numerics=edl.Numerics()) for h in heights]
    sigma = np.array([-r["wall_charge_density"] for r in results])
    psi0 = np.array([-r["stern_potential"] for r in results])
    assert np.all(np.diff(sigma) < 0), sigma
    assert np.all(np.diff(psi0) > 0), psi0
    assert sigma[-1] < 0.8 * sigma[0], sigma


# --- 4. gate electrode: capacitors in series --------------------------------------------------------------


def dh_slit_capacitance(c: float, height: float) -> float:
    """Double-layer capacitance per wall of a symmetric DH slit of half-height h = H/2 (F/m^2).

    Derivation: psi'' = kappa^2 psi with psi'(0) = 0 gives psi = zeta cosh(kappa y)/cosh(kappa h) (Burgreen &
    Nakache 1964); sigma = eps psi'(h) = eps kappa tanh(kappa h) zeta, so C_dl = eps kappa tanh(kappa h).
    """
    k = kappa(c)
    return EPS * k * math.tanh(k * height / 2.0)


def dh_capillary_capacitance(c: float, radius: float) -> float:
    """Same for a DH capillary: psi = zeta I0(kappa r)/I0(kappa a) (Rice & Whitehead 1965), so
    sigma = eps psi'(a) = eps kappa I1(kappa a)/I0(kappa a) zeta."""
    x = kappa(c) * radius
    return EPS * kappa(c) * i1e(x) / i0e(x)


GATE_CASES = [  # (geometry, KCl mol/m^3, C_g F/m^2, C_S F/m^2 or None)
    (edl.Slit(height="10 nm"), 1.0, 0.05, None),  # kappa h ~ 0.5
    (edl.Slit(height="40 nm"), 1.0, 0.02, None),
    (edl.Slit(height="60 nm"), 10.0, 0.2, None),  # kappa h ~ 10
    (edl.Slit(height="20 nm"), 1.0, 0.05, 0.1),
    (edl.Capillary(radius="15 nm"), 1.0, 0.03, None),
    (edl.Capillary(radius="15 nm"), 1.0, 0.03, 0.08),
]


def _gate_wall(v: float, cg: float, cs: float | None) -> edl.Wall:
    return edl.Wall(gate_voltage=v, gate_capacitance=cg, stern_capacitance=cs)


@pytest.mark.parametrize(("geometry", "c", "cg", "cs"), GATE_CASES)
def test_gate_capacitors_in_series(geometry, c, cg, cs):
    """No chemical charge, DH model: the gate charge sigma = C_g (V_g - psi_0), the Stern layer and the double
    layer are capacitors in series, sigma = V_g / (1/C_g + 1/C_S + 1/C_dl), zeta = sigma / C_dl,
    psi_0 = zeta + sigma / C_S (derived: the same charge sits on each, the voltages add up to V_g)."""
    v = 0.01
    if isinstance(geometry, edl.Slit):
        cdl = dh_slit_capacitance(c, geometry.height)
    else:
        cdl = dh_capillary_capacitance(c, geometry.radius)
    series = 1.0 / (1.0 / cg + (1.0 / cs if cs else 0.0) + 1.0 / cdl)
    s = solve(geometry, kcl(c), _gate_wall(v, cg, cs), model="dh")
    assert s["wall_charge_density"] == pytest.approx(v * series, rel=1e-8, abs=0.0)
    assert s["zeta"] == pytest.approx(v * series / cdl, rel=1e-8, abs=0.0)
    if cs is None:
        assert s["zeta"] == pytest.approx(v * cg / (cg + cdl), rel=1e-8, abs=0.0)  # the two-capacitor divider
    else:
        assert s["stern_potential"] == pytest.approx(v * series * (1.0 / cdl + 1.0 / cs), rel=1e-8, abs=0.0)


def test_gate_linear_and_antisymmetric():
    """DH: the wall charge is linear in V_g (sigma(2V) = 2 sigma(V)) and odd (sigma(-V) = -sigma(V)). In the
    nonlinear PB model with a symmetric 1:1 salt, the equation is odd in psi (sinh), so sigma stays odd in V_g
    while the linearity is lost (the layer's capacitance grows with |zeta|, Gouy-Chapman: sigma superlinear in
    zeta)."""
    geometry, c, cg = edl.Slit(height="30 nm"), 1.0, 0.05
    dh = {v: solve(geometry, kcl(c), _gate_wall(v, cg, 0.5), model="dh")["wall_charge_density"]
          for v in (0.02, 0.04, -0.02)}
    assert dh[0.04] / dh[0.02] == pytest.approx(2.0, rel=1e-9, abs=0.0)
    assert dh[-0.02] == pytest.approx(-dh[0.02], rel=1e-9, abs=0.0)
    pb = {v: solve(geometry, kcl(c), _gate_wall(v, cg, 0.5))["wall_charge_density"] for v in (0.3, 0.6, -0.3)}
    assert pb[-0.3] == pytest.approx(-pb[0.3], rel=1e-9, abs=0.0)
    assert pb[0.3] > 0.0
    # series with a growing layer capacitance: more than proportional charge at twice the voltage
    assert pb[0.6] / pb[0.3] > 2.0 + 1e-3


# --- 5. reduction to the plain models ---------------------------------------------------------------------


KEYS = ("zeta", "wall_charge_density", "centre_potential", "mean_potential", "flow_rate_eo", "current")


def _same(a: dict, b: dict, rtol: float) -> None:
    for key in KEYS:
        assert a[key] == pytest.approx(b[key], rel=rtol, abs=0.0), key


@pytest.mark.parametrize("geometry", [edl.Slit(height="20 nm"), edl.Capillary(radius="10 nm")])
def test_vanishing_gate_reduces_to_fixed_charge(geometry):
    """Fixed charge plus a gate of capacitance 1e-12 F/m^2 at V_g = 0 adds -C_g psi_0 ~ 1e-13 C/m^2 to
    -5 mC/m^2: the same results as the plain fixed-charge wall to 1e-9 (the regulated path must reduce to the
    plain one exactly in this limit)."""
    e = kcl(1.0)
    plain = solve(geometry, e, edl.Wall(charge_density="-5 mC/m^2"))
    gated = solve(geometry, e, edl.Wall(charge_density="-5 mC/m^2", gate_voltage=0.0, gate_capacitance=1e-12))
    _same(plain, gated, 1e-9)


def test_huge_stern_capacitance_changes_nothing():
    """C_S = 1e6 F/m^2 puts psi_0 - zeta = sigma/C_S ~ 1e-8 V: with a fixed charge nothing changes (the Stern
    layer does not enter the diffuse layer at all), with silanol sites the shift of psi_0 moves sigma by
    (d sigma/d psi_0) 1e-8 V ~ 4e-7 relative; both within 1e-6 of the wall without a Stern layer."""
    e = kcl(1.0, 7.0)
    fixed = solve(SLIT, e, edl.Wall(charge_density="-5 mC/m^2"))
    fixed_stern = solve(SLIT, e, edl.Wall(charge_density="-5 mC/m^2", stern_capacitance=1e6))
    _same(fixed, fixed_stern, 1e-9)
    sites = solve(SLIT, e, edl.Wall(sites=(SILANOL,)))
    sites_stern = solve(SLIT, e, edl.Wall(sites=(SILANOL,), stern_capacitance=1e6))
    _same(sites, sites_stern, 1e-6)
    # the Stern layer of silica (2.9 F/m^2) does matter: not a test that cannot fail
    silica = solve(SLIT, e, SILICA)
    assert abs(silica["wall_charge_density"] / sites["wall_charge_density"] - 1.0) > 1e-3


# --- 6. input errors --------------------------------------------------------------------------------------


def _one_line_error(make, *fields: str) -> None:
    with pytest.raises(edl.InputError) as info:
        make()
    message = str(info.value)
    assert "\n" not in message, message
    for field in fields:
        assert field in message, (field, message)


def test_input_errors_name_the_field():
    """Regulated inputs that cannot make sense are refused at construction, one line naming the field."""
    _one_line_error(lambda: edl.Case(geometry=SLIT, electrolyte=kcl(1.0), wall=SILICA), "electrolyte.pH")
    _one_line_error(lambda: Site(density="5 nm^-2", pK=(4.0, 8.0), charges=(0, -1), name="bad"),
                    "site bad.charges")
    _one_line_error(lambda: Site(density="5 nm^-2", pK=4.0, charges=(1, 0, -1), name="bad"), "site bad.charges")
    _one_line_error(lambda: Site(density="5 nm^-2", pK=4.0, charges=(0, 1), name="up"), "site up.charges")
    _one_line_error(lambda: edl.Wall(gate_voltage="0.2 V"), "gate_voltage", "gate_capacitance")
    _one_line_error(lambda: edl.Wall(gate_capacitance="1 mF/m^2"), "gate_voltage", "gate_capacitance")
    _one_line_error(lambda: edl.Wall(zeta="-50 mV", sites=(SILANOL,)), "zeta", "sites")
    _one_line_error(lambda: edl.Wall(sites=(SILANOL,), stern_capacitance="-1 F/m^2"), "wall.stern_capacitance")
    _one_line_error(lambda: Site(density="-1 nm^-2", pK=7.0, name="neg"), "site neg.density")
    # a gate alone needs no pH
    edl.Case(geometry=SLIT, electrolyte=kcl(1.0), wall=edl.Wall(gate_voltage=0.1, gate_capacitance=0.01))


# --- 7. convergence over the range of use -----------------------------------------------------------------

CONVERGENCE_WALLS = (SILICA, WALLS["amine, Stern"], WALLS["amphoteric+fixed"], WALLS["silanol+amine"])


def test_convergence_over_the_range():
    """36 regulated cases over pH 2-11, 0.01-100 mM KCl, slit heights 2 nm - 10 um (and capillaries): every
    one converges with error_estimate <= 1e-6 and charge balance < 1e-10, and obeys its chemistry within the
    accuracy (independent mass-action law)."""
    cases = []
    for i, pH in enumerate((2.0, 5.0, 8.0, 11.0)):
        for j, c in enumerate((0.01, 1.0, 100.0)):
            for k, size in enumerate((2e-9, 1e-7, 1e-5)):
                wall = CONVERGENCE_WALLS[(i + j + k) % len(CONVERGENCE_WALLS)]
                geometry = edl.Capillary(radius=size / 2) if (i + k) % 3 == 2 else edl.Slit(height=size)
                cases.append((geometry, pH, c, wall))
    for geometry, pH, c, wall in cases:
        label = f"{geometry}, pH {pH}, {c} mM, {[site.name for site in wall.sites]}"
        s = solve(geometry, kcl(c, pH), wall, numerics=edl.Numerics())
        assert s["error_estimate"] <= 1e-6, label
        assert s["charge_balance"] < 1e-10, label
        _check_wall(label, wall, pH, s["zeta"], s["wall_charge_density"], s.get("stern_potential"), 1e-6)
