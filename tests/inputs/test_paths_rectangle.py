"""Dotted input paths of a rectangle (sweeps, maps, set_input): its width, its aspect ratio and its two wall pairs,
with the clash rules and hints of a slit's bottom/top walls."""

import pytest

import edl_solver as edl
from edl_solver.errors import InputError
from edl_solver.inputs.casefile import case_to_mapping
from edl_solver.inputs.paths import PATH_UNITS, case_at, check_conflicts, make_axes, set_input


def _rectangle(wall=None) -> edl.Case:
    return edl.Case(geometry=edl.Rectangle(width="200 nm", height="40 nm"),
                    electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}),
                    wall=wall or edl.Wall(charge_density="-2 mC/m^2"))


def _conflict(*paths: str) -> str:
    with pytest.raises(InputError) as info:
        check_conflicts(paths)
    return str(info.value)


def test_a_rectangles_width_and_wall_pairs_are_paths_with_si_units():
    assert PATH_UNITS["geometry.width"] == "m"
    assert PATH_UNITS["geometry.aspect_ratio"] == "dimensionless"
    for side in ("top_bottom", "sides"):
        assert PATH_UNITS[f"wall.{side}.charge_density"] == "C/m^2"
        assert PATH_UNITS[f"wall.{side}.site[0].pK"] == "dimensionless"


def test_the_width_takes_units_and_sets_the_rectangle():
    axes = make_axes({"geometry.width": ["1 um", "300 nm"]})
    assert axes[0].values == ((1e-6, 3e-7),)
    case = case_at(case_to_mapping(_rectangle()), axes, (1,))
    assert case.geometry.width == pytest.approx(3e-7) and case.geometry.height == pytest.approx(4e-8)


def test_the_aspect_ratio_sets_the_width_on_the_height_of_the_point_whatever_the_order_of_the_axes():
    table = case_to_mapping(_rectangle())
    for order in (("geometry.aspect_ratio", "geometry.height"), ("geometry.height", "geometry.aspect_ratio")):
        values = {"geometry.aspect_ratio": [0.5, 5.0], "geometry.height": ["20 nm", "80 nm"]}
        axes = make_axes({path: values[path] for path in order})
        case = case_at(table, axes, (1, 1))
        assert case.geometry.height == pytest.approx(8e-8)
        assert case.geometry.width == pytest.approx(4e-7)  # 5 x 80 nm


def test_a_wall_pair_path_splits_one_wall_into_the_rectangles_two_pairs():
    table = case_to_mapping(_rectangle())
    set_input(table, "wall.sides.charge_density", -0.001)
    assert table["wall"] == {"top_bottom": {"charge_density": -0.002}, "sides": {"charge_density": -0.001}}
    set_input(table, "wall.charge_density", -0.003)  # every wall: both pairs
    assert table["wall"] == {"top_bottom": {"charge_density": -0.003}, "sides": {"charge_density": -0.003}}


def test_a_slits_wall_path_on_a_rectangle_names_the_rectangles_own_walls():
    table = case_to_mapping(_rectangle())
    with pytest.raises(InputError, match=r"^wall\.top\.zeta: a rectangle's walls are top_bottom and sides, "
                                         r"expected wall\.top_bottom\.zeta or wall\.sides\.zeta$"):
        set_input(table, "wall.top.zeta", -0.05)


def test_width_and_aspect_ratio_clash_with_a_radius_and_with_each_other():
    assert _conflict("geometry.width", "geometry.radius") == ('axes: "geometry.width" and "geometry.radius" are two '
                                                              "geometries, expected one of them")
    assert "both set the width" in _conflict("geometry.aspect_ratio", "geometry.width")
    check_conflicts(("geometry.width", "geometry.height"))  # the two sides of a rectangle are independent
    check_conflicts(("geometry.aspect_ratio", "geometry.height"))


def test_wall_pair_paths_clash_like_a_slits_walls_with_the_same_hints():
    check_conflicts(("wall.top_bottom.charge_density", "wall.sides.charge_density"))  # two pairs: independent
    message = _conflict("wall.charge_density", "wall.sides.charge_density")
    assert message.endswith("(vary the top_bottom wall pair with 'wall.top_bottom.charge_density')")
    assert "both set the same input" in _conflict("wall.sides.zeta", "wall.sides.charge_density")
    message = _conflict("wall.top.zeta", "wall.sides.zeta")
    assert message.endswith("name the walls of two geometries, expected wall.bottom/wall.top (a slit) or "
                            "wall.top_bottom/wall.sides (a rectangle)")
    # the slit's own hint is unchanged
    assert _conflict("wall.zeta", "wall.top.zeta").endswith("(vary the bottom wall with 'wall.bottom.zeta')")


def test_an_unknown_pair_path_gets_a_did_you_mean_hint():
    with pytest.raises(InputError, match=r"did you mean 'wall\.sides\.zeta'\?"):
        make_axes({"wall.side.zeta": [-0.05]})
    with pytest.raises(InputError, match=r"did you mean 'geometry\.width'\?"):
        make_axes({"geometry.widht": [1e-7]})
