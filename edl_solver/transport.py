"""Electric currents along the channel: ionic conduction and convection of the space charge.

Conduction (Nernst-Einstein mobility D/kT): I_cond = E (e^2 N_A / kT) sum_i z_i^2 D_i int c_i dA.
Convection: I_conv = int rho_e u dA, split into its EO part (proportional to E) and the streaming part
(the pressure-driven flow). Slit values are per unit width.
"""

from __future__ import annotations

import numpy as np

from edl_solver import _kernels as k
from edl_solver.case import Case
from edl_solver.constants import AVOGADRO, FARADAY
from edl_solver.scaling import Scales


def current_summary(integrals: np.ndarray, units: Scales, case: Case) -> dict[str, float]:
    """Conduction, streaming and EO convection currents and the current per unit field, SI."""
    ions = case.electrolyte.ions
    conductance = FARADAY / units.thermal_voltage * units.area * sum(
        ion.valence**2 * ion.diffusivity * ion.concentration * integrals[k.ION_INTEGRALS + i]
        for i, ion in enumerate(ions))
    charge_area = units.volume_charge * units.area
    eo_convection = charge_area * units.eo_velocity_per_field * integrals[k.I_RHO_UEO]
    streaming_per_gradient = charge_area * units.pressure_velocity_per_gradient * integrals[k.I_RHO_UP]
    per_field = conductance + eo_convection
    streaming = case.pressure_gradient * streaming_per_gradient
    return {
        "conduction_current": case.field * conductance,
        "streaming_current": streaming,
        "eo_convection_current": case.field * eo_convection,
        "current": case.field * per_field + streaming,
        "current_per_field": per_field,
        "_streaming_current_per_gradient": streaming_per_gradient,
    }


def concentrations(psi: np.ndarray, case: Case) -> np.ndarray:
    """Ion concentrations across the section, mol/m^3: c_i = c_i,bulk exp(-z_i psi) (linearised for the
    Debye-Hueckel model; divided by the crowding factor 1 + sum_j nu_j (exp(-z_j psi) - 1) for the steric
    model, Kilic, Bazant & Ajdari 2007)."""
    ions = case.electrolyte.ions
    if case.model == "dh":
        return np.array([ion.concentration * (1.0 - ion.valence * psi) for ion in ions])
    boltzmann = np.array([np.exp(-ion.valence * psi) for ion in ions])
    bulk = np.array([ion.concentration for ion in ions])[:, None]
    if case.model == "steric":
        packing = bulk * AVOGADRO * ions[0].diameter ** 3
        return bulk * boltzmann / (1.0 + np.sum(packing * (boltzmann - 1.0), axis=0))
    return bulk * boltzmann
