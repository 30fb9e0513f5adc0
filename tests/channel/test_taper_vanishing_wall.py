"""A tapered channel over a wall of exactly zero charge in a salt of equal diffusivities: every section of the table
is uncharged (psi = 0), which the steady solve refused before (``kernels.value_errors``), so the table could not be
built. The existing uncharged-cone tests (``test_taper_limits.py``) use KCl, whose unequal diffusivities keep the
diffusion potential away from zero and never met the defect.
"""

from __future__ import annotations

import math

import numpy as np

import edl_solver as edl
from edl_solver import channel as ch
from edl_solver.model.bulk import bulk_conductivity
from tests.helpers import SOLVENT

#: 10 mM of a model 1:1 salt with equal diffusivities in a capillary of exactly zero charge.
CASE = edl.Case(geometry=edl.Capillary(radius="5 nm"),
                electrolyte=edl.Electrolyte((edl.Ion("A", valence=1, concentration=10.0, diffusivity=2e-9),
                                             edl.Ion("B", valence=-1, concentration=10.0, diffusivity=2e-9))),
                wall=edl.Wall(charge_density="0 mC/m^2"), solvent=SOLVENT)


def _resistance_error(size_points: int) -> tuple[np.ndarray, float]:
    """Relative deviation of -V/I of a 5 nm to 20 nm cone, 1 um long (16 concentration points), from the closed
    form R = L / (K pi a_tip a_base) (int_0^L dx / (K pi r(x)^2) with r linear, derived as in
    ``test_taper_limits.py``; Ohm's law in a slowly varying section, common practice), and the table's
    interpolation error."""
    table = ch.tabulate(ch.Channel(CASE, "1 um", 10.0, 10.0, points=16, size=("5 nm", "20 nm"),
                                   size_points=size_points))
    voltages = np.array([0.05, -0.05])
    current = ch.current_voltage(table, voltages)["current"].values
    closed = 1e-6 / (bulk_conductivity(CASE) * math.pi * 5e-9 * 20e-9)
    return -voltages / current / closed - 1.0, table.interpolation_error


def test_an_uncharged_cone_of_a_salt_with_equal_diffusivities_tabulates_and_is_ohmic() -> None:
    """Six sizes: within the table's own interpolation error (2.6e-5 measured against its 3.6e-4)."""
    error, interpolation = _resistance_error(6)
    assert np.all(np.abs(error) <= interpolation)


def test_an_uncharged_cone_with_a_finer_size_table_meets_1e_6() -> None:
    """Twelve sizes: the interpolation over the size is then below the along-x collocation's error (~4e-7, as
    ``channel.taper_path`` documents its tolerance), and the resistance meets 1e-6 (7.6e-7 measured)."""
    error, _ = _resistance_error(12)
    np.testing.assert_allclose(error, 0.0, atol=1e-6)
