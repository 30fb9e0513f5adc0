"""Notes on the physical validity of the continuum model for one case.

Continuum Poisson-Boltzmann with point ions in a uniform dielectric, and Stokes flow with bulk viscosity,
lose accuracy in well-known regimes. Each rule below is a fact of the trade with no sharp limit (common
practice unless a source is named); a result outside them is indicative and the note says why.
"""

from __future__ import annotations

import math

import numpy as np

from edl_solver.constants import AVOGADRO, BOLTZMANN, ELEMENTARY_CHARGE
from edl_solver.inputs.case import Case
from edl_solver.results.profiles import Profiles

#: Below this channel size (slit height or capillary diameter), m, water and ions are not a continuum
#: (common practice: about 1-2 nm).
SMALLEST_CONTINUUM_SIZE = 2e-9
#: Above this ionic strength, mol/m^3 (0.1 M), finite ion size and dielectric decrement matter (common practice).
LARGEST_DILUTE_STRENGTH = 100.0
#: Attraction -z e phi / kT of a multivalent counter-ion to the wall beyond which its correlations matter
#: (common practice).
MULTIVALENT_POTENTIAL = 4.0
#: Coupling parameter Xi = 2 pi z^3 l_B^2 |sigma| / e of the counter-ions beyond which Poisson-Boltzmann, the
#: leading order of an expansion in Xi, is not to be trusted: mean field for Xi < 1, strong coupling for
#: Xi >> 1 (Moreira & Netz 2001, Phys. Rev. Lett. 87, 078301; Netz 2001, Eur. Phys. J. E 5, 557; from memory).
STRONG_COUPLING = 1.0
#: Smallest counter-ion valence the correlation notes speak of: monovalent ions in water are held to be
#: mean-field up to the largest charge densities met (Xi ~ 2 at -0.1 C/m^2; common practice).
MULTIVALENT = 2
#: Ion diameter behind the close-packing estimate c_max = 1 / (N_A d^3) = 4.8 M; Kilic, Bazant & Ajdari 2007,
#: Phys. Rev. E 75, 021502, use this size for hydrated ions (from memory).
CLOSE_PACKING_DIAMETER = 0.7e-9


def notes(case: Case, profiles: Profiles, thermal_voltage: float, summary: dict) -> tuple[str, ...]:
    """One plain sentence per validity rule the case breaks (empty when none); ``summary`` gives the wall
    charge densities."""
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
    found.extend(correlation_notes(case, psi, summary["wall_charge_density"]))
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


def correlation_notes(case: Case, psi: np.ndarray, wall_charge: float | np.ndarray) -> tuple[str, ...]:
    """A sentence when correlations of multivalent counter-ions, neglected by Poisson-Boltzmann, matter: by
    the coupling parameter Xi at the most charged wall, else by the counter-ions' attraction -z e phi / kT.

    Parameters
    ----------
    case : Case
    psi : ndarray
        Reduced potential e phi / kT over the section.
    wall_charge : float or ndarray
        Wall charge density, C/m^2 (a (bottom, top) pair for a slit of two walls).

    Returns
    -------
    tuple of str
        Empty, or one sentence.
    """
    ions = [ion for ion in case.electrolyte.ions if abs(ion.valence) >= MULTIVALENT]
    solvent = case.solvent
    bjerrum = ELEMENTARY_CHARGE**2 / (4.0 * math.pi * solvent.permittivity * BOLTZMANN * solvent.temperature)
    coupling, strongest, charge = 0.0, None, 0.0
    for sigma in np.atleast_1d(wall_charge):
        for ion in ions:
            if ion.valence * sigma < 0.0:  # a counter-ion of this wall
                xi = 2.0 * math.pi * abs(ion.valence) ** 3 * bjerrum**2 * abs(sigma) / ELEMENTARY_CHARGE
                if xi > coupling:
                    coupling, strongest, charge = xi, ion, float(sigma)
    if coupling > STRONG_COUPLING:
        return (f"the coupling parameter Xi = 2 pi z^3 l_B^2 |sigma| / e of the {strongest.name} counter-ions "
                f"reaches {coupling:.3g} at the wall charge {charge * 1e3:.3g} mC/m^2 (l_B = {bjerrum * 1e9:.2g} nm), "
                "beyond ~1: Poisson-Boltzmann, which neglects ion-ion correlations, is not to be trusted (for "
                "Xi >> 1 the counter-ions can invert the wall charge; Moreira & Netz 2001)",)
    attraction = max((float(np.max(-ion.valence * psi)) for ion in ions), default=0.0)
    if attraction > MULTIVALENT_POTENTIAL:
        return (f"multivalent counter-ions reach -z e phi / kT = {attraction:.3g} > {MULTIVALENT_POTENTIAL:g}: "
                "ion-ion correlations, neglected by Poisson-Boltzmann, can matter (common practice)",)
    return ()


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
