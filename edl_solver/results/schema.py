"""The schema of what a solve returns: the SI unit and long name of every summary value and profile.

Units of extensive values (flow rates, currents, conductances) are a pair (per unit width, per channel);
the geometry's ``extent`` picks one (``inputs.geometry.extent_unit``). Files store these SI units; reports and
figures show the same quantities in the units of ``report.units`` (one prefix per quantity).
"""

from __future__ import annotations

from edl_solver.inputs.geometry import Geometry, extent_unit
from edl_solver.kernels import layout
from edl_solver.kernels.layout import PAIR_KEYS, SUMMARY_KEYS

__all__ = ["CONVERGED", "FAILED", "KERNEL_FAILURES", "PAIR_KEYS", "PENDING", "PROFILE_UNITS", "STATUS", "SUMMARY_KEYS",
           "SUMMARY_UNITS", "status_word", "summary_unit"]

#: Status of a case, the one vocabulary of results, sweeps, maps and channels: the code stored in files
#: (``status`` variables), the word a ``Result`` or an operating point carries, and what it means.
PENDING, CONVERGED, FAILED = -1, 0, 1
STATUS: dict[int, tuple[str, str]] = {
    PENDING: ("pending", "not solved yet (an interrupted sweep; resume it)"),
    CONVERGED: ("converged", "solved to the requested accuracy, conservation identities checked"),
    FAILED: ("failed", "not solved: the reason is in the message"),
}
#: Why the compiled solve of a case failed (``kernels.layout`` codes), in words; any of them is FAILED.
KERNEL_FAILURES: dict[int, str] = {
    layout.NEWTON_FAILED: "Newton's method did not converge",
    layout.ACCURACY_MISSED: "the grid refinement limit was reached before the requested accuracy",
    layout.IDENTITY_FAILED: "the discrete solution violates charge balance or reciprocity",
}


def status_word(code: int) -> str:
    """The word of a status code ("pending", "converged", "failed")."""
    return STATUS[int(code)][0]


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


_UNITS: dict[str, tuple[str | tuple[str, str], str]] = {
    "debye_length": ("m", "Debye length of the bulk electrolyte"),
    "kappa_h": ("1", "half-height (slit) or radius (capillary) over the Debye length"),
    "zeta": ("V", "wall potential relative to the reservoir"),
    "wall_charge_density": ("C/m^2", "wall surface charge density"),
    "stern_potential": ("V", "potential of the charge plane behind the Stern layer (zeta + sigma / C_S)"),
    "centre_potential": ("V", "potential at the slit mid-plane or capillary axis"),
    "mean_potential": ("V", "cross-section mean potential"),
    "flow_rate_eo": (("m^2/s", "m^3/s"), "electroosmotic flow rate (per unit width for a slit)"),
    "flow_rate_pressure": (("m^2/s", "m^3/s"), "pressure-driven flow rate (per unit width for a slit)"),
    "mean_velocity_eo": ("m/s", "mean electroosmotic velocity"),
    "mean_velocity_pressure": ("m/s", "mean pressure-driven velocity"),
    "hs_velocity": ("m/s", "Helmholtz-Smoluchowski slip velocity -eps zeta E / eta of the thin-layer model"),
    "eo_ratio": ("1", "mean EO velocity over the thin-layer mean velocity"),
    "conduction_current": (("A/m", "A"), "ionic conduction current (per unit width for a slit)"),
    "streaming_current": (("A/m", "A"), "convection current of the space charge in the pressure-driven flow"),
    "eo_convection_current": (("A/m", "A"), "convection current of the space charge in the EO flow"),
    "current": (("A/m", "A"), "total electric current"),
    "current_per_field": (("S", "S*m"), "total current per unit field at zero pressure gradient"),
    "thin_layer_zeta": ("V", "zeta used by the thin-layer model (Grahame value for a charged wall)"),
    "thin_layer_flow_rate_eo": (("m^2/s", "m^3/s"), "EO flow rate of the thin-layer model"),
    "thin_layer_flow_rate_error": ("1", "(thin-layer - full) / full EO flow rate"),
    "thin_layer_mean_velocity_error": ("1", "(thin-layer - full) / full mean EO velocity"),
    "thin_layer_max_outer_deviation": (
        "1", "largest |thin-layer - full| EO velocity outside the double layers over the largest slip speed"),
    "conductance_per_length": (("S", "S*m"), "conductance x channel length, i.e. current per unit field at no "
                               "pressure or salt gradient (per unit width for a slit); reports show it over 1 um"),
    "streaming_conductance": (("A/Pa", "A*m/Pa"), "streaming current per unit -dp/dx"),
    "streaming_potential_coefficient": ("V/Pa", "streaming potential per pressure difference, at zero current"),
    "electroviscous_ratio": ("1", "apparent over true viscosity for pressure-driven flow at zero current"),
    "eo_pump_flow_per_field": (("m^3/(V*s)", "m^4/(V*s)"), "EO pump flow rate per unit field at no back pressure"),
    "eo_pump_pressure_per_voltage": ("Pa/V", "EO pump pressure rise per applied voltage at no flow"),
    "diffusioosmotic_flow": (("m^3/s", "m^4/s"), "flow rate per unit d ln c/dx at zero current and no pressure "
                             "difference (positive: toward higher concentration)"),
    "diffusion_potential": ("V", "potential change per unit change of ln c along the channel, at zero current"),
    "cation_transference": ("1", "share of the current carried by cations under a field"),
    "selectivity": ("1", "cation minus anion transference (1: ideally cation-selective)"),
    "figure_of_merit": ("1", "q^2 / (1 - q^2) of pressure-to-electrical energy conversion"),
    "max_efficiency": ("1", "maximum efficiency of pressure-to-electrical energy conversion"),
    "efficiency_at_max_power": ("1", "efficiency of pressure-to-electrical conversion at maximum power"),
    "max_power_per_length": (("W/m^2", "W/m"), "maximum electrical power per channel length at this pressure gradient"),
    **{f"thin_layer_{key}": (unit, f"thin-layer model: {text}") for key, (unit, text) in {
        "conductance_per_length": (("S", "S*m"), "conductance x channel length (bulk conductivity)"),
        "streaming_potential_coefficient": ("V/Pa", "streaming potential coefficient (Smoluchowski)"),
        "electroviscous_ratio": ("1", "electroviscous ratio"),
        "eo_pump_pressure_per_voltage": ("Pa/V", "EO pump pressure per voltage"),
        "diffusioosmotic_flow": (("m^3/s", "m^4/s"), "diffusio-osmotic flow per unit d ln c/dx"),
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


#: Unit and long name of every summary value, in the order of the summary vector (``kernels.layout``).
SUMMARY_UNITS: dict[str, tuple[str | tuple[str, str], str]] = {key: _UNITS[key] for key in SUMMARY_KEYS}
if set(_UNITS) != set(SUMMARY_KEYS):  # a key added on one side only
    raise ImportError(f"results.schema and kernels.layout disagree on {sorted(set(_UNITS) ^ set(SUMMARY_KEYS))}")


def summary_unit(key: str, geometry: Geometry) -> str:
    """Unit string of a summary value for this geometry (per unit width for a slit, per channel else)."""
    return extent_unit(SUMMARY_UNITS[key][0], geometry)
