"""The panels a tapered channel adds to the I-V figure (``plot.transport.iv_figure``): the rectification
|I(+V)/I(-V)| against |V| (when the curve, or --rectification, has both signs of a voltage) and the channel's
size against x with the salt concentration along it at the largest pair of opposite voltages of the curve (the
concentration polarisation behind the rectification), all read from the channel dataset
(``channel.taper_outputs``, ``channel.operating.current_voltage``)."""

from __future__ import annotations

from typing import Any

import numpy as np

from edl_solver.channel.taper_outputs import curve_rectification
from edl_solver.report.units import unit_of

__all__ = ["draw_taper_panels", "is_tapered", "taper_axes"]

_RATIO = "#8e44ad"
_SHAPE = "#2c7fb8"
#: Colours of the concentration along x at +V and at -V.
_FORWARD, _REVERSE = "#d95f02", "#1b9e77"


def is_tapered(dataset: Any) -> bool:
    """True when the dataset describes a channel with a ``size`` (``taper_outputs.shape_attrs``)."""
    return "size_sizes" in dataset.attrs


def taper_axes(figure: Any) -> tuple[Any, list[Any]]:
    """The I-V axes (left, two thirds of the width) and the two side panels (right column, top and bottom)."""
    grid = figure.add_gridspec(2, 2, width_ratios=(2.0, 1.0))
    return figure.add_subplot(grid[:, 0]), [figure.add_subplot(grid[0, 1]), figure.add_subplot(grid[1, 1])]


def draw_taper_panels(panels: list[Any], dataset: Any) -> None:
    """Draw the rectification (top panel; a note when the curve has no pair +V, -V) and the shape (bottom)."""
    _draw_rectification(panels[0], dataset)
    _draw_shape(panels[1], dataset)


def _draw_rectification(axes: Any, dataset: Any) -> None:
    millivolts = unit_of("potential")
    found = curve_rectification(dataset)
    axes.set_title("rectification", fontsize="medium")
    if found is None:
        axes.text(0.5, 0.5, "no pair of voltages +V, -V\n(give --iv over both signs)", ha="center", va="center",
                  transform=axes.transAxes, fontsize="small")
        axes.set_xticks([])
        axes.set_yticks([])
        return
    magnitudes, ratios = found
    axes.axhline(1.0, color="0.6", lw=0.8)
    axes.plot(magnitudes * millivolts.factor, ratios, color=_RATIO, lw=1.8, marker="o", ms=3.5)
    positive = ratios[np.isfinite(ratios) & (ratios > 0)]
    if positive.size and positive.max() > 20.0 * positive.min():  # a ratio near the zero-current voltage is large
        axes.set_yscale("log")
    axes.set_xlabel(f"|ΔV| ({millivolts.symbol})")
    axes.set_ylabel("|I(+V) / I(−V)|")
    axes.grid(True, lw=0.4, alpha=0.5)


def _draw_shape(axes: Any, dataset: Any) -> None:
    x = np.asarray(dataset.attrs["size_positions"], dtype=float)
    size = np.asarray(dataset.attrs["size_sizes"], dtype=float)
    name = str(dataset.attrs.get("size_name", "size"))
    wall = size * (0.5 if name == "height" else 1.0) * 1e9  # a slit's walls at +-H/2, a capillary's at +-a
    x_scale, x_unit = (1e6, "µm") if x[-1] >= 1e-6 else (1e9, "nm")
    axes.fill_between(x * x_scale, wall, -wall, color=_SHAPE, alpha=0.25, lw=0)
    axes.plot(x * x_scale, wall, color=_SHAPE, lw=1.0)
    axes.plot(x * x_scale, -wall, color=_SHAPE, lw=1.0)
    axes.set_title(f"channel shape (walls; {name} against x)", fontsize="medium")
    axes.set_xlabel(f"x ({x_unit}), left reservoir at x = 0")
    axes.set_ylabel(f"wall position, {'±H/2' if name == 'height' else '±a'} (nm)")
    axes.grid(True, lw=0.4, alpha=0.5)
    _draw_concentration(axes, dataset, x_scale)


def opposite_pair(dataset: Any) -> float | None:
    """The largest V > 0 whose profiles at +V and -V both converged (``concentration_profile``), or None."""
    if "concentration_profile" not in dataset.variables:
        return None
    voltages = np.asarray(dataset["voltage"].values, dtype=float)
    ok = np.all(np.isfinite(dataset["concentration_profile"].values), axis=1)
    scale = np.max(np.abs(voltages)) if voltages.size else 0.0
    found = [v for v, good in zip(voltages, ok) if v > 0 and good and
             np.any(ok & np.isclose(voltages, -v, rtol=0.0, atol=1e-9 * scale))]
    return max(found) if found else None


def _draw_concentration(axes: Any, dataset: Any, x_scale: float) -> None:
    """c(x) at +V and -V on a second axis of the shape panel (log when it spans more than a factor of 10)."""
    voltage = opposite_pair(dataset)
    if voltage is None:
        return
    millivolts, concentration = unit_of("potential"), unit_of("concentration")
    right = axes.twinx()
    x = np.asarray(dataset["position"].values, dtype=float) * x_scale
    voltages = np.asarray(dataset["voltage"].values, dtype=float)
    rows = []
    for sign, colour in ((1.0, _FORWARD), (-1.0, _REVERSE)):
        k = int(np.argmin(np.abs(voltages - sign * voltage)))
        row = np.asarray(dataset["concentration_profile"].values[k], dtype=float) * concentration.factor
        rows.append(row)
        right.plot(x, row, color=colour, lw=1.8, ls="-" if sign > 0 else "--",
                   label=f"c at {sign * voltage * millivolts.factor:+.4g} {millivolts.symbol}")
    values = np.concatenate(rows)
    if values.min() > 0 and values.max() > 10.0 * values.min():
        right.set_yscale("log")
    right.set_ylabel(f"salt c ({concentration.symbol})")
    right.legend(fontsize="x-small", loc="best", framealpha=0.85)
    axes.set_title(f"shape (walls) and salt along x at ±{voltage * millivolts.factor:.4g} {millivolts.symbol}",
                   fontsize="medium")
