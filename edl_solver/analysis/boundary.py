"""The validity boundary of the thin-layer slip model: the value of an input at which its error equals a
tolerance, found by root-finding, not read off a grid.

``scipy.optimize.brentq`` on the logarithm of the axis value, each function value a full solve, to 1e-10
relative in the value; the solves use a tightened accuracy so that the boundary is good to 1e-6 relative.
The axes and the errors are those of a validity map (``edl_solver.analysis.map_axes``,
``edl_solver.analysis.thin_layer_errors``).
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping, Sequence
from dataclasses import replace
from typing import Any

import numpy as np

from edl_solver.analysis.map_axes import (
    PSEUDO_AXES,
    SIZE_PATHS,
    MapAxis,
    axis_units,
    check_base,
    check_pair,
    checked_tolerance,
    path_units,
    resolve_axis,
)
from edl_solver.analysis.thin_layer_errors import QUANTITY_NAMES, Quantity, checked_quantity, thin_layer_error
from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.domain import SIZE_RANGE

__all__ = ["boundary", "boundary_curve"]

#: The converged range of the solver, in kappa h (README); the default bracket of a boundary search.
_KAPPA_H_RANGE = (0.01, 1000.0)
#: brentq tolerance on ln(axis value): the root to 1e-10 relative.
_LOG_XTOL = 1e-10
#: Solver accuracy inside the root-finding, per unit tolerance. The boundary's relative error is about
#: (1 + tau) delta / (tau |d ln|err| / d ln x|); the error falls at least like x^-1/2 along the size and
#: concentration axes, so delta = 1e-7 tau keeps the boundary within 1e-6 relative.
_ACCURACY_PER_TOLERANCE = 1e-7
_SMALLEST_ACCURACY = 1e-13
#: Axes whose values must be positive.
_POSITIVE_AXES = ("kappa_h", "aspect_ratio", *SIZE_PATHS, "geometry.width", "electrolyte.concentration")


class _NoBoundaryError(InputError):
    """The bracket holds no boundary (no sign change, or the error is undefined there)."""


def _case_at(table: Mapping[str, Any], path: str, value: float) -> Case:
    from edl_solver.inputs.paths import case_at, make_axes

    return case_at(table, make_axes({path: [value]}), (0,))


def _default_bracket(base: Case, axis: str) -> tuple[float, float]:
    """The solver's kappa h range, in the units of ``axis``, for the axes along which it is known."""
    low, high = _KAPPA_H_RANGE
    geometry = base.geometry
    if axis in ("kappa_h", geometry.size_path):
        # size / half_size is exactly 2 (slit) or 1 (capillary): the size at kappa h is kappa h lambda_D that much;
        # the sizes stay inside the ones a case takes (kappa h = 0.01 is below 0.1 nm above a few mM)
        scale = base.debye_length * (geometry.size / geometry.half_size)
        low, high = max(low, SIZE_RANGE[0] / scale), min(high, SIZE_RANGE[1] / scale)
        return (low, high) if axis == "kappa_h" else (low * scale, high * scale)
    if axis in SIZE_PATHS:
        raise InputError(f"axis: {axis!r} is not the size of a {geometry.kind}, expected {geometry.size_path!r}")
    if axis == "electrolyte.concentration":
        # the Debye length goes as c^-1/2 when every ion scales with the first
        kappa_h = geometry.half_size / base.debye_length
        first = base.electrolyte.ions[0].concentration
        return first * (low / kappa_h) ** 2, first * (high / kappa_h) ** 2
    raise InputError(f"bracket: none given for {axis!r}, expected (low, high) values between which "
                     f"|error| crosses the tolerance (a default exists only for kappa_h, sizes and concentration)")


def _probe(base: Case, axis: str) -> float:
    """A valid value of a real axis, to check the path before anything else."""
    if axis in SIZE_PATHS or axis == "geometry.width":
        return base.geometry.half_size
    return 1.0


def _probe_axis(base: Case, axis: str) -> MapAxis:
    """Check ``axis`` against the base case before anything is solved."""
    return resolve_axis(base, axis, [1.0] if axis in PSEUDO_AXES else [_probe(base, axis)], "axis")


def _bracket(base: Case, axis: str, bracket: object) -> tuple[float, float]:
    from edl_solver.inputs.paths import PATH_UNITS
    from edl_solver.inputs.units import to_si

    if bracket is None:
        return _default_bracket(base, axis)
    if isinstance(bracket, (str, bytes)) or not isinstance(bracket, Sequence) or len(bracket) != 2:
        raise InputError(f"bracket: {bracket!r} is not a pair, expected (low, high) values of {axis}")
    unit = "dimensionless" if axis in PSEUDO_AXES else PATH_UNITS.get(axis, "dimensionless")
    low, high = sorted(to_si(v, unit, "bracket") for v in bracket)
    if low == high:
        raise InputError(f"bracket: {bracket!r} has equal ends, expected two different values of {axis}")
    if axis in _POSITIVE_AXES and low <= 0.0:
        raise InputError(f"bracket: {bracket!r} has a value <= 0, expected positive values of {axis}")
    return low, high


def _check_ends(ends: tuple[float, float], low: float, high: float, axis: str, quantity: str, tau: float) -> None:
    """The error must be defined at both ends of the bracket, and |error| − tolerance change sign."""
    name = QUANTITY_NAMES[quantity]
    if not all(math.isfinite(e) for e in ends):
        raise _NoBoundaryError(f"bracket: the thin-layer {name} error is undefined at {axis} = {low:.6g} or "
                               f"{high:.6g} (the full value vanishes), expected a bracket where it is defined")
    if (abs(ends[0]) - tau) * (abs(ends[1]) - tau) > 0.0:
        side = "above" if abs(ends[0]) > tau else "below"
        raise _NoBoundaryError(f"bracket: |thin-layer {name} error| is {abs(ends[0]):.3g} at {axis} = {low:.6g} "
                               f"and {abs(ends[1]):.3g} at {high:.6g}, both {side} the tolerance {tau:g}; "
                               "expected a bracket that contains the boundary")


def _root(error: Callable[[float], float], low: float, high: float, tau: float) -> float:
    """The root of |error(v)| − tau in [low, high] by brentq: in ln|v| when the bracket has one sign (so that
    the relative accuracy is uniform), else in v."""
    from scipy.optimize import brentq

    if low > 0.0 or high < 0.0:
        sign = math.copysign(1.0, low)
        root = brentq(lambda t: abs(error(sign * math.exp(t))) - tau, math.log(abs(low)), math.log(abs(high)),
                      xtol=_LOG_XTOL)
        return sign * math.exp(root)
    return brentq(lambda v: abs(error(v)) - tau, low, high, xtol=_LOG_XTOL * max(abs(low), abs(high)))


def boundary(base: Case, axis: str, tolerance: float | str = 0.05, quantity: Quantity = "flow_rate",
             bracket: tuple[float | str, float | str] | None = None) -> float:
    """The value of one input at which the thin-layer error equals the tolerance, by root-finding.

    Solves ``|e(v)| = tolerance`` for v, where e = (thin − full)/full of the EO flow rate or of the
    current per field, with ``scipy.optimize.brentq`` on ln v (on v when the bracket spans zero); each
    e(v) is a full solve at accuracy ``min(base accuracy, 1e-7 · tolerance)``, so that the boundary
    is good to about 1e-6 relative. For the Debye–Hückel slit, e = 1/(1 − tanh(κh)/κh) − 1 (Burgreen &
    Nakache 1964), and the boundary is the root of tanh(κh)/κh = τ/(1 + τ).

    Parameters
    ----------
    base : Case
    axis : str
        A sweepable input path, "kappa_h" or "zeta_kT" (see ``edl_solver.analysis.map_axes``).
    tolerance : float or str
        A fraction, 0.05 or "5 %".
    quantity : {"flow_rate", "current"}
    bracket : (low, high), optional
        Values of ``axis`` (SI or strings with units; plain numbers for a pseudo-axis) between which
        the boundary lies. By default the solver's range κh = 0.01 … 1000 for the size axes and the
        concentration; required for any other axis.

    Returns
    -------
    float
        The boundary value, in the axis' SI unit (dimensionless for a pseudo-axis). With several
        crossings in the bracket, one of them.

    Raises
    ------
    InputError
        A bad axis, tolerance or bracket; a bracket over which |e| − tolerance does not change sign
        or e is undefined (the message gives |e| at both ends).
    ConvergenceError
        A solve inside the search failed.
    """
    from edl_solver.inputs.casefile import case_to_mapping
    from edl_solver.pipeline import solve

    check_base(base)
    tau = checked_tolerance(tolerance)
    quantity = checked_quantity(quantity)
    _probe_axis(base, axis)
    low, high = _bracket(base, axis, bracket)
    accuracy = max(min(base.numerics.accuracy, _ACCURACY_PER_TOLERANCE * tau), _SMALLEST_ACCURACY)
    tight = replace(base, numerics=replace(base.numerics, accuracy=accuracy))
    table = case_to_mapping(tight)

    def error(value: float) -> float:
        resolved = resolve_axis(tight, axis, [value], "axis")
        case = _case_at(table, resolved.path, float(resolved.inputs[0]))
        return thin_layer_error(case, solve(case).summary, quantity)

    ends = (error(low), error(high))
    _check_ends(ends, low, high, axis, quantity, tau)
    for end, value in zip(ends, (low, high)):
        if abs(end) == tau:
            return value
    return _root(error, low, high, tau)


def boundary_curve(base: Case, axis: str, other_axis: str, other_values: Sequence[float | str],
                   tolerance: float | str = 0.05, quantity: Quantity = "flow_rate",
                   bracket: tuple[float | str, float | str] | None = None) -> Any:
    """The boundary along ``axis`` (see :func:`boundary`) for each value of a second input.

    This is the "valid on this side of the line" curve of a validity map: for every value of
    ``other_axis`` the base case is changed accordingly and the boundary along ``axis`` root-found.

    Parameters
    ----------
    base : Case
    axis, other_axis : str
        Sweepable input paths or pseudo-axes ("kappa_h", "zeta_kT"); they must set different inputs.
    other_values : sequence
        Values of ``other_axis`` (SI or strings with units; plain numbers for a pseudo-axis).
    tolerance, quantity, bracket
        As for :func:`boundary`; the bracket is the same for every value.

    Returns
    -------
    xarray.DataArray
        Named "boundary", on the dimension ``other_axis`` (coordinate with ``units``; for a pseudo-axis
        the input it sets as a second coordinate), in the SI unit of ``axis`` (attribute ``units``;
        "1" for a pseudo-axis). NaN where the bracket holds no boundary or a solve failed (the
        attribute ``missing`` counts them). Attributes ``axis``, ``tolerance``, ``quantity``,
        ``valid_side`` ("above" when the model is within the tolerance at larger values of ``axis``,
        "below" otherwise, "" if unknown).

    Raises
    ------
    InputError
        Bad axes, values, tolerance, quantity or bracket.
    """
    from edl_solver.inputs.casefile import case_to_mapping

    check_base(base)
    tau = checked_tolerance(tolerance)
    quantity = checked_quantity(quantity)
    probe = _probe_axis(base, axis)
    other = resolve_axis(base, other_axis, other_values, "other_axis")
    check_pair(probe, other, ("axis", "other_axis"))
    if bracket is not None:
        _bracket(base, axis, bracket)  # a bad bracket is an input error once, not a NaN per point
    table = case_to_mapping(base)
    found = np.full(other.values.size, np.nan)
    side = ""
    for i, value in enumerate(other.inputs):
        case = _case_at(table, other.path, float(value))
        try:
            found[i] = boundary(case, axis, tau, quantity, bracket)  # type: ignore[arg-type]
        except (_NoBoundaryError, ConvergenceError):
            continue
        if not side:
            side = _valid_side(case, axis, found[i], quantity, tau, bracket)
    return _curve(found, probe, other, quantity, tau, side)


def _curve(found: np.ndarray, probe: MapAxis, other: MapAxis, quantity: str, tau: float, side: str) -> Any:
    """The boundary values as the DataArray of :func:`boundary_curve`."""
    import xarray as xr

    coords: dict[str, Any] = {other.name: (other.name, other.values, {
        "units": axis_units(other), "long_name": PSEUDO_AXES.get(other.name, f"swept input {other.name}")})}
    if other.pseudo:
        coords[other.path] = (other.name, other.inputs, {"units": path_units(other.path)})
    units = "1" if probe.pseudo else axis_units(probe)
    return xr.DataArray(found, dims=(other.name,), coords=coords, name="boundary", attrs={
        "units": units,
        "long_name": f"value of {probe.name} where |thin-layer {QUANTITY_NAMES[quantity]} error| = {tau:g}",
        "axis": probe.name, "tolerance": tau, "quantity": quantity,
        "valid_side": side,
        "missing": int(np.isnan(found).sum()),
    })


def _valid_side(case: Case, axis: str, root: float, quantity: str, tau: float, bracket: object) -> str:
    """"above" if the thin-layer model holds at values of ``axis`` just above ``root``, else "below";
    one solve 1 % of the way from the root to the top of the bracket ("" if that solve fails)."""
    from edl_solver.inputs.casefile import case_to_mapping
    from edl_solver.pipeline import solve

    high = _bracket(case, axis, bracket)[1]
    value = root + 0.01 * (high - root)
    try:
        resolved = resolve_axis(case, axis, [value], "axis")
        probe = _case_at(case_to_mapping(case), resolved.path, float(resolved.inputs[0]))
        error = thin_layer_error(probe, solve(probe).summary, quantity)
    except (InputError, ConvergenceError):
        return ""
    return "above" if abs(error) < tau else "below"
