"""Validity maps of the thin-layer slip model: its error over a plane of two inputs.

A map is a sweep (``edl_solver.sweeping.run.sweep``) over two axes: sweepable inputs, or the dimensionless
pseudo-axes "kappa_h" and "zeta_kT" translated against the base case into the inputs they set
(``edl_solver.analysis.map_axes``). Two errors of the thin-layer model are mapped, both as
(thin − full)/full: of the EO flow rate and of the current per field at zero pressure gradient
(``edl_solver.analysis.thin_layer_errors``). On request the map also holds its validity boundary,
root-found (``edl_solver.analysis.boundary``). The file is written by ``edl_solver.io.map_file``, the figure
drawn by ``edl_solver.plot.validity``.
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Sequence
from contextlib import nullcontext
from typing import Any

import numpy as np

from edl_solver.analysis.boundary import boundary_curve
from edl_solver.analysis.map_axes import (
    PSEUDO_AXES,
    SIZE_PATHS,
    MapAxis,
    check_base,
    checked_tolerance,
    checked_tolerances,
    map_axes,
)
from edl_solver.analysis.thin_layer_errors import thin_layer_current_per_field
from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.io.files import checked_output_path, output_lock
from edl_solver.io.map_file import write_map

__all__ = ["BOUNDARY_VARIABLES", "validity_map"]

#: The root-found boundary of each mapped quantity: the variable of the map that holds it.
BOUNDARY_VARIABLES = {"flow_rate": "boundary", "current": "boundary_current"}

#: Axes along which the thin-layer error falls steadily: the boundary of a map is found along the
#: first of these that the map has (size, then concentration), else along its y axis.
_BOUNDARY_PREFERENCE = ("kappa_h", *SIZE_PATHS, "electrolyte.concentration")


def validity_map(base: Case, x_axis: tuple[str, Any], y_axis: tuple[str, Any], *,
                 tolerances: Sequence[float | str] = (0.01, 0.05, 0.10),
                 path: str | os.PathLike[str] | None = None, boundary_tolerance: float | str | None = None,
                 overwrite: bool = False, **sweep_options: Any) -> Any:
    """Solve every case of a plane of two inputs and map the thin-layer model's errors.

    Parameters
    ----------
    base : Case
        The case every point starts from.
    x_axis, y_axis : (str, sequence)
        ``(path, values)``: a sweepable input path ("geometry.height", "electrolyte.concentration",
        "wall.zeta", ...; values SI or strings with units) or a pseudo-axis "kappa_h" or "zeta_kT"
        (dimensionless values; see ``edl_solver.analysis.map_axes``). At least two strictly monotonic
        values each.
    tolerances : sequence of float or str
        Fractions (0.05 or "5 %") at which the figure draws contour lines; stored as an attribute.
    path : str or Path, optional
        netCDF-4 file for the map, written atomically. The sweep streams to ``<path>.sweep`` meanwhile
        (``resume=True`` finishes an interrupted one); it is removed once the map is written. ``<path>.lock``
        is locked throughout, so that another run on the same map is refused.
    boundary_tolerance : float or str, optional
        Also find the boundary where |EO flow-rate error| equals this tolerance, by root-finding along
        the map's size axis ("kappa_h", "geometry.height" or "geometry.radius"), else its concentration
        axis, else its y axis, for each value of the other axis, within the map's range (NaN where the
        boundary lies outside it); stored as the variable ``boundary``. The same for |current error|, as
        ``boundary_current``.
    overwrite : bool
        Replace a file that already exists at ``path`` (by default it is kept and the map refused).
    **sweep_options
        ``workers``, ``dask``, ``rows_per_task``, ``progress``, ``resume`` of ``edl_solver.sweeping.run.sweep``.

    Returns
    -------
    xarray.Dataset
        Dimensions (y, x), named after the axes; a pseudo-axis is the dimension coordinate and the input
        it sets is a coordinate along it (the axis "kappa_h" takes the place of the summary variable of
        that name, which holds the same values). Every summary key of the sweep, plus
        ``thin_layer_current_per_field`` (S or S·m) and ``thin_layer_current_error`` ((thin − full)/full,
        "1"), ``status`` per case and, when asked, ``boundary`` and ``boundary_current``. Attributes:
        ``x_axis``, ``y_axis``, ``tolerances``, ``case_json`` (the base case), ``title``.

    Raises
    ------
    InputError
        Bad axes, tolerances, options or output path, a file at ``path`` without ``overwrite``, or another
        run writing ``path`` (before anything is solved or written).
    """
    check_base(base)
    x, y = map_axes(base, x_axis, y_axis)
    levels = checked_tolerances(tolerances)
    overlay = None if boundary_tolerance is None else checked_tolerance(boundary_tolerance, "boundary_tolerance")
    if "zipped" in sweep_options or "axes" in sweep_options:
        raise InputError("sweep_options: a map has exactly two independent axes, expected no 'zipped' or 'axes'")
    if not isinstance(overwrite, bool):
        raise InputError(f"overwrite: {overwrite!r} is not allowed, expected True or False")
    target = checked_output_path(path) if path is not None else None
    with output_lock(target) if target is not None else nullcontext():
        if target is not None and target.exists() and not overwrite:
            raise InputError(f"path: {str(path)!r} already exists, expected a new file name, or overwrite=True "
                             "to replace it")
        return _solve_map(base, (x, y), levels, overlay, target, sweep_options)


def _solve_map(base: Case, axes: tuple[MapAxis, MapAxis], levels: tuple[float, ...], overlay: float | None,
               target: Any, sweep_options: dict[str, Any]) -> Any:
    """The map's sweep (to ``<target>.sweep``, the map's scratch file, replaced if a failed run left it),
    the map and its boundary, written to ``target``."""
    from edl_solver.sweeping.run import sweep

    x, y = axes
    raw = target.with_name(target.name + ".sweep") if target is not None else None
    data = sweep(base, {y.path: list(y.inputs), x.path: list(x.inputs)}, path=raw, overwrite=raw is not None,
                 **sweep_options)
    if raw is not None:  # a very large sweep comes back lazily from its file, which is removed below
        data.load().close()
    data = _map_dataset(data, base, x, y, levels)
    if overlay is not None:
        along, other = (x, y) if _boundary_along(x, y) is x else (y, x)
        for quantity, name in BOUNDARY_VARIABLES.items():
            curve = boundary_curve(base, along.name, other.name, other.values, overlay,
                                   quantity,  # type: ignore[arg-type]
                                   bracket=(float(along.values.min()), float(along.values.max())))
            data[name] = curve.variable
            data[name].attrs.update(curve.attrs)
    if target is not None:
        write_map(data, target)
        raw.unlink(missing_ok=True)
    return data


def _boundary_along(x: MapAxis, y: MapAxis) -> MapAxis:
    for name in _BOUNDARY_PREFERENCE:
        for axis in (x, y):
            if axis.name == name:
                return axis
    return y


def _map_dataset(data: Any, base: Case, x: MapAxis, y: MapAxis, tolerances: tuple[float, ...]) -> Any:
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


def _thin_layer_currents(base: Case, x: MapAxis, y: MapAxis) -> np.ndarray:
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


