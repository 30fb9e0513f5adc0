"""A fit as one xarray Dataset: the data, the model at the data and on a fine grid, the parameters with their
standard errors, covariance and correlation, the thin-layer fit beside them, and the warnings.

``edl fit`` writes it (``edl_solver.io.fit_file``, HDF5 group "fit") and draws it
(``edl_solver.plot.fit_figure``), so the
file and the figure show the same numbers. Values are SI. Data set ``d`` has its variables under the prefix
``data<d>.``: its independent variables by path (``data0.electrolyte.concentration``), ``data0.measured``,
``data0.uncertainty`` (when given), ``data0.model``, ``data0.residual`` (model - measured),
``data0.thin_layer_model`` and, on the fine grid ``data0.curve``, ``data0.curve.<path>`` and
``data0.curve.model``. The dimension ``parameter`` holds ``value``, ``standard_error``, ``start``,
``covariance`` and ``correlation`` (with ``parameter_j``), and the thin-layer estimate (NaN where it has none).
"""

from __future__ import annotations

import json
import math
from typing import Any

import numpy as np

from edl_solver.fitting.forward import Forward
from edl_solver.fitting.problem import Dataset
from edl_solver.fitting.result import Fit
from edl_solver.inputs.case import Case
from edl_solver.inputs.casefile import case_to_mapping
from edl_solver.inputs.geometry import extent_unit
from edl_solver.inputs.paths import PATH_UNITS
from edl_solver.results.schema import SUMMARY_UNITS

__all__ = ["CURVE_POINTS", "curve_input", "fit_dataset"]

#: Points of the model curve on the fine grid of a data set's independent variable.
CURVE_POINTS = 120


def curve_input(inputs: dict[str, np.ndarray]) -> str | None:
    """The independent variable a data set varies (the curve's and the figure's x), or None where it varies
    none or more than one (the model is then shown at the data points only)."""
    varying = [path for path, values in inputs.items() if values.size > 1 and np.ptp(values) > 0]
    return varying[0] if len(varying) == 1 else None


def is_log(values: np.ndarray) -> bool:
    """A log scale for a positive variable that spans a decade or more (concentrations, as labs plot them)."""
    values = np.asarray(values, dtype=float)
    return bool(values.size and np.all(values > 0) and values.max() / values.min() >= 10.0)


def _grid(values: np.ndarray) -> np.ndarray:
    low, high = float(np.min(values)), float(np.max(values))
    return np.geomspace(low, high, CURVE_POINTS) if is_log(values) else np.linspace(low, high, CURVE_POINTS)


def _curve(case: Case, fit: Fit, one: Any) -> tuple[str | None, np.ndarray, np.ndarray]:
    """(x path, grid, full model on it) of one data set, the other inputs held at their single value."""
    path = curve_input(one.inputs)
    if path is None:
        return None, np.empty(0), np.empty(0)
    grid = _grid(one.inputs[path])
    inputs = {p: (grid if p == path else np.full(grid.size, values[0])) for p, values in one.inputs.items()}
    curve = Dataset(inputs=inputs, quantity=one.quantity, values=np.zeros(grid.size), uncertainty=None)
    theta = np.array([fit.parameters[name] for name in fit.names])
    return path, grid, Forward(case, [curve], fit.names, theta).evaluate(theta)[0]


def fit_dataset(case: Case, fit: Fit, sources: list[str] | None = None) -> Any:
    """The Dataset of ``fit`` (module docstring); ``case`` is the template the fit was given.

    Parameters
    ----------
    case : Case
        The fit's template (its geometry gives the units; the curve is evaluated on it).
    fit : Fit
        What ``edl_solver.fit`` returned.
    sources : list of str, optional
        Where each data set came from (file names), kept as an attribute.

    Returns
    -------
    xarray.Dataset
    """
    import xarray as xr

    names = list(fit.names)
    variables: dict[str, Any] = {}
    for d, one in enumerate(fit.datasets):
        variables.update(_dataset_variables(case, fit, d, one))
    variables.update(_parameter_variables(fit))
    attrs = {"chi2": fit.chi2, "reduced_chi2": fit.reduced_chi2, "dof": fit.dof,
             "absolute_uncertainty": int(fit.absolute_uncertainty), "warnings": json.dumps(list(fit.warnings)),
             "forward_solves": fit.forward_solves, "success": int(fit.success), "message": fit.message,
             "datasets": len(fit.datasets), "case_json": json.dumps(case_to_mapping(case)),
             "thin_layer_formula": fit.thin_layer.formula if fit.thin_layer is not None else "",
             "sources": json.dumps(sources or [])}
    coords = {"parameter": names, "parameter_j": names}
    return xr.Dataset(variables, coords=coords, attrs=attrs)


def _dataset_variables(case: Case, fit: Fit, d: int, one: Any) -> dict[str, Any]:
    """The variables of data set ``d``: inputs, measured, uncertainty, model, residual, thin-layer model, curve."""
    point, unit = f"data{d}.point", extent_unit(SUMMARY_UNITS[one.quantity][0], case.geometry)
    measured = {"quantity": one.quantity, "units": unit}
    out: dict[str, Any] = {}
    for path, values in one.inputs.items():
        out[f"data{d}.{path}"] = ((point,), np.asarray(values, float), {"units": PATH_UNITS[path], "path": path})
    out[f"data{d}.measured"] = ((point,), one.values, measured)
    if one.uncertainty is not None:
        out[f"data{d}.uncertainty"] = ((point,), one.uncertainty, {"units": unit, "meaning": "one standard deviation"})
    out[f"data{d}.model"] = ((point,), one.model, measured)
    out[f"data{d}.residual"] = ((point,), one.residuals, {"units": unit, "meaning": "model - measured"})
    if fit.thin_layer is not None:
        out[f"data{d}.thin_layer_model"] = ((point,), np.asarray(fit.thin_layer.model[d], float), measured)
    path, grid, model = _curve(case, fit, one)
    curve = f"data{d}.curve"
    if path is not None:
        out[f"{curve}.{path}"] = ((curve,), grid, {"units": PATH_UNITS[path], "path": path})
        out[f"{curve}.model"] = ((curve,), model, measured)
    return out


def _parameter_variables(fit: Fit) -> dict[str, Any]:
    """Values, standard errors, covariance, correlation, start and thin-layer estimate of the parameters."""
    names = list(fit.names)
    units = [PATH_UNITS[name] for name in names]
    thin = fit.thin_layer
    out: dict[str, Any] = {
        "value": (("parameter",), [fit.parameters[n] for n in names], {"units": json.dumps(units)}),
        "standard_error": (("parameter",), [fit.standard_errors[n] for n in names], {"units": json.dumps(units)}),
        "start": (("parameter",), [fit.start.get(n, math.nan) for n in names], {}),
        "covariance": (("parameter", "parameter_j"), np.asarray(fit.covariance, float), {}),
        "correlation": (("parameter", "parameter_j"), np.asarray(fit.correlation, float), {}),
        "thin_layer_value": (("parameter",), [thin.parameters.get(n, math.nan) if thin else math.nan
                                              for n in names], {}),
        "thin_layer_standard_error": (("parameter",), [thin.standard_errors.get(n, math.nan) if thin else math.nan
                                                       for n in names], {}),
        "thin_layer_relative_difference": (("parameter",), [thin.relative_difference.get(n, math.nan) if thin
                                                            else math.nan for n in names],
                                           {"meaning": "(thin-layer - full) / full"}),
    }
    if fit.intervals is not None:
        out["interval_low"] = (("parameter",), [fit.intervals[n][0] for n in names], {"meaning": "profile, 1 sigma"})
        out["interval_high"] = (("parameter",), [fit.intervals[n][1] for n in names], {"meaning": "profile, 1 sigma"})
    return out
