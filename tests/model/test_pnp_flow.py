"""Transient Poisson-Nernst-Planck with unsteady flow (issue 14): the flow of the full solver against the exact
start-up of the flow alone, and a charging capillary."""

from __future__ import annotations

import numpy as np
import pytest

import edl_solver as edl

SALT = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})


def test_eo_startup_through_the_full_solver_matches_the_exact_flow_start_up() -> None:
    """A Debye-Hueckel slit at equilibrium with its field switched on, once through the Poisson-Nernst-Planck
    stepper (the wall given as a pair, so the layer is solved in time too) and once by the exact eigenmode
    solution of the flow alone (checked against the Fourier series in test_startup_flow): within 1e-6 of the
    steady EO velocity and convection current at every time, from 0.01 to 30 viscous times."""
    wall = edl.Wall(zeta=-0.005)
    case = edl.Case(edl.Slit(height="40 nm"), SALT, wall, field=2e3, model="dh")
    viscous = case.solvent.density * case.geometry.half_size**2 / case.solvent.viscosity
    times = viscous * np.array([0.01, 0.1, 0.3, 1.0, 3.0, 30.0])
    exact = edl.transient(case, times)
    run = edl.transient(case, times, before=edl.Case(case.geometry, SALT, (wall, wall), model="dh"))
    assert run.attrs["kind"] == "poisson-nernst-planck"
    for name in ("mean_velocity_eo", "convection_current"):
        steady = abs(exact[name].values[-1])
        assert run[name].values == pytest.approx(exact[name].values, abs=1e-6 * steady)
    assert run["error_estimate"].values[0] <= 1e-6


def test_a_charging_capillary_ends_at_its_closed_equilibrium() -> None:
    """A capillary's wall stepped from -20 to -100 mV with the field on: the charge it can gain is what the closed
    section holds (none: the wall charge stays that of the start), the flow follows the layer, and the last state
    is the closed-section equilibrium."""
    geometry = edl.Capillary(radius="20 nm")
    before = edl.Case(geometry, SALT, edl.Wall(zeta="-20 mV"), field=1e3)
    case = edl.Case(geometry, SALT, edl.Wall(zeta="-100 mV"), field=1e3)
    diffusion = geometry.half_size**2 / 2e-9
    run = edl.transient(case, np.array([1e-3, 1.0, 30.0]) * diffusion, before=before)
    assert run["wall_charge_density"].values == pytest.approx(edl.solve(before).summary["wall_charge_density"],
                                                              rel=1e-6)
    assert np.max(np.abs(run["potential"].values[-1] - run["closed_potential"].values)) < 1e-8
    inventory = run["inventory"].values
    assert np.max(np.abs(inventory / inventory[0] - 1)) < 1e-10
    assert run["mean_velocity_eo"].values == pytest.approx(edl.solve(before).summary["mean_velocity_eo"], rel=1e-5)
