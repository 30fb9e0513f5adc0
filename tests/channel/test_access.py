"""Access resistance of a channel's ends (``edl_solver.channel.access``): Hall's formula for a capillary and the
strip formula (ln(8W/H) - 1)/(pi K W) for a slit, the latter checked against an independent boundary-element
solution of a rectangular opening's capacitance."""

from __future__ import annotations

import math

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.channel import Channel, tabulate
from edl_solver.channel.access import end_access_resistance, slit_access_resistance
from edl_solver.channel.device import Device
from edl_solver.model.bulk import bulk_conductivity


def _kcl(concentration: str, geometry: edl.Slit | edl.Capillary) -> edl.Case:
    return edl.Case(geometry=geometry, electrolyte=edl.Electrolyte.from_ions({"K+": concentration,
                                                                              "Cl-": concentration}),
                    wall=edl.Wall(zeta="-25 mV"))


def _antiderivative(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """G with d2G/dxdy = 1/sqrt(x^2 + y^2), less terms in x or y alone (they cancel over a rectangle)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        first = np.where(x == 0.0, 0.0, x * np.arcsinh(y / np.abs(x)))
        second = np.where(y == 0.0, 0.0, y * np.arcsinh(x / np.abs(y)))
    return first + second


def _plate_capacitance(width: float, height: float, nx: int, ny: int) -> float:
    """C / (4 pi eps) of a flat rectangular conductor W x H: piecewise-constant charge on a cosine-graded grid,
    collocation at the panels' centres, each panel's potential integrated exactly."""
    xe = width / 2.0 * (1.0 - np.cos(np.linspace(0.0, np.pi, nx + 1)))
    ye = height / 2.0 * (1.0 - np.cos(np.linspace(0.0, np.pi, ny + 1)))
    centre = [g.ravel() for g in np.meshgrid((xe[1:] + xe[:-1]) / 2, (ye[1:] + ye[:-1]) / 2, indexing="ij")]
    low = [g.ravel() for g in np.meshgrid(xe[:-1], ye[:-1], indexing="ij")]
    high = [g.ravel() for g in np.meshgrid(xe[1:], ye[1:], indexing="ij")]
    dx1, dx2 = low[0][None, :] - centre[0][:, None], high[0][None, :] - centre[0][:, None]
    dy1, dy2 = low[1][None, :] - centre[1][:, None], high[1][None, :] - centre[1][:, None]
    matrix = (_antiderivative(dx2, dy2) - _antiderivative(dx1, dy2) - _antiderivative(dx2, dy1)
              + _antiderivative(dx1, dy1))
    density = np.linalg.solve(matrix, np.ones(matrix.shape[0]))
    return float(np.sum(density * (high[0] - low[0]) * (high[1] - low[1])))


def test_boundary_elements_give_the_unit_square_plate() -> None:
    """The check's own check: C/(4 pi eps) of a unit square plate is 0.3667874 (a classical value, from memory)."""
    assert _plate_capacitance(1.0, 1.0, 24, 24) == pytest.approx(0.3667874, rel=5e-3)


@pytest.mark.parametrize("aspect", [10.0, 20.0])
def test_slit_access_resistance_matches_boundary_elements(aspect: float) -> None:
    """R_end = 2 eps/(K C) (Hall's reasoning: twice the full-space resistance of the equipotential opening);
    the strip formula (ln(8W/H) - 1)/(pi K W) within 2.5 % of the boundary-element value at W/H = 10 and 20."""
    conductivity, height = 0.15, 1.0
    width = aspect * height
    numerical = 1.0 / (2.0 * math.pi * conductivity * _plate_capacitance(width, height, int(6 * aspect), 8))
    assert slit_access_resistance(conductivity, height, width) == pytest.approx(numerical, rel=0.025)


def test_end_access_resistances_by_geometry() -> None:
    """Capillary: 1/(4 K a) per end (Hall 1975, J. Gen. Physiol. 66, 531, from memory); slit: the strip's."""
    k = 0.1
    assert end_access_resistance(edl.Capillary(radius="10 nm"), k, None) == pytest.approx(1.0 / (4 * k * 10e-9))
    assert end_access_resistance(edl.Slit(height="20 nm"), k, 1e-6) == pytest.approx(
        (math.log(8 * 1e-6 / 20e-9) - 1.0) / (math.pi * k * 1e-6), rel=1e-14)


def test_slit_channel_with_a_width_has_both_ends_in_series_per_unit_width() -> None:
    """The table's access resistance of a slit is per unit width (ohm m): both ends' times W."""
    case = _kcl("1 mM", edl.Slit(height="20 nm"))
    table = tabulate(Channel(case, "5 um", "1 mM", "1 mM", access_resistance=True, width="2 um"))
    k = bulk_conductivity(case)
    expected = 2.0 * (math.log(8 * 2e-6 / 20e-9) - 1.0) / (math.pi * k * 2e-6) * 2e-6
    assert table.access_resistance == pytest.approx(expected, rel=1e-12)


def test_capillary_device_resistance_is_channel_plus_halls_two_ends() -> None:
    """Device conductance with access = N / (R_channel + 1/(2 K a)), R_channel that of the device without it
    (Hall 1975, from memory: the two ends of a circular pore in series, 1/(4 K a) each)."""
    case = _kcl("1 mM", edl.Capillary(radius="10 nm"))
    plain = Device(Channel(case, "1 um", "1 mM", "1 mM"), channels=3)
    access = Device(Channel(case, "1 um", "1 mM", "1 mM", access_resistance=True), channels=3)
    r_channel = 3 / plain.conductance()
    hall = 1.0 / (2.0 * bulk_conductivity(case) * 10e-9)
    assert access.conductance() == pytest.approx(3.0 / (r_channel + hall), rel=1e-9)


@pytest.mark.parametrize(("geometry", "kwargs", "field"), [
    (edl.Slit(height="20 nm"), {"width": "100 nm"}, "channel.width"),  # under ten heights
    (edl.Slit(height="20 nm"), {"width": "-1 um"}, "channel.width"),
    (edl.Capillary(radius="10 nm"), {"width": "1 um"}, "channel.width"),
    (edl.Slit(height="20 nm"), {"access_resistance": True}, "channel.access_resistance"),  # no width
])
def test_bad_widths_raise_one_line_naming_the_field(geometry: edl.Slit | edl.Capillary, kwargs: dict,
                                                    field: str) -> None:
    with pytest.raises(edl.InputError) as info:
        Channel(_kcl("1 mM", geometry), "1 um", "1 mM", "1 mM", **kwargs)
    assert str(info.value).startswith(field) and "\n" not in str(info.value)
