"""What a transient run reports, from the states of one grid (``model.pnp_setup.Setup``), in SI.

Section integrals are sums over the node volumes times ``S_AREA`` (the full section per unit channel length, or
per unit width of a slit), as in the steady summary. The wall charge of a wall at fixed potential is the flux of
the discrete Poisson equation through it: the charge that balances its end cell,
sigma_hat = -(a (psi_neighbour - psi_wall) + kappa2 V rho), so the section's charge balance is exact.
"""

from __future__ import annotations

import numpy as np

from edl_solver.constants import AVOGADRO, BOLTZMANN, ELEMENTARY_CHARGE
from edl_solver.kernels import layout
from edl_solver.kernels.pnp_system import SLOT_FIELD, SLOT_LEFT, SLOT_PRESSURE, drive_value, wall_row
from edl_solver.kernels.walls import regulated_charge
from edl_solver.model.pnp_setup import Setup

#: The series on time, in this order in the array of ``series``; ions' inventories follow.
SERIES = ("mean_velocity_eo", "mean_velocity_pressure", "flow_rate", "convection_current", "conduction_current",
          "space_charge", "salt_stored", "field", "pressure_gradient", "wall_charge_density_left",
          "wall_charge_density_right", "wall_potential_left", "wall_potential_right")


def _drive(setup: Setup, slot: int, t_hat: float) -> float:
    pr = setup.problem
    return float(drive_value(slot, t_hat, pr.dcode, pr.dbase, pr.dsine, pr.dstart, pr.dtimes, pr.dvalues))


def _conc(setup: Setup, state: np.ndarray) -> np.ndarray:
    nion = setup.bulk.size
    return 1.0 + state[:, :nion] if setup.problem.model == layout.DH else np.exp(state[:, :nion])


def wall_charges(setup: Setup, state: np.ndarray, t_hat: float) -> np.ndarray:
    """Dimensionless charge of the left and right wall ends (0 at a symmetry plane)."""
    pr = setup.problem
    nion = setup.bulk.size
    psi = state[:, nion]
    rho = _rho(setup, state)
    out = np.zeros(2)
    for end, (j, k) in enumerate(((0, 1), (psi.size - 1, psi.size - 2))):
        value = _drive(setup, SLOT_LEFT + end, t_hat)
        row = wall_row(pr.walls, end, pr.wall_field[end], value)
        kind = int(row[layout.W_TYPE])
        if kind == layout.POTENTIAL:
            a = pr.link[0] if end == 0 else pr.link[-1]
            out[end] = -(a * (psi[k] - psi[j]) + pr.kappa2 * pr.volume[j] * rho[j])
        elif kind == layout.FLUX:
            out[end] = row[layout.W_VALUE]
        else:
            out[end] = regulated_charge(psi[j], row)[0]
    return out


def _rho(setup: Setup, state: np.ndarray) -> np.ndarray:
    conc = _conc(setup, state)
    if setup.problem.model == layout.DH:
        conc = conc - 1.0
    return conc @ setup.problem.ions[:, layout.SPECIES_WEIGHT]


def series(setup: Setup, states: np.ndarray, times: np.ndarray) -> np.ndarray:
    """(time, len(SERIES) + n_ions) reported values in SI (see ``SERIES``; then the inventories, mol per unit
    length)."""
    sc, pr = setup.sc, setup.problem
    nion = setup.bulk.size
    area, volume = sc[layout.S_AREA], pr.volume
    eo_unit = sc[layout.S_EO_VELOCITY] * setup.field_scale
    p_unit = sc[layout.S_PRESSURE_VELOCITY] * setup.pressure_scale
    vt = sc[layout.S_THERMAL_VOLTAGE]
    valence = pr.ions[:, layout.SPECIES_VALENCE]
    temperature = vt * ELEMENTARY_CHARGE / BOLTZMANN
    conductance = (valence * ELEMENTARY_CHARGE) ** 2 * AVOGADRO * setup.diffusivity * setup.bulk / (
        BOLTZMANN * temperature)  # S/m per unit relative concentration
    out = np.empty((times.size, len(SERIES) + nion))
    for i, (t, state) in enumerate(zip(times, states, strict=True)):
        t_hat = t / setup.time_unit
        conc = _conc(setup, state)
        rho = _rho(setup, state)
        v, w = state[:, nion + 1] * eo_unit, state[:, nion + 2] * p_unit
        field = _drive(setup, SLOT_FIELD, t_hat) * setup.field_scale
        flows = (area * (volume @ v), area * (volume @ w))
        charge_unit = sc[layout.S_VOLUME_CHARGE] * area
        held = conc - conc[setup.centre][None, :]
        sigma = wall_charges(setup, state, t_hat) * sc[layout.S_CHARGE_DENSITY]
        out[i, :len(SERIES)] = (
            flows[0] / sc[layout.S_SECTION_AREA], flows[1] / sc[layout.S_SECTION_AREA], flows[0] + flows[1],
            charge_unit * (volume @ (rho * (v + w))), field * area * float(conductance @ (volume @ conc)),
            charge_unit * (volume @ rho), area * float(setup.bulk @ (volume @ held)), field,
            _drive(setup, SLOT_PRESSURE, t_hat) * setup.pressure_scale, sigma[0], sigma[1],
            state[0, nion] * vt, state[-1, nion] * vt)
        out[i, len(SERIES):] = area * setup.bulk * (volume @ conc)
    return out


def profiles(setup: Setup, states: np.ndarray) -> dict[str, np.ndarray]:
    """Profiles on (time, x) and (time, ion, x) in SI: potential, concentration, velocity_eo, velocity."""
    sc = setup.sc
    nion = setup.bulk.size
    eo_unit = sc[layout.S_EO_VELOCITY] * setup.field_scale
    p_unit = sc[layout.S_PRESSURE_VELOCITY] * setup.pressure_scale
    conc = np.exp(states[:, :, :nion]) if setup.problem.model != layout.DH else 1.0 + states[:, :, :nion]
    return {"potential": states[:, :, nion] * sc[layout.S_THERMAL_VOLTAGE],
            "concentration": np.transpose(conc * setup.bulk[None, None, :], (0, 2, 1)),
            "velocity_eo": states[:, :, nion + 1] * eo_unit,
            "velocity": states[:, :, nion + 1] * eo_unit + states[:, :, nion + 2] * p_unit}


def floors(setup: Setup, values: np.ndarray) -> np.ndarray:
    """Magnitudes below which a series counts as zero for the error estimate: a total that cancels (the space
    charge between two opposite walls), a small second-order effect (the salt a weak layer stores) or a value
    that stays zero (the charge of a wall in a closed section) is measured against the size of the quantities it
    is made of (the changes the time stepping measures its errors against, ``Setup.error_scales``), not against
    itself."""
    sc, pr = setup.sc, setup.problem
    nion = setup.bulk.size
    index = {name: i for i, name in enumerate(SERIES)}
    out = np.zeros(values.shape[1])
    psi = float(setup.error_scales[nion])
    sigma = max(float(np.max(np.abs(values[:, index[f"wall_charge_density_{end}"]]))) for end in ("left", "right"))
    sigma = max(sigma, sc[layout.S_CHARGE_DENSITY] * np.sqrt(pr.kappa2) * psi)
    perimeter = sc[layout.S_SECTION_AREA] / sc[layout.S_LENGTH]
    speeds = (float(setup.error_scales[nion + 1]) * sc[layout.S_EO_VELOCITY] * setup.field_scale,
              float(setup.error_scales[nion + 2]) * sc[layout.S_PRESSURE_VELOCITY] * setup.pressure_scale)
    for end in ("left", "right"):
        out[index[f"wall_charge_density_{end}"]] = sigma
        out[index[f"wall_potential_{end}"]] = psi * sc[layout.S_THERMAL_VOLTAGE]
    out[index["mean_velocity_eo"]], out[index["mean_velocity_pressure"]] = speeds
    out[index["flow_rate"]] = sum(speeds) * sc[layout.S_SECTION_AREA]
    out[index["space_charge"]] = sigma * perimeter
    out[index["salt_stored"]] = float(np.max(setup.error_scales[:nion])) * float(setup.bulk.sum()) * \
        sc[layout.S_SECTION_AREA]
    out[index["convection_current"]] = sigma * perimeter * sum(speeds)
    return out
