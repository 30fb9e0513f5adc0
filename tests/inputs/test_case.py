"""Input handling of the public objects: SI floats or strings with units, one-line errors naming the
field and the value, raised as soon as the bad value is given."""

from __future__ import annotations

import dataclasses

import pytest
from hypothesis import given
from hypothesis import strategies as st

import edl_solver as edl

KCL = {"K+": "1 mM", "Cl-": "1 mM"}


def kcl() -> edl.Electrolyte:
    return edl.Electrolyte.from_ions(KCL)


def test_contract_example_builds_with_si_floats() -> None:
    case = edl.Case(
        geometry=edl.Slit(height=50e-9),
        electrolyte=edl.Electrolyte([edl.Ion(name="K+", valence=1, concentration=1.0, diffusivity=1.957e-9),
                                     edl.Ion(name="Cl-", valence=-1, concentration=1.0, diffusivity=2.032e-9)]),
        wall=edl.Wall(zeta=-0.05),
        solvent=edl.Solvent(temperature=298.15, relative_permittivity=78.4, viscosity=0.89e-3),
        field=1e4, pressure_gradient=-1e5, model="pb")
    assert case.geometry.height == 50e-9 and case.field == 1e4 and case.walls[0].zeta == -0.05


def test_strings_with_units_are_parsed_once_to_si() -> None:
    case = edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=kcl(), wall=edl.Wall(charge_density="-2 mC/m^2"),
                    solvent=edl.Water(temperature="25 degC"), field="10 kV/m", pressure_gradient="-1 bar/mm",
                    tolerance="5 %")
    assert case.geometry.height == pytest.approx(50e-9, rel=1e-15)
    assert case.walls[0].charge_density == pytest.approx(-2e-3, rel=1e-15)
    assert case.solvent.temperature == pytest.approx(298.15)
    assert case.field == 1e4 and case.pressure_gradient == -1e8 and case.tolerance == 0.05
    assert case.electrolyte.ions[0].concentration == 1.0  # "1 mM" is exactly 1 mol/m^3


def test_table_fills_valence_and_diffusivity() -> None:
    ions = edl.Electrolyte.from_ions({"Mg2+": "1 mM", "Cl-": "2 mM"}).ions
    assert [(i.valence, i.diffusivity) for i in ions] == [(2, 0.706e-9), (-1, 2.032e-9)]  # CRC (from memory)


@pytest.mark.parametrize(
    ("build", "pattern"),
    [
        (lambda: edl.Electrolyte.from_ions({"Kk+": "1 mM", "Cl-": "1 mM"}), r"Kk\+.*did you mean 'K\+'"),
        (lambda: edl.Ion(name="K+", concentration="-1 mM"), r"concentration.*-1 mM.*positive"),
        (lambda: edl.Ion(name="K+"), r"concentration: missing"),
        (lambda: edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "2 mM"}), r"not neutral"),
        (lambda: edl.Slit(height=0.0), r"geometry.height: 0.0 is not positive"),
        (lambda: edl.Capillary(radius="-3 nm"), r"geometry.radius: '-3 nm' is not positive"),
        (lambda: edl.Slit(height="5 mV"), r"geometry.height: '5 mV'.*length"),
        (lambda: edl.Slit(height="fifty nm"), r"geometry.height: 'fifty nm'"),
        (lambda: edl.Wall(zeta="-50 mV", charge_density="-1 mC/m^2"), r"wall: both .*expected exactly one"),
        (lambda: edl.Wall(), r"wall: neither"),
        (lambda: edl.Wall(zeta="50 nm"), r"wall.zeta: '50 nm'"),
        (lambda: edl.Ion(name="X", valence=0, concentration=1.0, diffusivity=1e-9), r"valence: 0"),
        (lambda: edl.Ion(name="X", valence=1.5, concentration=1.0, diffusivity=1e-9), r"valence: 1.5"),
        (lambda: edl.Electrolyte([]), r"electrolyte.ions"),
        (lambda: edl.Numerics(accuracy=2.0), r"numerics.accuracy"),
        (lambda: edl.Numerics(intervals=12), r"numerics.intervals: 12"),
    ],
)
def test_bad_input_raises_one_line_error_naming_field_and_value(build, pattern: str) -> None:
    with pytest.raises(edl.InputError, match=pattern) as info:
        build()
    assert isinstance(info.value, ValueError)
    assert "\n" not in str(info.value)


def test_case_level_errors() -> None:
    with pytest.raises(edl.InputError, match="pair was given for a capillary"):
        edl.Case(geometry=edl.Capillary(radius=1e-8), electrolyte=kcl(), wall=(edl.Wall(zeta=0), edl.Wall(zeta=0)))
    with pytest.raises(edl.InputError, match="model: 'steric-ish'"):
        edl.Case(geometry=edl.Slit(height=1e-8), electrolyte=kcl(), wall=edl.Wall(zeta=0), model="steric-ish")
    with pytest.raises(edl.InputError, match="field: '3 mV'"):
        edl.Case(geometry=edl.Slit(height=1e-8), electrolyte=kcl(), wall=edl.Wall(zeta=0), field="3 mV")
    with pytest.raises(edl.InputError, match="tolerance"):
        edl.Case(geometry=edl.Slit(height=1e-8), electrolyte=kcl(), wall=edl.Wall(zeta=0), tolerance=5)


def test_objects_are_frozen_and_replaceable() -> None:
    case = edl.Case(geometry=edl.Slit(height=1e-8), electrolyte=kcl(), wall=edl.Wall(zeta=-0.01))
    with pytest.raises(dataclasses.FrozenInstanceError):
        case.field = 1.0  # type: ignore[misc]
    other = dataclasses.replace(case, field="1 kV/m")
    assert other.field == 1e3 and case.field == 0.0


@given(st.floats(min_value=1e-10, max_value=1e-3))  # the sizes a case takes (inputs.domain)
def test_any_positive_height_round_trips(height: float) -> None:
    assert edl.Slit(height=height).height == height


@given(st.floats(allow_nan=True, allow_infinity=True).filter(lambda v: not v > 0 or v != v or v == float("inf")))
def test_non_positive_or_non_finite_sizes_are_rejected(value: float) -> None:
    with pytest.raises(edl.InputError, match=r"geometry\.height"):
        edl.Slit(height=value)


@given(st.text(max_size=12))
def test_garbage_strings_never_escape_as_other_errors(text: str) -> None:
    try:
        edl.Wall(zeta=text)
    except edl.InputError as error:
        assert "wall.zeta" in str(error) and "\n" not in str(error)


def test_a_fixed_charge_behind_a_stern_layer_is_described_by_its_charge_and_capacitance() -> None:
    # it read "wall regulated ()" in every message about such a case
    kcl = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})
    case = edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=kcl,
                    wall=edl.Wall(charge_density="-10 mC/m^2", stern_capacitance="2 F/m^2"))
    assert "wall regulated (sigma = -0.01 C/m^2, Stern 2 F/m^2)" in case.describe()
