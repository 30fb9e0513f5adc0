"""Case files: TOML text and nested dicts -> Case, with errors that name the file, the key and the value."""

from __future__ import annotations

import dataclasses
import sys
from pathlib import Path

import pytest
from hypothesis import given
from hypothesis import strategies as st

import edl_solver as edl
from edl_solver.cli.demo import DEMO_TOML, demo_case
from edl_solver.errors import InputError
from edl_solver.inputs.casefile import (
    CASE_KEYS,
    case_from_mapping,
    case_to_mapping,
    dumps_case,
    load_case,
    loads_case,
    read_mapping,
)
from edl_solver.inputs.wall import Site
from tests.helpers import write

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
    # case_to_mapping writes the shape this module reads: the two must agree exactly.
    from edl_solver.inputs.casefile import case_to_mapping

    case = case_from_mapping(CASES[name])
    assert case_from_mapping(case_to_mapping(case)) == case


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
    ("model", "PB", "model: 'PB' is not a model, expected one of pb, dh, steric"),
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


# -- regulated walls, slip, steric model, pH, viscoelectric solvent ----------------------------------------

REGULATED = """\
model = "pb"
field = "1 kV/m"

[geometry]
height = "40 nm"

[electrolyte]
ions = { "K+" = "1 mM", "Cl-" = "1 mM" }
pH = 5
water_ions = true

[wall.bottom]
preset = "silica"
slip_length = "1 nm"

[wall.top]
charge_density = "-1 mC/m^2"
gate_voltage = "1 V"
gate_capacitance = "10 mF/m^2"
stern_capacitance = "0.5 F/m^2"

[[wall.top.site]]
name = "amphoteric"
density = "2 nm^-2"
pK = [4.0, 9.0]
charges = [1, 0, -1]

[[wall.top.site]]
name = "amine"
density = "0.5 nm^-2"
pK = 10
charges = [1, 0]

[solvent]
viscoelectric = true
"""


def test_regulated_walls_ph_and_viscoelectric_water_from_toml() -> None:
    case = loads_case(REGULATED)
    assert case.electrolyte == edl.Electrolyte.from_ions({"K+": 1.0, "Cl-": 1.0}, pH=5.0, water_ions=True)
    assert [ion.name for ion in case.electrolyte.ions] == ["K+", "Cl-", "H+", "OH-"]
    assert case.wall[0] == edl.Wall.silica(slip_length=1e-9)
    assert case.wall[1] == edl.Wall(
        charge_density=-1e-3, gate_voltage=1.0, gate_capacitance=0.01, stern_capacitance=0.5,
        sites=(Site(density=2e18, pK=(4.0, 9.0), charges=(1, 0, -1), name="amphoteric"),
               Site(density=0.5e18, pK=10.0, charges=(1, 0), name="amine")))
    assert case.wall[1].kind == "regulated"
    assert case.solvent == edl.Water(viscoelectric=True)
    assert case.solvent.viscoelectric_coefficient > 0.0


def test_steric_model_with_a_diameter_for_every_ion() -> None:
    expected = edl.Case(geometry=edl.Capillary(radius=20e-9), model="steric",
                        electrolyte=edl.Electrolyte((edl.Ion("K+", concentration=10.0, diameter=0.7e-9),
                                                     edl.Ion("Cl-", concentration=10.0, diameter=0.7e-9))),
                        wall=edl.Wall(zeta=-0.1, slip_length=5e-9))
    # electrolyte.diameter gives every ion of the short form its size ...
    short = {"model": "steric", "geometry": {"radius": "20 nm"},
             "electrolyte": {"ions": {"K+": "10 mM", "Cl-": "10 mM"}, "diameter": "0.7 nm"},
             "wall": {"zeta": "-100 mV", "slip_length": "5 nm"}}
    assert case_from_mapping(short) == expected
    # ... and each ion may give its own.
    full = {**short, "electrolyte": {"ion": [{"name": "K+", "concentration": 10, "diameter": "0.7 nm"},
                                             {"name": "Cl-", "concentration": 10, "diameter": 7e-10}]}}
    assert case_from_mapping(full) == expected


def test_a_custom_solvent_takes_a_viscoelectric_coefficient() -> None:
    oil = {"name": "glycol", "temperature": 300.0, "relative_permittivity": 37.0, "viscosity": 0.016,
           "viscoelectric_coefficient": "2e-15 m^2/V^2"}
    assert case_from_mapping(with_change("solvent", oil)).solvent == edl.Solvent(
        300.0, 37.0, 0.016, name="glycol", viscoelectric_coefficient=2e-15)
    water = case_from_mapping(with_change("solvent", {"viscoelectric_coefficient": 3e-15})).solvent
    assert water == edl.Water(viscoelectric=3e-15)


def test_a_single_site_table_is_one_site() -> None:
    # [wall.site] (one table) where [[wall.site]] (a list) was meant reads as a list of one.
    one = case_from_mapping({**with_change("wall", {"site": {"density": "8 nm^-2", "pK": 7.5}}),
                             "electrolyte": {"ions": {"K+": 1, "Cl-": 1}, "pH": 7}})
    assert one.wall == edl.Wall(sites=(Site(density=8e18, pK=7.5),))


ROUND_TRIP = {
    "regulated slit, gate on one wall, water ions": loads_case(REGULATED),
    "steric capillary with slip": edl.Case(
        geometry=edl.Capillary(radius="20 nm"), model="steric", field="10 kV/m",
        electrolyte=edl.Electrolyte((edl.Ion("K+", concentration="10 mM", diameter="0.7 nm"),
                                     edl.Ion("Cl-", concentration="10 mM", diameter="0.7 nm"))),
        wall=edl.Wall(zeta="-100 mV", slip_length="5 nm")),
    "regulated capillary, fixed charge and Stern layer only": edl.Case(
        geometry=edl.Capillary(radius="15 nm"), electrolyte=edl.Electrolyte.from_ions({"Na+": 3, "Cl-": 3}),
        wall=edl.Wall(charge_density=-0.02, stern_capacitance=0.8)),
    "viscoelectric water, pH without water ions, slip on both walls": edl.Case(
        geometry=edl.Slit(height="30 nm"), electrolyte=edl.Electrolyte.from_ions({"Na+": 5, "Cl-": 5}, pH=7.5),
        wall=(edl.Wall(zeta="-80 mV", slip_length="2 nm"), edl.Wall(charge_density=-0.01, slip_length=3e-9)),
        solvent=edl.Water(temperature=310.0, viscoelectric=True), numerics=edl.Numerics(intervals=64)),
    "a solvent with its own coefficient, three-step site, H+ given as an ion": edl.Case(
        geometry=edl.Slit(height=1e-7),
        electrolyte=edl.Electrolyte.from_ions({"H+": 0.1, "Na+": 0.9, "Cl-": 1.0}),
        wall=edl.Wall(sites=(Site(density=1e18, pK=(3.0, 6.5, 11.0), charges=(1, 0, -1, -2), name="phosphate"),)),
        solvent=edl.Solvent(300.0, 37.0, 0.016, name='glycol "dry" é', viscoelectric_coefficient=1e-14),
        model="dh"),
}


def stored(case: edl.Case) -> edl.Case:
    """What a round trip gives: water ions as plain ions, with the pH and water_ions=False."""
    return dataclasses.replace(case, electrolyte=edl.Electrolyte(case.electrolyte.ions, pH=case.electrolyte.pH))


@pytest.mark.parametrize("name", ROUND_TRIP)
def test_python_dict_toml_text_case_round_trip(name: str, tmp_path: Path) -> None:
    case = ROUND_TRIP[name]
    table = case_to_mapping(case)
    assert case_from_mapping(table) == stored(case)
    text = dumps_case(case)
    assert tomllib.loads(text) == table  # the text is the dict, to the last digit
    assert loads_case(text) == stored(case)
    assert load_case(write(tmp_path, text)) == stored(case)
    assert dumps_case(loads_case(text)) == text  # stable: a second trip changes nothing


def test_water_ions_are_written_as_ions_never_as_the_flag() -> None:
    case = ROUND_TRIP["regulated slit, gate on one wall, water ions"]
    assert case.electrolyte.water_ions
    text = dumps_case(case)
    assert "water_ions" not in text and text.count("[[electrolyte.ions]]") == 4
    # Read with the flag again, H+ would be added twice: the case refuses that rather than doubling.
    table = case_to_mapping(case)
    table["electrolyte"]["water_ions"] = True
    assert "H+ or OH- is already among the ions" in error_of(table)


def test_preset_is_written_in_full() -> None:
    text = dumps_case(edl.Case(geometry=edl.Slit(height="50 nm"), wall=edl.Wall.silica(),
                               electrolyte=edl.Electrolyte.from_ions({"K+": 1, "Cl-": 1}, pH=7)))
    assert "preset" not in text
    assert '[[wall.site]]\nname = "silanol"\ndensity = 8e+18\npK = 7.5\ncharges = [0, -1]\n' in text


@given(field=st.floats(allow_nan=False, allow_infinity=False),
       name=st.text(alphabet=st.characters(exclude_categories=("Cs",)), min_size=1, max_size=12))
def test_toml_text_keeps_every_float_and_any_name(field: float, name: str) -> None:
    table = with_change("field", field)
    table["solvent"] = {"name": name, "temperature": 300.0, "relative_permittivity": 37.0, "viscosity": 0.01}
    back = tomllib.loads(dumps_case(table))
    assert back["field"] == field and back["solvent"]["name"] == name


def test_dumps_refuses_what_toml_cannot_hold() -> None:
    with pytest.raises(InputError, match=r"^geometry\.height: .* cannot be written to TOML"):
        dumps_case({"geometry": {"height": object()}})
    with pytest.raises(InputError, match="is not a Case or a table"):
        dumps_case(3)  # type: ignore[arg-type]


@pytest.mark.parametrize(("path", "value", "expected"), [
    ("wall.stern", 2.9, "unknown key 'wall.stern' (did you mean 'wall.stern_capacitance'?)"),
    ("wall.slip", "1 nm", "unknown key 'wall.slip' (did you mean 'wall.slip_length'?)"),
    ("wall.gate_volts", "1 V", "unknown key 'wall.gate_volts' (did you mean 'wall.gate_voltage'?)"),
    ("wall.sites", [], "unknown key 'wall.sites' (did you mean 'wall.site'?)"),
    ("wall.presets", "silica", "unknown key 'wall.presets' (did you mean 'wall.preset'?)"),
    ("wall.top.preset_name", "silica", "unknown key 'wall.top.preset_name' (did you mean 'wall.top.preset'?)"),
    ("electrolyte.ph", 7, "unknown key 'electrolyte.ph' (did you mean 'electrolyte.pH'?)"),
    ("electrolyte.water", True, "unknown key 'electrolyte.water' (did you mean 'electrolyte.water_ions'?)"),
    ("electrolyte.diametre", "0.7 nm", "unknown key 'electrolyte.diametre' (did you mean 'electrolyte.diameter'?)"),
    ("solvent.viscoelectric_coeff", 1e-15,
     "unknown key 'solvent.viscoelectric_coeff' (did you mean 'solvent.viscoelectric_coefficient'?)"),
    # A key in the wrong table is found in its right one, also inside a list of tables.
    ("pH", 7, "unknown key 'pH' (did you mean 'electrolyte.pH'?)"),
    ("wall.pK", 7.5, "unknown key 'wall.pK' (did you mean 'wall.site[].pK'?)"),
    ("wall.bottom.name", "silanol", "unknown key 'wall.bottom.name' (did you mean 'wall.bottom.site[].name'?)"),
    ("electrolyte.valence", 1, "unknown key 'electrolyte.valence' (did you mean 'electrolyte.ion[].valence'?)"),
    ("slip_length", "1 nm", "unknown key 'slip_length' (did you mean 'wall.slip_length'?)"),
])
def test_unknown_new_keys_get_a_suggestion(path: str, value: object, expected: str) -> None:
    assert error_of(with_change(path, value)) == f"case.toml: {expected}"


@pytest.mark.parametrize(("entry", "expected"), [
    ({"density": "8 nm^-2", "pk": 7.5}, "unknown key 'wall.site[0].pk' (did you mean 'wall.site[0].pK'?)"),
    ({"density": "8 nm^-2", "pK": 7.5, "charge": [0, -1]},
     "unknown key 'wall.site[0].charge' (did you mean 'wall.site[0].charges'?)"),
])
def test_unknown_site_keys_name_the_entry(entry: dict, expected: str) -> None:
    data = with_change("wall", {"site": [entry]})
    assert error_of(data) == f"case.toml: {expected}"


def regulated(wall: dict, ph: object = 7) -> dict:
    """MINIMAL with ``wall`` and a pH."""
    data = with_change("wall", wall)
    data["electrolyte"] = {**data["electrolyte"], "pH": ph}
    return data


SILANOL = {"density": "8 nm^-2", "pK": 7.5}


@pytest.mark.parametrize(("data", "expected"), [
    (regulated({"preset": "silika"}), "wall.preset: 'silika' is not a wall preset (did you mean 'silica'?), "
                                      "expected one of silica"),
    (regulated({"preset": "silica", "zeta": "-50 mV"}), "wall.zeta: '-50 mV' given with preset = 'silica', which "
                                                        "sets the whole wall; expected only slip_length"),
    (regulated({"bottom": {"preset": "silica"}, "top": {"preset": "silica", "stern_capacitance": 1}}),
     "wall.top.stern_capacitance: 1 given with preset = 'silica'"),
    (regulated({"preset": "silica", "slip_length": "-1 nm"}),
     "wall.slip_length: '-1 nm' is negative, expected a slip length >= 0 m"),
    (regulated({"site": [{"pK": 7.5}]}), "wall.site[0].density: missing, expected a site density like '8 nm^-2'"),
    (regulated({"site": [{"density": "8 nm^-2"}]}), "wall.site[0].pK: missing, expected a pK like 7.5"),
    (regulated({"site": [{**SILANOL, "density": "-8 nm^-2"}]}), "wall.site[0].density: '-8 nm^-2' is not positive"),
    (regulated({"site": [{**SILANOL, "density": "8 nm"}]}), "wall.site[0].density: '8 nm' has units of"),
    (regulated({"site": [{**SILANOL, "charges": -1}]}),
     "wall.site[0].charges: -1 is not a list of charge numbers, expected e.g. [0, -1]"),
    (regulated({"site": [{**SILANOL, "charges": [0, -1, -2]}]}),
     "wall.site[0].charges: (0, -1, -2) does not fit pK 7.5"),
    (regulated({"site": [{**SILANOL, "pK": {"a": 1}}]}), "wall.site[0].pK: {'a': 1} is not a number or a list"),
    (regulated({"site": [{**SILANOL, "name": 3}]}), "wall.site[0].name: 3 is not a name"),
    (regulated({"site": [SILANOL] * 5}), "wall.site: 5 kinds of site given, expected at most 4"),
    (regulated({"site": "silanol"}), "wall.site: 'silanol' is not a list of site tables, expected [[wall.site]]"),
    (regulated({"bottom": {"zeta": -0.05}, "top": {"site": [{**SILANOL, "density": 0}]}}),
     "wall.top.site[0].density: 0 is not positive"),
    (regulated({"gate_voltage": "1 V"}), "wall: gate_voltage='1 V' and gate_capacitance=None, expected both"),
    (regulated({"zeta": "-50 mV", "stern_capacitance": 2.9}), "wall: zeta fixes the potential"),
    (regulated({"charge_density": -0.01, "stern_capacitance": "2 F"}),
     "wall.stern_capacitance: '2 F' has units of"),
    (regulated({"site": [SILANOL]}, ph=20), "electrolyte.pH: 20 is out of range"),
    ({**with_change("wall", {"site": [SILANOL]})}, "electrolyte.pH: missing, expected a pH"),
    (with_change("electrolyte.water_ions", 1), "electrolyte.water_ions: 1 is not true or false, expected a boolean"),
    (with_change("electrolyte.water_ions", True), "electrolyte.water_ions: True without a pH"),
    (with_change("electrolyte.diameter", "0.7 mV"), "ion K+.diameter: '0.7 mV' has units of"),
    ({**MINIMAL, "model": "steric"}, "model: 'steric' needs one common diameter on every ion"),
    (with_change("solvent.viscoelectric", "yes"), "solvent.viscoelectric: 'yes' is not true or false"),
    (with_change("solvent", {"viscoelectric": True, "viscoelectric_coefficient": 1e-15}),
     "solvent.viscoelectric: True given with viscoelectric_coefficient = 1e-15, expected one of the two"),
    (with_change("solvent", {"name": "glycol", "temperature": 300, "relative_permittivity": 37, "viscosity": 0.01,
                             "viscoelectric": True}),
     "solvent.viscoelectric: true takes water's coefficient, but the solvent is 'glycol'"),
    (with_change("solvent.viscoelectric_coefficient", -1e-15), "solvent.viscoelectric_coefficient: -1e-15 is "
                                                               "negative"),
])
def test_new_value_errors_name_the_key_and_value(data: dict, expected: str) -> None:
    assert error_of(data).startswith(f"case.toml: {expected}")


def test_case_keys_address_every_input_field() -> None:
    keys = set(CASE_KEYS)
    assert len(CASE_KEYS) == len(keys)
    for owner, prefixes, skip in (
            (edl.Wall, ("wall", "wall.bottom", "wall.top"), {"sites"}),  # sites are the [[...site]] tables
            (Site, ("wall.site[]", "wall.bottom.site[]", "wall.top.site[]"), set()),
            (edl.Ion, ("electrolyte.ion[]",), set()),
            (edl.Electrolyte, ("electrolyte",), set()),
            (edl.Solvent, ("solvent",), set())):
        for prefix in prefixes:
            for field in dataclasses.fields(owner):
                if field.name not in skip:
                    assert f"{prefix}.{field.name}" in keys, f"{prefix}.{field.name}"
    assert {"wall.preset", "solvent.viscoelectric", "electrolyte.diameter"} <= keys
