"""The solvent's density (issue 14 needs it for unsteady flow): water's against temperature, a given value, and the
case file and sweep path that carry it."""

from __future__ import annotations

import pytest

import edl_solver as edl
from edl_solver.inputs.casefile import case_to_mapping, loads_case
from edl_solver.inputs.paths import PATH_UNITS
from edl_solver.inputs.solvent import water_density

#: Density of air-free water at 0.1 MPa, kg/m^3 (IAPWS-95 values as tabulated in the CRC Handbook of Chemistry and
#: Physics, "Properties of water in the range 0-100 °C"; from memory, to 0.01 kg/m^3).
HANDBOOK = {0.0: 999.84, 4.0: 999.97, 20.0: 998.21, 25.0: 997.05, 40.0: 992.22, 60.0: 983.20, 80.0: 971.80,
            100.0: 958.35}


@pytest.mark.parametrize(("celsius", "density"), sorted(HANDBOOK.items()))
def test_water_density_against_the_handbook(celsius: float, density: float) -> None:
    """Kell's correlation (1975) within 0.02 kg/m^3 of the handbook's values from 0 to 100 degC."""
    assert water_density(273.15 + celsius) == pytest.approx(density, abs=0.02)


def test_density_defaults_to_water_and_can_be_given() -> None:
    """Water() and a Solvent without a density take water's at their temperature (so existing calls keep working);
    a given density is kept, in any unit; outside 0-100 degC no correlation is used (None)."""
    assert edl.Water(temperature="40 degC").density == pytest.approx(water_density(313.15), rel=1e-15)
    assert edl.Solvent(temperature=300.0, relative_permittivity=24.5, viscosity=1.07e-3).density == \
        pytest.approx(water_density(300.0), rel=1e-15)
    assert edl.Solvent(temperature=300.0, relative_permittivity=24.5, viscosity=1.07e-3,
                       density="0.785 g/cm^3").density == pytest.approx(785.0, rel=1e-12)
    assert edl.Solvent(temperature=400.0, relative_permittivity=50.0, viscosity=2e-4).density is None
    with pytest.raises(edl.InputError, match=r"solvent.density: .*expected a density > 0 kg/m\^3"):
        edl.Solvent(temperature=300.0, relative_permittivity=80.0, viscosity=1e-3, density=-1.0)


def test_a_given_density_goes_through_the_case_file_and_back() -> None:
    """The case file writes a density only when it is not the default one, and reads it back."""
    base = """[geometry]\nheight = "50 nm"\n[electrolyte]\nions = { "K+" = "1 mM", "Cl-" = "1 mM" }\n[wall]
zeta = "-50 mV"\n"""
    plain = loads_case(base)
    assert "density" not in case_to_mapping(plain)["solvent"]
    heavy = loads_case(base + '[solvent]\ndensity = "1.1 g/cm^3"\n')
    assert heavy.solvent.density == pytest.approx(1100.0, rel=1e-12)
    assert loads_case(base + '[solvent]\ndensity = 1100.0\n') == heavy
    assert case_to_mapping(heavy)["solvent"]["density"] == pytest.approx(1100.0, rel=1e-12)
    assert PATH_UNITS["solvent.density"] == "kg/m^3"
