"""Defects found by ``stress/taper_run.py`` (issue 15), each pinned by a test that failed before its fix."""

from __future__ import annotations

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.channel import Channel, current_voltage
from edl_solver.errors import InputError
from tests.helpers import KCL, SOLVENT


def _channel(**kwargs: object) -> Channel:
    case = edl.Case(geometry=edl.Capillary(radius="5 nm"), electrolyte=KCL, wall=edl.Wall(charge_density=0.0),
                    solvent=SOLVENT)
    return Channel(case, length="1 um", left_concentration="1 mM", right_concentration="1 mM", **kwargs)


@pytest.mark.parametrize("kwargs", [{}, {"size": ("5 nm", "20 nm")}], ids=["uniform", "cone"])
def test_an_empty_list_of_voltages_is_a_one_line_input_error(kwargs: dict[str, object]) -> None:
    # found as a bare ValueError ("attempt to get argmin of an empty sequence") from the curve's ordering
    with pytest.raises(InputError, match=r"^voltages: .*expected") as error:
        current_voltage(_channel(**kwargs), [])
    assert "\n" not in str(error.value)


@pytest.mark.parametrize("field", ["length", "wall_segments", "wall_profile", "points", "size"])
def test_an_array_given_for_a_field_is_refused_in_one_line(field: str) -> None:
    # found with a 2-D numpy array: its repr spans lines, and so did the message that showed it
    value = np.zeros((2, 2))
    kwargs = {"length": "1 um", field: value if field != "size" else [value, value]}
    case = edl.Case(geometry=edl.Capillary(radius="5 nm"), electrolyte=KCL, wall=edl.Wall(charge_density=-0.02),
                    solvent=SOLVENT)
    with pytest.raises(InputError, match=rf"^channel\.{field}") as error:
        Channel(case, left_concentration="1 mM", right_concentration="1 mM", **kwargs)
    assert "\n" not in str(error.value)


def test_numpy_integers_are_counts_and_bools_are_not() -> None:
    # found refused: "channel.points: np.int64(16) is not allowed, expected an integer from 8 to 400"
    channel = _channel(points=np.int64(16), size_points=np.int32(6), size=("5 nm", "20 nm"))
    assert (channel.points, channel.size_points) == (16, 6) and type(channel.points) is int
    with pytest.raises(InputError, match=r"^channel\.points: True is not allowed, expected an integer from 8 to 400"):
        _channel(points=True)
    with pytest.raises(InputError, match=r"^channel\.wall_points: np\.False_ is not allowed"):
        _channel(wall_points=np.False_)


@pytest.mark.parametrize(("kwargs", "named"), [
    ({"wall_profile": {"position": ["0 um", "1 um"], "value": [-0.02, 1000.0]}}, r"^channel\.wall_profile: "),
    ({"wall_segments": [("0.5 um", edl.Wall(charge_density=-0.02)), ("1 um", edl.Wall(charge_density=1000.0))]},
     r"^channel\.wall_segments\[1\]: "),
])
def test_a_wall_along_x_outside_the_solvers_domain_is_blamed_on_its_own_field(kwargs: dict[str, object],
                                                                               named: str) -> None:
    # found blamed on "wall.charge_density: 93.45 C/m^2", a field and (for a profile) a value the user never gave
    case = edl.Case(geometry=edl.Capillary(radius="5 nm"), electrolyte=KCL, wall=edl.Wall(charge_density=-0.02),
                    solvent=SOLVENT)
    channel = Channel(case, length="1 um", left_concentration="1 mM", right_concentration="1 mM", **kwargs)
    with pytest.raises(InputError, match=named + r".*1000 C/m\^2.*expected") as error:
        current_voltage(channel, [0.1])
    assert "\n" not in str(error.value)
