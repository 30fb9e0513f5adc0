"""The figure of a fit: per data set, the data with error bars against the fitted model's curve and the thin-layer
fit, and below them the residuals (in standard deviations where the data gave them); log x for a variable that
spans a decade or more (concentrations).

It draws the fit's Dataset (``edl_solver.analysis.fit_record``), so it can be drawn again from a fit file.
"""

from __future__ import annotations

import json
import os
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.plot.shared import new_figure, prefix, save_png
from edl_solver.report.fit_text import parameter_unit, three

__all__ = ["fit_figure"]

_DATA, _FULL, _THIN = "black", "tab:blue", "tab:orange"


def fit_figure(data: Any, path: str | os.PathLike[str] | None = None) -> Any:
    """Draw a fit; write it as a PNG to ``path`` when given.

    Parameters
    ----------
    data : xarray.Dataset
        The fit (``edl_solver.analysis.fit_record.fit_dataset``, or read from a fit file).
    path : str or PathLike, optional

    Returns
    -------
    matplotlib.figure.Figure, or the Path written when ``path`` is given.
    """
    count = int(data.attrs["datasets"])
    figure = new_figure(5.6 * count, 5.4)
    grid = figure.add_gridspec(2, count, height_ratios=(3, 1))
    for d in range(count):
        top = figure.add_subplot(grid[0, d])
        bottom = figure.add_subplot(grid[1, d], sharex=top)
        _panel_pair(data, d, top, bottom)
    figure.suptitle(_title(data), fontsize=10)
    return save_png(figure, path) if path is not None else figure


def _title(data: Any) -> str:
    """The fitted values, full model and thin-layer, in lab units."""
    parts = []
    for k, name in enumerate(data["parameter"].values.tolist()):
        factor, unit = parameter_unit(name)
        value, error = float(data["value"].values[k]), float(data["standard_error"].values[k])
        parts.append(f"{name} = {three(value * factor)} ± {three(error * factor)} {unit}".rstrip())
    chi = f"reduced χ² = {three(float(data.attrs['reduced_chi2']))}"
    return "full-model fit: " + ", ".join(parts) + f"\n{chi}, {int(data.attrs['dof'])} degrees of freedom"


#: Axis words of the inputs a measurement varies most often (the path itself otherwise).
_INPUT_WORDS = {"electrolyte.concentration": "bulk concentration", "electrolyte.pH": "pH",
                "geometry.height": "channel height H", "geometry.radius": "capillary radius a",
                "solvent.temperature": "temperature", "pressure_gradient": "pressure gradient dp/dx",
                "field": "electric field E"}


def _quantity_words(key: str) -> str:
    """The summary key's meaning in words (its long name up to the first comma), or the key."""
    from edl_solver.results.schema import SUMMARY_UNITS

    entry = SUMMARY_UNITS.get(key)
    return entry[1].split(",")[0].split(" (")[0] if entry else key


def _x_of(data: Any, d: int) -> tuple[str | None, np.ndarray | None]:
    """The x path of data set ``d`` (the curve's variable, else its first input) and its data values."""
    curve = [name for name in data.variables if name.startswith(f"data{d}.curve.") and name != f"data{d}.curve.model"]
    if curve:
        path = str(data[curve[0]].attrs["path"])
        return path, data[f"data{d}.{path}"].values
    inputs = [name for name in data.variables if name.startswith(f"data{d}.") and "path" in data[name].attrs]
    if not inputs:
        return None, None
    return str(data[inputs[0]].attrs["path"]), data[inputs[0]].values


def _panel_pair(data: Any, d: int, top: Any, bottom: Any) -> None:
    """Data against the model (top) and the residuals (bottom) of data set ``d``."""
    measured = data[f"data{d}.measured"]
    quantity, unit = measured.attrs["quantity"], measured.attrs["units"]
    path, x = _x_of(data, d)
    values = measured.values
    if x is None:  # no independent variable: the points in order
        x, path = np.arange(values.size, dtype=float), None
    x_factor, x_unit = parameter_unit(path) if path else (1.0, "")
    scale, shown = prefix(float(np.nanmax(np.abs(values))), unit)
    order = np.argsort(x)
    sigma = data[f"data{d}.uncertainty"].values if f"data{d}.uncertainty" in data.variables else None
    top.errorbar(x * x_factor, values * scale, yerr=None if sigma is None else sigma * scale, fmt="o", ms=4,
                 color=_DATA, capsize=2, label="data ± 1 standard deviation" if sigma is not None else "data",
                 zorder=3)
    if f"data{d}.curve.model" in data.variables:
        top.plot(data[f"data{d}.curve.{path}"].values * x_factor, data[f"data{d}.curve.model"].values * scale,
                 color=_FULL, label="full model (fit)")
    else:
        top.plot(x[order] * x_factor, data[f"data{d}.model"].values[order] * scale, "s", color=_FULL, ms=4,
                 mfc="none", label="full model (fit), at the data")
    if f"data{d}.thin_layer_model" in data.variables:
        top.plot(x[order] * x_factor, data[f"data{d}.thin_layer_model"].values[order] * scale, "--", color=_THIN,
                 label=_thin_label(data))
    residual = -data[f"data{d}.residual"].values  # data - model: above 0 where the data lie above the model
    if sigma is not None:
        bottom.plot(x * x_factor, residual / sigma, "o", color=_DATA, ms=4)
        bottom.set_ylabel("(data − model) / σ")
    else:
        bottom.plot(x * x_factor, residual * scale, "o", color=_DATA, ms=4)
        bottom.set_ylabel(f"data − model ({shown})")
    bottom.axhline(0.0, color=_FULL, lw=1)
    if path is not None and x.size and np.all(x > 0) and x.max() / x.min() >= 10.0:
        top.set_xscale("log")
    if np.all(values > 0) and values.max() / values.min() >= 10.0:  # a plateau and a rise both show
        top.set_yscale("log")
    source = json.loads(data.attrs.get("sources", "[]"))
    top.set_title(f"{quantity}" + (f" ({Path(source[d]).name})" if d < len(source) else ""), fontsize=9)
    top.set_ylabel(f"{_quantity_words(quantity)} ({shown})")
    top.legend(fontsize=8, frameon=False)
    top.tick_params(labelbottom=False)
    words = _INPUT_WORDS.get(path, path) if path else None
    bottom.set_xlabel(f"{words} ({x_unit})" if words and x_unit else (words or "point"))
    for axes in (top, bottom):
        axes.grid(True, which="major", alpha=0.3)


def _thin_label(data: Any) -> str:
    """The thin-layer fit's legend: its estimate and how far it lies from the full model's."""
    values = data["thin_layer_value"].values
    k = int(np.nonzero(np.isfinite(values))[0][0]) if np.any(np.isfinite(values)) else None
    if k is None:
        return "thin-layer fit"
    name = str(data["parameter"].values[k])
    factor, unit = parameter_unit(name)
    difference = float(data["thin_layer_relative_difference"].values[k])
    return (f"thin-layer fit: {three(float(values[k]) * factor)} {unit}"
            + (f" ({three(100 * difference)} % from the full fit)" if np.isfinite(difference) else ""))
