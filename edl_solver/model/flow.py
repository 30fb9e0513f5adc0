"""Stokes flow across the section: electroosmotic and pressure-driven flow rates and velocities.

The Stokes equation eta laplacian(u) = dp/dx - rho_e E is solved on the same grid as the potential
(in ``_kernels.section_integrals``): the EO part laplacian(u_eo) = -rho_e E / eta and the pressure part
laplacian(u_p) = (dp/dx) / eta, each with no slip at the walls. With uniform eps and eta the EO part
equals -(eps E / eta)(zeta - phi) exactly (the check of the numerical solve). The flow rates
Q_eo = E (eps kT / e eta) int u_eo_hat dA and Q_p = (dp/dx)(L^2 / eta) int u_p_hat dA are part of the
compiled summary (``_summary.summarize``); this module turns the profiles into SI.
"""

from __future__ import annotations

import numpy as np

from edl_solver.inputs.case import Case
from edl_solver.model.scaling import Scales


def velocity_profiles(u_eo_hat: np.ndarray, u_p_hat: np.ndarray, units: Scales, case: Case
                      ) -> tuple[np.ndarray, np.ndarray]:
    """EO and pressure-driven velocity profiles on the computed nodes, m/s."""
    return (case.field * units.eo_velocity_per_field * u_eo_hat,
            case.pressure_gradient * units.pressure_velocity_per_gradient * u_p_hat)
