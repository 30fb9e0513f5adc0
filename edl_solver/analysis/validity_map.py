"""Validity maps of the thin-layer slip model: its error over a plane of two inputs, and the boundary
where that error equals a tolerance.

A map is a sweep (``edl_solver.sweeping.run.sweep``) over two axes. Besides the sweepable inputs (dotted paths
such as "geometry.height", "electrolyte.concentration", "wall.zeta") two dimensionless pseudo-axes are
understood and translated, against the *base* case, into real inputs before the sweep:

- ``"kappa_h"``: κh, the half-height (slit) or radius (capillary) over the Debye length of the base
  electrolyte: ``geometry.height = 2 κh λ_D`` or ``geometry.radius = κh λ_D``;
- ``"zeta_kT"``: ζ in units of the thermal voltage of the base solvent: ``wall.zeta = value · kT/e``
  (every wall).

Two errors of the thin-layer model are mapped, both as (thin − full)/full, unit "1":

- the EO flow rate (``thin_layer_flow_rate_error`` of every solve): plug flow at the
  Helmholtz–Smoluchowski slip velocity −εζE/η (Smoluchowski 1903), with the Grahame ζ of the bulk
  for a wall of fixed charge;
- the current per unit field at zero pressure gradient (``thin_layer_current_error``). The thin-layer
  model's current is bulk conduction alone, ``I/E = K A`` with the bulk conductivity from the
  Nernst–Einstein relation, ``K = (F²/RT) Σ z_i² D_i c_i``, and A the section area (H per unit width,
  or πa²). In the thin-layer picture the liquid outside the double layers is neutral at the bulk
  composition, so the plug flow carries no net charge; what the model leaves out — conduction by the
  excess counter-ions in the layers (surface conduction) and their convection by the EO flow — is
  exactly what this error measures (common practice: the everyday model of a channel's conductance).

The *boundary* is found by root-finding, not read off a grid: ``scipy.optimize.brentq`` on the
logarithm of the axis value, each function value a full solve, to 1e-10 relative in the value; the
solves use a tightened accuracy so that the boundary is good to 1e-6 relative.
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any, Literal

import numpy as np

from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Capillary
from edl_solver.io.files import atomic_output, checked_output_path
from edl_solver.model.bulk import bulk_conductivity

__all__ = [
    "PSEUDO_AXES",
    "QUANTITIES",
    "axis_display",
    "boundary",
    "boundary_curve",
    "check_axes",
    "map_figure",
    "thin_layer_current_per_field",
    "validity_map",
]

Quantity = Literal["flow_rate", "current"]
#: The quantities whose thin-layer error is mapped, and the dataset variable holding each error.
QUANTITIES: dict[str, str] = {"flow_rate": "thin_layer_flow_rate_error", "current": "thin_layer_current_error"}
_QUANTITY_NAMES = {"flow_rate": "EO flow rate", "current": "current per field"}

#: Dimensionless axes translated into case inputs against the base case (see the module docstring).
PSEUDO_AXES: dict[str, str] = {
    "kappa_h": "half-height (slit) or radius (capillary) over the Debye length of the base electrolyte",
    "zeta_kT": "wall potential zeta over the thermal voltage kT/e of the base solvent",
}
#: Inputs that change the Debye length (so they cannot share a map with "kappa_h", which is set
#: against the base case's Debye length).
_DEBYE_PATHS = ("electrolyte.concentration", "solvent.temperature", "solvent.relative_permittivity")
#: Axes along which the thin-layer error falls steadily: the boundary of a map is found along the
#: first of these that the map has (size, then concentration), else along its y axis.
_BOUNDARY_PREFERENCE = ("kappa_h", "geometry.height", "geometry.radius", "electrolyte.concentration")
#: The converged range of the solver, in kappa h (README); the default bracket of a boundary search.
_KAPPA_H_RANGE = (0.01, 1000.0)
#: brentq tolerance on ln(axis value): the root to 1e-10 relative.
_LOG_XTOL = 1e-10
#: Solver accuracy inside the root-finding, per unit tolerance. The boundary's relative error is about
#: (1 + tau) delta / (tau |d ln|err| / d ln x|); the error falls at least like x^-1/2 along the size and
#: concentration axes, so delta = 1e-7 tau keeps the boundary within 1e-6 relative.
_ACCURACY_PER_TOLERANCE = 1e-7
_SMALLEST_ACCURACY = 1e-13


class _NoBoundaryError(InputError):
    """The bracket holds no boundary (no sign change, or the error is undefined there)."""


# ----------------------------------------------------------------------------------------------
# Axes


@dataclass(frozen=True)
class _MapAxis:
    """One axis as given (``name``, ``values``) and the case input it sets (``path``, ``inputs``, SI)."""

    name: str
    path: str
    values: np.ndarray
    inputs: np.ndarray

    @property
    def pseudo(self) -> bool:
        return self.name in PSEUDO_AXES


def _check_base(base: object, field: str = "base") -> Case:
    if not isinstance(base, Case):
        raise InputError(f"{field}: {type(base).__name__} is not a Case, expected edl_solver.Case(...)")
    return base


def _size_path(base: Case) -> str:
    return "geometry.radius" if isinstance(base.geometry, Capillary) else "geometry.height"


def _axis_spec(axis: object, field: str) -> tuple[str, Any]:
    """``(path, values)`` from an axis given as a pair."""
    if isinstance(axis, (str, bytes)) or not isinstance(axis, Sequence) or len(axis) != 2 \
            or not isinstance(axis[0], str):
        raise InputError(f"{field}: {axis!r} is not an axis, expected (path, values), e.g. "
                         "('geometry.height', ['5 nm', '50 nm', '500 nm'])")
    return axis[0], axis[1]


def _resolve(base: Case, name: object, values: Any, field: str) -> _MapAxis:
    """Check an axis and translate a pseudo-axis into the case input it sets."""
    from edl_solver.inputs.paths import WORD_PATHS, make_axes
    from edl_solver.inputs.units import to_si

    if not isinstance(name, str):
        raise InputError(f"{field}: {name!r} is not an axis name, expected an input path such as "
                         f"'geometry.height' or one of {', '.join(PSEUDO_AXES)}")
    if name in PSEUDO_AXES:
        if isinstance(values, (str, bytes)) or not isinstance(values, (Sequence, np.ndarray)) or len(values) == 0:
            raise InputError(f"{field}.{name}: {values!r} is not a list of values, expected a non-empty sequence")
        numbers = np.array([to_si(v, "dimensionless", f"{field}.{name}") for v in values])
        if name == "kappa_h":
            if not np.all(numbers > 0.0):
                raise InputError(f"{field}.kappa_h: {values!r} has a value <= 0, expected positive kappa h")
            scale = base.debye_length * (1.0 if isinstance(base.geometry, Capillary) else 2.0)
            return _MapAxis(name, _size_path(base), numbers, numbers * scale)
        return _MapAxis(name, "wall.zeta", numbers, numbers * base.solvent.thermal_voltage)
    if name in WORD_PATHS:
        raise InputError(f"{field}: {name!r} takes words, expected a numeric input for a map axis")
    try:
        axis = make_axes({name: values})[0]
    except InputError as exc:
        pseudo = ", ".join(repr(p) for p in PSEUDO_AXES)
        raise InputError(f"{field}: {exc} (or the dimensionless axes {pseudo})") from None
    numbers = np.array(axis.values[0], dtype=float)
    return _MapAxis(name, name, numbers, numbers)


def _check_pair(first: _MapAxis, second: _MapAxis, fields: tuple[str, str]) -> None:
    """Two axes must set different inputs, and a pseudo-axis must not be undone by the other axis."""
    a, b = first, second
    # Wall paths clash when they set the same wall: "wall.zeta" and "wall.charge_density" set every wall,
    # "wall.top.zeta" and "wall.top.charge_density" the same one (a wall has one condition).
    walls = a.path.startswith("wall.") and b.path.startswith("wall.")
    same_wall = walls and bool({a.path, b.path} & {"wall.zeta", "wall.charge_density"}
                               or a.path.rsplit(".", 1)[0] == b.path.rsplit(".", 1)[0])
    if a.path == b.path or same_wall:
        raise InputError(f"{fields[1]}: {b.name!r} sets the same input as {fields[0]} {a.name!r} "
                         f"({b.path}), expected two different inputs")
    for one, other, field in ((a, b, fields[1]), (b, a, fields[0])):
        if one.name == "kappa_h" and other.path in _DEBYE_PATHS:
            raise InputError(f"{field}: {other.name!r} changes the Debye length, which 'kappa_h' is measured "
                             f"against, expected {one.path!r} with {other.name!r} instead of kappa_h")
        if one.name == "zeta_kT" and other.path == "solvent.temperature":
            raise InputError(f"{field}: {other.name!r} changes kT/e, which 'zeta_kT' is measured against, "
                             "expected 'wall.zeta' with a temperature axis")


def check_axes(base: Case, x_axis: tuple[str, Any], y_axis: tuple[str, Any]) -> None:
    """Check the two axes of a map against the base case without solving anything.

    Raises
    ------
    InputError
        An unknown path, bad values (fewer than two, not monotonic, wrong units), two axes setting the
        same input, or a pseudo-axis combined with an axis that changes its reference scale.
    """
    _map_axes(_check_base(base), x_axis, y_axis)


def _map_axes(base: Case, x_axis: Any, y_axis: Any) -> tuple[_MapAxis, _MapAxis]:
    axes = []
    for field, given in (("x_axis", x_axis), ("y_axis", y_axis)):
        name, values = _axis_spec(given, field)
        axis = _resolve(base, name, values, field)
        steps = np.diff(axis.values)
        if axis.values.size < 2 or not (np.all(steps > 0) or np.all(steps < 0)):
            raise InputError(f"{field}.{name}: {len(axis.values)} values that are not strictly monotonic, "
                             "expected at least two increasing (or decreasing) values")
        axes.append(axis)
    _check_pair(axes[0], axes[1], ("x_axis", "y_axis"))
    return axes[0], axes[1]


def _tolerance(value: object, field: str = "tolerance") -> float:
    from edl_solver.inputs.units import to_si

    number = to_si(value, "dimensionless", field)
    if not 0.0 < number < 1.0:
        raise InputError(f"{field}: {value!r} is out of range, expected a fraction between 0 and 1 (e.g. "
                         "0.05 or '5 %')")
    return number


def _tolerances(values: object) -> tuple[float, ...]:
    if isinstance(values, (str, bytes)) or not isinstance(values, (Sequence, np.ndarray)) or len(values) == 0:
        raise InputError(f"tolerances: {values!r} is not a list of fractions, expected e.g. (0.01, 0.05, 0.10)")
    return tuple(sorted({_tolerance(v, "tolerances") for v in values}))


def _quantity(value: object) -> str:
    if value not in QUANTITIES:
        raise InputError(f"quantity: {value!r} is not a mapped quantity, expected one of "
                         f"{', '.join(repr(q) for q in QUANTITIES)}")
    return str(value)


# ----------------------------------------------------------------------------------------------
# The thin-layer current


def thin_layer_current_per_field(case: Case) -> float:
    """Current per unit field of the thin-layer model: bulk conduction over the whole section.

    ``I/E = K A`` with ``K = (F²/RT) Σ z_i² D_i c_i = (F/(kT/e)) Σ z_i² D_i c_i`` (Nernst–Einstein;
    Kohlrausch's independent migration at infinite dilution) and A = H per unit width (slit) or πa²
    (capillary). The outer liquid of the thin-layer picture is neutral, so its plug flow carries no
    current (common practice).

    Parameters
    ----------
    case : Case

    Returns
    -------
    float
        S per unit width (slit, "S") or S·m (capillary).
    """
    return bulk_conductivity(case) * case.geometry.area


def _thin_layer_error(case: Case, summary: Mapping[str, Any], quantity: str) -> float:
    if quantity == "flow_rate":
        return float(summary["thin_layer_flow_rate_error"])
    full = float(summary["current_per_field"])
    return (thin_layer_current_per_field(case) - full) / full if full != 0.0 else math.nan


# ----------------------------------------------------------------------------------------------
# The map


def validity_map(base: Case, x_axis: tuple[str, Any], y_axis: tuple[str, Any], *,
                 tolerances: Sequence[float | str] = (0.01, 0.05, 0.10),
                 path: str | os.PathLike[str] | None = None, boundary_tolerance: float | str | None = None,
                 **sweep_options: Any) -> Any:
    """Solve every case of a plane of two inputs and map the thin-layer model's errors.

    Parameters
    ----------
    base : Case
        The case every point starts from.
    x_axis, y_axis : (str, sequence)
        ``(path, values)``: a sweepable input path ("geometry.height", "electrolyte.concentration",
        "wall.zeta", ...; values SI or strings with units) or a pseudo-axis "kappa_h" or "zeta_kT"
        (dimensionless values; see the module docstring). At least two strictly monotonic values each.
    tolerances : sequence of float or str
        Fractions (0.05 or "5 %") at which the figure draws contour lines; stored as an attribute.
    path : str or Path, optional
        netCDF-4 file for the map, written atomically. The sweep streams to ``<path>.sweep`` meanwhile
        (``resume=True`` finishes an interrupted one); it is removed once the map is written.
    boundary_tolerance : float or str, optional
        Also find the boundary where |EO flow-rate error| equals this tolerance, by root-finding along
        the map's size axis ("kappa_h", "geometry.height" or "geometry.radius"), else its concentration
        axis, else its y axis, for each value of the other axis, within the map's range (NaN where the
        boundary lies outside it); stored as the variable ``boundary``.
    **sweep_options
        ``workers``, ``dask``, ``rows_per_task``, ``progress``, ``resume`` of ``sweeps.sweep``.

    Returns
    -------
    xarray.Dataset
        Dimensions (y, x), named after the axes; a pseudo-axis is the dimension coordinate and the input
        it sets is a coordinate along it (the axis "kappa_h" takes the place of the summary variable of
        that name, which holds the same values). Every summary key of the sweep, plus
        ``thin_layer_current_per_field`` (S or S·m) and ``thin_layer_current_error`` ((thin − full)/full,
        "1"), ``status`` per case and, when asked, ``boundary``. Attributes: ``x_axis``, ``y_axis``,
        ``tolerances``, ``case_json`` (the base case), ``title``.

    Raises
    ------
    InputError
        Bad axes, tolerances, options or output path (before anything is solved or written).
    """
    from edl_solver.sweeping.run import sweep

    _check_base(base)
    x, y = _map_axes(base, x_axis, y_axis)
    levels = _tolerances(tolerances)
    overlay = None if boundary_tolerance is None else _tolerance(boundary_tolerance, "boundary_tolerance")
    if "zipped" in sweep_options or "axes" in sweep_options:
        raise InputError("sweep_options: a map has exactly two independent axes, expected no 'zipped' or 'axes'")
    target = checked_output_path(path) if path is not None else None
    raw = target.with_name(target.name + ".sweep") if target is not None else None
    data = sweep(base, {y.path: list(y.inputs), x.path: list(x.inputs)}, path=raw, **sweep_options)
    if raw is not None:  # a very large sweep comes back lazily from its file, which is removed below
        data.load().close()
    data = _map_dataset(data, base, x, y, levels)
    if overlay is not None:
        along, other = (x, y) if _boundary_along(x, y) is x else (y, x)
        curve = boundary_curve(base, along.name, other.name, other.values, overlay,
                               bracket=(float(along.values.min()), float(along.values.max())))
        data["boundary"] = curve.variable
        data["boundary"].attrs.update(curve.attrs)
    if target is not None:
        _write(data, target)
        raw.unlink(missing_ok=True)
    return data


def _boundary_along(x: _MapAxis, y: _MapAxis) -> _MapAxis:
    for name in _BOUNDARY_PREFERENCE:
        for axis in (x, y):
            if axis.name == name:
                return axis
    return y


def _path_units(path: str) -> str:
    from edl_solver.inputs.paths import PATH_UNITS

    return PATH_UNITS.get(path, "1")


def _axis_units(axis: _MapAxis) -> str:
    return "1" if axis.pseudo else _path_units(axis.path)


def _map_dataset(data: Any, base: Case, x: _MapAxis, y: _MapAxis, tolerances: tuple[float, ...]) -> Any:
    """Rename pseudo-axis dimensions, add the current errors and the map's attributes."""
    from edl_solver import __version__
    from edl_solver.inputs.casefile import case_to_mapping
    from edl_solver.results.schema import summary_unit

    for axis in (x, y):
        if axis.pseudo:
            data = data.assign_coords({axis.name: (axis.path, axis.values, {
                "units": "1", "long_name": PSEUDO_AXES[axis.name]})}).swap_dims({axis.path: axis.name})
    thin = _thin_layer_currents(base, x, y)
    full = data["current_per_field"].values
    converged = data["status"].values == 0
    with np.errstate(divide="ignore", invalid="ignore"):
        error = np.where(converged & (full != 0.0), (thin - full) / full, np.nan)
    dims = (y.name, x.name)
    data["thin_layer_current_per_field"] = (dims, thin, {
        "units": summary_unit("current_per_field", base.geometry),
        "long_name": "current per field of the thin-layer model: bulk conduction K A (Nernst-Einstein K)"})
    data["thin_layer_current_error"] = (dims, error, {
        "units": "1", "long_name": "(thin-layer - full) / full current per field"})
    data.attrs.update({
        "title": "edl_solver validity map of the thin-layer slip model",
        "x_axis": x.name, "y_axis": y.name,
        "x_input": x.path, "y_input": y.path,
        "tolerances": list(tolerances),
        "case_json": json.dumps(case_to_mapping(base), sort_keys=True),
        "thin_layer_current_model": "bulk conduction only: I/E = K A, K = (F^2/RT) sum z^2 D c",
        "schema_version": "1",
        "edl_solver_version": __version__,
    })
    data.attrs.pop("sweep_json", None)  # the base case and axes are in the attributes above
    return data


def _thin_layer_currents(base: Case, x: _MapAxis, y: _MapAxis) -> np.ndarray:
    """K A at every point of the plane (y, x), without solving.

    K A is a product of one factor per input (the concentration scale, 1/T, H or a^2; every other input
    leaves it alone), so the plane is the outer product of its two edges. The far corner is checked
    against a direct evaluation; should an input ever break the product form, every case is built.
    """
    from edl_solver.inputs.casefile import case_to_mapping
    from edl_solver.inputs.paths import case_at, make_axes

    table = case_to_mapping(base)
    plane = make_axes({y.path: list(y.inputs), x.path: list(x.inputs)})

    def direct(i: int, j: int) -> float:
        return thin_layer_current_per_field(case_at(table, plane, (i, j)))

    along_x = np.array([direct(0, j) for j in range(x.values.size)])
    along_y = np.array([direct(i, 0) for i in range(y.values.size)])
    product = np.outer(along_y, along_x) / along_x[0]
    if math.isclose(product[-1, -1], direct(y.values.size - 1, x.values.size - 1), rel_tol=1e-12):
        return product
    return np.array([[direct(i, j) for j in range(x.values.size)] for i in range(y.values.size)])


def _write(data: Any, target: Path) -> None:
    """The map as netCDF-4 (h5netcdf), atomically; gzip + shuffle on the numeric arrays."""

    encoding = {}
    for name, variable in data.variables.items():
        variable.encoding = {}
        if variable.dtype.kind == "f" and variable.ndim >= 2:
            encoding[name] = {"zlib": True, "complevel": 4, "shuffle": True}
    with atomic_output(target) as temporary:
        data.to_netcdf(temporary, engine="h5netcdf", encoding=encoding)


# ----------------------------------------------------------------------------------------------
# The boundary


def _case_at(table: Mapping[str, Any], path: str, value: float) -> Case:
    from edl_solver.inputs.paths import case_at, make_axes

    return case_at(table, make_axes({path: [value]}), (0,))


def _default_bracket(base: Case, axis: str) -> tuple[float, float]:
    """The solver's kappa h range, in the units of ``axis``, for the axes along which it is known."""
    low, high = _KAPPA_H_RANGE
    if axis == "kappa_h":
        return low, high
    if axis in ("geometry.height", "geometry.radius"):
        scale = base.debye_length * (2.0 if axis == "geometry.height" else 1.0)
        return low * scale, high * scale
    if axis == "electrolyte.concentration":
        # the Debye length goes as c^-1/2 when every ion scales with the first
        kappa_h = base.geometry.half_size / base.debye_length
        first = base.electrolyte.ions[0].concentration
        return first * (low / kappa_h) ** 2, first * (high / kappa_h) ** 2
    raise InputError(f"bracket: none given for {axis!r}, expected (low, high) values between which "
                     f"|error| crosses the tolerance (a default exists only for kappa_h, sizes and concentration)")


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
        A sweepable input path, "kappa_h" or "zeta_kT" (see the module docstring).
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
    from scipy.optimize import brentq

    from edl_solver.inputs.casefile import case_to_mapping
    from edl_solver.pipeline import solve

    _check_base(base)
    tau = _tolerance(tolerance)
    quantity = _quantity(quantity)
    _resolve(base, axis, [1.0] if axis in PSEUDO_AXES else [_probe(base, axis)], "axis")
    low, high = _bracket(base, axis, bracket)
    accuracy = max(min(base.numerics.accuracy, _ACCURACY_PER_TOLERANCE * tau), _SMALLEST_ACCURACY)
    tight = replace(base, numerics=replace(base.numerics, accuracy=accuracy))
    table = case_to_mapping(tight)

    def error(value: float) -> float:
        resolved = _resolve(tight, axis, [value], "axis")
        case = _case_at(table, resolved.path, float(resolved.inputs[0]))
        return _thin_layer_error(case, solve(case).summary, quantity)

    ends = (error(low), error(high))
    name = _QUANTITY_NAMES[quantity]
    if not all(math.isfinite(e) for e in ends):
        raise _NoBoundaryError(f"bracket: the thin-layer {name} error is undefined at {axis} = {low:.6g} or "
                               f"{high:.6g} (the full value vanishes), expected a bracket where it is defined")
    if (abs(ends[0]) - tau) * (abs(ends[1]) - tau) > 0.0:
        side = "above" if abs(ends[0]) > tau else "below"
        raise _NoBoundaryError(f"bracket: |thin-layer {name} error| is {abs(ends[0]):.3g} at {axis} = {low:.6g} "
                               f"and {abs(ends[1]):.3g} at {high:.6g}, both {side} the tolerance {tau:g}; "
                               "expected a bracket that contains the boundary")
    for end, value in zip(ends, (low, high)):
        if abs(end) == tau:
            return value
    if low > 0.0 or high < 0.0:  # one sign: search in ln|v|, so the relative accuracy is uniform
        sign = math.copysign(1.0, low)
        root = brentq(lambda t: abs(error(sign * math.exp(t))) - tau, math.log(abs(low)), math.log(abs(high)),
                      xtol=_LOG_XTOL)
        return sign * math.exp(root)
    return brentq(lambda v: abs(error(v)) - tau, low, high, xtol=_LOG_XTOL * max(abs(low), abs(high)))


def _probe(base: Case, axis: str) -> float:
    """A valid value of a real axis, to check the path before anything else."""
    if axis in ("geometry.height", "geometry.radius"):
        return base.geometry.half_size
    return 1.0


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
    if axis in ("kappa_h", "geometry.height", "geometry.radius", "electrolyte.concentration") and low <= 0.0:
        raise InputError(f"bracket: {bracket!r} has a value <= 0, expected positive values of {axis}")
    return low, high


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
    import xarray as xr

    from edl_solver.inputs.casefile import case_to_mapping

    _check_base(base)
    tau = _tolerance(tolerance)
    quantity = _quantity(quantity)
    probe = _resolve(base, axis, [1.0] if axis in PSEUDO_AXES else [_probe(base, axis)], "axis")
    other = _resolve(base, other_axis, other_values, "other_axis")
    _check_pair(probe, other, ("axis", "other_axis"))
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
    coords: dict[str, Any] = {other.name: (other.name, other.values, {
        "units": _axis_units(other), "long_name": PSEUDO_AXES.get(other.name, f"swept input {other.name}")})}
    if other.pseudo:
        coords[other.path] = (other.name, other.inputs, {"units": _path_units(other.path)})
    units = "1" if probe.pseudo else _axis_units(probe)
    return xr.DataArray(found, dims=(other.name,), coords=coords, name="boundary", attrs={
        "units": units,
        "long_name": f"value of {axis} where |thin-layer {_QUANTITY_NAMES[quantity]} error| = {tau:g}",
        "axis": axis, "tolerance": tau, "quantity": quantity,
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
        resolved = _resolve(case, axis, [value], "axis")
        probe = _case_at(case_to_mapping(case), resolved.path, float(resolved.inputs[0]))
        error = _thin_layer_error(probe, solve(probe).summary, quantity)
    except (InputError, ConvergenceError):
        return ""
    return "above" if abs(error) < tau else "below"


# ----------------------------------------------------------------------------------------------
# The figure


#: How an axis is shown: SI -> display (value * scale + offset) and its label. "{ion}" is the first
#: ion of the base case.
_DISPLAY: dict[str, tuple[float, float, str]] = {
    "geometry.height": (1e9, 0.0, "channel height H (nm)"),
    "geometry.radius": (1e9, 0.0, "capillary radius a (nm)"),
    "electrolyte.concentration": (1.0, 0.0, "bulk concentration of {ion} (mM)"),
    "wall.zeta": (1e3, 0.0, "wall potential ζ (mV)"),
    "wall.bottom.zeta": (1e3, 0.0, "bottom wall potential ζ (mV)"),
    "wall.top.zeta": (1e3, 0.0, "top wall potential ζ (mV)"),
    "wall.charge_density": (1e3, 0.0, "wall charge density σ (mC/m²)"),
    "wall.bottom.charge_density": (1e3, 0.0, "bottom wall charge density σ (mC/m²)"),
    "wall.top.charge_density": (1e3, 0.0, "top wall charge density σ (mC/m²)"),
    "solvent.temperature": (1.0, -273.15, "temperature (°C)"),
    "solvent.relative_permittivity": (1.0, 0.0, "relative permittivity ε_r"),
    "solvent.viscosity": (1e3, 0.0, "viscosity η (mPa·s)"),
    "field": (1e-3, 0.0, "field E (kV/m)"),
    "pressure_gradient": (1e-8, 0.0, "pressure gradient dp/dx (bar/mm)"),
    "tolerance": (100.0, 0.0, "tolerance (%)"),
    "numerics.accuracy": (1.0, 0.0, "accuracy"),
    "zeta_kT": (1.0, 0.0, "wall potential ζ/(kT/e)"),
}
_PANEL_TITLES = {
    "flow_rate": "EO flow rate: |thin-layer slip − full| / full",
    "current": "Current per field: |bulk conduction K·A − full| / full",
}
_BOUNDARY_COLOUR = "#e8301c"
_FAILED_COLOUR = "0.82"


def axis_display(name: str, table: Mapping[str, Any]) -> tuple[float, float, str]:
    """How an axis is shown: ``(scale, offset, label)``, display value = SI value * scale + offset.

    Parameters
    ----------
    name : str
        An axis path or pseudo-axis.
    table : mapping
        The base case as a plain dict (``case_to_mapping``), for the geometry and the first ion.
    """
    if name == "kappa_h":
        capillary = table["geometry"]["kind"] == "capillary"
        return 1.0, 0.0, ("κa = radius / Debye length" if capillary else "κh = half-height / Debye length")
    scale, offset, label = _DISPLAY.get(name, (1.0, 0.0, name))
    return scale, offset, label.format(ion=table["electrolyte"]["ions"][0]["name"])


def _negated(label: str) -> str:
    """The label of the magnitude of a negative quantity: "wall potential ζ (mV)" -> "... −ζ (mV)"."""
    head, sep, unit = label.rpartition(" (")
    if not sep:
        head, unit = label, ""
    name, _, symbol = head.rpartition(" ")
    return f"{name} −{symbol}" + (f" ({unit}" if sep else "")


def _logarithmic(values: np.ndarray) -> bool:
    """A log axis for positive values spread over more than a decade, or evenly spaced in log."""
    if values.size < 2 or not np.all(values > 0.0):
        return False
    spread = float(values.max() / values.min())
    steps = np.diff(np.log(values))
    geometric = values.size >= 3 and bool(np.allclose(steps, steps[0], rtol=1e-6))
    linear = values.size >= 3 and bool(np.allclose(np.diff(values), values[1] - values[0], rtol=1e-6))
    return spread >= 10.0 if (geometric == linear) else geometric


def _percent(value: float) -> str:
    """A fraction in percent: 0.05 -> "5 %", 100 -> "10,000 %"."""
    number = value * 100.0
    return f"{number:,.0f} %" if number >= 1000.0 else f"{number:.3g} %"


def _case_brief(table: Mapping[str, Any], swept: set[str]) -> str:
    """The fixed part of the base case in one line (inputs set by the axes are left out)."""
    from edl_solver.report.formatting import MODEL_NAMES

    parts = []
    g = table["geometry"]
    if {"geometry.height", "geometry.radius"} & swept:
        parts.append("capillary" if g["kind"] == "capillary" else "slit")
    elif g["kind"] == "capillary":
        parts.append(f"capillary a = {g['radius'] * 1e9:.4g} nm")
    else:
        parts.append(f"slit H = {g['height'] * 1e9:.4g} nm")
    ions = table["electrolyte"]["ions"]
    if "electrolyte.concentration" in swept:
        parts.append("ions " + ", ".join(ion["name"] for ion in ions) + " (concentrations swept together)")
    else:
        parts.append(", ".join(f"{ion['name']} {ion['concentration']:.3g} mM" for ion in ions))
    if not any(path.startswith("wall.") for path in swept):
        walls = table["wall"]
        sides = [("bottom ", walls["bottom"]), ("top ", walls["top"])] if "bottom" in walls else [("", walls)]
        parts.append(", ".join(f"{side}wall ζ = {w['zeta'] * 1e3:.3g} mV" if "zeta" in w
                               else f"{side}wall σ = {w['charge_density'] * 1e3:.3g} mC/m²" for side, w in sides))
    if "solvent.temperature" not in swept:
        parts.append(f"{table['solvent']['temperature'] - 273.15:.3g} °C")
    parts.append(MODEL_NAMES.get(table["model"], table["model"]))
    return "; ".join(parts)


def _boundary_label(curve: Any, along_x: bool) -> str:
    side = curve.attrs.get("valid_side", "")
    where = {("above", False): "above", ("below", False): "below", ("above", True): "to the right",
             ("below", True): "to the left"}.get((side, along_x), "")
    text = f"|error| = {_percent(float(curve.attrs['tolerance']))}, root-found"
    text += f": thin-layer model valid {where}" if where else ""
    missing = int(np.isnan(np.asarray(curve.values, dtype=float)).sum())
    if missing:
        text += f"\n(the boundary lies outside the map, or a solve failed, for {missing} of {curve.size} values)"
    return text


def map_figure(ds: Any, path: str | os.PathLike[str], boundary: Any = None) -> Path:
    """Write a PNG of a validity map: |thin-layer error| of the EO flow rate and of the current.

    One panel per quantity: filled contours of |(thin − full)/full| on a log colour scale with
    percent labels, the contour lines at the map's tolerances labelled ("5 %"), and the root-found
    boundary curve of :func:`boundary_curve` overlaid (dashed, with the side where the thin-layer
    model holds). Axes in the units of the field (nm, mM, mV, mC/m², or κh and ζ/(kT/e)), logarithmic
    where the values are. Cases without a converged solution (or with an undefined error) are grey.

    Parameters
    ----------
    ds : xarray.Dataset
        The return of :func:`validity_map` (or the file it wrote, opened with xarray).
    path : str or PathLike
        PNG file to create or replace (atomically); its directory must exist.
    boundary : xarray.DataArray or False, optional
        The curve to overlay, from :func:`boundary_curve` on one axis of the map against the other;
        by default the dataset's ``boundary`` variable when it has one; False for none.

    Returns
    -------
    Path

    Raises
    ------
    InputError
        If ``ds`` is not a validity map, the boundary does not belong to its axes, or ``path`` cannot
        be written.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.ticker import FuncFormatter


    x_name, y_name, table = _map_parts(ds)
    curve = _curve_for(ds, boundary, x_name, y_name)
    quantities = [q for q, key in QUANTITIES.items() if key in ds]
    shown_x = _Shown.of(x_name, ds[x_name].values, table)
    shown_y = _Shown.of(y_name, ds[y_name].values, table)
    x, y = shown_x.place(ds[x_name].values), shown_y.place(ds[y_name].values)
    converged = ds["status"].transpose(y_name, x_name).values == 0
    tolerances = [float(t) for t in np.atleast_1d(ds.attrs.get("tolerances", [0.05]))]

    figure = Figure(figsize=(6.2 * len(quantities), 5.6), dpi=110, layout="constrained")
    FigureCanvasAgg(figure)
    panels = np.atleast_1d(figure.subplots(1, len(quantities), squeeze=False)[0])
    percent = FuncFormatter(lambda level, _: _percent(10.0**level))
    for axes, quantity in zip(panels, quantities):
        error = np.abs(ds[QUANTITIES[quantity]].transpose(y_name, x_name).values.astype(float))
        shown = converged & np.isfinite(error)
        axes.set_facecolor(_FAILED_COLOUR)  # what the contours leave uncovered: failed or undefined cases
        if shown.any():
            # Contoured in log10|error| over log10 of the log axes: the error follows near power laws, so
            # linear interpolation there keeps the tolerance lines smooth on coarse maps.
            positive = error[shown & (error > 0.0)]
            low = math.floor(math.log10(max(float(positive.min()) if positive.size else 1e-6, 1e-6)))
            high = max(math.ceil(math.log10(max(float(error[shown].max()), 1e-6))), low + 1)
            levels = np.arange(low, high + 1e-9, 0.25)
            data = np.where(shown, np.log10(np.clip(error, 10.0**low, 10.0**high)), np.nan)
            filled = axes.contourf(x, y, data, levels=levels, cmap="viridis")
            bar = figure.colorbar(filled, ax=axes, shrink=0.9)
            bar.set_label("|(thin − full) / full|")
            bar.set_ticks(np.arange(low, high + 1))
            bar.ax.yaxis.set_major_formatter(percent)
            # the boundary's own tolerance is drawn by the root-found curve, not twice
            overlaid = float(curve.attrs["tolerance"]) if curve is not None and \
                quantity == curve.attrs.get("quantity", "flow_rate") else math.nan
            inside = [math.log10(t) for t in tolerances
                      if low < math.log10(t) < high and not math.isclose(t, overlaid)]
            if inside:
                lines = axes.contour(x, y, data, levels=inside, colors="white", linewidths=1.3,
                                     linestyles="solid")  # log levels are negative: not dashed
                axes.clabel(lines, fmt=lambda level: _percent(10.0**level), fontsize="small", inline=True)
                for level in inside:
                    bar.ax.axhline(level, color="white", lw=1.3)
            if low < math.log10(overlaid) < high:
                bar.ax.axhline(math.log10(overlaid), color=_BOUNDARY_COLOUR, lw=2.0)
        if curve is not None and quantity == curve.attrs.get("quantity", "flow_rate"):
            _draw_curve(axes, curve, x_name, shown_x, shown_y)
        if not shown.all():
            axes.text(0.01, 0.01, "grey: no converged solution or undefined error", transform=axes.transAxes,
                      fontsize="x-small", color="0.25")
        axes.set_xlim(x.min(), x.max())
        axes.set_ylim(y.min(), y.max())
        shown_x.ticks(axes.xaxis)
        shown_y.ticks(axes.yaxis)
        axes.set_xlabel(shown_x.label)
        axes.set_ylabel(shown_y.label)
        axes.set_title(_PANEL_TITLES[quantity], fontsize="medium")
    title = "Error of the thin-layer model\n" + _case_brief(table, {ds.attrs.get("x_input", x_name),
                                                                   ds.attrs.get("y_input", y_name)})
    if "kappa_h" in (x_name, y_name) or "zeta_kT" in (x_name, y_name):
        title += _reference_scales(table)
    figure.suptitle(title, fontsize="medium")
    with atomic_output(path) as temporary:
        figure.savefig(temporary, format="png")
    return Path(os.fspath(path)).expanduser()


@dataclass(frozen=True)
class _Shown:
    """How one axis of the map is drawn: display units (value * scale + offset), and on a log axis the
    log10 of that. Log axes are drawn as linear axes of log10(value) with decade ticks, so that the
    contours interpolate in log coordinates, as the data were sampled."""

    scale: float
    offset: float
    label: str
    log: bool

    @classmethod
    def of(cls, name: str, values: Any, table: Mapping[str, Any]) -> _Shown:
        scale, offset, label = axis_display(name, table)
        si = np.asarray(values, dtype=float)
        # Negative values spread over decades (wall charges, potentials) are shown as magnitudes.
        if np.all(si < 0.0) and _logarithmic(-si):
            scale, label = -scale, _negated(label)
        return cls(scale, offset, label, _logarithmic(si * scale + offset))

    def place(self, values: Any) -> np.ndarray:
        shown = np.asarray(values, dtype=float) * self.scale + self.offset
        return np.log10(shown) if self.log else shown

    def ticks(self, axis: Any) -> None:
        """Decades labelled 0.1, 1, 10 (not 10^-1); 2 and 5 labelled too within under two decades."""
        if not self.log:
            return
        from matplotlib.ticker import FixedLocator, FuncFormatter

        low, high = axis.get_view_interval()
        low, high = min(low, high), max(low, high)
        decades = range(math.floor(low) - 1, math.ceil(high) + 1)
        major = [float(k) for k in decades if low - 1e-9 <= k <= high + 1e-9]
        minor = [k + math.log10(m) for k in decades for m in range(2, 10) if low <= k + math.log10(m) <= high]
        axis.set_major_locator(FixedLocator(major))
        axis.set_minor_locator(FixedLocator(minor))
        axis.set_major_formatter(FuncFormatter(lambda u, _: f"{10.0**u:.4g}"))
        few = high - low < 2.0 or len(major) < 2

        def label_minor(u: float, _: Any) -> str:
            mantissa = round(10.0 ** (u - math.floor(u + 1e-9)))
            return f"{10.0**u:.4g}" if few and mantissa in (2, 5) else ""

        axis.set_minor_formatter(FuncFormatter(label_minor))


def _map_parts(ds: Any) -> tuple[str, str, dict[str, Any]]:
    """The axis names and the base case (plain dict) of a validity map, checked."""
    attrs = getattr(ds, "attrs", None)
    if not isinstance(attrs, Mapping) or "x_axis" not in attrs or "case_json" not in attrs:
        raise InputError(f"ds: {type(ds).__name__} is not a validity map, expected the Dataset returned by "
                         "validity_map() or the file it wrote")
    x_name, y_name = str(attrs["x_axis"]), str(attrs["y_axis"])
    missing = [name for name in (x_name, y_name, "status") if name not in ds.variables]
    if missing:
        raise InputError(f"ds: the validity map lacks {missing[0]!r}, expected the Dataset of validity_map()")
    return x_name, y_name, json.loads(attrs["case_json"])


def _curve_for(ds: Any, boundary: Any, x_name: str, y_name: str) -> Any:
    if boundary is False:
        return None
    if boundary is None:
        return ds["boundary"] if "boundary" in ds.variables else None
    dims = getattr(boundary, "dims", None)
    axis = getattr(boundary, "attrs", {}).get("axis")
    if dims is None or len(dims) != 1 or {dims[0], axis} != {x_name, y_name}:
        raise InputError(f"boundary: {type(boundary).__name__} is not a curve of this map, expected "
                         f"boundary_curve() along {x_name!r} or {y_name!r} against the other")
    return boundary


def _draw_curve(axes: Any, curve: Any, x_name: str, shown_x: _Shown, shown_y: _Shown) -> None:
    """The boundary, in the map's display coordinates, dashed over a white casing so it reads on any colour."""
    import matplotlib.patheffects as effects

    other = curve.dims[0]
    along = np.asarray(curve.values, dtype=float)
    against = np.asarray(curve[other].values, dtype=float)
    along_x = other != x_name
    xs, ys = (along, against) if along_x else (against, along)
    axes.plot(shown_x.place(xs), shown_y.place(ys), color=_BOUNDARY_COLOUR, lw=2.2, ls=(0, (5, 2)),
              label=_boundary_label(curve, along_x),
              path_effects=[effects.Stroke(linewidth=4.0, foreground="white"), effects.Normal()])
    # below the axes: inside, it would hide part of the map (often the curve itself)
    axes.legend(loc="upper center", bbox_to_anchor=(0.5, -0.11), fontsize="small", frameon=False)


def _reference_scales(table: Mapping[str, Any]) -> str:
    """The Debye length and kT/e the pseudo-axes are measured against."""
    from edl_solver.inputs.casefile import case_from_mapping

    case = case_from_mapping(table)
    return (f"\ndimensionless axes against the base case: Debye length {case.debye_length * 1e9:.3g} nm, "
            f"kT/e = {case.solvent.thermal_voltage * 1e3:.4g} mV")
