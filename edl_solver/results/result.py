"""What a solve returns: profiles across the section, the summary and the solver's status."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.inputs.case import Case

#: Units of the profile arrays, for reports and files.
PROFILE_UNITS: dict[str, str] = {
    "coordinate": "m",
    "potential": "V",
    "concentration": "mol/m^3",
    "charge_density": "C/m^3",
    "velocity_eo": "m/s",
    "velocity_pressure": "m/s",
    "velocity": "m/s",
    "velocity_thin_layer": "m/s",
    "eo_per_field": "m^2/(V*s)",
}


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


#: Units and one-line meanings of the summary values.
SUMMARY_UNITS: dict[str, tuple[str, str]] = {
    "debye_length": ("m", "Debye length of the bulk electrolyte"),
    "kappa_h": ("1", "half-height (slit) or radius (capillary) over the Debye length"),
    "zeta": ("V", "wall potential relative to the reservoir"),
    "wall_charge_density": ("C/m^2", "wall surface charge density"),
    "stern_potential": ("V", "potential of the charge plane behind the Stern layer (zeta + sigma / C_S)"),
    "centre_potential": ("V", "potential at the slit mid-plane or capillary axis"),
    "mean_potential": ("V", "cross-section mean potential"),
    "flow_rate_eo": ("m^2/s|m^3/s", "electroosmotic flow rate (per unit width for a slit)"),
    "flow_rate_pressure": ("m^2/s|m^3/s", "pressure-driven flow rate (per unit width for a slit)"),
    "mean_velocity_eo": ("m/s", "mean electroosmotic velocity"),
    "mean_velocity_pressure": ("m/s", "mean pressure-driven velocity"),
    "hs_velocity": ("m/s", "Helmholtz-Smoluchowski slip velocity -eps zeta E / eta of the thin-layer model"),
    "eo_ratio": ("1", "mean EO velocity over the thin-layer mean velocity"),
    "conduction_current": ("A/m|A", "ionic conduction current (per unit width for a slit)"),
    "streaming_current": ("A/m|A", "convection current of the space charge in the pressure-driven flow"),
    "eo_convection_current": ("A/m|A", "convection current of the space charge in the EO flow"),
    "current": ("A/m|A", "total electric current"),
    "current_per_field": ("S|S*m", "total current per unit field at zero pressure gradient"),
    "thin_layer_zeta": ("V", "zeta used by the thin-layer model (Grahame value for a charged wall)"),
    "thin_layer_flow_rate_eo": ("m^2/s|m^3/s", "EO flow rate of the thin-layer model"),
    "thin_layer_flow_rate_error": ("1", "(thin-layer - full) / full EO flow rate"),
    "thin_layer_mean_velocity_error": ("1", "(thin-layer - full) / full mean EO velocity"),
    "thin_layer_max_outer_deviation": (
        "1", "largest |thin-layer - full| EO velocity outside the double layers over the largest slip speed"),
    "conductance_per_length": ("S|S*m", "current per unit field at no pressure or salt gradient"),
    "streaming_conductance": ("A/Pa|A*m/Pa", "streaming current per unit -dp/dx"),
    "streaming_potential_coefficient": ("V/Pa", "streaming potential per pressure difference, at zero current"),
    "electroviscous_ratio": ("1", "apparent over true viscosity for pressure-driven flow at zero current"),
    "eo_pump_flow_per_field": ("m^3/(V*s)|m^4/(V*s)", "EO pump flow rate per unit field at no back pressure"),
    "eo_pump_pressure_per_voltage": ("Pa/V", "EO pump pressure rise per applied voltage at no flow"),
    "diffusioosmotic_flow": ("m^3/s|m^4/s", "flow rate per unit d ln c/dx at zero current and no pressure "
                             "difference (positive: toward higher concentration)"),
    "diffusion_potential": ("V", "potential change per unit change of ln c along the channel, at zero current"),
    "cation_transference": ("1", "share of the current carried by cations under a field"),
    "selectivity": ("1", "cation minus anion transference (1: ideally cation-selective)"),
    "figure_of_merit": ("1", "q^2 / (1 - q^2) of pressure-to-electrical energy conversion"),
    "max_efficiency": ("1", "maximum efficiency of pressure-to-electrical energy conversion"),
    "efficiency_at_max_power": ("1", "efficiency of pressure-to-electrical conversion at maximum power"),
    "max_power_per_length": ("W/m^2|W/m", "maximum electrical power per channel length at this pressure gradient"),
    **{f"thin_layer_{key}": (unit, f"thin-layer model: {text}") for key, (unit, text) in {
        "conductance_per_length": ("S|S*m", "conductance per length (bulk conductivity)"),
        "streaming_potential_coefficient": ("V/Pa", "streaming potential coefficient (Smoluchowski)"),
        "electroviscous_ratio": ("1", "electroviscous ratio"),
        "eo_pump_pressure_per_voltage": ("Pa/V", "EO pump pressure per voltage"),
        "diffusioosmotic_flow": ("m^3/s|m^4/s", "diffusio-osmotic flow per unit d ln c/dx (z:z only)"),
        "diffusion_potential": ("V", "diffusion potential per unit ln c (bulk transference)"),
        "cation_transference": ("1", "cation transference of the bulk electrolyte"),
        "max_efficiency": ("1", "maximum energy-conversion efficiency"),
    }.items()},
    **{f"thin_layer_{key}_error": ("1", f"(thin-layer - full) / full {key.replace('_', ' ')}") for key in (
        "conductance_per_length", "streaming_potential_coefficient", "electroviscous_ratio",
        "eo_pump_pressure_per_voltage", "diffusioosmotic_flow", "diffusion_potential", "cation_transference",
        "max_efficiency")},
    "charge_balance": ("1", "net charge of walls plus liquid over the wall charge (0 exactly)"),
    "reciprocity_residual": ("1", "relative mismatch of streaming current per gradient and EO flow per field"),
    "error_estimate": ("1", "estimated relative discretisation error of the summary values"),
}


def summary_unit(key: str, capillary: bool) -> str:
    """Unit string of a summary value; slit and capillary units are separated by '|'."""
    unit = SUMMARY_UNITS[key][0]
    if "|" in unit:
        slit_unit, capillary_unit = unit.split("|")
        return capillary_unit if capillary else slit_unit
    return unit


@dataclass(frozen=True)
class Result:
    """The outcome of ``solve``.

    Attributes
    ----------
    case : Case
        The inputs, SI.
    profiles : Profiles
    summary : dict
        SI values keyed as in ``SUMMARY_UNITS``; for a slit with two different walls, ``zeta``,
        ``wall_charge_density``, ``hs_velocity`` and ``thin_layer_zeta`` are (bottom, top) pairs.
    verdict : str
        The thin-layer model's validity in plain words, at ``case.tolerance``.
    status : str
        "converged" (a single solve raises instead of returning anything else).
    message : str
    iterations : int
        Newton iterations over all grids.
    residual : float
        Max row-scaled residual of the finest grid, kT/e.
    warnings : tuple of str
        Notes on the physical validity of the model for this case.
    response_matrix : ndarray, optional
        3 x 3 linear-response matrix of (volume flow, current, salt flux) against (solvent force X_P = -dp/dx
        + RT sum c_i d ln c/dx, field E, salt force X_s), per unit length; see ``_summary.reduced_matrix``.
    ion_response_matrix : ndarray, optional
        The same resolved per ion, (1 + n) x (1 + n); see ``_summary.ion_response_matrix``.
    """

    case: Case
    profiles: Profiles
    summary: dict[str, Any]
    verdict: str
    status: str = "converged"
    message: str = ""
    iterations: int = 0
    residual: float = 0.0
    warnings: tuple[str, ...] = field(default_factory=tuple)
    response_matrix: np.ndarray | None = None
    ion_response_matrix: np.ndarray | None = None

    def to_hdf5(self, path: str | Path) -> Path:
        """Write the result to an HDF5 (netCDF-4) file atomically; see ``edl_solver.io.hdf5``."""
        from edl_solver.io import hdf5 as io

        return io.write_result(self, path)

    def report(self) -> str:
        """A short plain-text report: inputs, Debye length, kappa h, summary and verdict."""
        from edl_solver.report import text as report

        return report.text(self)
