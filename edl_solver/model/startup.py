"""Flow after a step of the drives (``edl.transient`` for a field or pressure-gradient step; issue 14).

When only the field and the pressure gradient change at t = 0 the double layer stays at equilibrium (the field
is along the channel, and a long uniform channel has no gradient along it), so what evolves is the flow:
rho_m du/dt = eta lap(u) - dp/dx + rho_e E with the equilibrium space charge, from the steady flow of the drives
``before`` to that of the drives of ``case`` (EO start-up when ``before`` has none). Steps of the walls, the
electrolyte or anything else charge the double layer and need the transient Poisson-Nernst-Planck solver, which
is not built yet: they are refused.

The discrete problem M dv/dt = A v + M f (the steady solver's finite volumes, ``model.flow_operator``) is solved
exactly in time: with S = M^-1/2 A M^-1/2 = -Q diag(lambda) Q^T, a section integral g^T M v(t) of the
step's difference d = v_before - v_case decays as sum_k (g^T M^1/2 q_k)(q_k^T M^1/2 d) exp(-lambda_k t). Four nested
grids are extrapolated (Richardson) and refined until the estimate meets ``Numerics(accuracy=...)`` relative to
the steady values.
"""

from __future__ import annotations

import dataclasses
import json
from typing import Any

import numpy as np

from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.casefile import case_to_mapping
from edl_solver.kernels import layout
from edl_solver.model import packing, section
from edl_solver.model.flow_operator import (
    check_section,
    dense_matrix,
    extrapolated,
    flow_operator,
    free_rows,
    level_intervals,
)

#: Cells of the finest grid to start from.
FIRST_INTERVALS = 64
#: Inputs that a step may change here (the drives); any other difference charges the double layer.
DRIVES = ("field", "pressure_gradient")


def _times(times: Any) -> np.ndarray:
    try:
        values = np.atleast_1d(np.asarray(times, dtype=float))
    except (TypeError, ValueError):
        raise InputError(f"times: {times!r} is not a list of numbers, expected times in s > 0") from None
    if values.ndim != 1 or values.size == 0 or not np.all(np.isfinite(values)) or np.any(values <= 0.0) \
            or np.any(np.diff(values) <= 0.0):
        raise InputError(f"times: {times!r} is not allowed, expected a non-empty 1-D list of increasing times in "
                         "s > 0 after the step")
    return values


def _check_before(case: Case, before: Any) -> Case:
    """``before`` (default: ``case`` at rest), checked to differ from ``case`` in its drives alone."""
    if before is None:
        return dataclasses.replace(case, field=0.0, pressure_gradient=0.0)
    if not isinstance(before, Case):
        raise InputError(f"before: {type(before).__name__} is not a Case, expected edl_solver.Case(...) or None")
    other = [f.name for f in dataclasses.fields(Case) if f.name not in (*DRIVES, "numerics", "tolerance")
             and getattr(before, f.name) != getattr(case, f.name)]
    if other:
        raise InputError(f"before: differs from case in {', '.join(other)}, expected a step of the field or the "
                         "pressure gradient alone: a change of walls, electrolyte, solvent, geometry or model charges "
                         "the double layer, which needs the transient Poisson-Nernst-Planck solver (not built yet)")
    return before


def _grid_series(case: Case, intervals: int, taus: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """On one grid: per drive (EO per unit field, pressure per unit gradient) and per weight (1: the flow, rho_hat:
    the convected charge), the steady integral and its decay at every dimensionless time; shape (2, 2, 1 + times).
    Returns it and the scales vector."""
    op = flow_operator(case, intervals)
    keep = free_rows(op)
    a = dense_matrix(op)
    volume, rho = op.volume[keep], op.rho[keep]
    root = np.sqrt(volume)
    lam, q = np.linalg.eigh(a / np.outer(root, root))  # S = M^-1/2 A M^-1/2: negative definite
    rate = -lam
    forcing = (-op.kappa2 * volume * rho, volume)  # A v = -M kappa2 rho (EO), A w = M (pressure, lap w = 1)
    out = np.empty((2, 2, 1 + taus.size))
    decay = np.exp(-np.outer(taus, rate))  # (times, modes)
    for d, rhs in enumerate(forcing):
        steady = np.linalg.solve(a, rhs)
        projected = q.T @ (root * steady)
        for w, weight in enumerate((np.ones_like(rho), rho)):
            out[d, w, 0] = volume @ (weight * steady)
            out[d, w, 1:] = decay @ ((q.T @ (root * weight)) * projected)
    return out, op.scales


def _series(case: Case, taus: np.ndarray) -> tuple[np.ndarray, np.ndarray, float]:
    """The extrapolated series of ``_grid_series``, the scales and the error estimate."""
    numerics = case.numerics
    intervals = numerics.intervals or FIRST_INTERVALS
    while True:
        levels, sc = [], None
        for cells in level_intervals(intervals):
            values, sc = _grid_series(case, cells, taus)
            levels.append(values)
        finer, coarser = (part.real for part in extrapolated(levels))
        scale = np.maximum(np.abs(finer[..., :1]), 1e-300)  # each against its steady value
        estimate = float(np.max(np.abs(finer - coarser) / scale) / 8.0)
        if estimate <= numerics.accuracy or numerics.intervals:
            return finer, sc, estimate
        if 2 * intervals > numerics.max_intervals:
            raise ConvergenceError(f"{case.describe()}: transient flow: accuracy {numerics.accuracy:g} missed "
                                   f"(estimate {estimate:.2g}) with {intervals} cells")
        intervals *= 2


def transient(case: Case, times: Any, before: Case | None = None) -> Any:
    """The flow after the drives step at t = 0 from those of ``before`` to those of ``case``.

    Parameters
    ----------
    case : Case
        The conditions after the step (a slit or capillary).
    times : sequence of float
        Output times after the step, s, > 0 and increasing.
    before : Case, optional
        The conditions before (their steady flow is the start); by default ``case`` with the field and the
        pressure gradient off (an EO and pressure start-up from rest). It may differ from ``case`` in
        ``field`` and ``pressure_gradient`` only (see the module docstring).

    Returns
    -------
    xarray.Dataset
        On the dimension ``time`` (s): ``mean_velocity_eo`` (the field-driven part), ``mean_velocity_pressure``,
        ``mean_velocity``, ``flow_rate`` (per unit width for a slit), ``convection_current`` (the space charge
        carried by the flow), ``conduction_current`` and ``wall_charge_density`` (constant: the double layer does
        not change; on (time, wall) when the walls differ), ``error_estimate``. Attributes: both cases
        (``case_json``, ``before_json``) and the viscous time rho_m L^2 / eta.

    Raises
    ------
    InputError
        Times not > 0 and increasing, a ``before`` that differs in more than the drives, a rectangle, a
        viscoelectric solvent or a solvent without density.
    ConvergenceError
        The equilibrium solve or the accuracy of the series failed.
    """
    import xarray as xr

    check_section(case, "transient flow")
    before = _check_before(case, before)
    t = _times(times)
    length = case.geometry.half_size
    viscous_time = case.solvent.density * length**2 / case.solvent.viscosity
    series, sc, estimate = _series(case, t / viscous_time)
    # the section integrals after the step: the new drive's steady value plus the old one's excess decaying
    drives = ((before.field, case.field), (before.pressure_gradient, case.pressure_gradient))
    integral = np.empty((2, 2, t.size))
    for d, (old, new) in enumerate(drives):
        integral[d] = new * series[d, :, :1] + (old - new) * series[d, :, 1:]
    units = (sc[layout.S_EO_VELOCITY], sc[layout.S_PRESSURE_VELOCITY])
    flows = [units[d] * sc[layout.S_AREA] * integral[d, 0] for d in range(2)]  # m^3/s (m^2/s per unit width)
    convected = sum(units[d] * sc[layout.S_VOLUME_CHARGE] * sc[layout.S_AREA] * integral[d, 1] for d in range(2))
    values = np.empty(layout.SUMMARY_SIZE)  # the steady solve's summary: the layer and the conduction current
    section.solve_and_summarize(packing.case_vector(case), case, values)
    section_area = sc[layout.S_SECTION_AREA]
    per = "per_width" if case.geometry.extent == "per_width" else "per_channel"
    flow_unit, current_unit = ("m^2/s", "A/m") if per == "per_width" else ("m^3/s", "A")
    variables: dict[str, Any] = {
        "mean_velocity_eo": ("time", flows[0] / section_area, {"units": "m/s"}),
        "mean_velocity_pressure": ("time", flows[1] / section_area, {"units": "m/s"}),
        "mean_velocity": ("time", (flows[0] + flows[1]) / section_area, {"units": "m/s"}),
        "flow_rate": ("time", flows[0] + flows[1], {"units": flow_unit}),
        "convection_current": ("time", convected, {"units": current_unit}),
        "conduction_current": ("time", np.full(t.size, values[layout.Z_CONDUCTION_CURRENT]), {"units": current_unit}),
        "error_estimate": ("time", np.full(t.size, estimate), {"units": "1"}),
    }
    pair = values[layout.Z_SIGMA:layout.Z_SIGMA + 2]  # (bottom, top); both the top's for equal walls
    sigma = float(pair[1]) if case.symmetric else (float(pair[0]), float(pair[1]))
    if isinstance(sigma, tuple):
        variables["wall_charge_density"] = (("time", "wall"), np.tile(sigma, (t.size, 1)), {"units": "C/m^2"})
    else:
        variables["wall_charge_density"] = ("time", np.full(t.size, sigma), {"units": "C/m^2"})
    coords: dict[str, Any] = {"time": ("time", t, {"units": "s"})}
    if isinstance(sigma, tuple):
        coords["wall"] = ("wall", list(case.geometry.wall_names))
    return xr.Dataset(variables, coords=coords,
                      attrs={"case": case.describe(), "case_json": json.dumps(case_to_mapping(case)),
                             "before_json": json.dumps(case_to_mapping(before)), "viscous_time_s": viscous_time,
                             "note": "steps of the drives only: the double layer stays at equilibrium"})
