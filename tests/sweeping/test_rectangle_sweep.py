"""Sweeps of a rectangle: its width, height and aspect ratio go case by case through edl.solve (no compiled-batch
plan: the batch is 1-D), with the values of single solves; profiles, 2-D for a rectangle, are refused."""

from __future__ import annotations

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.inputs.casefile import case_to_mapping
from edl_solver.inputs.paths import make_axes
from edl_solver.sweeping.file import sweep_from_mapping
from edl_solver.sweeping.plan import make_plan

BASE = edl.Case(geometry=edl.Rectangle(width="200 nm", height="40 nm"),
                electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}), wall=edl.Wall(zeta="-50 mV"),
                field="1 kV/m", numerics=edl.Numerics(accuracy=1e-4))


@pytest.mark.parametrize("path", ["geometry.width", "geometry.height", "geometry.aspect_ratio", "wall.zeta"])
def test_a_rectangle_gets_no_compiled_batch_plan(path: str) -> None:
    values = [2.0, 4.0] if path == "geometry.aspect_ratio" else [-0.02, -0.05] if path == "wall.zeta" else [5e-8, 1e-7]
    assert make_plan(case_to_mapping(BASE), make_axes({path: values})) is None


def test_a_slit_still_gets_its_plan() -> None:
    slit = edl.Case(geometry=edl.Slit(height="40 nm"), electrolyte=BASE.electrolyte, wall=BASE.wall)
    assert make_plan(case_to_mapping(slit), make_axes({"geometry.height": [2e-8, 4e-8]})) is not None


def test_sweeping_a_rectangles_width_and_height_gives_the_values_of_single_solves() -> None:
    data = edl.sweep(BASE, {"geometry.height": ["30 nm", "40 nm"], "geometry.width": ["100 nm", "200 nm"]})
    assert data["status"].values.tolist() == [[0, 0], [0, 0]]
    for i, height in enumerate((3e-8, 4e-8)):
        for j, width in enumerate((1e-7, 2e-7)):
            case = edl.Case(geometry=edl.Rectangle(width=width, height=height), electrolyte=BASE.electrolyte,
                            wall=BASE.wall, field=BASE.field, numerics=BASE.numerics)
            expected = edl.solve(case).summary
            assert data["flow_rate_eo"].values[i, j] == expected["flow_rate_eo"]
            assert data["kappa_h"].values[i, j] == expected["kappa_h"]


def test_sweeping_the_aspect_ratio_keeps_the_height_and_sets_the_width() -> None:
    data = edl.sweep(BASE, {"geometry.aspect_ratio": [1.0, 5.0]})
    assert data["status"].values.tolist() == [0, 0]
    square = edl.Case(geometry=edl.Rectangle(width="40 nm", height="40 nm"), electrolyte=BASE.electrolyte,
                      wall=BASE.wall, field=BASE.field, numerics=BASE.numerics)
    assert data["flow_rate_eo"].values[0] == edl.solve(square).summary["flow_rate_eo"]
    assert data["flow_rate_eo"].values[1] == edl.solve(BASE).summary["flow_rate_eo"]  # 5 x 40 nm = 200 nm
    assert np.all(np.isfinite(data["flow_rate_eo"].values))


def test_a_sweep_of_a_rectangle_refuses_profiles_naming_the_option() -> None:
    with pytest.raises(edl.InputError) as info:
        edl.sweep(BASE, {"geometry.width": ["100 nm", "200 nm"]}, profiles=5)
    message = str(info.value)
    assert message.startswith("profiles: 5 profile positions for a rectangle, whose profiles are 2-D")
    assert "\n" not in message


def test_a_sweep_file_of_a_rectangle_refuses_output_profiles_naming_the_key() -> None:
    data = case_to_mapping(BASE)
    data["sweep"] = {"axes": {"geometry.width": ["100 nm", "200 nm"]}, "output_profiles": True}
    with pytest.raises(edl.InputError, match=r"^sweep\.output_profiles: \d+ profile positions for a rectangle"):
        sweep_from_mapping(data)


def test_a_sweep_of_a_rectangles_wall_pair_labels_its_wall_dimension_by_the_pairs() -> None:
    wall = edl.Wall(charge_density="-2 mC/m^2")
    case = edl.Case(geometry=BASE.geometry, electrolyte=BASE.electrolyte, wall=wall, numerics=BASE.numerics)
    data = edl.sweep(case, {"wall.sides.charge_density": ["-2 mC/m^2"]})
    assert data["wall"].values.tolist() == ["top_bottom", "sides"]
