"""Transient runs made up for the tests of their file, report, figure and command (not physics: shapes and
attributes in the schema of issue 14, with values of plausible size).

``full_run`` has every variable of the Poisson-Nernst-Planck schema (two different slit walls, two ions,
profiles); ``startup_run`` is the subset a flow start-up (``edl.transient`` for a field step) gives.
"""

from __future__ import annotations

import dataclasses
import json

import numpy as np

import edl_solver as edl
from edl_solver.inputs.casefile import case_to_mapping

#: A 40 nm slit in 1 mM NaCl whose top wall is switched from 0 to -50 mV (the bottom one held at -25 mV).
CASE = edl.Case(geometry=edl.Slit(height=40e-9), electrolyte=edl.Electrolyte.from_ions({"Na+": "1 mM", "Cl-": "1 mM"}),
                wall=(edl.Wall(zeta=-0.025), edl.Wall(zeta=-0.05)), field=1e4)
BEFORE = dataclasses.replace(CASE, wall=(edl.Wall(zeta=-0.025), edl.Wall(zeta=0.0)))
#: The thermal voltage at 25 degC, V (from memory).
THERMAL = 0.025693


def full_run(times: int = 12, nodes: int = 41) -> object:
    """A run with every variable of the schema: the top wall charging with time constant 1 us."""
    import xarray as xr

    t = np.geomspace(1e-9, 1e-4, times)
    h = 20e-9
    x = np.linspace(-h, h, nodes)
    rise = 1.0 - np.exp(-t / 1e-6)
    walls = np.stack([np.full_like(t, -0.025), -0.05 * rise], axis=1)  # (time, wall): bottom, top
    debye = 9.6e-9
    left, right = np.cosh((x + h) / debye), np.cosh((x - h) / debye)
    shape = np.cosh(2.0 * h / debye)
    potential = (walls[:, :1] * right[None, :] + walls[:, 1:] * left[None, :]) / shape
    concentration = np.stack([np.exp(-potential / THERMAL), np.exp(potential / THERMAL)], axis=1)  # (time, ion, x)
    sigma = 0.01 * walls
    velocity = -1e-4 * (1.0 - potential / np.mean(walls, axis=1, keepdims=True)) * rise[:, None]
    inventory = np.stack([4e-5 * (1 + 1e-9 * rise), 4e-5 * (1 - 1e-9 * rise)], axis=1)
    mean = np.mean(velocity, axis=1)
    variables = {
        "mean_velocity_eo": ("time", mean, {"units": "m/s"}),
        "mean_velocity_pressure": ("time", np.zeros_like(t), {"units": "m/s"}),
        "mean_velocity": ("time", mean, {"units": "m/s"}),
        "flow_rate": ("time", mean * 2 * h, {"units": "m^2/s"}),
        "convection_current": ("time", 1e-7 * rise, {"units": "A/m"}),
        "conduction_current": ("time", 1e-5 + 1e-7 * rise, {"units": "A/m"}),
        "wall_charge_density": (("time", "wall"), sigma, {"units": "C/m^2"}),
        "wall_potential": (("time", "wall"), walls, {"units": "V"}),
        "space_charge": ("time", -np.sum(sigma, axis=1), {"units": "C/m^2"}),
        "salt_stored": ("time", 2e-9 * rise, {"units": "mol/m^2"}),
        "field": ("time", np.full_like(t, 1e4), {"units": "V/m"}),
        "pressure_gradient": ("time", np.zeros_like(t), {"units": "Pa/m"}),
        "error_estimate": ("time", np.full_like(t, 3e-7), {"units": "1"}),
        "inventory": (("time", "ion"), inventory, {"units": "mol/m^2"}),
        "potential": (("time", "x"), potential, {"units": "V"}),
        "velocity_eo": (("time", "x"), velocity, {"units": "m/s"}),
        "velocity": (("time", "x"), velocity, {"units": "m/s"}),
        "concentration": (("time", "ion", "x"), concentration, {"units": "mol/m^3"}),
    }
    coords = {"time": ("time", t, {"units": "s"}), "wall": ("wall", ["bottom", "top"]),
              "ion": ("ion", ["Na+", "Cl-"]), "x": ("x", x, {"units": "m"})}
    attrs = {"case": CASE.describe(), "case_json": json.dumps(case_to_mapping(CASE)),
             "before_json": json.dumps(case_to_mapping(BEFORE)),
             "drives_json": json.dumps({"field": {"kind": "sine", "amplitude": "10 kV/m", "frequency": "1 MHz"}}),
             "kind": "poisson-nernst-planck", "debye_time_s": 4.6e-8, "rc_time_s": 9.2e-7, "diffusion_time_s": 2e-7,
             "viscous_time_s": 4.5e-10, "closed_equilibrium_difference": 2e-7, "note": "made up for the tests"}
    return xr.Dataset(variables, coords=coords, attrs=attrs)


def startup_run() -> object:
    """What ``edl.transient`` gives today for a field step of ``CASE`` (a flow start-up)."""
    return edl.transient(CASE, np.geomspace(1e-12, 1e-7, 8))
