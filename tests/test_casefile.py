"""Case files: TOML text and nested dicts -> Case, with errors that name the file, the key and the value."""

from __future__ import annotations

import dataclasses
import sys
from pathlib import Path

import pytest
from hypothesis import given
from hypothesis import strategies as st

import edl_solver as edl
from edl_solver.casefile import CASE_KEYS, case_from_mapping, load_case, loads_case, read_mapping
from edl_solver.demo import DEMO_TOML, demo_case
from edl_solver.errors import InputError

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

# The example of the file format's documentation, with every section.
EXAMPLE = """\
# a 50 nm slit in 1 mM KCl
model = "pb"
field = "10 kV/m"
pressure_gradient = "-1 bar/mm"
tolerance = "5 %"

[geometry]
kind = "slit"
height = "50 nm"

[electrolyte]
ions = { "K+" = "1 mM", "Cl-" = "1 mM" }

[wall]
zeta = "-50 mV"

[solvent]
temperature = "25 degC"

[numerics]
accuracy = 1e-6
"""

MINIMAL = {
    "geometry": {"kind": "slit", "height": "50 nm"},
    "electrolyte": {"ions": {"K+": "1 mM", "Cl-": "1 mM"}},
    "wall": {"zeta": "-50 mV"},
}


def write(tmp_path: Path, text: str, name: str = "case.toml") -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def with_change(path: str, value: object) -> dict:
    """MINIMAL with the dotted ``path`` set to ``value`` (tables created as needed)."""
    data = {key: dict(table) for key, table in MINIMAL.items()}
    *sections, key = path.split(".")
    table = data
    for section in sections:
        table = table.setdefault(section, {})
    table[key] = value
    return data


def error_of(data: dict, source: str = "case.toml") -> str:
    with pytest.raises(InputError) as info:
        case_from_mapping(data, source)
    message = str(info.value)
    assert "\n" not in message
    return message


# -- what a valid file gives ------------------------------------------------------------------------


def test_example_file_gives_the_case_in_si(tmp_path: Path) -> None:
    case = load_case(write(tmp_path, EXAMPLE))
    assert case.geometry == edl.Slit(height=50e-9)
    assert [(ion.name, ion.valence, ion.concentration) for ion in case.electrolyte.ions] == [
        ("K+", 1, 1.0), ("Cl-", -1, 1.0)]
    assert case.wall == edl.Wall(zeta=-0.05)
    assert case.field == 1e4 and case.pressure_gradient == -1e8 and case.tolerance == 0.05
    assert case.model == "pb" and case.numerics.accuracy == 1e-6
    assert case.solvent == edl.Water(temperature=298.15)


def test_text_and_file_give_the_same_case(tmp_path: Path) -> None:
    assert loads_case(EXAMPLE) == load_case(write(tmp_path, EXAMPLE))
    with pytest.raises(InputError, match=r"^invalid TOML: .*\(at line 2, column \d+\)$"):
        loads_case('model = "pb"\nfield = = 1\n')
    # An error at the very end of the text names the line as well.
    with pytest.raises(InputError, match=r"^invalid TOML: .*\(line 2, the last\)$"):
        loads_case('model = "pb"\nfield =')


def test_defaults_of_the_optional_sections_match_the_api() -> None:
    expected = edl.Case(geometry=edl.Slit(height="50 nm"),
                        electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}),
                        wall=edl.Wall(zeta="-50 mV"))
    assert case_from_mapping(MINIMAL) == expected


def test_capillary_two_walls_and_ions_in_full(tmp_path: Path) -> None:
    capillary = load_case(write(tmp_path, """\
[geometry]
kind = "capillary"
radius = "20 nm"
[electrolyte]
ions = { "Na+" = "2 mM" }
[[electrolyte.ion]]
name = "X2-"
valence = -2
concentration = "1 mM"
diffusivity = "0.5e-9 m^2/s"
[wall]
charge_density = "-2 mC/m^2"
"""))
    assert capillary.geometry == edl.Capillary(radius=20e-9)
    custom = capillary.electrolyte.ions[1]
    assert (custom.name, custom.valence, custom.concentration, custom.diffusivity) == ("X2-", -2, 1.0, 0.5e-9)
    assert capillary.wall == edl.Wall(charge_density=-2e-3)

    slit = case_from_mapping(with_change("wall", {"bottom": {"zeta": "-50 mV"}, "top": {"charge_density": 0.001}}))
    assert slit.wall == (edl.Wall(zeta=-0.05), edl.Wall(charge_density=1e-3))


def test_geometry_kind_follows_from_its_size_when_left_out() -> None:
    case = case_from_mapping(with_change("geometry", {"radius": "15 nm"}))
    assert case.geometry == edl.Capillary(radius=15e-9)


def test_a_solvent_other_than_water_needs_all_its_properties() -> None:
    oil = {"name": "glycol", "temperature": 300.0, "relative_permittivity": 37.0, "viscosity": "16 mPa*s"}
    case = case_from_mapping(with_change("solvent", oil))
    assert case.solvent == edl.Solvent(300.0, 37.0, 16e-3, name="glycol")
    del oil["viscosity"]
    assert error_of(with_change("solvent", oil)) == (
        "case.toml: solvent.viscosity: missing, expected it for solvent 'glycol' (only water has built-in "
        "properties)")


CASES = {
    "symmetric slit": MINIMAL,
    "capillary, charged wall": {"geometry": {"kind": "capillary", "radius": "20 nm"},
                                "electrolyte": {"ions": {"Mg2+": "1 mM", "Cl-": "2 mM"}},
                                "wall": {"charge_density": "-3 mC/m^2"}, "model": "dh", "field": 123.0},
    "two walls, custom ion and solvent": {
        "geometry": {"height": 1e-7},
        "electrolyte": {"ions": [{"name": "A+", "valence": 1, "concentration": 2.0, "diffusivity": 1e-9},
                                 {"name": "Cl-", "concentration": 2.0}]},
        "wall": {"bottom": {"zeta": -0.02}, "top": {"charge_density": -0.001}},
        "solvent": {"name": "mix", "temperature": 310.0, "relative_permittivity": 60.0, "viscosity": 2e-3},
        "numerics": {"accuracy": 1e-8, "intervals": 64}, "tolerance": 0.1, "pressure_gradient": -5.0},
}


@pytest.mark.parametrize("name", CASES)
def test_the_dict_form_of_io_reads_back_to_the_same_case(name: str) -> None:
    # io.case_to_dict writes the shape this module reads: the two must agree exactly.
    from edl_solver.io import case_to_dict

    case = case_from_mapping(CASES[name])
    assert case_from_mapping(case_to_dict(case)) == case


def test_none_means_not_given() -> None:
    # Dicts made from the dataclasses carry None for absent optional values.
    data = with_change("wall", {"zeta": "-50 mV", "charge_density": None})
    data["numerics"] = {"intervals": None}
    assert case_from_mapping(data) == case_from_mapping(MINIMAL)


# -- what a bad file gives --------------------------------------------------------------------------


@pytest.mark.parametrize(("path", "value", "expected"), [
    ("wall.zetta", "-50 mV", "unknown key 'wall.zetta' (did you mean 'wall.zeta'?)"),
    ("geometry.hieght", "50 nm", "unknown key 'geometry.hieght' (did you mean 'geometry.height'?)"),
    ("numerics.acuracy", 1e-6, "unknown key 'numerics.acuracy' (did you mean 'numerics.accuracy'?)"),
    ("solvent.viscosty", 1e-3, "unknown key 'solvent.viscosty' (did you mean 'solvent.viscosity'?)"),
    ("feild", "1 kV/m", "unknown key 'feild' (did you mean 'field'?)"),
    # A key in the wrong table is found in its right one.
    ("height", "50 nm", "unknown key 'height' (did you mean 'geometry.height'?)"),
    ("temperature", "25 degC", "unknown key 'temperature' (did you mean 'solvent.temperature'?)"),
    ("wall.top.zeta_potential", "1 mV", "unknown key 'wall.top.zeta_potential' (did you mean 'wall.top.zeta'?)"),
])
def test_unknown_keys_are_named_by_path_with_a_suggestion(path: str, value: object, expected: str) -> None:
    assert error_of(with_change(path, value)) == f"case.toml: {expected}"


def test_unknown_key_in_an_ion_table_names_its_entry() -> None:
    data = with_change("electrolyte.ions", [{"name": "K+", "concentration": 1}, {"name": "Cl-", "conc": 1}])
    assert error_of(data) == ("case.toml: unknown key 'electrolyte.ions[1].conc' (did you mean "
                              "'electrolyte.ions[1].concentration'?)")


def test_a_misspelt_key_is_reported_before_the_value_it_leaves_missing() -> None:
    data = with_change("wall", {"zetta": "-50 mV"})
    assert "unknown key 'wall.zetta'" in error_of(data)


@given(st.text(min_size=1, max_size=20))
def test_any_unknown_top_level_key_is_rejected_and_named(key: str) -> None:
    if key in {path.split(".")[0] for path in CASE_KEYS}:
        key += "_x"
    message = error_of({**MINIMAL, key: 1})
    assert message.startswith(f"case.toml: unknown key {key!r}")


@pytest.mark.parametrize("section", ["geometry", "electrolyte", "wall"])
def test_missing_sections_are_named(section: str) -> None:
    data = {key: value for key, value in MINIMAL.items() if key != section}
    assert error_of(data).startswith(f"case.toml: missing section [{section}], expected ")


@pytest.mark.parametrize(("path", "value", "expected"), [
    ("geometry.height", "5 mV",
     "geometry.height: '5 mV' has units of volt (electric potential), expected a length in m"),
    ("geometry.height", "-5 nm", "geometry.height: '-5 nm' is not positive, expected a positive height in m"),
    ("geometry.kind", "slot", "geometry.kind: 'slot' is not a geometry (did you mean 'slit'?), expected 'slit' "
                              "or 'capillary'"),
    ("geometry.radius", "5 nm", "geometry.radius: '5 nm' is not used by a slit, expected geometry.height"),
    ("wall.charge_density", "1 mC/m^2", "wall: both of zeta='-50 mV' and charge_density='1 mC/m^2' given, "
                                        "expected exactly one"),
    ("electrolyte.ions", {"K+": "1 mM", "Cl-": "2 mM"}, "electrolyte: bulk charge sum(z*c) = -1 mol/m^3 is not "
                                                        "neutral"),
    ("electrolyte.ions", {"Kq+": "1 mM", "Cl-": "1 mM"}, "electrolyte.ions: 'Kq+' is not in the ion table (did "
                                                         "you mean 'K+'?)"),
    ("electrolyte.ions", {"K+": "-1 mM", "Cl-": "1 mM"}, "ion K+.concentration: '-1 mM' is not positive"),
    ("electrolyte.ions", [{"name": "K+"}], "ion K+.concentration: missing"),
    ("electrolyte.ions", [{"concentration": 1.0}], "electrolyte.ions[0].name: missing"),
    ("solvent.temperature", "150 degC", "solvent.temperature: '150 degC' (423.15 K) is outside the range"),
    ("numerics.accuracy", 2.0, "numerics.accuracy: 2.0 is out of range"),
    ("model", "PB", "model: 'PB' is not a model, expected one of pb, dh"),
    ("geometry", "slit", "geometry: 'slit' is not a table"),
])
def test_value_errors_name_file_field_and_value(path: str, value: object, expected: str) -> None:
    assert error_of(with_change(path, value)).startswith(f"case.toml: {expected}")


def test_errors_of_one_wall_of_two_name_that_wall() -> None:
    data = with_change("wall", {"bottom": {"zeta": "-50 mV"}, "top": {"zeta": "3 nm"}})
    assert error_of(data).startswith("case.toml: wall.top.zeta: '3 nm' has units of metre (length)")
    data = with_change("wall", {"bottom": {"zeta": "-50 mV"}})
    assert error_of(data).startswith("case.toml: wall.top: missing")
    data = with_change("wall", {"zeta": "-50 mV", "top": {"zeta": "1 mV"}})
    assert error_of(data).startswith("case.toml: wall: both a condition for every wall and [wall.bottom]/[wall.top]")


def test_toml_syntax_error_is_one_line_with_the_line_number(tmp_path: Path) -> None:
    path = write(tmp_path, '[geometry]\nkind = "slit"\nheight = 50 nm\n')
    with pytest.raises(InputError) as info:
        load_case(path)
    message = str(info.value)
    assert message.startswith(f"{path}: invalid TOML: ") and "line 3" in message and "\n" not in message


def latin1_file(directory: Path) -> Path:
    path = directory / "latin1.toml"
    path.write_bytes(b"# \xe9t\xe9\n")
    return path


@pytest.mark.parametrize(("make", "expected"), [
    (lambda directory: directory / "absent.toml", "case file not found"),
    (lambda directory: directory, "is a directory"),
    (latin1_file, "not UTF-8"),
])
def test_unreadable_files_give_one_line(tmp_path: Path, make, expected: str) -> None:
    path = make(tmp_path)
    with pytest.raises(InputError, match=expected) as info:
        read_mapping(path)
    assert str(info.value).startswith(str(path)) and "\n" not in str(info.value)


# -- the demo ---------------------------------------------------------------------------------------


def test_demo_is_the_stated_scenario() -> None:
    case = demo_case()
    assert case.geometry == edl.Slit(height=30e-9)
    assert {ion.name: ion.concentration for ion in case.electrolyte.ions} == {"K+": 0.5, "Cl-": 0.5}
    assert case.wall == edl.Wall(zeta=-0.06)
    assert (case.field, case.pressure_gradient, case.model) == (5e3, -1e8, "pb")


def test_demo_text_is_a_valid_starting_file(tmp_path: Path) -> None:
    # What `edl demo --print-case > case.toml` saves must load to the demo itself.
    assert load_case(write(tmp_path, DEMO_TOML)) == demo_case()
    # Its commented alternatives must be valid too once uncommented.
    text = DEMO_TOML.replace('zeta = "-60 mV"', 'charge_density = "-3 mC/m^2"')
    assert load_case(write(tmp_path, text)).wall == edl.Wall(charge_density=-3e-3)
    mapping = tomllib.loads(DEMO_TOML)
    assert set(mapping) <= {path.split(".")[0] for path in CASE_KEYS}


def test_case_keys_list_each_input_once() -> None:
    assert len(CASE_KEYS) == len(set(CASE_KEYS))
    # every field of Numerics can be set from a file
    assert {f"numerics.{f.name}" for f in dataclasses.fields(edl.Numerics)} <= set(CASE_KEYS)
