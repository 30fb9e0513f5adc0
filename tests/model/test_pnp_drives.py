"""Drives that vary in time in the transient Poisson-Nernst-Planck solver (issue 14)."""

from __future__ import annotations

import numpy as np
import pytest

import edl_solver as edl

SALT = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})


def test_a_sine_field_settles_to_the_frequency_response() -> None:
    """E(t) = E0 sin(2 pi f t) from rest, f = 2 GHz (5 viscous rates): after six periods (14 decay times of the
    slowest viscous mode) the mean EO velocity is A sin(2 pi f t + phase) with A and phase of
    ``frequency_response`` (its cos convention shifted by a quarter period; the response is checked against the
    closed form of the Debye-Hueckel slit in test_frequency_response), within 2e-6 of A (both held to 1e-6)."""
    case = edl.Case(edl.Slit(height="40 nm"), SALT, edl.Wall(zeta=-0.025), field=2e3, model="dh")
    f = 2e9
    times = np.linspace(6.0, 7.0, 7)[1:] / f
    run = edl.transient(case, times, drives={"field": edl.Drive.sine(amplitude="2 kV/m", frequency=f)})
    response = edl.frequency_response(case, [f])
    amplitude, phase = float(response["eo_velocity_amplitude"][0]), float(response["eo_velocity_phase"][0])
    expected = amplitude * np.sin(2 * np.pi * f * times + phase)
    assert run["mean_velocity_eo"].values == pytest.approx(expected, abs=2e-6 * amplitude)  # each to 1e-6
    assert run["field"].values == pytest.approx(2e3 * np.sin(2 * np.pi * f * times), rel=1e-12)


def test_a_ramped_electrode_follows_its_drive_and_a_table_jump_is_kept() -> None:
    """The top wall ramped from 0 to 100 mV in 1 us, the bottom wall held at 0: the wall potential is the drive's
    value at every output time; a table that jumps back to 0 at 2 us brings the charge back to zero and keeps the
    ions (inventory within 1e-10)."""
    rest = edl.Case(edl.Slit(height="40 nm"), SALT, edl.Wall(zeta=0.0))
    ramp = edl.Drive.ramp(start="0 mV", end="100 mV", duration="1 us")
    times = np.array([0.25e-6, 0.5e-6, 1e-6, 1.5e-6])
    run = edl.transient(rest, times, drives={"wall.top.zeta": ramp})
    assert run["wall_potential"].sel(wall="top").values == pytest.approx([0.025, 0.05, 0.1, 0.1], rel=1e-12)
    assert run["wall_potential"].sel(wall="bottom").values == pytest.approx(0.0, abs=1e-15)
    jump = edl.Drive.table(times=[0.0, 2e-6, 2e-6, 1.0], values=["100 mV", "100 mV", "0 mV", "0 mV"])
    back = edl.transient(rest, np.array([1e-6, 2e-6, 2e-4]), drives={"wall.top.zeta": jump})
    sigma = back["wall_charge_density"].sel(wall="top").values
    assert sigma[0] > 0 and abs(sigma[-1]) < 1e-6 * sigma[0]
    inventory = back["inventory"].values
    assert np.max(np.abs(inventory / inventory[0] - 1)) < 1e-10


def test_a_square_gate_charges_its_wall_against_an_electrode() -> None:
    """A 40 nm slit between an electrode at 0 V (bottom) and a gated wall (gate capacitance 0.1 F/m^2, top)
    driven by a +-0.2 V square wave at 100 kHz (half periods of 25 diffusion times): the gated wall's charge
    C_g (V_g - psi_0) takes the gate's sign in each half period, the electrode's the opposite, and it repeats
    period after period; the section stays neutral (common practice: Gauss's law)."""
    gated = edl.Wall(charge_density=0.0, gate_capacitance=0.1, gate_voltage=0.0)
    case = edl.Case(edl.Slit(height="40 nm"), SALT, (edl.Wall(zeta=0.0), gated))
    square = edl.Drive.square(amplitude="0.2 V", frequency="100 kHz")
    times = np.array([4.0, 9.0, 14.0, 19.0]) * 1e-6  # near the ends of high and low half periods
    run = edl.transient(case, times, drives={"wall.top.gate_voltage": square})
    sigma = run["wall_charge_density"]
    top, bottom = sigma.sel(wall="top").values, sigma.sel(wall="bottom").values
    assert top[0] > 0 > top[1] and bottom[0] < 0 < bottom[1]
    assert top[2:] == pytest.approx(top[:2], rel=1e-6)
    assert np.max(np.abs(run["space_charge"].values + top + bottom)) < 1e-9 * np.max(np.abs(top))


def test_a_closed_gated_capillary_follows_its_gate_without_charging() -> None:
    """A capillary whose only wall is gated: no electrode takes up charge and no ion can enter, so the wall
    charge stays (zero) and the whole section's potential follows the gate, psi_0 = V_g (Gauss's law)."""
    wall = edl.Wall(charge_density=0.0, gate_capacitance=0.1, gate_voltage=0.0)
    case = edl.Case(edl.Capillary(radius="20 nm"), SALT, wall)
    square = edl.Drive.square(amplitude="0.2 V", frequency="100 kHz")
    run = edl.transient(case, np.array([4.0, 9.0]) * 1e-6, drives={"wall.gate_voltage": square})
    assert np.max(np.abs(run["wall_charge_density"].values)) < 1e-12
    assert run["wall_potential"].values == pytest.approx([0.2, -0.2], rel=1e-9)
