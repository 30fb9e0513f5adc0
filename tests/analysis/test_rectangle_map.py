"""Validity maps of a rectangle: over kappa h and the aspect ratio W/H (a pseudo-axis), and over its width and
height; every point solved by edl.solve (no compiled batch, which is 1-D). Small maps (3 x 3) at accuracy 1e-4."""

from __future__ import annotations

import re

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.analysis.map_axes import check_axes, resolve_axis
from edl_solver.analysis.validity_map import validity_map
from edl_solver.errors import InputError

KCL = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})
BASE = edl.Case(geometry=edl.Rectangle(width="200 nm", height="40 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-50 mV"),
                field="1 kV/m", numerics=edl.Numerics(accuracy=1e-4))


def _rectangle(width: float, height: float) -> edl.Case:
    return edl.Case(geometry=edl.Rectangle(width=width, height=height), electrolyte=KCL, wall=BASE.wall,
                    field=BASE.field, numerics=BASE.numerics)


@pytest.fixture
def no_batch(monkeypatch: pytest.MonkeyPatch) -> None:
    """A rectangle must not reach the compiled 1-D batch."""
    def refuse(*_: object) -> None:
        raise AssertionError("a rectangle went to the compiled batch")

    monkeypatch.setattr("edl_solver.kernels.batch.solve_cases", refuse)


def test_aspect_ratio_is_a_pseudo_axis_of_a_rectangle_setting_its_width_over_its_height() -> None:
    axis = resolve_axis(BASE, "aspect_ratio", [1, 5, 20], "y_axis")
    assert axis.pseudo and axis.path == "geometry.aspect_ratio"
    assert axis.values.tolist() == axis.inputs.tolist() == [1.0, 5.0, 20.0]


@pytest.mark.parametrize(("x_axis", "y_axis", "message"), [
    (("kappa_h", [1, 2]), ("aspect_ratio", [0, 2]), "y_axis.aspect_ratio: [0, 2] has a value <= 0"),
    (("geometry.width", [1e-7, 2e-7]), ("aspect_ratio", [1, 2]), "sets the same input"),
], ids=["ratio 0", "width twice"])
def test_bad_aspect_ratio_axes_are_refused(x_axis: tuple, y_axis: tuple, message: str) -> None:
    with pytest.raises(InputError, match=re.escape(message)):
        check_axes(BASE, x_axis, y_axis)


def test_aspect_ratio_of_a_slit_is_refused_naming_the_geometry() -> None:
    slit = edl.Case(geometry=edl.Slit(height="40 nm"), electrolyte=KCL, wall=BASE.wall)
    with pytest.raises(InputError, match=r"^y_axis\.aspect_ratio: the base case is a slit, expected a rectangle"):
        check_axes(slit, ("kappa_h", [1, 2]), ("aspect_ratio", [1, 2]))


def test_a_map_over_kappa_h_and_aspect_ratio_solves_each_rectangle_as_edl_solve(no_batch: None) -> None:
    kappa_h, ratios = [1.0, 3.0, 10.0], [1.0, 4.0, 16.0]
    data = validity_map(BASE, ("kappa_h", kappa_h), ("aspect_ratio", ratios))
    assert data["status"].values.tolist() == [[0, 0, 0]] * 3
    # the height from kappa h (H = 2 kappa h lambda_D), the width from the ratio at that height
    height = 2.0 * np.array(kappa_h) * BASE.debye_length
    assert np.allclose(data["geometry.height"].values, height, rtol=1e-12)
    errors = data["thin_layer_flow_rate_error"].values
    for i, ratio in enumerate(ratios):
        for j, h in enumerate(height):
            full = edl.solve(_rectangle(ratio * h, h)).summary
            assert data["flow_rate_eo"].values[i, j] == full["flow_rate_eo"]
    # The thin-layer error falls with kappa h at every aspect ratio (the layer's share of the section falls
    # like 1/kappa h; common practice).
    assert np.all(np.diff(np.abs(errors), axis=1) < 0.0)


def test_a_map_over_a_rectangles_width_and_height(no_batch: None) -> None:
    widths, heights = [6e-8, 1.2e-7, 2.4e-7], [2e-8, 4e-8, 8e-8]
    data = validity_map(BASE, ("geometry.width", widths), ("geometry.height", heights))
    assert data["status"].values.tolist() == [[0, 0, 0]] * 3
    assert data["flow_rate_eo"].values[1, 2] == edl.solve(_rectangle(2.4e-7, 4e-8)).summary["flow_rate_eo"]
    assert np.all(np.isfinite(data["thin_layer_flow_rate_error"].values))
