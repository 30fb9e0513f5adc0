"""The lattice-gas (steric, Bikerman 1942) charge in the rectangle core (``model.rectangle``, ``packing``): the
point-ion limit, the steric slit limit, the isolated wall, the scheme's identities, and bad input."""

from __future__ import annotations

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.constants import AVOGADRO
from edl_solver.errors import InputError
from edl_solver.kernels.layout import FLUX
from edl_solver.model.rectangle import solve_rectangle_section
from edl_solver.model.rectangle_grid import Ions
from edl_solver.model.rectangle_walls import grahame_potential
from tests.helpers import SOLVENT
from tests.model.test_rectangle_pairs import row

SYMMETRIC = ([1, -1], [1.0, 1.0])


def test_tiny_packing_is_poisson_boltzmann() -> None:
    """nu_k = 1e-12: the lattice gas is the point-ion gas (D = 1 + O(nu); common practice): every integral, the ion
    blocks included, as the PB solve to 1e-9, for two different charged pairs."""
    pairs = (row(FLUX, -3.0), row(FLUX, -1.0))
    steric = solve_rectangle_section(6.0, 2.0, 0.5, *SYMMETRIC, model="steric", packing=[1e-12, 1e-12],
                                     wall_rows=pairs, accuracy=1e-8)
    pb = solve_rectangle_section(6.0, 2.0, 0.5, *SYMMETRIC, model="pb", wall_rows=pairs, accuracy=1e-8)
    for key, value in pb.integrals.items():
        assert steric.integrals[key] == pytest.approx(value, rel=1e-9), key
    assert steric.ion_integrals == pytest.approx(pb.ion_integrals, rel=1e-9)


def test_wide_steric_rectangle_tends_to_the_steric_slit() -> None:
    """100 mM KCl of 0.7 nm ions (nu = c N_A d^3 = 0.021), a 10 nm slit of -0.2 C/m^2: mid-way along the long wall
    of a 20:1 rectangle (top/bottom of that charge, sides of 0.3 of it) the potential is the 1-D steric slit's
    (``edl.solve``, model "steric") to 1e-8, and 5% or more off the point-ion value (crowding matters here);
    Gauss and Onsager (1931) to round-off."""
    concentration, diameter, height, sigma = 100.0, 0.7e-9, 10e-9, -0.2
    ions = [edl.Ion(name=name, concentration=concentration, diameter=diameter) for name in ("K+", "Cl-")]

    def slit(model: str) -> dict:
        return edl.solve(edl.Case(geometry=edl.Slit(height=height), electrolyte=edl.Electrolyte(ions), solvent=SOLVENT,
                                  wall=edl.Wall(charge_density=sigma), model=model,
                                  numerics=edl.Numerics(accuracy=1e-9))).summary

    steric, point = slit("steric"), slit("pb")
    h = height / 2
    sigma_hat = sigma * h / (SOLVENT.permittivity * SOLVENT.thermal_voltage)
    nu = concentration * AVOGADRO * diameter**3
    sol = solve_rectangle_section(40.0, 2.0, steric["debye_length"] / h, [1, -1], [concentration] * 2,
                                  model="steric", packing=[nu, nu], accuracy=1e-7,
                                  wall_rows=(row(FLUX, sigma_hat), row(FLUX, 0.3 * sigma_hat)))
    zeta = steric["zeta"] / SOLVENT.thermal_voltage
    assert sol.wall_potentials["mid_z"] == pytest.approx(zeta, rel=1e-8)
    assert abs(point["zeta"] / steric["zeta"] - 1.0) > 0.05
    assert sol.charge_balance < 1e-10 and sol.reciprocity < 1e-10


def test_steric_isolated_wall_against_its_closed_form() -> None:
    """Symmetric 1:1 lattice gas: the first integral P = ln(1 + 2 nu (cosh psi - 1)) / (2 nu) (derived here from
    ``rectangle_walls.layer_pressure``; Kilic, Bazant & Ajdari 2007, from memory) and sigma_hat = kappa sqrt(2 P)
    give the isolated wall's potential in closed form, cosh psi = 1 + expm1(nu sigma_hat^2 / kappa^2) / (2 nu)."""
    nu, kappa = 0.02, 3.0
    ions = Ions(np.array([1.0, -1.0]), np.array([0.5, -0.5]), np.array([nu, nu]), "steric")
    for sigma in (-40.0, -2.0, 0.5):
        exact = np.copysign(np.arccosh(1.0 + np.expm1(nu * sigma**2 / kappa**2) / (2.0 * nu)), sigma)
        assert grahame_potential(sigma, kappa, ions, np.array([0.5, 0.5])) == pytest.approx(exact, rel=1e-12)


def test_steric_equal_walls_keep_the_identities() -> None:
    """Crowded zeta walls (zeta = -8, nu = 0.05): u_eo = psi - zeta pointwise (Stokes with any charge of psi; common
    practice), Gauss and Onsager to round-off; no ion exceeds close packing, c_k / c_bulk <= 1 / nu (the lattice)."""
    nu = 0.05
    sol = solve_rectangle_section(4.0, 2.0, 0.25, *SYMMETRIC, model="steric", packing=[nu, nu], zeta=-8.0,
                                  accuracy=1e-6)
    assert sol.eo_identity < 1e-11 and sol.charge_balance < 1e-10 and sol.reciprocity < 1e-10
    counter_ions = sol.ion_integrals[0]  # int c_+ / c_+,bulk dA
    assert sol.area < counter_ions < sol.area / nu


@pytest.mark.parametrize(("kwargs", "field"), [
    ({"model": "steric"}, "model"),
    ({"model": "pb", "packing": [0.01, 0.01]}, "packing"),
    ({"model": "steric", "packing": [0.01]}, "packing"),
    ({"model": "steric", "packing": [0.01, 0.02]}, "packing"),
    ({"model": "steric", "packing": [0.6, 0.6]}, "packing"),
    ({"model": "steric", "packing": [0.0, 0.0]}, "packing"),
])
def test_bad_steric_input_names_the_field(kwargs: dict, field: str) -> None:
    """The steric model needs the packing of one ion size (proportional to the concentrations, positive, below close
    packing in the bulk) and only it takes one: one-line InputError naming the field (house rule)."""
    with pytest.raises(InputError, match=f"^{field} = ") as error:
        solve_rectangle_section(2.0, 2.0, 1.0, *SYMMETRIC, zeta=-1.0, **kwargs)
    assert "\n" not in str(error.value)
