"""Flow after a step of the drives (``edl.transient`` for a field or pressure-gradient step; issue 14).

When only the field and the pressure gradient change at t = 0 the double layer stays at equilibrium (the field
is along the channel, and a long uniform channel has no gradient along it), so what evolves is the flow:
rho_m du/dt = eta lap(u) - dp/dx + rho_e E with the equilibrium space charge, from the steady flow of the drives
``before`` to that of the drives of ``case`` (EO start-up when ``before`` has none). That case is solved here.
Steps of the walls and drives that vary in time charge the double layer: they go to the transient
Poisson-Nernst-Planck solver (``model.pnp_run``).

The discrete problem M dv/dt = A v + M f (the steady solver's finite volumes, ``model.flow_operator``) is solved
exactly in time: with S = M^-1/2 A M^-1/2 = -Q diag(lambda) Q^T, a section integral g^T M v(t) of the
step's difference d = v_before - v_case decays as sum_k (g^T M^1/2 q_k)(q_k^T M^1/2 d) exp(-lambda_k t). Four nested
grids are extrapolated (Richardson) and refined until the estimate meets ``Numerics(accuracy=...)`` relative to
the steady values.
"""

from __future__ import annotations

import dataclasses
import json
from collections.abc import Callable
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


def _default_before(case: Case, before: Any) -> Case:
    """``before``, by default ``case`` at rest (field and pressure gradient off)."""
    if before is None:
        return dataclasses.replace(case, field=0.0, pressure_gradient=0.0)
    if not isinstance(before, Case):
        raise InputError(f"before: {type(before).__name__} is not a Case, expected edl_solver.Case(...) or None")
    return before


def _drives_only(case: Case, before: Case) -> bool:
    """Whether ``before`` differs from ``case`` in its drives alone (the double layer does not change)."""
    return not [f.name for f in dataclasses.fields(Case) if f.name not in (*DRIVES, "numerics", "tolerance")
                and getattr(before, f.name) != getattr(case, f.name)]


def _charging(case: Case, before: Case, drives: Any, t: np.ndarray,
              progress: Callable[[float], None] | None) -> Any:
    """The transient Poisson-Nernst-Planck run of a step that charges the layer."""
    from edl_solver.model import pnp_dataset, pnp_run
    from edl_solver.model.pnp_drives import drives_json
    from edl_solver.model.pnp_setup import check_before

    check_before(case, before)
    result = pnp_run.run(case, before, drives, t, progress)
    return pnp_dataset.dataset(case, before, drives_json(drives, case), t, result)


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


def transient(case: Case, times: Any, before: Case | None = None, drives: Any = None,
              progress: Callable[[float], None] | None = None) -> Any:
    """The section after a step at t = 0 from the equilibrium of ``before`` to the conditions of ``case``.

    A step of the field or the pressure gradient alone leaves the double layer at equilibrium: the flow's
    start-up is solved exactly (this module). Anything else - a step of the walls (electrode or gate switching,
    a change of wall charge), drives that vary in time - charges the layer and is solved by the transient
    Poisson-Nernst-Planck solver (``model.pnp_run``), in a closed section.

    Parameters
    ----------
    case : Case
        The conditions after the step (a slit or capillary).
    times : sequence of float
        Output times after the step, s, > 0 and increasing.
    before : Case, optional
        The conditions before (their reservoir equilibrium and steady flow are the start); by default ``case``
        with the field and the pressure gradient off (an EO and pressure start-up from rest). It may differ
        from ``case`` in its walls, field and pressure gradient (the same geometry, electrolyte, solvent and
        model: the section is closed).
    drives : mapping of str to Drive, optional
        Values that vary in time after the step, by target ("field", "pressure_gradient", "wall.zeta",
        "wall.top.charge_density", "wall.gate_voltage", ...; ``inputs.drives``); they replace those of ``case``.
    progress : callable, optional
        Called with the fraction done (0 to 1) during a Poisson-Nernst-Planck run.

    Returns
    -------
    xarray.Dataset
        On the dimension ``time`` (s): ``mean_velocity_eo`` (the field-driven part), ``mean_velocity_pressure``,
        ``mean_velocity``, ``flow_rate`` (per unit width for a slit), ``convection_current`` (the space charge
        carried by the flow), ``conduction_current``, ``wall_charge_density`` and ``wall_potential`` (on (time,
        wall) when the walls differ), ``error_estimate``; for a Poisson-Nernst-Planck run also ``space_charge``,
        ``salt_stored`` (ions in excess of the centre's concentration), ``inventory`` (time, ion), the drives'
        ``field`` and ``pressure_gradient``, the profiles ``potential``, ``velocity_eo``, ``velocity`` (time, x)
        and ``concentration`` (time, ion, x), and the closed-section and reservoir equilibria of the walls after
        the step (``closed_*``, ``reservoir_*``). Attributes: both cases (``case_json``, ``before_json``), the
        drives (``drives_json``), ``kind`` and the time scales.

    Raises
    ------
    InputError
        Times not > 0 and increasing, a ``before`` with another geometry, electrolyte, solvent or model, a
        rectangle, a viscoelectric solvent, a solvent without density, a steric model for a charging step, a
        bad drive.
    ConvergenceError
        The equilibrium solve, the time stepping or the accuracy failed.
    """
    check_section(case, "transient flow")
    before = _default_before(case, before)
    t = _times(times)
    if drives or not _drives_only(case, before):
        return _charging(case, before, drives, t, progress)
    return _flow_start_up(case, before, t)


def _flow_start_up(case: Case, before: Case, t: np.ndarray) -> Any:
    """The Dataset of a step of the field and pressure gradient alone (the module docstring)."""
    import xarray as xr

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
    for name, slot, unit in (("wall_charge_density", layout.Z_SIGMA, "C/m^2"), ("wall_potential", layout.Z_ZETA, "V")):
        pair = values[slot:slot + 2]  # (bottom, top); both the top's for equal walls
        if case.symmetric:
            variables[name] = ("time", np.full(t.size, float(pair[1])), {"units": unit})
        else:
            variables[name] = (("time", "wall"), np.tile(pair, (t.size, 1)), {"units": unit})
    variables["field"] = ("time", np.full(t.size, case.field), {"units": "V/m"})
    variables["pressure_gradient"] = ("time", np.full(t.size, case.pressure_gradient), {"units": "Pa/m"})
    coords: dict[str, Any] = {"time": ("time", t, {"units": "s"})}
    if not case.symmetric:
        coords["wall"] = ("wall", list(case.geometry.wall_names))
    return xr.Dataset(variables, coords=coords,
                      attrs={"case": case.describe(), "case_json": json.dumps(case_to_mapping(case)),
                             "before_json": json.dumps(case_to_mapping(before)), "drives_json": "{}",
                             "kind": "flow start-up", "viscous_time_s": viscous_time,
                             "note": "steps of the drives only: the double layer stays at equilibrium"})
