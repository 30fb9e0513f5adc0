"""Whether a steric (lattice-gas) layer can hold the counter-charge of its walls at all.

In the steric model the charge density of the liquid is bounded: as the potential grows, the counter-ions of
the highest valence z fill the lattice, and rho tends to z e / d^3 (Bikerman 1942; Kilic, Bazant & Ajdari 2007,
Phys. Rev. E 75, 021502, from memory). A section of volume V per unit length therefore holds at most
z e V / d^3 of counter-charge; walls of fixed charge beyond that have no equilibrium in this model, and Newton's
failure on them is this, not a numerical difficulty.
"""

from __future__ import annotations

import math

from edl_solver.constants import ELEMENTARY_CHARGE
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Slit


def overfilled_walls(case: Case) -> str | None:
    """Why the walls' fixed charge cannot be balanced in a steric section, or None when it can (or the model,
    or a wall whose charge responds to its potential, makes the question moot).

    Slit of height H, wall charges sigma_b, sigma_t: |sigma_b + sigma_t| < z e H / d^3. Capillary of radius a,
    charge sigma: 2 pi a |sigma| < pi a^2 z e / d^3, i.e. |sigma| < z e a / (2 d^3).
    """
    if case.model != "steric" or any(_fixed_charge(wall) is None for wall in case.walls):
        return None
    charges = [_fixed_charge(wall) for wall in case.walls]
    total = charges[0] + charges[1] if isinstance(case.geometry, Slit) else charges[0]
    sign = 1.0 if total < 0.0 else -1.0  # counter-ions carry the charge opposite to the walls'
    counter = [ion.valence for ion in case.electrolyte.ions if ion.valence * sign > 0]
    if total == 0.0 or not counter:
        return None
    diameter = case.electrolyte.ions[0].diameter
    packed = max(abs(z) for z in counter) * ELEMENTARY_CHARGE / diameter**3  # C/m^3 at close packing
    slit = isinstance(case.geometry, Slit)
    capacity = packed * case.geometry.size * (1.0 if slit else 0.5)  # C per m^2 of wall
    if abs(total) < capacity:
        return None
    what = "the two walls' charge" if slit else "the wall charge"
    return (f"{what} ({abs(total):.3g} C/m^2) exceeds the counter-charge the {case.geometry.kind} can hold with "
            f"its ions of {diameter * 1e9:.3g} nm at close packing ({capacity:.3g} C/m^2): the steric model "
            "has no equilibrium here (a wider channel, smaller ions or less charge has one)")


def _fixed_charge(wall) -> float | None:
    """The charge density of a wall whose charge does not respond to its potential (no sites, no gate), or
    None."""
    if wall.zeta is not None or wall.sites or wall.gate_voltage is not None or wall.charge_density is None:
        return None
    return float(wall.charge_density) if math.isfinite(wall.charge_density) else None
