"""Case files of a rectangle: its two wall pairs as [wall.top_bottom] and [wall.sides], the tables of another
geometry refused by name, and the round trip through dumps_case / loads_case."""

import pytest

import edl_solver as edl
from edl_solver.errors import InputError
from edl_solver.inputs.casefile import dumps_case, loads_case

_RECTANGLE = '''
[geometry]
kind = "rectangle"
width = "200 nm"
height = "40 nm"

[electrolyte]
ions = { "K+" = "1 mM", "Cl-" = "1 mM" }
'''
_SLIT = _RECTANGLE.replace('kind = "rectangle"\nwidth = "200 nm"', 'kind = "slit"')
_PAIRS = '''
[wall.top_bottom]
charge_density = "-5 mC/m^2"

[wall.sides]
charge_density = "-1 mC/m^2"
'''


def _error(text: str) -> str:
    with pytest.raises(InputError) as info:
        loads_case(text)
    return str(info.value)


def test_a_rectangle_reads_its_two_wall_pairs_in_the_order_of_its_wall_names():
    case = loads_case(_RECTANGLE + _PAIRS)
    assert case.geometry.wall_names == ("top_bottom", "sides")
    assert case.wall == (edl.Wall(charge_density="-5 mC/m^2"), edl.Wall(charge_density="-1 mC/m^2"))


def test_a_rectangle_with_one_wall_or_two_pairs_comes_back_equal_from_its_file():
    one = edl.Case(geometry=edl.Rectangle(width="1 um", height="20 nm"),
                   electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}), wall=edl.Wall(zeta="-50 mV"))
    pairs = loads_case(_RECTANGLE + _PAIRS)
    for case in (one, pairs):
        text = dumps_case(case)
        assert loads_case(text) == case
    text = dumps_case(pairs)
    assert "[wall.top_bottom]" in text and "[wall.sides]" in text and "[wall.bottom]" not in text


def test_a_rectangle_given_a_slits_walls_is_refused_naming_the_table_and_its_own():
    message = _error(_RECTANGLE + '[wall.bottom]\nzeta = "-50 mV"\n[wall.top]\nzeta = "-50 mV"\n')
    assert message.startswith("wall.bottom: a rectangle has no such walls, expected [wall.top_bottom] and "
                              "[wall.sides]")


def test_a_slit_given_a_rectangles_walls_is_refused_naming_the_table_and_its_own():
    message = _error(_SLIT + '[wall.sides]\nzeta = "-50 mV"\n')
    assert message.startswith("wall.sides: a slit has no such walls, expected [wall.bottom] and [wall.top]")


def test_a_capillary_given_a_wall_pair_is_told_it_has_one_wall():
    capillary = _SLIT.replace('kind = "slit"\nheight = "40 nm"', 'kind = "capillary"\nradius = "20 nm"')
    assert _error(capillary + _PAIRS).startswith("wall.top_bottom: a capillary has one wall, expected [wall]")


def test_one_pair_of_a_rectangle_alone_asks_for_the_other():
    message = _error(_RECTANGLE + '[wall.sides]\ncharge_density = "-1 mC/m^2"\n')
    assert message.startswith("wall.top_bottom: missing, expected [wall.top_bottom]")


def test_a_wall_for_every_wall_beside_the_pairs_is_refused():
    message = _error(_RECTANGLE + '[wall]\nzeta = "-50 mV"\n' + _PAIRS)
    assert message == ("wall: both a condition for every wall and [wall.top_bottom]/[wall.sides] given, expected "
                       "one of the two")


def test_misspelt_pair_tables_and_keys_get_a_did_you_mean_hint():
    message = _error(_RECTANGLE + '[wall.side]\nzeta = "-50 mV"\n')
    assert message == "unknown key 'wall.side' (did you mean 'wall.sides'?)"
    message = _error(_RECTANGLE + '[wall.top_bottom]\nzetta = "-50 mV"\n[wall.sides]\nzeta = "-50 mV"\n')
    assert message == "unknown key 'wall.top_bottom.zetta' (did you mean 'wall.top_bottom.zeta'?)"
    message = _error(_RECTANGLE + '[wall.top_bottom]\nzeta = "-50 mV"\n[[wall.sides.site]]\ndensity = "1 nm^-2"\n'
                     'pk = 7\n')
    assert message == "unknown key 'wall.sides.site[0].pk' (did you mean 'wall.sides.site[0].pK'?)"


def test_a_rectangle_without_kind_is_known_by_its_width_for_its_wall_pairs():
    case = loads_case(_RECTANGLE.replace('kind = "rectangle"\n', "") + _PAIRS)
    assert case.geometry.kind == "rectangle" and isinstance(case.wall, tuple)
