"""Layouts of the packed vectors that the compiled steps share, each declared once.

The summary vector: one slot per summary value, two for a value that holds a (bottom, top) pair, in the
order of ``SUMMARY_KEYS`` (the order of ``Result.summary`` and of the files). ``results.schema`` gives each
key its unit and long name.
"""

from __future__ import annotations

#: Every summary value, in the order of the summary vector.
SUMMARY_KEYS: tuple[str, ...] = (
    "debye_length", "kappa_h", "zeta", "wall_charge_density", "stern_potential", "centre_potential",
    "mean_potential", "flow_rate_eo", "flow_rate_pressure", "mean_velocity_eo", "mean_velocity_pressure",
    "hs_velocity", "eo_ratio", "conduction_current", "streaming_current", "eo_convection_current", "current",
    "current_per_field", "thin_layer_zeta", "thin_layer_flow_rate_eo", "thin_layer_flow_rate_error",
    "thin_layer_mean_velocity_error", "thin_layer_max_outer_deviation", "conductance_per_length",
    "streaming_conductance", "streaming_potential_coefficient", "electroviscous_ratio", "eo_pump_flow_per_field",
    "eo_pump_pressure_per_voltage", "diffusioosmotic_flow", "diffusion_potential", "cation_transference",
    "selectivity", "figure_of_merit", "max_efficiency", "efficiency_at_max_power", "max_power_per_length",
    "thin_layer_conductance_per_length", "thin_layer_streaming_potential_coefficient",
    "thin_layer_electroviscous_ratio", "thin_layer_eo_pump_pressure_per_voltage", "thin_layer_diffusioosmotic_flow",
    "thin_layer_diffusion_potential", "thin_layer_cation_transference", "thin_layer_max_efficiency",
    "thin_layer_conductance_per_length_error", "thin_layer_streaming_potential_coefficient_error",
    "thin_layer_electroviscous_ratio_error", "thin_layer_eo_pump_pressure_per_voltage_error",
    "thin_layer_diffusioosmotic_flow_error", "thin_layer_diffusion_potential_error",
    "thin_layer_cation_transference_error", "thin_layer_max_efficiency_error", "charge_balance",
    "reciprocity_residual", "error_estimate",
)

#: Summary keys that hold a (bottom, top) pair: two slots each (equal for a symmetric case).
PAIR_KEYS = ("zeta", "wall_charge_density", "stern_potential", "hs_velocity", "thin_layer_zeta")


def _slots() -> dict[str, int]:
    slots, at = {}, 0
    for key in SUMMARY_KEYS:
        slots[key] = at
        at += 2 if key in PAIR_KEYS else 1
    return slots


#: Where each summary key starts in the summary vector.
SLOTS = _slots()
SUMMARY_SIZE = max(SLOTS.values()) + 1


# Status codes of the compiled solve of one case (``kernels.adaptive``, ``kernels.batch``); what they mean to a
# user is ``results.schema.STATUS``.
CONVERGED = 0
NEWTON_FAILED = 1
ACCURACY_MISSED = 2
IDENTITY_FAILED = 3
