"""Tests of edl_solver.inputs.solvent."""

from __future__ import annotations

import dataclasses
from collections.abc import Callable

import pytest

from edl_solver.constants import VACUUM_PERMITTIVITY
from edl_solver.errors import InputError
from edl_solver.inputs.solvent import Solvent, Water, water_relative_permittivity, water_viscosity

C0 = 273.15  # K

# IAPWS 2008 viscosity of liquid water at 0.1 MPa, mPa s (Huber et al. 2009,
# J. Phys. Chem. Ref. Data 38, 101; from memory).
IAPWS_VISCOSITY = {10: 1.3059, 20: 1.0016, 25: 0.8900, 30: 0.7972, 40: 0.6527, 50: 0.5465, 60: 0.4660, 80: 0.3544}


def test_permittivity_at_25c_from_malmberg_maryott() -> None:
    # 87.740 - 0.40008*25 + 9.398e-4*25^2 - 1.410e-6*25^3 = 78.303 (Malmberg & Maryott 1956, eq. as published)
    assert water_relative_permittivity(C0 + 25) == pytest.approx(78.30, abs=0.01)


def test_permittivity_matches_iapws_release() -> None:
    # IAPWS static dielectric constant release (Fernandez et al. 1997): 78.41 at 25 °C, 0.1 MPa (from memory)
    assert water_relative_permittivity(C0 + 25) == pytest.approx(78.41, rel=3e-3)


def test_permittivity_falls_with_temperature() -> None:
    # Malmberg & Maryott (1956) tabulate 87.74 at 0 °C and 55.72 at 100 °C (from memory).
    assert water_relative_permittivity(C0) == pytest.approx(87.74, abs=0.01)
    assert water_relative_permittivity(C0 + 100) == pytest.approx(55.72, abs=0.02)


@pytest.mark.parametrize(("celsius", "iapws_mpas"), IAPWS_VISCOSITY.items())
def test_viscosity_matches_iapws_2008(celsius: float, iapws_mpas: float) -> None:
    # IAPWS 2008, Huber et al. (2009) at 0.1 MPa (from memory)
    assert water_viscosity(C0 + celsius) == pytest.approx(iapws_mpas * 1e-3, rel=5e-3)


@pytest.mark.parametrize("celsius", range(10, 81, 5))
def test_viscosity_matches_engineering_correlation(celsius: int) -> None:
    # eta = A 10^(B / (T - C)), A = 2.414e-5 Pa s, B = 247.8 K, C = 140 K (common practice)
    kelvin = C0 + celsius
    engineering = 2.414e-5 * 10 ** (247.8 / (kelvin - 140.0))
    assert water_viscosity(kelvin) == pytest.approx(engineering, rel=1.5e-2)


def test_correlations_accept_strings_with_units() -> None:
    assert water_viscosity("25 degC") == water_viscosity(298.15)
    assert water_relative_permittivity("77 degF") == pytest.approx(water_relative_permittivity(298.15), rel=1e-12)


@pytest.mark.parametrize("function", [water_relative_permittivity, water_viscosity])
@pytest.mark.parametrize("kelvin", [273.0, 373.2, 500.0, -5.0])
def test_out_of_range_temperature(function: Callable[..., float], kelvin: float) -> None:
    with pytest.raises(InputError, match=r"^temperature: .* is outside the range .* expected 273.15 K to 373.15 K"):
        function(kelvin)


def test_range_endpoints_are_valid() -> None:
    for kelvin in (273.15, 373.15):
        assert water_viscosity(kelvin) > 0 and water_relative_permittivity(kelvin) > 0


def test_out_of_range_message_shows_string_as_given() -> None:
    with pytest.raises(InputError) as info:
        Water("150 degC")
    message = str(info.value)
    assert message.startswith("water.temperature: '150 degC' (423.15 K) is outside") and "\n" not in message


def test_solvent_converts_strings() -> None:
    solvent = Solvent(temperature="25 degC", relative_permittivity="78.4", viscosity="0.89 mPa*s")
    assert solvent.temperature == pytest.approx(298.15, rel=1e-12)
    assert solvent.relative_permittivity == 78.4
    assert solvent.viscosity == pytest.approx(0.89e-3, rel=1e-12)
    assert solvent.name == "custom"
    assert all(type(v) is float for v in (solvent.temperature, solvent.relative_permittivity, solvent.viscosity))


def test_solvent_is_frozen() -> None:
    with pytest.raises(dataclasses.FrozenInstanceError):
        Water().temperature = 300.0  # type: ignore[misc]


@pytest.mark.parametrize(
    ("kwargs", "pattern"),
    [
        ({"temperature": 0.0}, r"^solvent\.temperature: 0\.0 is not positive, expected a temperature > 0 K$"),
        ({"temperature": "5 m"}, r"^solvent\.temperature: '5 m' has units of metre"),
        ({"relative_permittivity": -1.0}, r"^solvent\.relative_permittivity: -1\.0 is not positive"),
        ({"relative_permittivity": "78 F/m"}, r"^solvent\.relative_permittivity: '78 F/m' has units"),
        ({"viscosity": "-0.89 mPa*s"}, r"^solvent\.viscosity: '-0\.89 mPa\*s' is not positive"),
        ({"viscosity": "1 Pa"}, r"^solvent\.viscosity: '1 Pa' has units of pascal \(pressure\)"),
        ({"viscosity": True}, r"^solvent\.viscosity: True is not a number"),
        ({"name": 3}, r"^solvent\.name: 3 has type int, expected a str$"),
    ],
)
def test_solvent_validation(kwargs: dict, pattern: str) -> None:
    base = {"temperature": 298.15, "relative_permittivity": 78.3, "viscosity": 8.9e-4}
    with pytest.raises(InputError, match=pattern):
        Solvent(**{**base, **kwargs})


def test_permittivity_property() -> None:
    solvent = Solvent(298.15, 80.0, 1e-3)
    assert solvent.permittivity == 80.0 * VACUUM_PERMITTIVITY


def test_thermal_voltage_at_25c() -> None:
    # kT/e with the exact SI values k = 1.380649e-23 J/K, e = 1.602176634e-19 C (CODATA 2018): 25.693 mV
    assert Solvent(298.15, 78.3, 8.9e-4).thermal_voltage == pytest.approx(25.693e-3, abs=5e-7)


def test_water_defaults_use_the_correlations() -> None:
    water = Water()
    assert water.name == "water"
    assert water.temperature == 298.15
    assert water.relative_permittivity == water_relative_permittivity(298.15)
    assert water.viscosity == water_viscosity(298.15)


def test_water_at_other_temperature() -> None:
    water = Water(temperature="40 degC")
    # IAPWS 2008 at 40 °C, 0.1 MPa: 0.6527 mPa s (from memory)
    assert water.viscosity == pytest.approx(0.6527e-3, rel=5e-3)
    assert water.relative_permittivity == pytest.approx(water_relative_permittivity(C0 + 40), rel=1e-12)


def test_water_overrides() -> None:
    water = Water(temperature=300.0, relative_permittivity=80.0, viscosity="1 mPa*s")
    assert (water.relative_permittivity, water.viscosity) == (80.0, pytest.approx(1e-3, rel=1e-12))
    only_eps = Water(relative_permittivity="70")
    assert only_eps.relative_permittivity == 70.0 and only_eps.viscosity == water_viscosity(298.15)


def test_water_outside_range_needs_both_overrides() -> None:
    hot = Water(temperature=400.0, relative_permittivity=55.0, viscosity=2e-4)  # no correlation used
    assert hot.temperature == 400.0
    with pytest.raises(InputError, match=r"^water\.temperature: 400 K is outside the range"):
        Water(temperature=400.0, relative_permittivity=55.0)
