"""Notes on the physical validity of the continuum model for one case.

Continuum Poisson-Boltzmann with point ions in a uniform dielectric, and Stokes flow with bulk viscosity,
lose accuracy in well-known regimes. Each rule below is a fact of the trade with no sharp limit (common
practice unless a source is named); a result outside them is indicative and the note says why.
"""

from __future__ import annotations

import numpy as np

from edl_solver.constants import AVOGADRO
from edl_solver.inputs.case import Case
from edl_solver.results.profiles import Profiles

#: Below this channel size (slit height or capillary diameter), m, water and ions are not a continuum
#: (common practice: about 1-2 nm).
SMALLEST_CONTINUUM_SIZE = 2e-9
#: Above this ionic strength, mol/m^3 (0.1 M), finite ion size and dielectric decrement matter (common practice).
LARGEST_DILUTE_STRENGTH = 100.0
#: Wall potential (units of kT/e) beyond which correlations of multivalent counter-ions matter (common practice).
MULTIVALENT_POTENTIAL = 4.0
#: Ion diameter behind the close-packing estimate c_max = 1 / (N_A d^3) = 4.8 M; Kilic, Bazant & Ajdari 2007,
#: Phys. Rev. E 75, 021502, use this size for hydrated ions (from memory).
CLOSE_PACKING_DIAMETER = 0.7e-9


def notes(case: Case, profiles: Profiles, thermal_voltage: float) -> tuple[str, ...]:
    """One plain sentence per validity rule the case breaks (empty when none)."""
    found = []
    size = case.geometry.across
    if size < SMALLEST_CONTINUUM_SIZE:
        found.append(f"the channel is {size * 1e9:.2g} nm across, below ~2 nm: continuum electrostatics and "
                     "hydrodynamics are unreliable at this size (common practice)")
    strength = case.electrolyte.ionic_strength
    if strength > LARGEST_DILUTE_STRENGTH:
        found.append(f"ionic strength {strength / 1000:.3g} M is above ~0.1 M: finite ion size and dielectric "
                     "decrement, neglected here, matter (common practice)")
    psi = profiles.potential / thermal_voltage
    largest = float(np.max(np.abs(psi)))
    multivalent = max(abs(ion.valence) for ion in case.electrolyte.ions)
    if multivalent > 1 and largest > MULTIVALENT_POTENTIAL:
        found.append(f"|potential| reaches {largest:.3g} kT/e with ions of valence {multivalent}: ion-ion "
                     "correlations, neglected by Poisson-Boltzmann, can matter (common practice)")
    if case.model == "dh":
        worst = max(abs(ion.valence) for ion in case.electrolyte.ions) * largest
        if worst > 1.0:
            found.append(f"|z e phi / kT| reaches {worst:.3g} > 1: the Debye-Hueckel linearisation is outside its "
                         "range (concentrations may even turn negative); use model 'pb'")
    else:
        packing = 1.0 / (AVOGADRO * CLOSE_PACKING_DIAMETER**3)  # mol/m^3
        crowded = float(np.max(np.sum(profiles.concentration, axis=0)))
        if crowded > packing:
            found.append(f"the ion concentration at the wall reaches {crowded / 1000:.3g} M, beyond close packing "
                         f"of {CLOSE_PACKING_DIAMETER * 1e9:g} nm ions ({packing / 1000:.2g} M): point-ion "
                         "Poisson-Boltzmann overestimates crowding here")
    return tuple(found)


#: Summary keys of pressure-to-electrical energy conversion that are NaN when the coupling breaks the second law.
COUPLING_KEYS = ("figure_of_merit", "max_efficiency", "efficiency_at_max_power", "electroviscous_ratio")


def coupling_notes(summary: dict) -> tuple[str, ...]:
    """A sentence when the energy-conversion values are NaN: the degree of coupling q^2 = M01 M10 / (M00 M11)
    of the response matrix reached 1, which the second law forbids (Kedem & Caplan 1965, from memory), so the
    model that gave it is outside its validity (a Debye-Hueckel layer at |z e phi / kT| >> 1, whose linearised
    concentrations can turn negative and shrink the conductance)."""
    missing = [key for key in COUPLING_KEYS if key in summary and not np.all(np.isfinite(summary[key]))]
    if not missing:
        return ()
    return (f"{', '.join(missing)} are NaN: the coupling of flow and current q^2 = M01 M10 / (M00 M11) reached 1, "
            "beyond the second law, so the model is outside its validity here",)
