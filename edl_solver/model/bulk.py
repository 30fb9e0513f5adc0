"""The bulk (reservoir) electrolyte's own properties: salt stoichiometry, conductivity, free-solution diffusion
potential and the Nernst potential of an ideally selective channel between two reservoirs.

Written once here for every Python caller (channel, conductance curves, validity maps); the compiled summary
(``kernels.summary``) evaluates the same conductivity from the packed case.
"""

from __future__ import annotations

import math

import numpy as np

from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.electrolyte import Ion
from edl_solver.model.conductivity import CONDUCTIVITY_LAWS, onsager_conductivities


def salt_stoichiometry(case: Case) -> np.ndarray:
    """Ions per formula unit of the electrolyte, nu_i = c_i / min_j c_j (KCl 1, 1; CaCl2 1, 2)."""
    bulk = np.array([ion.concentration for ion in case.electrolyte.ions])
    return bulk / bulk.min()


def bulk_conductivity(case: Case, law: str | None = None) -> float:
    """Bulk conductivity of the case's electrolyte, S/m.

    ``law="limiting"`` (what the solver uses everywhere): K = (F^2 / RT) sum_i z_i^2 D_i c_i, the Nernst-Einstein
    mobilities D_i / kT of infinite dilution (common practice), with the diffusivities at the case temperature
    (``Ion.diffusivity_at``). ``law="onsager"`` corrects it for the ion atmosphere of the concentrated bulk
    (``model.conductivity.onsager_conductivities``): 0.1413 S/m for 10 mM KCl at 25 degC, where the limiting
    value is 0.1499 S/m. ``None``: the case's own choice, ``case.bulk_conductivity``.
    """
    law = case.bulk_conductivity if law is None else law
    if law not in CONDUCTIVITY_LAWS:
        raise InputError(f"bulk_conductivity: {law!r} is not a conductivity law, expected one of "
                         f"{', '.join(CONDUCTIVITY_LAWS)}")
    if law == "onsager":
        return float(np.sum(onsager_conductivities(case)))
    rt = GAS_CONSTANT * case.solvent.temperature
    diffusivities = case.electrolyte.diffusivities(case.solvent.temperature)
    return FARADAY**2 / rt * sum(ion.valence**2 * d * ion.concentration
                                 for ion, d in zip(case.electrolyte.ions, diffusivities))


def henderson_potential(case: Case, left: float, right: float) -> float:
    """Zero-current voltage Delta V = V(L) - V(0) of an uncharged channel, V: the free-solution diffusion
    potential of a mixture whose ions all scale with the salt concentration,
    -(kT/e) (sum z_i D_i c_i / sum z_i^2 D_i c_i) ln(c_R/c_L) (Henderson 1907, from memory; for a 1:1 salt
    -(kT/e) (D_+ - D_-)/(D_+ + D_-) ln(c_R/c_L))."""
    ions = case.electrolyte.ions
    diffusivities = case.electrolyte.diffusivities(case.solvent.temperature)
    ratio = sum(i.valence * d * i.concentration for i, d in zip(ions, diffusivities)) / sum(
        i.valence**2 * d * i.concentration for i, d in zip(ions, diffusivities))
    return -GAS_CONSTANT * case.solvent.temperature / FARADAY * ratio * math.log(right / left)


def counter_ion(case: Case, wall_charge: float) -> Ion | None:
    """The counter-ion of a binary electrolyte for walls of total charge ``wall_charge``: the ion whose charge
    is of the opposite sign; None for uncharged walls or more (or fewer) than two kinds of ion, where no single
    ion carries the selectivity."""
    ions = case.electrolyte.ions
    if not wall_charge or len(ions) != 2:
        return None
    sign = math.copysign(1.0, wall_charge)
    return next(ion for ion in ions if ion.valence * sign < 0)


def nernst_potential(case: Case, valence: int, left: float, right: float) -> float:
    """Zero-current voltage Delta V = V(L) - V(0), V, of a membrane (channel) that only ions of valence z pass,
    between reservoirs of concentrations ``left`` and ``right``: the Nernst potential
    -(kT/(ze)) ln(c_R/c_L) = -(RT/(zF)) ln(c_R/c_L) (Nernst 1889, from memory), the limit of an ideally
    selective channel that the membrane potential approaches when the double layers fill it."""
    thermal = GAS_CONSTANT * case.solvent.temperature / FARADAY
    return -thermal / valence * math.log(right / left)
