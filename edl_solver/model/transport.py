"""Transport along the channel: the currents (compiled in the summary) and the salt's stoichiometry.

Currents: conduction (Nernst-Einstein mobility D/kT), I_cond = E (e^2 N_A / kT) sum_i z_i^2 D_i int c_i dA,
and convection of the space charge, I_conv = int rho_e u dA, split into its EO part (proportional to E) and
the streaming part (the pressure-driven flow); slit values are per unit width. These, the linear-response
matrices of the section and the lab quantities derived from them are computed, compiled, from the section
integrals in ``_summary.py`` (``summarize``, ``ion_response_matrix``, ``reduced_matrix``,
``lab_quantities``, ``cation_transference``), where each states its equations and sources; the ion
concentrations across the section are built with the other profiles (``model.profiles``).
"""

from __future__ import annotations

import numpy as np

from edl_solver.inputs.case import Case


def salt_stoichiometry(case: Case) -> np.ndarray:
    """Ions per formula unit of the electrolyte, nu_i = c_i / min_j c_j (KCl 1, 1; CaCl2 1, 2)."""
    bulk = np.array([ion.concentration for ion in case.electrolyte.ions])
    return bulk / bulk.min()
