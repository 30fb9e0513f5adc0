"""The ``size`` of a Channel (``edl_solver.channel.shape``): a pair, a callable, a table; one-line InputErrors."""

from __future__ import annotations

import pytest

import edl_solver as edl
from edl_solver import channel as ch
from edl_solver.channel.shape import SHAPE_SAMPLES, Shape
from edl_solver.errors import InputError
from tests.helpers import KCL, SOLVENT

CAPILLARY = edl.Case(geometry=edl.Capillary(radius="10 nm"), electrolyte=KCL, wall=edl.Wall(zeta=0.0),
                     solvent=SOLVENT)


def test_a_pair_with_units_is_a_linear_taper_in_metres() -> None:
    channel = ch.Channel(CAPILLARY, "5 um", "1 mM", "1 mM", size=("10 nm", "200 nm"))
    assert channel.size == Shape((0.0, 5e-6), (10e-9, 200e-9))
    assert channel.size.at(2.5e-6) == pytest.approx(105e-9, rel=1e-12)
    assert ch.Channel(CAPILLARY, "5 um", "1 mM", "1 mM").size is None  # the case's own geometry


def test_a_callable_is_sampled_and_a_table_read_in_si() -> None:
    channel = ch.Channel(CAPILLARY, "4 um", "1 mM", "1 mM", size=lambda x: 10e-9 + abs(x - 2e-6) * 0.01)
    assert len(channel.size.sizes) == SHAPE_SAMPLES + 1
    assert min(channel.size.sizes) == pytest.approx(10e-9, rel=1e-12)  # the kink at L/2 is a sample
    table = ch.Channel(CAPILLARY, "4 um", "1 mM", "1 mM",
                       size={"position": [0, "2 um", "4 um"], "size": ["30 nm", "10 nm", "30 nm"]})
    assert table.size == Shape((0.0, 2e-6, 4e-6), (30e-9, 10e-9, 30e-9))


@pytest.mark.parametrize(("size", "field"), [
    (("-10 nm", "20 nm"), "channel.size[0]"),
    ((10e-9, 0.0), "channel.size[1]"),
    (("10 nm",), "channel.size"),
    ("10 nm", "channel.size"),
    ((10e-9, "3 mM"), "channel.size[1]"),
    ({"position": [0, 1e-6], "size": [1e-8, 2e-8]}, "channel.size.position"),  # does not end at L
    ({"position": [0, 3e-6, 2e-6, 4e-6], "size": [1e-8] * 4}, "channel.size.position"),
    ({"x": [0, 4e-6], "size": [1e-8, 1e-8]}, "channel.size"),
    (lambda x: -1.0, "channel.size(0 m)"),
    (lambda x: 1 / 0, "channel.size"),
])
def test_bad_sizes_raise_one_line_input_errors(size: object, field: str) -> None:
    with pytest.raises(InputError) as error:
        ch.Channel(CAPILLARY, "4 um", "1 mM", "1 mM", size=size)
    message = str(error.value)
    assert message.startswith(field) and "\n" not in message and "expected" in message


def test_rectangles_and_bad_size_points_are_refused() -> None:
    rectangle = edl.Case(geometry=edl.Rectangle(width="40 nm", height="20 nm"), electrolyte=KCL,
                         wall=edl.Wall(zeta=0.0), solvent=SOLVENT)
    with pytest.raises(InputError, match=r"channel\.size: given for a rectangle"):
        ch.Channel(rectangle, "4 um", "1 mM", "1 mM", size=("10 nm", "20 nm"))
    with pytest.raises(InputError, match=r"channel\.size_points: 2 is not allowed"):
        ch.Channel(CAPILLARY, "4 um", "1 mM", "1 mM", size=("10 nm", "20 nm"), size_points=2)


def test_a_slit_width_must_exceed_ten_times_the_largest_height() -> None:
    slit = edl.Case(geometry=edl.Slit(height="10 nm"), electrolyte=KCL, wall=edl.Wall(zeta=0.0), solvent=SOLVENT)
    with pytest.raises(InputError, match=r"channel\.width"):
        ch.Channel(slit, "4 um", "1 mM", "1 mM", size=("10 nm", "100 nm"), width="500 nm")


def test_a_table_outside_the_solvers_domain_is_refused_naming_the_size() -> None:
    """The table spans the reservoirs' concentrations widened 50 times: at 1 M a 2 um radius gives kappa a
    above the solver's domain (``inputs.domain``), refused before anything is along-channel solved."""
    with pytest.raises(InputError, match=r"^channel\.size: the table's point .* radius .* domain$"):
        ch.tabulate(ch.Channel(CAPILLARY, "4 um", "1 M", "1 M", size=("300 nm", "2 um"), size_points=4, points=8))
