"""Holes at the input edge (issue 10): values that raised a bare ValueError, TypeError, OverflowError or
RecursionError, or were taken as something they are not, now raise one-line ``InputError`` naming the field,
the value and what was expected; numpy scalars count as numbers. A fuzz test of the constructors checks that
arbitrary values either build a valid object or raise ``InputError``, never another exception."""

from __future__ import annotations

import math
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import edl_solver as edl
from edl_solver.inputs.casefile import case_from_mapping, load_case, loads_case
from tests.helpers import run, write

CASE_TOML = """\
[geometry]
kind = "slit"
height = "40 nm"

[electrolyte]
ions = { "K+" = "2 mM", "Cl-" = "2 mM" }

[wall]
zeta = "-30 mV"
"""


def one_line(info: pytest.ExceptionInfo, *parts: str) -> None:
    message = str(info.value)
    assert "\n" not in message, message
    for part in parts:
        assert part in message, f"{part!r} not in {message!r}"


# -- Ion.valence: a nonzero integer within the promised domain |z| <= 3 ----------------------------------

@pytest.mark.parametrize(("valence", "parts"), [
    (float("nan"), ("ion X+.valence", "nan", "nonzero integer")),
    (float("inf"), ("ion X+.valence", "inf", "nonzero integer")),
    (-float("inf"), ("ion X+.valence", "-inf", "nonzero integer")),
    (1e300, ("ion X+.valence", "1e+300", "at most 3")),
    (4, ("ion X+.valence", "4", "at most 3")),
    (-7, ("ion X+.valence", "-7", "at most 3")),
    (10**40, ("ion X+.valence", "at most 3")),
    (np.float64("nan"), ("ion X+.valence", "nan")),
    ("1", ("ion X+.valence", "'1'")),
])
def test_valence_outside_nonzero_integers_up_to_three_is_refused(valence: object, parts: tuple[str, ...]) -> None:
    with pytest.raises(edl.InputError) as info:
        edl.Ion(name="X+", valence=valence, concentration=1.0, diffusivity=1e-9)
    one_line(info, *parts)


@pytest.mark.parametrize("valence", [3, -3, 2.0, np.int64(2), np.int32(-3), np.float64(-1.0)])
def test_valence_numpy_scalars_and_whole_floats_become_plain_int(valence: object) -> None:
    ion = edl.Ion(name="X", valence=valence, concentration=1.0, diffusivity=1e-9)
    assert type(ion.valence) is int and ion.valence == int(valence)


# -- Site.pK and Site.charges: numpy numbers accepted, None refused ----------------------------------------

@pytest.mark.parametrize("pk", [np.int64(7), np.float64(7.0), np.int32(7), 7])
def test_site_pk_numpy_scalar_is_a_number(pk: object) -> None:
    site = edl.Site(density="8 nm^-2", pK=pk)
    assert site.pK == 7.0 and type(site.pK) is float


def test_site_pk_list_of_numpy_numbers() -> None:
    site = edl.Site(density="1 nm^-2", pK=np.array([4.0, 9.0]), charges=(1, 0, -1))
    assert site.pK == (4.0, 9.0) and all(type(pk) is float for pk in site.pK)


@pytest.mark.parametrize(("kwargs", "parts"), [
    ({"pK": None}, ("site site.pK", "None", "a pK")),
    ({"pK": 7.5, "charges": None}, ("site site.charges", "None", "(0, -1)")),
    ({"pK": 7.5, "charges": 0}, ("site site.charges", "0")),
    ({"pK": {"a": 1}}, ("site site.pK",)),
    ({"pK": 7.5, "charges": (9, 8)}, ("site site.charges", "(9, 8)", "at most 3")),
    ({"pK": 7.5, "name": 5}, ("site.name", "5", "string")),
])
def test_site_none_and_non_sequences_are_refused(kwargs: dict, parts: tuple[str, ...]) -> None:
    with pytest.raises(edl.InputError) as info:
        edl.Site(density="8 nm^-2", **kwargs)
    one_line(info, *parts)


def test_site_numpy_integer_charges_become_plain_ints() -> None:
    site = edl.Site(density="8 nm^-2", pK=7.5, charges=(np.int64(0), np.int64(-1)))
    assert site.charges == (0, -1) and all(type(q) is int for q in site.charges)


# -- Numerics: grid and iteration limits the solver can run with ------------------------------------------

@pytest.mark.parametrize(("kwargs", "parts"), [
    ({"max_intervals": 1}, ("numerics.max_intervals: 1", "at least 8")),
    ({"max_intervals": 4}, ("numerics.max_intervals: 4", "at least 8")),
    ({"max_intervals": 12}, ("numerics.max_intervals: 12", "multiple of 8")),
    ({"max_intervals": 10**30}, ("numerics.max_intervals", "at most")),
    ({"intervals": 8 * 10**30}, ("numerics.intervals", "at most")),
    ({"max_iterations": 0}, ("numerics.max_iterations: 0", "at least 1")),
    ({"max_iterations": 10**30}, ("numerics.max_iterations", "at most")),
    ({"max_intervals": 64.0}, ("numerics.max_intervals: 64.0", "integer")),
    ({"max_iterations": None}, ("numerics.max_iterations: None", "integer")),
])
def test_numerics_below_what_the_solver_needs_is_refused(kwargs: dict, parts: tuple[str, ...]) -> None:
    with pytest.raises(edl.InputError) as info:
        edl.Numerics(**kwargs)
    one_line(info, *parts)


def test_numerics_numpy_integers_become_plain_ints() -> None:
    numerics = edl.Numerics(intervals=np.int64(64), max_iterations=np.int32(50), max_intervals=np.int64(256))
    assert (numerics.intervals, numerics.max_iterations, numerics.max_intervals) == (64, 50, 256)
    assert all(type(v) is int for v in (numerics.intervals, numerics.max_iterations, numerics.max_intervals))


def test_cli_refuses_a_grid_limit_of_one_cell_with_one_line(tmp_path: Path) -> None:
    path = write(tmp_path, CASE_TOML + "[numerics]\nmax_intervals = 1\n")
    code, stdout, err = run(["solve", str(path), "-o", str(tmp_path / "out.h5")])
    assert code == 2 and stdout == "" and "Traceback" not in err and err.count("\n") == 1, err
    assert "numerics.max_intervals: 1" in err and "at least 8" in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["case.toml"]


# -- Electrolyte: each ion once, whatever its spelling ---------------------------------------------------

@pytest.mark.parametrize(("ions", "duplicate"), [
    ({"K+": "1 mM", "k+": "1 mM", "Cl-": "2 mM"}, "'k+'"),
    ({"Cl-": "2 mM", "K+": "1 mM", " K+": "1 mM"}, "' K+'"),
    ({"Na+": "2 mM", "SO4 2-": "0.5 mM", "SO4--": "0.5 mM"}, "'SO4--'"),
])
def test_one_ion_given_twice_under_two_spellings_is_refused(ions: dict, duplicate: str) -> None:
    with pytest.raises(edl.InputError) as info:
        edl.Electrolyte.from_ions(ions)
    one_line(info, "electrolyte.ions", duplicate, "twice")


def test_one_custom_ion_given_twice_is_refused() -> None:
    ions = [edl.Ion(name="A+", valence=1, concentration=1.0, diffusivity=1e-9),
            edl.Ion(name="a+", valence=1, concentration=1.0, diffusivity=1e-9),
            edl.Ion(name="B-", valence=-1, concentration=2.0, diffusivity=1e-9)]
    with pytest.raises(edl.InputError) as info:
        edl.Electrolyte(ions)
    one_line(info, "electrolyte.ions", "'a+'", "twice")


def test_distinct_ions_are_still_accepted() -> None:
    ions = edl.Electrolyte.from_ions({"K+": "1 mM", "Na+": "1 mM", "Cl-": "1 mM", "Br-": "1 mM"}).ions
    assert [ion.name for ion in ions] == ["K+", "Na+", "Cl-", "Br-"]


@pytest.mark.parametrize("flag", ["no", "yes", 1, 0, None, 1.0, [True]])
def test_water_ions_must_be_a_real_boolean(flag: object) -> None:
    with pytest.raises(edl.InputError) as info:
        edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}, pH=7, water_ions=flag)
    one_line(info, "electrolyte.water_ions", repr(flag), "True or False")


@pytest.mark.parametrize(("flag", "count"), [(np.True_, 4), (np.False_, 2), (True, 4), (False, 2)])
def test_water_ions_numpy_booleans_count(flag: object, count: int) -> None:
    electrolyte = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}, pH=7, water_ions=flag)
    assert len(electrolyte.ions) == count and type(electrolyte.water_ions) is bool
    assert electrolyte.water_ions == bool(flag)


# -- Case files: a nesting deeper than the parser's recursion ---------------------------------------------

@pytest.mark.parametrize("depth", [5000, 600])
def test_deeply_nested_toml_is_an_input_error_naming_the_file(tmp_path: Path, depth: int) -> None:
    path = write(tmp_path, CASE_TOML + "[numerics]\naccuracy = " + "[" * depth + "]" * depth + "\n")
    with pytest.raises(edl.InputError) as info:
        load_case(path)
    one_line(info, str(path), "nested too deeply")
    with pytest.raises(edl.InputError) as info:
        loads_case(path.read_text(), "text.toml")
    one_line(info, "text.toml", "nested too deeply")


def test_deeply_nested_mapping_is_an_input_error() -> None:
    data = {"geometry": {"kind": "slit", "height": "40 nm"}, "electrolyte": {"ions": {"K+": "2 mM", "Cl-": "2 mM"}},
            "wall": {"zeta": "-30 mV"}}
    deep: list = []
    for _ in range(5000):
        deep = [deep]
    data["field"] = deep
    with pytest.raises(edl.InputError) as info:
        case_from_mapping(data, "made.toml")
    one_line(info, "made.toml", "nested too deeply")


def test_cli_reports_deep_nesting_with_one_line(tmp_path: Path) -> None:
    path = write(tmp_path, CASE_TOML.replace('"-30 mV"', "[" * 5000 + "]" * 5000))
    code, stdout, err = run(["solve", str(path), "-o", str(tmp_path / "out.h5")])
    assert code == 2 and stdout == "" and "Traceback" not in err and err.count("\n") == 1, err
    assert str(path) in err and "nested too deeply" in err


def test_nesting_the_parser_can_read_gives_the_value_error() -> None:
    with pytest.raises(edl.InputError) as info:
        loads_case('field = [[[["1 kV/m"]]]]\n' + CASE_TOML)
    one_line(info, "field:", "list")


# -- Fuzz: arbitrary values build a valid object or raise InputError, nothing else ------------------------

FUZZ = settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])

NUMPY_SCALARS = st.one_of(
    st.builds(np.float64, st.floats(allow_nan=True, allow_infinity=True)),
    st.builds(np.float32, st.floats(width=32, allow_nan=True, allow_infinity=True)),
    st.builds(np.int64, st.integers(-2**63, 2**63 - 1)),
    st.builds(np.int32, st.integers(-2**31, 2**31 - 1)),
    st.builds(np.bool_, st.booleans()),
)
#: Values that once slipped through or escaped as other errors; drawn often.
NASTY = st.sampled_from([float("nan"), float("inf"), -float("inf"), 1e300, -1e300, 10**30, 4, 0, -0.0, None, "no",
                         np.float64("nan"), np.int64(7), np.int64(2**62), np.True_, [], [[]], {}, "", " "])
SCALARS = st.one_of(
    NASTY,
    st.floats(allow_nan=True, allow_infinity=True),
    st.integers(-10**40, 10**40),
    st.integers(-5, 5),
    st.none(),
    st.booleans(),
    st.text(max_size=8),
    st.sampled_from(["1 mM", "50 nm", "-50 mV", "7.5", "1e-9 m^2/s", "8 nm^-2", "2.9 F/m^2", "nan", "-inf mM"]),
    NUMPY_SCALARS,
)
VALUES = st.one_of(
    SCALARS,
    st.lists(st.one_of(st.integers(-4, 4), st.floats(), st.none()), max_size=4),
    st.tuples(st.integers(-4, 4), st.integers(-4, 4)),
    st.dictionaries(st.text(max_size=3), st.integers(), max_size=2),
)


def or_valid(*samples: object) -> st.SearchStrategy:
    """VALUES, or one of ``samples`` (valid values, so that whole objects get built often)."""
    return st.one_of(st.sampled_from(samples), VALUES)


def finite_or_none(value: object) -> bool:
    return value is None or (type(value) is float and math.isfinite(value))


def attempt(build: Callable[[], Any]) -> Any:
    """The object ``build()`` makes, or None when it raised InputError (one line); any other error fails."""
    try:
        return build()
    except edl.InputError as error:
        assert "\n" not in str(error)
        return None


@FUZZ
@given(name=or_valid("K+", "Cl-", "X", "Mg2+", "SO4--"), valence=or_valid(None, 1, -2, np.int64(3), 2.0),
       concentration=or_valid("1 mM", 2.5, np.float64(0.1)), diffusivity=or_valid(None, 1e-9, "2e-9 m^2/s"),
       diameter=or_valid(None, "0.7 nm", np.float32(3e-10)))
def test_fuzz_ion(name: object, valence: object, concentration: object, diffusivity: object,
                  diameter: object) -> None:
    ion = attempt(lambda: edl.Ion(name=name, valence=valence, concentration=concentration,
                                  diffusivity=diffusivity, diameter=diameter))
    if ion is not None:
        assert type(ion.valence) is int and 1 <= abs(ion.valence) <= 3
        assert all(type(v) is float and math.isfinite(v) and v > 0 for v in (ion.concentration, ion.diffusivity))
        assert finite_or_none(ion.diameter)


@FUZZ
@given(density=or_valid("8 nm^-2", 1e18), pk=st.one_of(or_valid(7.5, np.int64(7), "4"), st.lists(VALUES, max_size=3)),
       charges=or_valid((0, -1), [1, 0], (1, 0, -1)), name=or_valid("silanol"))
def test_fuzz_site(density: object, pk: object, charges: object, name: object) -> None:
    site = attempt(lambda: edl.Site(density=density, pK=pk, charges=charges, name=name))
    if site is not None:
        assert type(site.density) is float and math.isfinite(site.density) and site.density > 0
        assert all(type(p) is float and math.isfinite(p) for p in site.pks)
        assert all(type(q) is int for q in site.charges) and len(site.charges) == len(site.pks) + 1


@FUZZ
@given(zeta=or_valid(None, "-50 mV", -0.02), charge_density=or_valid(None, "-2 mC/m^2"),
       sites=or_valid((), (edl.Site(density=1e18, pK=7.5),)), stern=or_valid(None, 2.9), gate_v=or_valid(None, "1 V"),
       gate_c=or_valid(None, 0.01), slip=or_valid(0.0, "5 nm", np.float64(1e-9)))
def test_fuzz_wall(zeta: object, charge_density: object, sites: object, stern: object, gate_v: object,
                   gate_c: object, slip: object) -> None:
    wall = attempt(lambda: edl.Wall(zeta=zeta, charge_density=charge_density, sites=sites, stern_capacitance=stern,
                                    gate_voltage=gate_v, gate_capacitance=gate_c, slip_length=slip))
    if wall is not None:
        assert all(finite_or_none(v) for v in (wall.zeta, wall.charge_density, wall.stern_capacitance,
                                               wall.gate_voltage, wall.gate_capacitance, wall.slip_length))
        assert wall.kind in ("potential", "charge", "regulated")


@FUZZ
@given(size=or_valid("50 nm", 2e-8, np.float64(1e-7)))
def test_fuzz_geometries(size: object) -> None:
    for geometry in (attempt(lambda: edl.Slit(height=size)), attempt(lambda: edl.Capillary(radius=size))):
        if geometry is not None:
            assert type(geometry.size) is float and math.isfinite(geometry.size) and geometry.size > 0


@FUZZ
@given(accuracy=or_valid(1e-6, "1e-4", np.float64(1e-8)), intervals=or_valid(None, 8, 64, np.int64(128)),
       max_iterations=or_valid(200, 1, np.int32(50)), max_intervals=or_valid(8, 4096, np.int64(64)))
def test_fuzz_numerics(accuracy: object, intervals: object, max_iterations: object, max_intervals: object) -> None:
    numerics = attempt(lambda: edl.Numerics(accuracy=accuracy, intervals=intervals, max_iterations=max_iterations,
                                            max_intervals=max_intervals))
    if numerics is not None:
        assert type(numerics.accuracy) is float and 1e-13 <= numerics.accuracy < 1
        assert numerics.intervals is None or (type(numerics.intervals) is int and numerics.intervals % 8 == 0)
        assert type(numerics.max_intervals) is int and numerics.max_intervals >= 8
        assert type(numerics.max_iterations) is int and numerics.max_iterations >= 1


@FUZZ
@given(ions=st.one_of(st.dictionaries(st.one_of(st.sampled_from(["K+", "k+", "Cl-", "cl-", "Na+", "SO4--"]),
                                                st.text(max_size=4)), or_valid("1 mM", 1.0), max_size=4),
                      st.sampled_from([{"K+": "1 mM", "Cl-": 1.0}, {"Na+": 2, "SO4 2-": 1}]), VALUES),
       ph=or_valid(None, 7, "5.5", np.float64(9.0)), water_ions=or_valid(False, True, np.True_))
def test_fuzz_electrolyte_from_ions(ions: object, ph: object, water_ions: object) -> None:
    electrolyte = attempt(lambda: edl.Electrolyte.from_ions(ions, pH=ph, water_ions=water_ions))
    if electrolyte is not None:
        keys = [ion.name.strip().casefold() for ion in electrolyte.ions]
        assert len(set(keys)) == len(keys)
        assert type(electrolyte.water_ions) is bool and finite_or_none(electrolyte.pH)
        assert electrolyte.ionic_strength > 0
