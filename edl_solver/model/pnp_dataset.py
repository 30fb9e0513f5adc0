"""The ``xarray.Dataset`` of a transient Poisson-Nernst-Planck run (``edl.transient`` for steps that charge the
double layer, and drives that vary in time); its variables are listed in ``pnp_transient``'s docstring."""

from __future__ import annotations

import json
from typing import Any

import numpy as np

from edl_solver.inputs.case import Case
from edl_solver.inputs.casefile import case_to_mapping
from edl_solver.kernels import layout
from edl_solver.model import pnp_quantities
from edl_solver.model.pnp_run import Extrapolated

_UNITS = {"mean_velocity_eo": "m/s", "mean_velocity_pressure": "m/s", "field": "V/m", "pressure_gradient": "Pa/m"}


def _per(case: Case) -> tuple[str, str, str, str]:
    """Units of the flow, the currents, the space charge and the inventories."""
    if case.geometry.extent == "per_width":
        return "m^2/s", "A/m", "C/m^2", "mol/m^2"
    return "m^3/s", "A", "C/m", "mol/m"


def dataset(case: Case, before: Case, drives_json: str, times: np.ndarray, result: Extrapolated) -> Any:
    """Assemble the run's Dataset from the extrapolated series and the finest grid's profiles."""
    import xarray as xr

    setup = result.finest.setup
    sc = setup.sc
    names = pnp_quantities.SERIES
    values = {name: result.values[:, i] for i, name in enumerate(names)}
    flow_unit, current_unit, charge_unit, amount_unit = _per(case)
    variables: dict[str, Any] = {
        name: ("time", values[name], {"units": _UNITS[name]}) for name in _UNITS}
    variables["mean_velocity"] = ("time", values["mean_velocity_eo"] + values["mean_velocity_pressure"],
                                  {"units": "m/s"})
    variables["flow_rate"] = ("time", values["flow_rate"], {"units": flow_unit})
    for name in ("convection_current", "conduction_current"):
        variables[name] = ("time", values[name], {"units": current_unit})
    # the space charge of a neutral section (two opposite layers) is zero up to round-off: shown as 0
    space = values["space_charge"].copy()
    sigma = max(float(np.max(np.abs(values[f"wall_charge_density_{end}"]))) for end in ("left", "right"))
    space[np.abs(space) < 1e-12 * sigma * sc[layout.S_SECTION_AREA] / sc[layout.S_LENGTH]] = 0.0
    variables["space_charge"] = ("time", space, {"units": charge_unit})
    variables["salt_stored"] = ("time", values["salt_stored"], {"units": amount_unit})
    for name, unit in (("wall_charge_density", "C/m^2"), ("wall_potential", "V")):
        left, right = values[f"{name}_left"], values[f"{name}_right"]
        if setup.half:
            variables[name] = ("time", right, {"units": unit})
        else:
            variables[name] = (("time", "wall"), np.column_stack((left, right)), {"units": unit})
    variables["inventory"] = (("time", "ion"), result.values[:, len(names):], {"units": amount_unit})
    variables["error_estimate"] = ("time", np.full(times.size, result.estimate), {"units": "1"})
    for name, array in pnp_quantities.profiles(setup, result.finest.states).items():
        dims = ("time", "ion", "x") if array.ndim == 3 else ("time", "x")
        variables[name] = (dims, array, {"units": "mol/m^3" if name == "concentration" else
                                         ("V" if name == "potential" else "m/s")})
    vt = sc[layout.S_THERMAL_VOLTAGE]
    nion = setup.bulk.size
    for label, eq in (("closed", setup.closed), ("reservoir", setup.reservoir)):
        conc = 1.0 + eq.ions if setup.problem.model == layout.DH else np.exp(eq.ions)
        variables[f"{label}_potential"] = ("x", eq.psi * vt, {"units": "V"})
        variables[f"{label}_concentration"] = (("ion", "x"), (conc * setup.bulk).T, {"units": "mol/m^3"})
    coords: dict[str, Any] = {"time": ("time", times, {"units": "s"}),
                              "x": ("x", setup.x * sc[layout.S_LENGTH], {"units": "m"}),
                              "ion": ("ion", [ion.name for ion in case.electrolyte.ions])}
    if not setup.half:
        coords["wall"] = ("wall", list(case.geometry.wall_names))
    last = result.finest.states[-1]
    length = sc[layout.S_LENGTH]
    d_ref = length**2 / setup.time_unit
    debye = sc[layout.S_DEBYE_LENGTH]
    closed_inv = setup.problem.volume @ (1.0 + setup.closed.ions if setup.problem.model == layout.DH
                                         else np.exp(setup.closed.ions))
    reservoir_inv = setup.problem.volume @ (1.0 + setup.reservoir.ions if setup.problem.model == layout.DH
                                            else np.exp(setup.reservoir.ions))
    attrs = {
        "case": case.describe(), "case_json": json.dumps(case_to_mapping(case)),
        "before_json": json.dumps(case_to_mapping(before)), "drives_json": drives_json,
        "kind": "poisson-nernst-planck",
        "debye_time_s": debye**2 / d_ref, "rc_time_s": debye * length / d_ref, "diffusion_time_s": length**2 / d_ref,
        "viscous_time_s": case.solvent.density * length**2 / case.solvent.viscosity,
        "closed_equilibrium_difference": float(np.max(np.abs(last[:, nion] - setup.closed.psi))
                                               / max(float(np.max(np.abs(setup.closed.psi))), 1.0)),
        "reservoir_potential_difference": float(np.max(np.abs(setup.closed.psi - setup.reservoir.psi))) * vt,
        "reservoir_inventory_difference": float(np.max(np.abs(closed_inv / reservoir_inv - 1.0))),
        "intervals": result.intervals, "time_steps": result.steps,
        "note": ("closed section: no ion enters or leaves, so the inventory is that of the start; the long-time "
                 "state is the closed-section equilibrium (closed_*), which differs from the reservoir "
                 "equilibrium of the same walls (reservoir_*) by reservoir_potential_difference (V) and "
                 "reservoir_inventory_difference; closed_equilibrium_difference is the last potential profile's "
                 "distance from it, relative to the larger of its largest value and kT/e"),
    }
    return xr.Dataset(variables, coords=coords, attrs=attrs)
