"""The profiles along x that the I-V curve of a channel varying along x carries (``operating.current_voltage``).

Conventions of ``edl_solver.channel.model``: x from the left reservoir (0) to the right one (L); Delta V =
V(L) - V(0); the potential profile is against the left reservoir.
"""

from __future__ import annotations

import numpy as np
import pytest

import edl_solver as edl
from edl_solver import channel as ch
from edl_solver.errors import InputError
from tests.helpers import KCL, SOLVENT


def _case(charge: str) -> edl.Case:
    return edl.Case(geometry=edl.Capillary(radius="10 nm"), electrolyte=KCL, wall=edl.Wall(charge_density=charge),
                    solvent=SOLVENT)


def test_an_uncharged_cone_divides_the_voltage_as_its_resistance_does() -> None:
    """Ohm's law in a slowly varying uncharged section: V(x)/Delta V = int_0^x dx'/r^2 / int_0^L dx'/r^2, and with
    r linear from a to b, int_0^x dx'/r^2 = x/(a r(x)), so V(x)/Delta V = x b/(L r(x)) (derived here; common
    practice); the salt stays at the reservoirs' concentration. The profiles are good to the collocation's tolerance
    (``taper_path.BVP_TOLERANCE``, 1e-4; the fluxes converge faster)."""
    length, a, b = 2e-6, 10e-9, 100e-9
    curve = ch.current_voltage(ch.Channel(_case("0 C/m^2"), length, "1 mM", "1 mM", size=(a, b), points=8,
                                          size_points=6), [-0.2, 0.2])
    x = curve["position"].values
    expected = x * b / (length * (a + (b - a) * x / length))
    for voltage in (-0.2, 0.2):
        np.testing.assert_allclose(curve["potential_profile"].sel(voltage=voltage).values, voltage * expected,
                                   atol=3e-4 * abs(voltage))
        np.testing.assert_allclose(curve["concentration_profile"].sel(voltage=voltage).values, 1.0, rtol=3e-4)
    assert curve["potential_profile"].attrs["units"] == "V"
    assert curve["position"].attrs["units"] == "m"


def test_a_charged_cone_polarises_its_salt_oppositely_at_opposite_voltages() -> None:
    """A negative cone, tip at x = 0: the counter-ion-selective tip makes salt pile up inside at one polarity and
    drain at the other (concentration polarisation, the mechanism of rectification: Woermann 2003, Phys. Chem.
    Chem. Phys. 5, 1853; Vlassiouk, Smirnov & Siwy 2008, Nano Lett. 8, 1978, from memory). The ends hold the
    reservoirs' concentration; the low-current polarity (+V here) is the depleted one."""
    curve = ch.current_voltage(ch.Channel(_case("-10 mC/m^2"), "5 um", "1 mM", "1 mM", size=("10 nm", "200 nm"),
                                          points=16, size_points=8), [-0.5, 0.5])
    forward, reverse = (curve["concentration_profile"].sel(voltage=v).values for v in (0.5, -0.5))
    for profile in (forward, reverse):
        np.testing.assert_allclose(profile[[0, -1]], 1.0, rtol=1e-9)
    assert forward.min() < 0.5 and reverse.max() > 2.0
    currents = curve["current"].values
    assert abs(currents[1]) < abs(currents[0])


def test_a_uniform_channel_has_no_profile_variables() -> None:
    """The uniform channel's curve keeps its layout (no position dimension)."""
    curve = ch.current_voltage(ch.Channel(_case("-10 mC/m^2"), "1 um", "1 mM", "1 mM"), [0.1])
    assert "position" not in curve.dims and "concentration_profile" not in curve


def test_a_point_whose_salt_leaves_the_table_is_solved_on_a_wider_one() -> None:
    """Depletion beyond the table (a span of 20 each way, too narrow for 1 V on a selective tip): the curve is
    solved again on a table ten times wider, and agrees with a curve solved on a wide table from the
    start to the interpolation error (same equations, common practice)."""
    case = _case("-10 mC/m^2")
    narrow = ch.Channel(case, "5 um", "1 mM", "1 mM", size=("10 nm", "200 nm"), points=16, size_points=6,
                        concentration_span=20.0)
    wide = ch.Channel(case, "5 um", "1 mM", "1 mM", size=("10 nm", "200 nm"), points=24, size_points=6,
                      concentration_span=200.0)
    voltages = [1.0]
    widened = ch.current_voltage(narrow, voltages)
    assert (widened["status"].values == 0).all()
    assert widened.attrs["concentration_span"] == 200.0
    reference = ch.current_voltage(wide, voltages)
    bound = 10.0 * max(widened.attrs["interpolation_error"], reference.attrs["interpolation_error"])
    np.testing.assert_allclose(widened["current"].values, reference["current"].values, rtol=bound)
    given = ch.current_voltage(ch.tabulate(narrow), voltages)  # a table the caller made is widened alike
    assert given.attrs["concentration_span"] == 200.0 and (given["current"] == widened["current"]).all()
    point = ch.operating_point(narrow, voltage=1.0)
    assert point.status == "converged" and point.current == pytest.approx(widened["current"].values[0], rel=1e-9)


def test_the_concentration_span_is_checked() -> None:
    for bad in (1.0, "50", True, float("nan"), 1e7):
        with pytest.raises(InputError, match=r"channel\.concentration_span"):
            ch.Channel(_case("-10 mC/m^2"), "5 um", "1 mM", "1 mM", size=("10 nm", "200 nm"), concentration_span=bad)


def test_a_point_still_outside_the_widest_table_says_why(monkeypatch: pytest.MonkeyPatch) -> None:
    """With the widest span lowered to the channel's own, the depleted point cannot be solved again: it fails,
    never returned as a number, and its message says that the table was not widened further and why."""
    from edl_solver.channel import operating

    monkeypatch.setattr(operating, "WIDEST_SPAN", 20.0)
    narrow = ch.Channel(_case("-10 mC/m^2"), "5 um", "1 mM", "1 mM", size=("10 nm", "200 nm"), points=16,
                        size_points=6, concentration_span=20.0)
    point = ch.operating_point(narrow, voltage=1.0)
    assert point.status == "failed" and np.isnan(point.current)
    assert "leaves the table" in point.message and "not widened further: its span is the widest" in point.message


def test_a_short_steep_channel_carries_notes_on_the_model() -> None:
    """The long-channel model (fluxes along x only, each section in local equilibrium) asks for a channel much
    longer than its section and gently sloping walls (the lubrication approximation, common practice): a 100 nm
    cone widening from 5 to 50 nm gets both notes; a 5 um one neither."""
    short = ch.current_voltage(ch.Channel(_case("-10 mC/m^2"), "100 nm", "1 mM", "1 mM", size=("5 nm", "50 nm"),
                                          points=8, size_points=4), [0.05])
    notes = short.attrs["notes"]
    assert "only 1 times as long as its widest section" in notes and "slopes steeply (up to 24.2 degrees)" in notes
    long = ch.current_voltage(ch.Channel(_case("-10 mC/m^2"), "5 um", "1 mM", "1 mM", size=("5 nm", "50 nm"),
                                         points=8, size_points=4), [0.05])
    assert "notes" not in long.attrs
