"""Walls whose potential vanishes (zero charge, zero zeta, a regulated wall at its point of zero charge) and walls of
exactly opposite potential: the steady solve returns the closed form instead of refusing the case.

Before the fix the estimate of the cancelling lab values (``kernels.value_errors``) divided the diffusion
potential, zero by symmetry for a salt of equal diffusivities in an uncharged section, by the size of its terms,
themselves zero to round-off: the estimate was round-off over round-off (~0.1) and every grid was refused.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.constants import BOLTZMANN, ELEMENTARY_CHARGE, FARADAY, GAS_CONSTANT, VACUUM_PERMITTIVITY
from edl_solver.model.frequency import frequency_response
from tests.helpers import SOLVENT

#: The requested relative accuracy (the default ``Numerics``).
ACCURACY = 1e-6
#: The thermal voltage kT/e at the solvent's temperature (V).
THERMAL = BOLTZMANN * SOLVENT.temperature / ELEMENTARY_CHARGE


def _salt(millimolar: float) -> edl.Electrolyte:
    """A model 1:1 salt with equal diffusivities: its diffusion potential vanishes in an uncharged section."""
    return edl.Electrolyte((edl.Ion("A", valence=1, concentration=millimolar, diffusivity=2e-9),
                            edl.Ion("B", valence=-1, concentration=millimolar, diffusivity=2e-9)))


def _bulk_conductivity(electrolyte: edl.Electrolyte) -> float:
    """K = sum_i z_i^2 F^2 D_i c_i / RT (Nernst-Einstein; textbook, e.g. Bruus 2008, from memory), S/m."""
    rt = GAS_CONSTANT * SOLVENT.temperature
    return sum(ion.valence**2 * FARADAY**2 * ion.diffusivity * ion.concentration / rt for ion in electrolyte.ions)


def _area_and_permeability(geometry: edl.Slit | edl.Capillary) -> tuple[float, float]:
    """Section area (per unit width for a slit) and Poiseuille permeability: a^2 / (8 eta) for a capillary of
    radius a, h^2 / (12 eta) for a slit of height h (Bruus 2008, Theoretical Microfluidics, from memory)."""
    eta = SOLVENT.viscosity
    if isinstance(geometry, edl.Capillary):
        a = geometry.radius
        return math.pi * a * a, a * a / (8.0 * eta)
    h = geometry.height
    return h, h * h / (12.0 * eta)


def _eo_scale(area: float) -> float:
    """EO flow per unit field of a wall at one thermal voltage (Helmholtz-Smoluchowski, eps (kT/e) / eta times the
    area): the size a vanishing EO coupling is measured against."""
    return SOLVENT.relative_permittivity * VACUUM_PERMITTIVITY * THERMAL / SOLVENT.viscosity * area


def _amphoteric() -> edl.Wall:
    """Sites of pK 4 and 10 with charges (+1, 0, -1): at pH 7 the + and - states are equally populated (10^-3 of
    the sites each, mass action), so the wall is at its point of zero charge at zero potential."""
    return edl.Wall(sites=(edl.Site(density="1 nm^-2", pK=(4.0, 10.0), charges=(1, 0, -1)),))


UNCHARGED = {
    "capillary, zero charge": (edl.Capillary(radius="5 nm"), _salt(0.154), edl.Wall(charge_density="0 mC/m^2")),
    "capillary, zero zeta": (edl.Capillary(radius="20 nm"), _salt(1.0), edl.Wall(zeta="0 mV")),
    "slit, zero charge": (edl.Slit(height="20 nm"), _salt(1.0), edl.Wall(charge_density=0.0)),
    "slit, zero zeta": (edl.Slit(height="100 nm"), _salt(10.0), edl.Wall(zeta=0.0)),
    "slit, point of zero charge": (edl.Slit(height="20 nm"),
                                   edl.Electrolyte(_salt(10.0).ions, pH=7.0), _amphoteric()),
}


@pytest.mark.parametrize("name", list(UNCHARGED))
def test_an_uncharged_section_has_the_closed_form_response(name: str) -> None:
    """psi = 0 everywhere; Poiseuille flow, bulk conduction, no EO or streaming coupling, no diffusion potential
    (equal diffusivities), a cation transference of 1/2: the uncharged section's response (textbook, from memory)."""
    geometry, electrolyte, wall = UNCHARGED[name]
    result = edl.solve(edl.Case(geometry=geometry, electrolyte=electrolyte, wall=wall, solvent=SOLVENT))
    summary, matrix = result.summary, result.response_matrix
    area, permeability = _area_and_permeability(geometry)
    assert summary["conductance_per_length"] == pytest.approx(_bulk_conductivity(electrolyte) * area, rel=ACCURACY)
    assert matrix[0, 0] == pytest.approx(permeability * area, rel=ACCURACY)
    for key in ("zeta", "centre_potential", "mean_potential", "diffusion_potential"):
        assert np.all(np.abs(summary[key]) <= ACCURACY * THERMAL), key
    assert abs(matrix[0, 1]) <= ACCURACY * _eo_scale(area)
    assert abs(matrix[1, 0]) <= ACCURACY * _eo_scale(area)
    assert summary["cation_transference"] == pytest.approx(0.5, rel=ACCURACY)
    assert np.abs(result.profiles.potential).max() <= ACCURACY * THERMAL


@pytest.mark.parametrize("walls", [(edl.Wall(zeta="-1.3 mV"), edl.Wall(zeta="1.3 mV")),
                                   (edl.Wall(charge_density="-1 mC/m^2"), edl.Wall(charge_density="1 mC/m^2"))],
                         ids=["zeta", "charge"])
def test_walls_of_opposite_potential_drive_no_net_eo_flow(walls: tuple[edl.Wall, edl.Wall]) -> None:
    """A slit whose walls are mirror images with the sign flipped: psi is odd about the mid-plane, so the EO flow
    (and by Onsager the streaming current) integrates to zero (symmetry), and the charge does not touch Poiseuille
    flow (no-slip, zero field: Bruus 2008, from memory)."""
    geometry = edl.Slit(height="61 nm")
    result = edl.solve(edl.Case(geometry=geometry, electrolyte=_salt(10.0), wall=walls, solvent=SOLVENT))
    matrix = result.response_matrix
    area, permeability = _area_and_permeability(geometry)
    assert matrix[0, 0] == pytest.approx(permeability * area, rel=ACCURACY)
    assert abs(matrix[0, 1]) <= ACCURACY * _eo_scale(area)
    assert abs(matrix[1, 0]) <= ACCURACY * _eo_scale(area)
    assert abs(result.summary["centre_potential"]) <= ACCURACY * THERMAL


def test_the_frequency_response_of_walls_of_opposite_potential_has_no_net_flow() -> None:
    """The oscillating EO flow (``model.frequency``) of the antisymmetric slit: no net flow at any frequency
    (odd about the mid-plane, symmetry), while the space charge it carries (even) is not zero and meets the steady
    solve's convection current at f = 0 (the same equations; common practice)."""
    case = edl.Case(geometry=edl.Slit(height="61 nm"), electrolyte=_salt(10.0),
                    wall=(edl.Wall(zeta="-1.3 mV"), edl.Wall(zeta="1.3 mV")), solvent=SOLVENT, field="1 kV/m")
    response = frequency_response(case, [0.0, 1e6, 1e9])
    one_wall = _eo_scale(case.geometry.height) * 1.3e-3 / THERMAL * case.field  # Helmholtz-Smoluchowski, one wall
    assert np.all(response["flow_rate_amplitude"].values <= ACCURACY * one_wall)
    steady = edl.solve(case).summary["eo_convection_current"]
    assert response["convection_current_amplitude"].values[0] == pytest.approx(abs(steady), rel=ACCURACY)
    assert np.all(response["error_estimate"].values <= ACCURACY)


def test_a_rectangle_without_charge_has_the_bulk_conductance_and_no_eo_coupling() -> None:
    """The rectangle's own estimate (``model.rectangle``) already floors vanishing integrals: an uncharged
    rectangle conducts as the bulk over its area (Nernst-Einstein, from memory) with no EO flow (no charge)."""
    electrolyte = _salt(1.0)
    geometry = edl.Rectangle(height="20 nm", width="40 nm")
    case = edl.Case(geometry=geometry, electrolyte=electrolyte, wall=edl.Wall(charge_density=0.0), solvent=SOLVENT,
                    field="1 kV/m")
    summary = edl.solve(case).summary
    area = 20e-9 * 40e-9
    assert summary["conductance_per_length"] == pytest.approx(_bulk_conductivity(electrolyte) * area, rel=ACCURACY)
    assert abs(summary["flow_rate_eo"]) <= ACCURACY * _eo_scale(area) * case.field


def test_a_sweep_of_the_wall_charge_through_zero_solves_every_point() -> None:
    """The batch path (``edl.sweep``) runs the same compiled estimate: the point of zero charge is solved, at the
    bulk conductance (Nernst-Einstein, from memory), and the curve is even in the charge (a 1:1 salt of equal
    diffusivities: flipping the charge swaps the ions' roles, symmetry)."""
    geometry, electrolyte, wall = UNCHARGED["capillary, zero charge"]
    base = edl.Case(geometry=geometry, electrolyte=electrolyte, wall=wall, solvent=SOLVENT)
    swept = edl.sweep(base, {"wall.charge_density": [-1e-3, 0.0, 1e-3]}, workers=1, progress=False)
    assert list(swept["message"].values) == ["", "", ""]
    conductance = swept["conductance_per_length"].values
    area, _ = _area_and_permeability(geometry)
    assert conductance[1] == pytest.approx(_bulk_conductivity(electrolyte) * area, rel=ACCURACY)
    assert conductance[0] == pytest.approx(conductance[2], rel=ACCURACY)
