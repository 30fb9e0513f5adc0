"""Fields across the section, SI."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Profiles:
    """Fields across the whole section on the (wall-clustered) finest grid; second-order accurate.

    Attributes
    ----------
    coordinate : ndarray
        Slit: y from 0 (bottom wall) to H (top wall), m. Capillary: r from 0 (axis) to a, m.
    coordinate_name : str
        "y" (slit) or "r" (capillary).
    potential : ndarray
        phi relative to the reservoir, V.
    concentration : ndarray
        Ion concentrations, shape (ions, nodes), mol/m^3.
    charge_density : ndarray
        rho_e = sum_i z_i e N_A c_i, C/m^3.
    velocity_eo, velocity_pressure, velocity : ndarray
        Electroosmotic, pressure-driven and total axial velocity, m/s.
    velocity_thin_layer : ndarray
        The thin-layer (slip) EO velocity profile for the same case, m/s.
    ion_names : tuple of str
    eo_per_field : ndarray
        EO velocity per unit field, m^2/(V s) (defined also when the case has no field).
    """

    coordinate: np.ndarray
    coordinate_name: str
    potential: np.ndarray
    concentration: np.ndarray
    charge_density: np.ndarray
    velocity_eo: np.ndarray
    velocity_pressure: np.ndarray
    velocity: np.ndarray
    velocity_thin_layer: np.ndarray
    ion_names: tuple[str, ...]
    eo_per_field: np.ndarray


@dataclass(frozen=True)
class RectangleProfiles:
    """Fields across the whole rectangular section on the finest (wall-clustered) tensor-product grid, the
    quarter solved mirrored to the full section; second-order accurate (the summary values are extrapolated).

    Attributes
    ----------
    y : ndarray
        Positions across the width, 0 to W, m (ny,).
    z : ndarray
        Positions across the height, 0 to H, m (nz,).
    potential : ndarray
        phi relative to the reservoir, V, (ny, nz): index [i, j] at (y[i], z[j]).
    concentration : ndarray
        Ion concentrations, (ions, ny, nz), mol/m^3.
    charge_density : ndarray
        rho_e, C/m^3, (ny, nz).
    velocity_eo, velocity_pressure, velocity : ndarray
        Electroosmotic, pressure-driven and total axial velocity, m/s, (ny, nz).
    velocity_thin_layer : ndarray
        The thin-layer model's EO velocity, m/s, (ny, nz): the plug flow at the slip velocity of equal walls, or
        the Stokes (Laplace) flow the two wall pairs' slip velocities drive.
    ion_names : tuple of str
    eo_per_field : ndarray
        EO velocity per unit field, m^2/(V s), (ny, nz).
    """

    y: np.ndarray
    z: np.ndarray
    potential: np.ndarray
    concentration: np.ndarray
    charge_density: np.ndarray
    velocity_eo: np.ndarray
    velocity_pressure: np.ndarray
    velocity: np.ndarray
    velocity_thin_layer: np.ndarray
    ion_names: tuple[str, ...]
    eo_per_field: np.ndarray

    #: The names of the two section coordinates (files, figures).
    coordinate_names = ("y", "z")
