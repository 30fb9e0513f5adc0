"""A wall condition that varies along the channel (``Channel(..., wall_segments=...)``): bipolar channels.

Conventions of ``edl_solver.channel.model``: Delta V = V(L) - V(0), I positive along +x; the ratio is
|I(+Delta V) / I(-Delta V)| (``channel.rectification``).
"""

from __future__ import annotations

import numpy as np
import pytest

import edl_solver as edl
from edl_solver import channel as ch
from edl_solver.channel.rectification import rectification_ratio
from edl_solver.errors import InputError
from tests.helpers import SOLVENT

NEGATIVE = edl.Wall(charge_density="-20 mC/m^2")
POSITIVE = edl.Wall(charge_density="20 mC/m^2")


def _case(radius: str = "5 nm", wall: edl.Wall = NEGATIVE) -> edl.Case:
    """A model 1:1 salt with equal diffusivities, 10 mM, in a capillary."""
    electrolyte = edl.Electrolyte((edl.Ion("A", valence=1, concentration=10.0, diffusivity=2e-9),
                                   edl.Ion("B", valence=-1, concentration=10.0, diffusivity=2e-9)))
    return edl.Case(geometry=edl.Capillary(radius=radius), electrolyte=electrolyte, wall=wall, solvent=SOLVENT)


def _channel(first: edl.Wall, second: edl.Wall) -> ch.Channel:
    return ch.Channel(_case(), "1 um", 10.0, 10.0, points=16, wall_segments=[("500 nm", first), ("1 um", second)])


def test_one_segment_of_the_case_wall_is_the_plain_channel() -> None:
    """A single segment holding the case's own wall is the channel without segments (the same equations)."""
    plain = ch.Channel(_case(), "1 um", 10.0, 1.0, points=16, size=(5e-9, 20e-9), size_points=6)
    piecewise = ch.Channel(_case(), "1 um", 10.0, 1.0, points=16, size=(5e-9, 20e-9), size_points=6,
                           wall_segments=[("1 um", NEGATIVE)])
    voltages = [-0.1, 0.0, 0.1]
    expected = ch.current_voltage(plain, voltages)["current"].values
    np.testing.assert_allclose(ch.current_voltage(piecewise, voltages)["current"].values, expected, rtol=1e-10)


def test_two_segments_of_the_same_wall_are_the_uniform_channel() -> None:
    """Splitting a uniform channel in two equal segments (continuity of c, V and p at the joint) changes nothing
    but the collocation error (common practice)."""
    whole = ch.Channel(_case(), "1 um", 10.0, 1.0, points=16, wall_segments=[("1 um", NEGATIVE)])
    split = ch.Channel(_case(), "1 um", 10.0, 1.0, points=16,
                       wall_segments=[("500 nm", NEGATIVE), ("1 um", NEGATIVE)])
    voltages = [-0.05, 0.05]
    expected = ch.current_voltage(whole, voltages)["current"].values
    np.testing.assert_allclose(ch.current_voltage(split, voltages)["current"].values, expected, rtol=1e-4)


def test_a_bipolar_channel_rectifies_more_than_a_unipolar_half() -> None:
    """Equal and opposite wall charges on the two halves of a straight channel rectify strongly, more than a
    channel of the same length charged on one half only (the other nearly neutral) or uniformly; swapping the
    halves flips the preferred direction (bipolar diodes: Vlassiouk & Siwy 2007, Nano Lett. 7, 552, from memory;
    the swap is the mirror x -> L - x, a symmetry of the equations, common practice)."""
    voltages = [0.05, 0.1]
    bipolar = rectification_ratio(_channel(NEGATIVE, POSITIVE), voltages)
    swapped = rectification_ratio(_channel(POSITIVE, NEGATIVE), voltages)
    half = rectification_ratio(_channel(NEGATIVE, edl.Wall(charge_density="-1 mC/m^2")), voltages)  # nearly neutral
    uniform = rectification_ratio(_channel(NEGATIVE, NEGATIVE), voltages)
    assert bipolar[1] < 0.2  # far from 1: the larger current at Delta V < 0 (negative half on the left)
    assert np.all(np.abs(np.log(bipolar)) > np.abs(np.log(half)) + 0.5)
    np.testing.assert_allclose(swapped, 1.0 / bipolar, rtol=1e-3)  # the collocation tolerance, 1e-4
    np.testing.assert_allclose(uniform, 1.0, atol=1e-6)


def test_flipping_the_charges_and_the_voltage_maps_the_curve_onto_itself() -> None:
    """With equal diffusivities, exchanging the ions' roles turns sigma(x) into -sigma(x), Delta V into -Delta V
    and I into -I (a symmetry of the Poisson-Nernst-Planck-Stokes equations, common practice)."""
    voltages = np.array([-0.1, -0.03, 0.03, 0.1])
    negative_first = ch.current_voltage(_channel(NEGATIVE, POSITIVE), voltages)
    positive_first = ch.current_voltage(_channel(POSITIVE, NEGATIVE), -voltages)
    np.testing.assert_allclose(positive_first["current"].values, -negative_first["current"].values, rtol=1e-6)
    current = negative_first["current"].values
    assert abs(abs(current[3] / current[0]) - 1.0) > 0.5  # the symmetry is not the trivial I(-V) = -I(V)


@pytest.mark.parametrize(("segments", "words"), [
    ([("600 nm", NEGATIVE), ("500 nm", POSITIVE)], "x_end"),
    ([("500 nm", NEGATIVE), ("900 nm", POSITIVE)], "length"),
    ([("1 um", edl.Wall(zeta="-50 mV"))], "kind"),
    ([("1 um", "wall")], "Wall"),
    ([], "expected a list"),
    (NEGATIVE, "expected a list"),
])
def test_bad_segments_are_refused(segments: object, words: str) -> None:
    with pytest.raises(InputError, match=r"channel\.wall_segments") as error:
        ch.Channel(_case(), "1 um", 10.0, 10.0, wall_segments=segments)
    assert words in str(error.value)


def test_a_rectangle_is_refused() -> None:
    case = edl.Case(geometry=edl.Rectangle(height="10 nm", width="20 nm"), electrolyte=_case().electrolyte,
                    wall=NEGATIVE, solvent=SOLVENT)
    with pytest.raises(InputError, match=r"channel\.wall_segments: given for a rectangle"):
        ch.Channel(case, "1 um", 10.0, 10.0, wall_segments=[("1 um", NEGATIVE)])
