"""Compiled wall arithmetic (``kernels.walls``): the isolated wall against the Grahame relation and its
Debye-Hueckel and steric counterparts, and a regulated wall's charge against the mass-action law, a gate
capacitor and the Stern relation, all evaluated by hand with CODATA constants (``scipy.constants``)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants as sc

import edl_solver as edl
from edl_solver.kernels import layout as lay
from edl_solver.kernels import walls
from edl_solver.model import packing

T = 298.15
EPS = 78.4 * sc.epsilon_0
VT = sc.k * T / sc.e


def ions(concentration: float, valence: int = 1) -> np.ndarray:
    """ION_* rows of a z:z salt, mol/m^3."""
    salt = edl.Electrolyte([edl.Ion(name="A", valence=valence, concentration=concentration, diffusivity=1e-9),
                            edl.Ion(name="B", valence=-valence, concentration=concentration, diffusivity=1e-9)])
    return packing.ion_rows(salt)


def debye_length(concentration: float, valence: int = 1) -> float:
    return math.sqrt(EPS * sc.k * T / (2 * (valence * sc.e) ** 2 * sc.N_A * concentration))


def grahame(zeta: float, concentration: float, valence: int = 1) -> float:
    """sigma = sqrt(8 c N_A eps kT) sinh(z e zeta / 2kT), z:z salt (Grahame 1947, Chem. Rev. 41, 441)."""
    return math.sqrt(8 * concentration * sc.N_A * EPS * sc.k * T) * math.sinh(valence * zeta / (2 * VT))


def isolated(wall: edl.Wall, rows: np.ndarray, model: int = lay.PB, diameter: float = 0.0,
             protons: float = math.nan, concentration: float = 1.0) -> tuple[float, float]:
    return walls.isolated_wall(packing.wall_row_si(wall), rows, model, diameter, VT, EPS, protons,
                               debye_length(concentration))


def test_grahame_value_at_minus_50_mv() -> None:
    # -4.21 mC/m^2 at zeta = -50 mV, 1 mM 1:1, 25 C, eps_r = 78.4 (Grahame 1947; value computed in
    # shared/REFERENCES.md)
    zeta, sigma = isolated(edl.Wall(zeta=-0.05), ions(1.0))
    assert zeta == -0.05
    assert sigma == pytest.approx(-4.21e-3, abs=0.005e-3)
    assert sigma == pytest.approx(grahame(-0.05, 1.0), rel=1e-12)


@pytest.mark.parametrize("valence", [1, 2, 3])
@pytest.mark.parametrize("sigma", [-0.2, -0.01, 1e-4, 0.05])
def test_charged_wall_inverts_the_grahame_relation(sigma: float, valence: int) -> None:
    # zeta = (2kT / ze) asinh(sigma / sqrt(8 c N_A eps kT)) for a z:z salt (Grahame 1947)
    concentration = 10.0
    zeta, found = isolated(edl.Wall(charge_density=sigma), ions(concentration, valence),
                           concentration=concentration)
    expected = 2 * VT / valence * math.asinh(sigma / math.sqrt(8 * concentration * sc.N_A * EPS * sc.k * T))
    assert zeta == pytest.approx(expected, rel=1e-12)
    assert found == pytest.approx(sigma, rel=1e-12)


def test_debye_hueckel_wall_is_a_capacitor() -> None:
    # linearised Grahame: sigma = eps kappa zeta (Debye & Hueckel 1923; the small-zeta limit of Grahame 1947)
    zeta, sigma = isolated(edl.Wall(zeta=-3 * VT), ions(1.0), model=lay.DH)
    assert sigma == pytest.approx(EPS * zeta / debye_length(1.0), rel=1e-12)


def test_steric_wall_follows_the_bikerman_grahame_relation() -> None:
    # sigma^2 = 2 eps (kT / d^3) ln(1 + nu (cosh(e zeta / kT) - 1)), nu = 2 c N_A d^3 (Kilic, Bazant & Ajdari
    # 2007, Phys. Rev. E 75, 021502, from memory; derived in tests/reference_models.py)
    c, d, zeta = 100.0, 0.7e-9, -8 * VT
    _, sigma = isolated(edl.Wall(zeta=zeta), ions(c), model=lay.STERIC, diameter=d, concentration=c)
    nu = 2 * c * sc.N_A * d**3
    expected = -math.sqrt(2 * EPS * sc.k * T / d**3 * math.log1p(nu * (math.cosh(zeta / VT) - 1)))
    assert sigma == pytest.approx(expected, rel=1e-12)
    assert abs(sigma) < abs(grahame(zeta, c))  # crowding caps the layer's charge


def _row(wall: edl.Wall, length: float, protons: float) -> np.ndarray:
    return walls.dimensionless_wall(packing.wall_row_si(wall), VT, EPS, length, protons)


def test_acid_site_charge_follows_the_mass_action_law() -> None:
    # One acidic site SiOH <-> SiO- + H+ with K = 10^-pK M and the protons at the plane [H+]_0 = [H+] exp(-psi0)
    # (Boltzmann): charge -e N / (1 + [H+]_0 / K) (mass action; Behrens & Grier 2001, J. Chem. Phys. 115, 6716)
    length, density, pk, ph = 10e-9, 8e18, 7.5, 6.0
    protons = 1000 * 10**-ph
    row = _row(edl.Wall(sites=(edl.Site(density=density, pK=pk),)), length, protons)
    unit = EPS * VT / length
    for psi0 in (-4.0, -1.0, 0.0, 2.0):
        sigma, dsigma = walls.plane_charge(psi0, row)
        expected = -sc.e * density / (1 + 10 ** (pk - ph) * math.exp(-psi0))
        assert sigma * unit == pytest.approx(expected, rel=1e-12)
        step = 1e-6  # central difference (common practice)
        slope = (walls.plane_charge(psi0 + step, row)[0] - walls.plane_charge(psi0 - step, row)[0]) / (2 * step)
        assert dsigma == pytest.approx(slope, rel=1e-7)


def test_gate_and_fixed_charge() -> None:
    # a gate electrode behind the wall: a capacitor, sigma = sigma_fixed + C_g (V_g - psi_0) (common practice)
    length = 20e-9
    wall = edl.Wall(charge_density=-0.01, gate_voltage=0.2, gate_capacitance=0.05, sites=())
    row = _row(wall, length, math.nan)
    for psi0 in (-2.0, 0.0, 3.0):
        sigma, dsigma = walls.plane_charge(psi0, row)
        assert sigma * EPS * VT / length == pytest.approx(-0.01 + 0.05 * (0.2 - psi0 * VT), rel=1e-12)
        assert dsigma == pytest.approx(-0.05 / (EPS / length), rel=1e-12)


def test_stern_layer_relation() -> None:
    # the diffuse layer starts behind a Stern layer: psi_0 - psi_d = sigma / C_S (Stern 1924; the capacitance
    # of silica 2.9 F/m^2, Behrens & Grier 2001, from memory)
    length, protons = 10e-9, 1000 * 10**-7.0
    wall = edl.Wall(sites=(edl.Site(density=8e18, pK=7.5),), stern_capacitance=2.9)
    row = _row(wall, length, protons)
    for psi_d in (-3.0, -0.5, 0.0):
        sigma, dsigma, psi0 = walls.regulated_charge(psi_d, row)
        assert (psi0 - psi_d) * VT == pytest.approx(sigma * EPS * VT / length / 2.9, rel=1e-10)
        assert sigma == pytest.approx(walls.plane_charge(psi0, row)[0], rel=1e-14)
        step = 1e-6  # central difference (common practice)
        slope = (walls.regulated_charge(psi_d + step, row)[0] - walls.regulated_charge(psi_d - step, row)[0]) / (
            2 * step)
        assert dsigma == pytest.approx(slope, rel=1e-6)


def test_isolated_regulated_wall_balances_layer_and_sites() -> None:
    # alone in the bulk, the wall's site charge equals the Grahame charge of its diffuse layer at zeta
    # (Grahame 1947; mass action as above)
    c, pk, ph, density = 1.0, 7.5, 7.0, 8e18
    protons = 1000 * 10**-ph
    zeta, sigma = isolated(edl.Wall(sites=(edl.Site(density=density, pK=pk),)), ions(c), protons=protons,
                           concentration=c)
    assert zeta < 0
    assert sigma == pytest.approx(grahame(zeta, c), rel=1e-10)
    assert sigma == pytest.approx(-sc.e * density / (1 + 10 ** (pk - ph) * math.exp(-zeta / VT)), rel=1e-10)
