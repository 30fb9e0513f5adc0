"""Sweeps pack their points from the axes (``sweep_plan``) and solve them in compiled batches (``_batch``).

Checks against the case-by-case route, which builds every point in full (``sweeps.case_at``) and solves it
with ``edl.solve``: the packed vectors are equal entry by entry, and so are the solved summaries (the batch
runs the same compiled steps, so equality is exact rather than to a tolerance). The physics of the values
is checked against published references elsewhere (tests/model/test_equilibrium.py and others).
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.inputs.casefile import case_to_mapping
from edl_solver.kernels import batch as _batch
from edl_solver.kernels import layout as _layout
from edl_solver.model import packing
from edl_solver.sweeping.plan import make_plan
from edl_solver.sweeping.run import case_at, make_axes

SILICA = edl.Case(geometry=edl.Slit(height="30 nm"),
                  electrolyte=edl.Electrolyte.from_ions({"Na+": "1 mM", "Cl-": "1 mM"}, pH=7.0),
                  wall=edl.Wall.silica(), field="1 kV/m")
SILICA_AXES: dict[str, list[Any]] = {
    "electrolyte.pH": [5.0, 8.0],
    "wall.site[0].pK": [6.8, 7.5],
    "wall.stern_capacitance": ["0.5 F/m^2", "2.9 F/m^2"],
    "electrolyte.concentration": ["0.2 mM", "5 mM"],
    "solvent.temperature": ["20 degC", "40 degC"],
}
KCL = edl.Electrolyte.from_ions({"K+": "2 mM", "Cl-": "2 mM"})
TWO_WALLS = edl.Case(geometry=edl.Slit(height="15 nm"), electrolyte=KCL,
                     wall=(edl.Wall(zeta="-30 mV"), edl.Wall(zeta="-50 mV")), field="1 kV/m")
# the two walls are equal where their potentials are and the top does not slip: a half section is solved there
TWO_WALL_AXES: dict[str, list[Any]] = {
    "wall.bottom.zeta": ["-20 mV", "-70 mV"],
    "wall.top.zeta": ["-20 mV", "-70 mV"],
    "wall.top.slip_length": [0.0, "2 nm"],
    "model": ["pb", "dh"],
    "pressure_gradient": [0.0, "-1 bar/mm"],
    "numerics.accuracy": [1e-6, 1e-8],
}


def every_point(axes: Any) -> list[tuple[int, ...]]:
    return list(np.ndindex(*(axis.size for axis in axes)))


@pytest.mark.parametrize(("base", "axes"), [(SILICA, SILICA_AXES), (TWO_WALLS, TWO_WALL_AXES)],
                         ids=["regulated silica", "two walls"])
def test_packed_vectors_equal_points_built_in_full(base: edl.Case, axes: dict[str, list[Any]]) -> None:
    table, sweep_axes = case_to_mapping(base), make_axes(axes)
    plan = make_plan(table, sweep_axes)
    assert plan is not None
    points = every_point(sweep_axes)
    vectors, valid = plan.vectors(np.ravel_multi_index(np.array(points).T, plan.shape))
    assert valid.all()
    for index, vector in zip(points, vectors):
        expected = packing.case_vector(case_at(table, sweep_axes, index))
        np.testing.assert_array_equal(vector, expected, err_msg=str(index))


def test_symmetric_points_of_a_two_wall_sweep_are_flagged() -> None:
    table, sweep_axes = case_to_mapping(TWO_WALLS), make_axes({k: TWO_WALL_AXES[k] for k in
                                                            ("wall.bottom.zeta", "wall.top.zeta")})
    plan = make_plan(table, sweep_axes)
    vectors, _ = plan.vectors(np.arange(4))
    np.testing.assert_array_equal(vectors[:, packing.P_SYMMETRIC], [1.0, 0.0, 0.0, 1.0])
    slipping = edl.Case(geometry=TWO_WALLS.geometry, electrolyte=TWO_WALLS.electrolyte,
                        wall=(edl.Wall(zeta="-30 mV"), edl.Wall(zeta="-50 mV", slip_length="1 nm")), field="1 kV/m")
    plan = make_plan(case_to_mapping(slipping), sweep_axes)
    vectors, _ = plan.vectors(np.arange(4))
    assert not vectors[:, packing.P_SYMMETRIC].any()  # a slipping top wall differs even at equal potentials


def test_batch_summaries_equal_single_solves_exactly() -> None:
    table, sweep_axes = case_to_mapping(SILICA), make_axes(SILICA_AXES)
    plan = make_plan(table, sweep_axes)
    points = every_point(sweep_axes)
    vectors, _ = plan.vectors(np.ravel_multi_index(np.array(points).T, plan.shape))
    summaries = np.full((len(points), _layout.SUMMARY_SIZE), np.nan)
    status = np.empty(len(points), dtype=np.int64)
    iterations = np.empty(len(points), dtype=np.int64)
    _batch.solve_cases(vectors, summaries, status, iterations)
    assert (status == _batch.CONVERGED).all()
    for index, row in zip(points, summaries):
        case = case_at(table, sweep_axes, index)
        result = edl.solve(case)
        for key, value in result.summary.items():
            at = _layout.SLOTS[key]
            got = (row[at], row[at + 1]) if isinstance(value, tuple) else row[at + 1 if key in _layout.PAIR_KEYS
                                                                                else at]
            np.testing.assert_array_equal(got, value, err_msg=f"{key} at {index}")


def test_two_wall_sweep_with_model_and_accuracy_axes_equals_single_solves() -> None:
    axes = {key: TWO_WALL_AXES[key] for key in ("wall.bottom.zeta", "wall.top.zeta", "model", "numerics.accuracy")}
    ds = edl.sweep(TWO_WALLS, axes)
    table, sweep_axes = case_to_mapping(TWO_WALLS), make_axes(axes)
    for index in every_point(sweep_axes):
        result = edl.solve(case_at(table, sweep_axes, index))
        at = ds.isel(dict(zip(ds["status"].dims, index)))
        assert int(at["status"]) == 0
        for key, value in result.summary.items():
            np.testing.assert_array_equal(at[key].values, np.asarray(value), err_msg=f"{key} at {index}")


def test_axes_that_set_the_same_input_are_solved_case_by_case() -> None:
    # water's temperature sets its permittivity, which the second axis sets too: no plan, same values
    axes = {"solvent.temperature": ["15 degC", "35 degC"], "solvent.relative_permittivity": [70.0, 80.0]}
    table, sweep_axes = case_to_mapping(TWO_WALLS), make_axes(axes)
    assert make_plan(table, sweep_axes) is None
    ds = edl.sweep(TWO_WALLS, axes)
    for index in every_point(sweep_axes):
        result = edl.solve(case_at(table, sweep_axes, index))
        at = ds.isel(dict(zip(ds["status"].dims, index)))
        np.testing.assert_array_equal(at["flow_rate_eo"].values, result.summary["flow_rate_eo"])


def test_an_axis_value_that_makes_no_valid_case_is_refused_before_solving() -> None:
    # it used to be recorded per point, every point of that value failed; now the sweep refuses it up front
    axes = {"wall.site[0].density": ["-1 nm^-2", "8 nm^-2"], "electrolyte.concentration": ["1 mM", "2 mM"]}
    with pytest.raises(edl.InputError, match=r"^axes\['wall.site\[0\].density'\]: at -1e\+18 the case is not valid: "):
        edl.sweep(SILICA, axes)
