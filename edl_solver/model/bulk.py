"""The bulk (reservoir) electrolyte's own transport: conductivity and free-solution diffusion potential.

Written once here for every Python caller (channel, conductance curves, validity maps); the compiled summary
(``kernels.summary``) evaluates the same conductivity from the packed case.
"""

from __future__ import annotations

import math

from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.inputs.case import Case


def bulk_conductivity(case: Case) -> float:
    """Bulk conductivity of the case's electrolyte, S/m.

    K = (F^2 / RT) sum_i z_i^2 D_i c_i (Nernst-Einstein mobilities D_i / kT, dilute limit; common practice).
    """
    rt = GAS_CONSTANT * case.solvent.temperature
    return FARADAY**2 / rt * sum(ion.valence**2 * ion.diffusivity * ion.concentration
                                 for ion in case.electrolyte.ions)


def henderson_potential(case: Case, left: float, right: float) -> float:
    """Zero-current voltage Delta V = V(L) - V(0) of an uncharged channel, V: the free-solution diffusion
    potential of a mixture whose ions all scale with the salt concentration,
    -(kT/e) (sum z_i D_i c_i / sum z_i^2 D_i c_i) ln(c_R/c_L) (Henderson 1907, from memory; for a 1:1 salt
    -(kT/e) (D_+ - D_-)/(D_+ + D_-) ln(c_R/c_L))."""
    ions = case.electrolyte.ions
    ratio = sum(i.valence * i.diffusivity * i.concentration for i in ions) / sum(
        i.valence**2 * i.diffusivity * i.concentration for i in ions)
    return -GAS_CONSTANT * case.solvent.temperature / FARADAY * ratio * math.log(right / left)
