"""Flow, currents and the thin-layer comparison against closed forms and handbook values."""

from __future__ import annotations

import math

import mpmath
import numpy as np
import pytest

import edl_solver as edl
from edl_solver.model.thin_layer import grahame_zeta, slip_velocity
from tests.helpers import SOLVENT, kcl

VT = SOLVENT.thermal_voltage


def slit_case(height: float, wall, **kw) -> edl.Case:
    return edl.Case(geometry=edl.Slit(height=height), electrolyte=kw.pop("electrolyte", kcl()), wall=wall,
                    solvent=SOLVENT, field=kw.pop("field", 1e4), pressure_gradient=kw.pop("pressure_gradient", -1e5),
                    **kw)


@pytest.mark.parametrize("geometry", ["slit", "capillary", "asymmetric"])
def test_eo_profile_equals_closed_form(geometry: str) -> None:
    """With uniform eps and eta and no slip, u_eo = -(eps E / eta)(zeta - phi) for equal walls and
    -(eps E / eta)(phi_lin - phi) between two walls (common practice; follows from Stokes + Poisson)."""
    if geometry == "capillary":
        case = edl.Case(geometry=edl.Capillary(radius=20e-9), electrolyte=kcl(), wall=edl.Wall(zeta=-0.08),
                        solvent=SOLVENT, field=2e4)
    elif geometry == "slit":
        case = slit_case(30e-9, edl.Wall(charge_density=-0.01))
    else:
        case = slit_case(30e-9, (edl.Wall(zeta=-0.1), edl.Wall(zeta=0.02)))
    result = edl.solve(case)
    p = result.profiles
    # the profile's own wall values (the summary's are extrapolated to a higher order)
    bottom, top = p.potential[0], p.potential[-1]
    wall = bottom + (top - bottom) * p.coordinate / p.coordinate[-1] if geometry == "asymmetric" else top
    expected = -SOLVENT.permittivity * case.field / SOLVENT.viscosity * (wall - p.potential)
    assert np.max(np.abs(p.velocity_eo - expected)) < 1e-9 * np.max(np.abs(expected))


def test_poiseuille_flow_rates() -> None:
    """Q = -(dp/dx) H^3 / (12 eta) per unit width (plane Poiseuille) and Q = -pi a^4 (dp/dx) / (8 eta)
    (Hagen-Poiseuille)."""
    slit = edl.solve(slit_case(40e-9, edl.Wall(zeta=-0.05)))
    assert slit.summary["flow_rate_pressure"] == pytest.approx(1e5 * (40e-9) ** 3 / (12 * 0.89e-3), rel=1e-10)
    cap = edl.solve(edl.Case(geometry=edl.Capillary(radius=15e-9), electrolyte=kcl(), wall=edl.Wall(zeta=-0.05),
                             solvent=SOLVENT, pressure_gradient=-1e5))
    assert cap.summary["flow_rate_pressure"] == pytest.approx(math.pi * 1e5 * (15e-9) ** 4 / (8 * 0.89e-3), rel=1e-10)


def test_conductivity_of_dilute_kcl_from_an_uncharged_channel() -> None:
    """An uncharged wide slit conducts like the bulk: K = sum lambda_i c_i with the limiting molar
    conductivities of K+ (73.48) and Cl- (76.31 S cm^2/mol), CRC Handbook (from memory), i.e. 149.79 uS/cm
    at 1 mM; the table diffusivities reproduce them through Nernst-Einstein to ~0.05 %."""
    water = edl.Water(temperature="25 degC")
    case = edl.Case(geometry=edl.Slit(height=1e-6), electrolyte=kcl(), wall=edl.Wall(zeta=0.0), solvent=water,
                    field=1e3)
    result = edl.solve(case)
    conductivity = result.summary["current_per_field"] / 1e-6  # S/m
    assert conductivity == pytest.approx((73.48 + 76.31) * 1e-4 * 1.0, rel=1e-3)
    assert result.summary["conduction_current"] == pytest.approx(1e3 * result.summary["current_per_field"], rel=1e-12)


def test_wide_slit_eo_ratio_matches_gouy_chapman_integral() -> None:
    """Wide slit: mean EO velocity / HS = 1 - (1/(zeta h)) int psi dy, and for a Gouy-Chapman layer
    (Gouy 1910; Chapman 1913) int_0^inf 4 artanh(g e^-x) dx = 4 chi_2(g) = 2 [Li2(g) - Li2(-g)],
    g = tanh(zeta/4) (term-by-term integration of the artanh series)."""
    zeta_hat, kappa_h = 4.0, 1000.0
    debye = kcl().debye_length(SOLVENT)
    result = edl.solve(slit_case(2 * kappa_h * debye, edl.Wall(zeta=-zeta_hat * VT)))
    g = math.tanh(zeta_hat / 4)
    integral = float(2 * (mpmath.polylog(2, g) - mpmath.polylog(2, -g)))
    assert result.summary["eo_ratio"] == pytest.approx(1 - integral / (zeta_hat * kappa_h), rel=1e-8)
    assert result.summary["thin_layer_flow_rate_error"] == pytest.approx(1 / result.summary["eo_ratio"] - 1, rel=1e-12)
    assert "valid at 5 %" in result.verdict and "not valid" not in result.verdict


def test_thin_layer_uses_grahame_zeta_for_a_charged_wall() -> None:
    result = edl.solve(slit_case(20e-9, edl.Wall(charge_density=-0.005)))
    s = result.summary
    assert s["thin_layer_zeta"] == pytest.approx(grahame_zeta(-0.005, kcl(), SOLVENT), rel=1e-14)
    assert s["hs_velocity"] == pytest.approx(slip_velocity(s["thin_layer_zeta"], SOLVENT, 1e4), rel=1e-14)
    # overlap raises the wall potential above the isolated-wall (Grahame) value
    assert s["zeta"] < s["thin_layer_zeta"] < 0


def test_onsager_reciprocity_and_charge_balance_reported() -> None:
    """Streaming current per pressure gradient = EO flow rate per field (Onsager 1931)."""
    for case in (slit_case(10e-9, edl.Wall(zeta=-0.1)),
                 slit_case(10e-9, (edl.Wall(zeta=-0.1), edl.Wall(charge_density=0.003))),
                 edl.Case(geometry=edl.Capillary(radius=5e-9), electrolyte=kcl(10), wall=edl.Wall(zeta=-0.2),
                          solvent=SOLVENT, field=1e4, pressure_gradient=-1e5)):
        s = edl.solve(case).summary
        assert s["streaming_current"] / -case.pressure_gradient == pytest.approx(s["flow_rate_eo"] / case.field,
                                                                                rel=1e-8)
        assert s["reciprocity_residual"] < 1e-12 and s["charge_balance"] < 1e-12
