"""Ion diffusivities that follow the temperature (``inputs.ion_temperature``, ``Ion.diffusivity_at``)."""

from __future__ import annotations

import dataclasses

import pytest

import edl_solver as edl
from edl_solver.constants import ZERO_CELSIUS
from edl_solver.errors import InputError
from edl_solver.inputs.casefile import case_from_mapping, case_to_mapping
from edl_solver.inputs.solvent import water_viscosity
from edl_solver.model.bulk import bulk_conductivity

KCL = edl.Electrolyte.from_ions({"K+": "10 mM", "Cl-": "10 mM"})


def kcl_case(celsius: float, electrolyte: edl.Electrolyte = KCL) -> edl.Case:
    return edl.Case(edl.Slit(height="100 nm"), electrolyte, edl.Wall(zeta="-20 mV"),
                    solvent=edl.Water(ZERO_CELSIUS + celsius))


# Conductivity of the 0.01 mol/L KCl calibration standard, uS/cm (REFERENCES.md, "Measurements and fitting":
# common practice, values from memory).
KCL_STANDARD = {0.0: 776.0, 10.0: 1020.0, 20.0: 1278.0, 25.0: 1413.0, 30.0: 1552.0}


@pytest.mark.parametrize("celsius", [0.0, 10.0, 20.0, 30.0])
def test_kcl_conductivity_follows_the_standard_from_0_to_30_degc(celsius: float) -> None:
    """K(T)/K(25 degC) of 10 mM KCl within 2 % of the 0.01 mol/L standard; with 25 degC mobilities it fell with
    temperature (0.161 S/m at 5 degC, above the 25 degC value)."""
    ratio = bulk_conductivity(kcl_case(celsius)) / bulk_conductivity(kcl_case(25.0))
    assert ratio == pytest.approx(KCL_STANDARD[celsius] / KCL_STANDARD[25.0], rel=0.02)


# Limiting ionic conductivities, S cm^2/mol, from Robinson & Stokes, Electrolyte Solutions (2nd ed.),
# Appendix 6.2 (35-55 degC), and the CRC Handbook (100 degC); FROM MEMORY. The solver interpolates the Walden
# product between these rows; this checks that its diffusivities give them back (Nernst-Einstein).
LIMITING = {"K+": {25.0: 73.5, 35.0: 88.2, 45.0: 103.5, 55.0: 119.2, 100.0: 195.0},
            "Cl-": {25.0: 76.35, 35.0: 92.2, 45.0: 108.9, 55.0: 126.4, 100.0: 212.0}}


@pytest.mark.parametrize("name", ["K+", "Cl-"])
@pytest.mark.parametrize("celsius", [35.0, 45.0, 55.0, 100.0])
def test_limiting_conductivities_of_k_and_cl_up_to_100_degc(name: str, celsius: float) -> None:
    ion = edl.Ion(name, concentration=1.0)
    ratio = ion.diffusivity_at(ZERO_CELSIUS + celsius) / ion.diffusivity
    # lambda = z^2 F^2 D / RT: lambda(T) / lambda(25) = D(T) / D(25) * T25 / T
    conductivity_ratio = ratio * (ZERO_CELSIUS + 25.0) / (ZERO_CELSIUS + celsius)
    assert conductivity_ratio == pytest.approx(LIMITING[name][celsius] / LIMITING[name][25.0], rel=0.03)


def test_between_table_rows_the_walden_product_is_interpolated() -> None:
    """At 80 degC (between the 55 and 100 degC rows) lambda eta lies between its values there (common practice:
    the Walden product varies slowly and monotonically with temperature)."""
    ion = edl.Ion("K+", concentration=1.0)
    def walden(celsius: float) -> float:
        kelvin = ZERO_CELSIUS + celsius
        return ion.diffusivity_at(kelvin) / kelvin * water_viscosity(kelvin)
    assert walden(100.0) < walden(80.0) < walden(55.0)


def test_25_degc_diffusivities_are_the_table_values_exactly() -> None:
    for name in ("K+", "Cl-", "Ca2+", "SO4 2-", "H+", "OH-"):
        ion = edl.Ion(name, concentration=1.0)
        assert ion.diffusivity_at(298.15) == ion.diffusivity


def test_ion_without_a_temperature_row_follows_walden() -> None:
    """Ca2+ has no row: D(T) = D25 (T / T25) eta(T25) / eta(T) (Walden's rule, Stokes-Einstein)."""
    ion = edl.Ion("Ca2+", concentration=1.0)
    kelvin = ZERO_CELSIUS + 60.0
    expected = ion.diffusivity * kelvin / 298.15 * water_viscosity(298.15) / water_viscosity(kelvin)
    assert ion.diffusivity_at(kelvin) == pytest.approx(expected, rel=1e-12)


def test_a_given_diffusivity_stays_as_given_unless_asked() -> None:
    given = edl.Ion("K+", concentration=1.0, diffusivity=1.5e-9)
    assert not given.temperature_dependence
    assert given.diffusivity_at(ZERO_CELSIUS + 60.0) == 1.5e-9
    asked = edl.Ion("K+", concentration=1.0, diffusivity=1.5e-9, temperature_dependence=True)
    table = edl.Ion("K+", concentration=1.0)
    assert table.temperature_dependence
    kelvin = ZERO_CELSIUS + 60.0
    assert asked.diffusivity_at(kelvin) / 1.5e-9 == pytest.approx(table.diffusivity_at(kelvin) / table.diffusivity)
    assert asked.diffusivity_at(kelvin) > 1.5e-9 * 1.8
    custom = edl.Ion("X+", valence=1, concentration=1.0, diffusivity=1e-9)
    assert custom.diffusivity_at(kelvin) == 1e-9


def test_temperature_dependence_must_be_a_boolean() -> None:
    with pytest.raises(InputError, match=r"ion K\+\.temperature_dependence: 'yes' is not True or False"):
        edl.Ion("K+", concentration=1.0, temperature_dependence="yes")


def test_a_temperature_outside_the_laws_is_refused_at_the_case() -> None:
    hot = edl.Solvent(temperature=400.0, relative_permittivity=50.0, viscosity=2e-4)
    with pytest.raises(InputError, match=r"ion K\+\.diffusivity: .*0-100 degC, got 400 K"):
        edl.Case(edl.Slit(height="100 nm"), KCL, edl.Wall(zeta="-20 mV"), solvent=hot)
    fixed = edl.Electrolyte((edl.Ion("K+", concentration=10.0, temperature_dependence=False),
                             edl.Ion("Cl-", concentration=10.0, temperature_dependence=False)))
    edl.Case(edl.Slit(height="100 nm"), fixed, edl.Wall(zeta="-20 mV"), solvent=hot)


def test_case_file_round_trip_keeps_the_temperature_dependence() -> None:
    mixed = edl.Electrolyte((edl.Ion("K+", concentration=10.0),
                             edl.Ion("Cl-", concentration=10.0, diffusivity=2e-9)))
    case = kcl_case(50.0, mixed)
    again = case_from_mapping(case_to_mapping(case))
    assert again == case
    assert again.electrolyte.diffusivities(again.solvent.temperature) == mixed.diffusivities(ZERO_CELSIUS + 50.0)


def test_water_ions_keep_the_partner_s_temperature_dependence() -> None:
    salt = edl.Electrolyte((edl.Ion("K+", concentration=10.0, diffusivity=1.9e-9), edl.Ion("Cl-", concentration=10.0)),
                           pH=4.0, water_ions=True)
    assert [ion.temperature_dependence for ion in salt.ions] == [False, True, True, True]
    assert dataclasses.replace(salt.ions[1]).temperature_dependence
