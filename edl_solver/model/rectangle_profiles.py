"""The fields across a solved rectangle in SI, the quarter mirrored to the whole section (``RectangleProfiles``)."""

from __future__ import annotations

import numpy as np

from edl_solver.constants import AVOGADRO, ELEMENTARY_CHARGE
from edl_solver.inputs.case import Case
from edl_solver.kernels import layout
from edl_solver.model.profiles import concentrations
from edl_solver.model.rectangle_case import SolvedRectangle, thin_layer_field
from edl_solver.results.profiles import RectangleProfiles


def _mirrored(quarter: np.ndarray) -> np.ndarray:
    """A quarter's node array (centre first along both axes) as the whole section's, walls first and last."""
    half = np.concatenate((quarter[:0:-1], quarter), axis=0)
    return np.concatenate((half[:, :0:-1], half), axis=1)


def rectangle_profiles(case: Case, solved: SolvedRectangle) -> RectangleProfiles:
    """Potential, concentrations, space charge and velocities on the finest grid of ``solved``, full section, SI:
    y from 0 to W, z from 0 to H (the quarter's nodes from the centre, mirrored)."""
    grid, sc = solved.section.finest, solved.scales
    h, vt = sc[layout.S_LENGTH], solved.thermal_voltage
    geometry = case.geometry
    y = h * np.concatenate((-grid.y[:0:-1], grid.y)) + 0.5 * geometry.width
    z = h * np.concatenate((-grid.z[:0:-1], grid.z)) + 0.5 * geometry.height
    y[0], y[-1], z[0], z[-1] = 0.0, geometry.width, 0.0, geometry.height
    psi = _mirrored(grid.psi)
    eo_per_field = sc[layout.S_EO_VELOCITY] * _mirrored(grid.u_eo)
    velocity_eo = case.field * eo_per_field
    velocity_pressure = case.pressure_gradient * sc[layout.S_PRESSURE_VELOCITY] * _mirrored(grid.u_p)
    conc = concentrations(psi.ravel(), case).reshape(-1, *psi.shape)
    valence = np.array([ion.valence for ion in case.electrolyte.ions])[:, None, None]
    thin = case.field * _mirrored(thin_layer_field(solved.section, (float(solved.slip[0]), float(solved.slip[1]))))
    return RectangleProfiles(
        y=y, z=z, potential=vt * psi, concentration=conc,
        charge_density=ELEMENTARY_CHARGE * AVOGADRO * np.sum(valence * conc, axis=0),
        velocity_eo=velocity_eo, velocity_pressure=velocity_pressure, velocity=velocity_eo + velocity_pressure,
        velocity_thin_layer=thin, ion_names=tuple(ion.name for ion in case.electrolyte.ions),
        eo_per_field=eo_per_field)
