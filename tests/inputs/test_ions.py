"""Tests of edl_solver.inputs.ions."""

from __future__ import annotations

import dataclasses
import re

import pytest

from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.errors import InputError
from edl_solver.inputs import ions
from edl_solver.inputs.ions import IonData, ion_names, lookup_ion

T25 = 298.15  # K

# CRC Handbook of Chemistry and Physics, "Ionic conductivity and diffusion at infinite dilution",
# D in 1e-9 m^2/s at 25 °C (from memory).
CRC_DIFFUSIVITY = {
    "H+": (1, 9.311),
    "OH-": (-1, 5.273),
    "Li+": (1, 1.029),
    "Na+": (1, 1.334),
    "K+": (1, 1.957),
    "Cs+": (1, 2.056),
    "Cl-": (-1, 2.032),
    "Br-": (-1, 2.080),
    "NO3-": (-1, 1.902),
    "HCO3-": (-1, 1.185),
    "Mg2+": (2, 0.706),
    "Ca2+": (2, 0.792),
    "SO4 2-": (-2, 1.065),
}


@pytest.mark.parametrize(("name", "expected"), CRC_DIFFUSIVITY.items())
def test_table_values(name: str, expected: tuple[int, float]) -> None:
    ion = lookup_ion(name)  # CRC Handbook, infinite dilution, 25 °C (from memory)
    assert ion.name == name
    assert ion.valence == expected[0]
    assert ion.diffusivity == pytest.approx(expected[1] * 1e-9, rel=1e-12)


def test_every_listed_ion_resolves_to_itself() -> None:
    names = ion_names()
    assert len(names) == len(set(names)) >= len(CRC_DIFFUSIVITY)
    for name in names:
        ion = lookup_ion(name)
        assert ion.name == name and ion.valence != 0 and 1e-10 < ion.diffusivity < 1e-8


def test_ion_data_is_frozen() -> None:
    with pytest.raises(dataclasses.FrozenInstanceError):
        lookup_ion("K+").valence = 2  # type: ignore[misc]


@pytest.mark.parametrize(
    ("alias", "canonical"),
    [
        ("SO4--", "SO4 2-"),
        ("SO4^2-", "SO4 2-"),
        ("SO42-", "SO4 2-"),
        ("SO4(2-)", "SO4 2-"),
        ("SO4^-2", "SO4 2-"),
        ("SO\u2084\u00b2\u207b", "SO4 2-"),  # SO₄²⁻
        ("CO32-", "CO3 2-"),
        ("Mg++", "Mg2+"),
        ("Mg^2+", "Mg2+"),
        ("Mg\u00b2\u207a", "Mg2+"),  # Mg²⁺
        ("Mg+2", "Mg2+"),
        ("La+++", "La3+"),
        ("Cl\u2212", "Cl-"),  # unicode minus sign
        ("Cl\u207b", "Cl-"),  # superscript minus
        ("K\u207a", "K+"),  # superscript plus
        (" Na+ ", "Na+"),
        ("k+", "K+"),
        ("cl-", "Cl-"),
        ("co3 2-", "CO3 2-"),
        ("nh4+", "NH4+"),
        ("NO3-", "NO3-"),
    ],
)
def test_aliases(alias: str, canonical: str) -> None:
    assert lookup_ion(alias) == lookup_ion(canonical)


def test_case_insensitive_match_only_when_unambiguous(monkeypatch: pytest.MonkeyPatch) -> None:
    # Two made-up formulas differing only in case: "co2+" could be either, so it must not resolve.
    monkeypatch.setitem(ions._IONS, ("CO", 2), IonData("CO2+", 2, 1e-9))
    monkeypatch.setitem(ions._IONS, ("Co", 2), IonData("Co2+", 2, 1e-9))
    assert lookup_ion("Co2+").name == "Co2+"
    with pytest.raises(InputError):
        lookup_ion("co2+")


def test_unknown_name_suggests_closest() -> None:
    with pytest.raises(InputError) as info:
        lookup_ion("Kk+")
    assert str(info.value) == (
        "ion: 'Kk+' is not in the ion table (did you mean 'K+'?); give valence and diffusivity explicitly"
    )


@pytest.mark.parametrize(("name", "hint"), [("SO4-", "SO4 2-"), ("Na", "Na+"), ("Mg3+", "Mg2+")])
def test_wrong_charge_is_unknown(name: str, hint: str) -> None:
    with pytest.raises(InputError, match=re.escape(f"(did you mean '{hint}'?)")):
        lookup_ion(name)


def test_unknown_without_suggestion_and_custom_field() -> None:
    with pytest.raises(InputError, match=r"^species\[0\]: 'Xyzzy' is not in the ion table; give valence"):
        lookup_ion("Xyzzy", field="species[0]")


def test_non_string_name() -> None:
    with pytest.raises(InputError, match=r"^ion: 5 has type int, expected an ion name"):
        lookup_ion(5)  # type: ignore[arg-type]


def _limiting_molar_conductivity(name: str) -> float:
    """Nernst–Einstein, lambda = z^2 F^2 D / (R T), in S cm^2/mol."""
    ion = lookup_ion(name)
    return ion.valence**2 * FARADAY**2 * ion.diffusivity / (GAS_CONSTANT * T25) * 1e4


@pytest.mark.parametrize(
    ("name", "crc_lambda"),
    [
        ("K+", 73.48),  # CRC Handbook, limiting molar conductivity, 25 °C (from memory)
        ("Cl-", 76.31),  # CRC Handbook, limiting molar conductivity, 25 °C (from memory)
        ("Na+", 50.08),  # CRC Handbook, limiting molar conductivity, 25 °C (from memory)
        ("Mg2+", 2 * 53.0),  # CRC lists lambda(1/2 Mg2+) = 53.0 S cm^2/mol (from memory)
        ("SO4 2-", 2 * 80.0),  # CRC lists lambda(1/2 SO4 2-) = 80.0 S cm^2/mol (from memory)
    ],
)
def test_nernst_einstein_matches_crc_conductivities(name: str, crc_lambda: float) -> None:
    tolerance = 1e-3 if abs(lookup_ion(name).valence) == 1 else 2e-3  # divalent CRC values have 3 digits
    assert _limiting_molar_conductivity(name) == pytest.approx(crc_lambda, rel=tolerance)


def test_kcl_conductivity_at_infinite_dilution() -> None:
    # kappa = c (lambda_K + lambda_Cl); Kohlrausch limiting molar conductivity of KCl
    # 149.9 S cm^2/mol (from memory), i.e. 149.9 uS/cm for c = 1 mM = 1e-6 mol/cm^3.
    concentration = 1e-6  # mol/cm^3
    kappa_us_per_cm = concentration * (_limiting_molar_conductivity("K+") + _limiting_molar_conductivity("Cl-"))
    assert kappa_us_per_cm * 1e6 == pytest.approx(149.9, rel=5e-3)
