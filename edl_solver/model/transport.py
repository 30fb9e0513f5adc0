"""Transport along the channel: ion concentrations across the section and the salt's stoichiometry.

Currents: conduction (Nernst-Einstein mobility D/kT), I_cond = E (e^2 N_A / kT) sum_i z_i^2 D_i int c_i dA,
and convection of the space charge, I_conv = int rho_e u dA, split into its EO part (proportional to E) and
the streaming part (the pressure-driven flow); slit values are per unit width. These, the linear-response
matrices of the section and the lab quantities derived from them are computed, compiled, from the section
integrals in ``_summary.py`` (``summarize``, ``ion_response_matrix``, ``reduced_matrix``,
``lab_quantities``, ``cation_transference``), where each states its equations and sources.
"""

from __future__ import annotations

import numpy as np

from edl_solver.constants import AVOGADRO
from edl_solver.inputs.case import Case


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


def salt_stoichiometry(case: Case) -> np.ndarray:
    """Ions per formula unit of the electrolyte, nu_i = c_i / min_j c_j (KCl 1, 1; CaCl2 1, 2)."""
    bulk = np.array([ion.concentration for ion in case.electrolyte.ions])
    return bulk / bulk.min()


