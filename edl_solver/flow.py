"""Stokes flow across the section: electroosmotic and pressure-driven flow rates and velocities.

The Stokes equation eta laplacian(u) = dp/dx - rho_e E is solved on the same grid as the potential
(in ``_kernels.section_integrals``): the EO part laplacian(u_eo) = -rho_e E / eta and the pressure part
laplacian(u_p) = (dp/dx) / eta, each with no slip at the walls. With uniform eps and eta the EO part
equals -(eps E / eta)(zeta - phi) exactly (the check of the numerical solve). This module turns the
dimensionless results into SI.
"""

from __future__ import annotations

import numpy as np

from edl_solver import _kernels as k
from edl_solver.case import Case
from edl_solver.scaling import Scales


def flow_summary(integrals: np.ndarray, units: Scales, case: Case) -> dict[str, float]:
    """Flow rates (per unit width for a slit) and mean velocities, SI.

    Q_eo = E (eps kT / e eta) int u_eo_hat dA,  Q_p = (dp/dx)(L^2 / eta) int u_p_hat dA.
    """
    eo_per_field = units.eo_velocity_per_field * integrals[k.I_UEO] * units.area
    p_per_gradient = units.pressure_velocity_per_gradient * integrals[k.I_UP] * units.area
    q_eo = case.field * eo_per_field
    q_p = case.pressure_gradient * p_per_gradient
    return {
        "flow_rate_eo": q_eo,
        "flow_rate_pressure": q_p,
        "mean_velocity_eo": q_eo / units.section_area,
        "mean_velocity_pressure": q_p / units.section_area,
        "_flow_rate_eo_per_field": eo_per_field,
        "_flow_rate_per_gradient": p_per_gradient,
    }


def velocity_profiles(u_eo_hat: np.ndarray, u_p_hat: np.ndarray, units: Scales, case: Case
                      ) -> tuple[np.ndarray, np.ndarray]:
    """EO and pressure-driven velocity profiles on the computed nodes, m/s."""
    return (case.field * units.eo_velocity_per_field * u_eo_hat,
            case.pressure_gradient * units.pressure_velocity_per_gradient * u_p_hat)
