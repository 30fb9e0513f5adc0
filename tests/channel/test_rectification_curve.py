"""Rectification against the salt concentration (``channel.rectification_curve``): both reservoirs at c, the
ratio |I(+V)/I(-V)| (Delta V = V(L) - V(0), the tip at x = 0) with kappa a_tip, on one table for the curve."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

import edl_solver as edl
from edl_solver import channel as ch
from edl_solver.channel import rectification_curve
from edl_solver.channel.rectification import rectification_ratio
from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.errors import InputError
from edl_solver.model.bulk import bulk_conductivity
from tests.helpers import KCL, SOLVENT


def _case(wall: edl.Wall, radius: str = "5 nm") -> edl.Case:
    electrolyte = edl.Electrolyte.from_ions({"K+": 10.0, "Cl-": 10.0})
    return edl.Case(geometry=edl.Capillary(radius=radius), electrolyte=electrolyte, wall=wall, solvent=SOLVENT)


CHARGED = _case(edl.Wall(charge_density="-20 mC/m^2"))


def _cone(case: edl.Case, **table: int) -> ch.Channel:
    """Tip 5 nm at x = 0, base 40 nm, 1 um long; the reservoirs' 10 mM are replaced by the curve's."""
    return ch.Channel(case, "1 um", "10 mM", "10 mM", size=("5 nm", "40 nm"), **(table or {"points": 16,
                                                                                         "size_points": 8}))


def test_an_uncharged_cone_does_not_rectify_and_conducts_as_its_shape_at_every_concentration() -> None:
    """No charge, no double layer: the current is K(c) times the shape's Ohm's-law conductance pi a b / L (the
    issue's closed form, derived in tests/channel/test_taper_limits.py), linear in V, so the ratio is 1."""
    case = edl.Case(geometry=edl.Capillary(radius="20 nm"), electrolyte=KCL, wall=edl.Wall(zeta=0.0), solvent=SOLVENT)
    channel = ch.Channel(case, "1 um", "1 mM", "1 mM", size=("20 nm", "80 nm"))
    curve = rectification_curve(channel, ["1 mM", "10 mM", "100 mM"], "200 mV")
    assert list(curve["status"].values) == [0, 0, 0]
    np.testing.assert_allclose(curve["rectification"].values, 1.0, atol=1e-6)
    closed = curve["concentration"].values * bulk_conductivity(case) * math.pi * 20e-9 * 80e-9 / 1e-6
    conductance = np.abs(curve["current_positive"].values - curve["current_negative"].values) / 0.4
    np.testing.assert_allclose(conductance, closed, rtol=max(curve.attrs["interpolation_error"], 1e-6))
    np.testing.assert_allclose(curve["conductance_ratio"].values, 1.0, rtol=max(curve.attrs["interpolation_error"],
                                                                                  1e-6))


def test_a_symmetric_hourglass_does_not_rectify_at_any_concentration() -> None:
    """Mirror symmetry x -> L - x maps +Delta V onto -Delta V with I -> -I (common practice)."""
    def hourglass(x: float) -> float:
        return 5e-9 + 35e-9 * abs(2.0 * x / 1e-6 - 1.0)

    channel = ch.Channel(CHARGED, "1 um", "10 mM", "10 mM", size=hourglass, points=16, size_points=8)
    curve = rectification_curve(channel, [3.0, 10.0, 30.0], 0.2)
    np.testing.assert_allclose(curve["rectification"].values, 1.0, atol=1e-5)


def test_a_uniform_channel_is_taken_as_a_cone_of_equal_ends_and_does_not_rectify() -> None:
    """A straight charged channel between equal reservoirs is mirror-symmetric (common practice), yet far more
    conductive than its bulk filling at 1 mM (surface conduction)."""
    curve = rectification_curve(ch.Channel(CHARGED, "1 um", "10 mM", "10 mM", points=8), [1.0, 100.0], 0.2)
    np.testing.assert_allclose(curve["rectification"].values, 1.0, atol=1e-6)
    assert curve["conductance_ratio"].values[0] > 10.0 and list(curve.attrs["size_sizes"]) == [5e-9, 5e-9]


def test_a_point_is_the_rectification_ratio_of_its_own_channel() -> None:
    """Same equations: a one-concentration curve uses exactly the table of Channel(..., c, c), so it matches
    rectification_ratio to rounding; on the shared table of a longer curve, to that table's interpolation error."""
    single = rectification_curve(_cone(CHARGED), ["3 mM"], 0.2)["rectification"].values
    own = rectification_ratio(ch.Channel(CHARGED, "1 um", "3 mM", "3 mM", size=("5 nm", "40 nm"), points=16,
                                         size_points=8), [0.2])
    np.testing.assert_allclose(single, own, rtol=1e-6)
    curve = rectification_curve(_cone(CHARGED), [0.3, 3.0, 30.0], 0.2)
    assert curve.attrs["table"] == "shared" and curve.attrs["table_concentrations"] > 16
    np.testing.assert_allclose(curve["rectification"].values[1], own, rtol=curve.attrs["interpolation_error"])


def test_rectification_fades_at_high_concentration_and_in_the_ideally_selective_limit() -> None:
    """The trend the model gives (README "Tapered channels", benchmarks/rectification_direction.py): a negative
    cone passes more current from tip to base (ratio below 1: Delta V < 0) at every kappa a_tip, strongest near
    kappa a_tip ~ 3 (a few Debye lengths across the tip; the trend Ai et al. 2010, White & Bund 2008 and
    Vlassiouk, Smirnov & Siwy 2008 report, from memory), and fading monotonically towards 1 both in the
    thin-layer limit (high c) and as the whole cone becomes ideally selective (low c, fixed charge)."""
    curve = rectification_curve(_cone(CHARGED), [0.01, 0.1, 1.0, 30.0, 300.0, 1000.0], 0.2)
    ratio = curve["rectification"].values
    assert np.all(ratio < 1.0)
    assert 0.5 < curve["kappa_a_tip"].values[3] < 5.0 and ratio[3] < 0.6
    assert np.all(np.diff(ratio[3:]) > 0.0) and 1.0 - ratio[-1] < 0.1
    assert np.all(np.diff(ratio[:4]) < 0.0) and 1.0 - ratio[0] < 1e-3
    # Debye length of 1 M 1:1 salt, 1/kappa = sqrt(eps RT / (2 F^2 c)) (e.g. Israelachvili, from memory)
    debye = math.sqrt(SOLVENT.permittivity * GAS_CONSTANT * 298.15 / (2.0 * FARADAY**2 * 1000.0))
    assert curve["kappa_a_tip"].values[-1] == pytest.approx(5e-9 / debye, rel=1e-6)


def test_a_point_whose_solve_along_x_fails_is_reported_with_its_reason_not_as_a_number() -> None:
    """At 1 kV the collocation cannot follow the drive: the point fails, named so, with NaN values."""
    curve = rectification_curve(_cone(CHARGED, points=8, size_points=4), [1.0], "1 kV")
    assert list(curve["status"].values) == [1]
    assert math.isnan(curve["rectification"].values[0]) and math.isnan(curve["current_positive"].values[0])
    assert curve["message"].values[0].startswith("at -1000 V: ")


def test_a_failed_cross_section_spoils_only_the_points_whose_own_table_needs_it() -> None:
    """Five Newton iterations do not reach the dilute end of the shared table (c_min / 50): one table per point
    is then built, and only the 0.01 mM point, whose table reaches as low, fails, saying why."""
    case = dataclasses.replace(CHARGED, numerics=edl.Numerics(max_iterations=5))
    curve = rectification_curve(_cone(case, points=8, size_points=4), [0.01, 1.0, 1000.0], 0.2)
    assert curve.attrs["table"] == "one per concentration"
    assert list(curve["status"].values) == [1, 0, 0]
    assert curve["message"].values[0].startswith("the table failed: ") and "did not converge" in \
        curve["message"].values[0]
    assert math.isnan(curve["rectification"].values[0]) and np.all(np.isfinite(curve["rectification"].values[1:]))


@pytest.mark.parametrize(("concentrations", "voltage", "channel", "match"), [
    ([1.0, 0.0], 0.2, True, r"concentrations: 0\.0 is not allowed, expected positive"),
    ([], 0.2, True, r"concentrations: empty"),
    ([1.0], -0.2, True, r"voltage: -0\.2 is not allowed, expected a positive voltage"),
    ([1.0], 0.2, False, r"channel: Case is not a Channel"),
])
def test_bad_inputs_are_one_line_input_errors(concentrations: list[float], voltage: float, channel: bool,
                                              match: str) -> None:
    with pytest.raises(InputError, match=match):
        rectification_curve(_cone(CHARGED) if channel else CHARGED, concentrations, voltage)


def test_a_table_refused_at_some_concentrations_fails_those_points_and_at_all_raises() -> None:
    """A 500 nm radius at 1 M needs the section at 50 M, where its kappa a leaves the solver's domain (1e4)."""
    channel = ch.Channel(CHARGED, "1 um", "10 mM", "10 mM", size=("500 nm", "500 nm"), points=8)
    curve = rectification_curve(channel, [1.0, 1000.0], 0.1)
    assert list(curve["status"].values) == [0, 1]
    assert curve["message"].values[1].startswith("the table failed: channel.size: ") and "domain" in \
        curve["message"].values[1]
    with pytest.raises(InputError, match=r"channel\.size: the table's point .* expected sizes and concentrations"):
        rectification_curve(channel, [1000.0], 0.1)
