"""The thin-layer (slip) model's closed forms (``edl_solver.model.thin_layer``) against handbook values, and its
verdict's wording."""

from __future__ import annotations

import math

import pytest
from scipy import constants

from edl_solver.model.thin_layer import grahame_zeta, slip_velocity, verdict
from tests.helpers import SOLVENT, kcl

VT = SOLVENT.thermal_voltage


def test_grahame_equation_value() -> None:
    """sigma = sqrt(8 c N_A eps kT) sinh(e zeta / 2kT): -4.21 mC/m^2 at -50 mV, 1 mM 1:1, 25 degC,
    eps_r = 78.4 (Grahame 1947, Chem. Rev. 41, 441; value computed in shared REFERENCES)."""
    assert grahame_zeta(-4.21e-3, kcl(), SOLVENT) == pytest.approx(-0.050, rel=2e-3)
    # and the general multi-ion form against the z:z closed form, to round-off
    sigma = math.sqrt(8 * 1.0 * constants.N_A * SOLVENT.permittivity * constants.k * 298.15) * math.sinh(-2.0)
    assert grahame_zeta(sigma, kcl(), SOLVENT) == pytest.approx(-4.0 * VT, rel=1e-12)


def test_smoluchowski_mobility() -> None:
    """|u/E| = eps zeta / eta = 3.90e-8 m^2/(V s) for |zeta| = 50 mV in water at 25 degC (Smoluchowski 1903;
    value computed in shared REFERENCES)."""
    assert abs(slip_velocity(-0.05, SOLVENT, 1.0)) == pytest.approx(3.90e-8, rel=2e-3)
    assert slip_velocity(-0.05, SOLVENT, 1.0) > 0  # a negative wall drives flow along +E


def test_verdict_wording() -> None:
    assert verdict(0.23, 0.05) == "thin-layer slip over-predicts the EO flow rate by 23 % here: not valid at 5 %"
    assert verdict(-0.5, 0.05).startswith("thin-layer slip under-predicts the EO flow rate by 50 %")
    assert verdict(0.012, 0.05) == "thin-layer slip is within 1.2 % of the full EO flow rate here: valid at 5 %"
    assert "undefined" in verdict(float("nan"), 0.05)
