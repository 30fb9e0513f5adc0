"""Walls of fixed charge in the rectangle core (``model.rectangle``, ``charge_density``): a closed form and series
derived here for Debye-Hueckel, charge balance and reciprocity for Poisson-Boltzmann, and bad input."""

from __future__ import annotations

import numpy as np
import pytest

from edl_solver.errors import InputError
from edl_solver.model.rectangle import solve_rectangle_section

SYMMETRIC = ([1, -1], [1.0, 1.0])


def dh_charged_duct(a: float, b: float, kappa: float, sigma: float, terms: int = 3000) -> dict[str, float]:
    """Debye-Hueckel rectangle [0, a] x [0, b] with d phi / dn = sigma (outward normal) on all walls.

    Derived here. -lap phi + kappa^2 phi = 0 with that flux is solved by the sum of the two slits' profiles,
    phi = sigma [cosh(kappa y') / (kappa sinh(kappa a/2)) + cosh(kappa z') / (kappa sinh(kappa b/2))] (y', z' from
    the centre): each satisfies the equation, has outward derivative sigma on its own walls and zero on the others.
    Hence the corner sigma/kappa [coth(kappa a/2) + coth(kappa b/2)], mid-wall values, and mean phi = sigma 2(a + b) /
    (kappa^2 a b) (Gauss). The EO velocity (lap u = kappa^2 phi, DH rho = -phi; u = 0 on the walls) as the double
    sine series over odd m, n: with alpha = m pi / a, the sine moment of a slit profile F (F'' = kappa^2 F, F = F_w
    at both walls) is int_0^a F sin(alpha y) dy = 2 alpha F_w / (kappa^2 + alpha^2) (twice by parts), so
    u_mn = -kappa^2 phi_mn / (alpha^2 + beta^2) and mean u = sum u_mn 4 / (m n pi^2); terms fall as (m n)^-2
    (m^2 + n^2)^-1, 3000 odd terms per direction leave a tail near 1e-11 relative.
    """
    fa, fb = sigma / (kappa * np.tanh(kappa * a / 2)), sigma / (kappa * np.tanh(kappa * b / 2))
    odd = np.arange(1, 2 * terms, 2, dtype=float)
    m, n = odd[:, None], odd[None, :]
    alpha, beta = m * np.pi / a, n * np.pi / b
    moment_a, moment_b = 2 * alpha * fa / (kappa**2 + alpha**2), 2 * beta * fb / (kappa**2 + beta**2)
    phi_mn = 4 / (a * b) * (moment_a * 2 * b / (n * np.pi) + moment_b * 2 * a / (m * np.pi))
    u_mn = -kappa**2 * phi_mn / (alpha**2 + beta**2)
    return {"mean_psi": sigma * 2 * (a + b) / (kappa**2 * a * b), "corner": fa + fb,
            "mid_y": fa + sigma / (kappa * np.sinh(kappa * b / 2)),
            "mid_z": fb + sigma / (kappa * np.sinh(kappa * a / 2)),
            "mean_u_eo": float(np.sum(u_mn * 4 / (m * n * np.pi**2)))}


@pytest.mark.parametrize(("width", "height", "kappa_h"), [(2.0, 2.0, 3.0), (10.0, 2.0, 1.0)])
def test_debye_hueckel_charged_rectangle_against_derived_series(width: float, height: float, kappa_h: float) -> None:
    """Mean potential, wall potentials and mean EO velocity against ``dh_charged_duct`` (derived here), 1e-8 at
    accuracy 1e-9; charge balance and reciprocity to round-off."""
    sigma = -1.0
    sol = solve_rectangle_section(width, height, 1.0 / kappa_h, *SYMMETRIC, model="dh", charge_density=sigma,
                                  accuracy=1e-9)
    ref = dh_charged_duct(width, height, kappa_h, sigma)
    assert sol.estimate <= 1e-9
    assert sol.charge_density == sigma
    assert sol.mean_potential == pytest.approx(ref["mean_psi"], rel=1e-8)
    assert sol.mean_velocity_eo == pytest.approx(ref["mean_u_eo"], rel=1e-8)
    walls = sol.wall_potentials
    for key in ("corner", "mid_y", "mid_z"):
        assert walls[key] == pytest.approx(ref[key], rel=1e-8)
    assert sol.zeta == walls["mean"]
    assert sol.charge_balance < 1e-10
    assert sol.reciprocity < 1e-10


def test_poisson_boltzmann_charged_rectangle_balances_its_charge() -> None:
    """Nonlinear PB, strongly charged 1:3 rectangle: total wall charge sigma_hat times the perimeter equals
    -kappa^2 int rho (Gauss) and int u_eo = -kappa^2 int rho u_p (reciprocity) to ~1e-10; the wall potential lies
    beyond the isolated wall's Grahame value at the corner and its order is corner > mid-wall (common practice)."""
    sol = solve_rectangle_section(6.0, 2.0, 1.0 / 4.0, *SYMMETRIC, model="pb", charge_density=-5.0, accuracy=1e-8)
    rho = sol.integrals["rho"]
    assert sol.integrals["wall_flux"] == pytest.approx(-5.0 * sol.perimeter, rel=1e-14)
    assert abs(sol.integrals["wall_flux"] + sol.kappa**2 * rho) <= 1e-10 * abs(sol.integrals["wall_flux"])
    assert sol.charge_balance < 1e-10 and sol.reciprocity < 1e-10
    walls = sol.wall_potentials
    assert walls["corner"] < walls["mid_y"] < 0 and walls["corner"] < walls["mid_z"] < 0



def test_zeta_and_charge_density_together_is_an_input_error() -> None:
    """One wall condition: zeta and charge_density both given is refused, naming the field."""
    with pytest.raises(InputError, match="zeta"):
        solve_rectangle_section(2.0, 2.0, 1.0, *SYMMETRIC, zeta=-1.0, charge_density=-1.0)


def test_wide_charged_rectangle_tends_to_the_slit() -> None:
    """As W/H grows, a charged rectangle tends to the charged slit of height H (the 1-D solver): mid-way along the
    long wall its potential is the slit's wall potential, and its mean EO velocity tends to the slit's, the side
    walls' correction shrinking as H/W (each side wall removes a strip of fixed width; common practice). The slit's
    EO ratio is taken from the 1-D solve with zeta walls at the charged slit's wall potential (the same profile): on
    charged walls the 1-D eo_ratio is relative to the thin-layer velocity of the Grahame zeta (8e-4 off here)."""
    import edl_solver as edl
    from tests.helpers import SOLVENT, kcl

    sigma, height = -0.02, 20e-9

    def slit(wall: edl.Wall) -> dict:
        return edl.solve(edl.Case(geometry=edl.Slit(height=height), electrolyte=kcl(10.0), wall=wall, solvent=SOLVENT,
                                  model="pb", numerics=edl.Numerics(accuracy=1e-9))).summary

    charged = slit(edl.Wall(charge_density=sigma))
    eo_ratio = slit(edl.Wall(zeta=charged["zeta"]))["eo_ratio"]
    zeta = charged["zeta"] / SOLVENT.thermal_voltage
    h = height / 2
    sigma_hat = sigma * h / (SOLVENT.permittivity * SOLVENT.thermal_voltage)
    corrections = {}
    for ratio in (20, 50):
        sol = solve_rectangle_section(2.0 * ratio, 2.0, charged["debye_length"] / h, *SYMMETRIC, model="pb",
                                      charge_density=sigma_hat, accuracy=1e-7)
        corrections[ratio] = sol.mean_velocity_eo / (-zeta * eo_ratio) - 1.0
        assert sol.wall_potentials["mid_z"] == pytest.approx(zeta, rel=1e-8)
    assert -0.02 < corrections[20] < 0.0
    assert corrections[50] * 50 == pytest.approx(corrections[20] * 20, rel=1e-6)
