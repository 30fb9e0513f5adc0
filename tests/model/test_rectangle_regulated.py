"""Charge-regulated walls in the rectangle core (``model.rectangle``, ``wall_row``): the wide rectangle tends to the
regulated slit of the 1-D solver, charge balance, and bad input."""

from __future__ import annotations

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.errors import InputError
from edl_solver.kernels.walls import dimensionless_wall
from edl_solver.model.packing import wall_row_si
from edl_solver.model.rectangle import solve_rectangle_section
from tests.helpers import SOLVENT

HEIGHT = 20e-9
ELECTROLYTE = edl.Electrolyte.from_ions({"K+": 10.0, "Cl-": 10.0}, pH=7.0)


def silica_row(h: float) -> np.ndarray:
    """The kernels' dimensionless row of the silica wall with lengths in ``h``."""
    return dimensionless_wall(wall_row_si(edl.Wall.silica()), SOLVENT.thermal_voltage, SOLVENT.permittivity, h,
                              ELECTROLYTE.proton_concentration)


def test_wide_regulated_rectangle_tends_to_the_regulated_slit() -> None:
    """Silica at pH 7 in 10 mM KCl, H = 20 nm: mid-way along the long wall the potential is the 1-D regulated slit's
    zeta, and the mean wall charge tends to the slit's wall_charge_density, the side walls' correction shrinking as
    H/W: the corners and short walls change the charge by a fixed amount spread over the perimeter 2 (W + H), so the
    relative correction times (W/H + 1) is the same for W/H = 20 and 50 (common practice); charge balance to ~1e-10
    (Gauss)."""
    slit = edl.solve(edl.Case(geometry=edl.Slit(height=HEIGHT), electrolyte=ELECTROLYTE, wall=edl.Wall.silica(),
                              solvent=SOLVENT, model="pb", numerics=edl.Numerics(accuracy=1e-9))).summary
    h = HEIGHT / 2
    zeta = slit["zeta"] / SOLVENT.thermal_voltage
    sigma_hat = slit["wall_charge_density"] * h / (SOLVENT.permittivity * SOLVENT.thermal_voltage)
    corrections = {}
    for ratio in (20, 50):
        sol = solve_rectangle_section(2.0 * ratio, 2.0, slit["debye_length"] / h, [1, -1], [1.0, 1.0], model="pb",
                                      wall_row=silica_row(h), accuracy=1e-7)
        assert sol.wall_potentials["mid_z"] == pytest.approx(zeta, rel=1e-8)
        assert sol.charge_balance < 1e-10
        assert sol.charge_density == pytest.approx(sol.integrals["wall_flux"] / sol.perimeter, rel=1e-14)
        corrections[ratio] = sol.charge_density / sigma_hat - 1.0
    assert 0.0 < abs(corrections[20]) < 0.02
    assert corrections[50] * 51 == pytest.approx(corrections[20] * 21, rel=1e-6)


def test_wall_row_with_another_wall_condition_is_an_input_error() -> None:
    """One wall condition: wall_row together with zeta is refused, and a non-regulated row too, naming the field."""
    row = silica_row(1.0)
    with pytest.raises(InputError, match="wall condition"):
        solve_rectangle_section(2.0, 2.0, 1.0, [1, -1], [1.0, 1.0], zeta=-1.0, wall_row=row)
    with pytest.raises(InputError, match="wall_row"):
        solve_rectangle_section(2.0, 2.0, 1.0, [1, -1], [1.0, 1.0], wall_row=row[:3])
