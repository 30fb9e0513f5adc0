"""The thin-double-layer (slip) model of every quantity and its error against the full solution.

In the thin-layer limit the double layer is replaced by the Helmholtz-Smoluchowski slip velocity
u_s = -eps zeta E / eta at each wall (Smoluchowski 1903), and the liquid outside carries no charge:
plug flow between equal walls, the linear (Couette-like) profile between two different slip velocities
in a slit. For a wall of fixed charge the thin-layer model takes zeta from the single-wall Grahame
relation at the bulk concentration, as a practitioner would.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.optimize import brentq

from edl_solver.case import Electrolyte
from edl_solver.constants import AVOGADRO, ELEMENTARY_CHARGE
from edl_solver.solvent import Solvent


def grahame_zeta(charge_density: float, electrolyte: Electrolyte, solvent: Solvent, linear: bool = False
                 ) -> float:
    """Wall potential of an isolated wall of given charge in contact with the bulk electrolyte.

    General Grahame relation for any mixture (Grahame 1947, Chem. Rev. 41, 441)::

        sigma^2 = 2 eps kT N_A sum_i c_i (exp(-z_i e zeta / kT) - 1),  sign(zeta) = sign(sigma)

    and its linearisation sigma = eps kappa zeta when ``linear`` (the Debye-Hueckel model).

    Parameters
    ----------
    charge_density : float
        sigma, C/m^2.
    electrolyte, solvent
        Bulk electrolyte and solvent.
    linear : bool
        Use the Debye-Hueckel relation.

    Returns
    -------
    float
        zeta, V.
    """
    eps = solvent.permittivity
    kt_e = solvent.thermal_voltage
    if linear or charge_density == 0.0:
        return charge_density * electrolyte.debye_length(solvent) / eps
    valence = np.array([ion.valence for ion in electrolyte.ions], dtype=float)
    conc = np.array([ion.concentration for ion in electrolyte.ions])
    target = charge_density**2 / (2.0 * eps * ELEMENTARY_CHARGE * kt_e * AVOGADRO)  # mol/m^3
    sign = math.copysign(1.0, charge_density)

    def excess(psi: float) -> float:
        return float(np.sum(conc * np.expm1(-valence * sign * psi))) - target

    upper = 1.0
    while excess(upper) < 0.0:
        upper *= 2.0
    return sign * brentq(excess, 0.0, upper, xtol=1e-15, rtol=1e-14) * kt_e


def slip_velocity(zeta: float, solvent: Solvent, field: float) -> float:
    """Helmholtz-Smoluchowski slip velocity u_s = -eps zeta E / eta, m/s (Smoluchowski 1903)."""
    return -solvent.permittivity * zeta * field / solvent.viscosity


def verdict(error: float, tolerance: float, quantity: str = "EO flow rate") -> str:
    """Plain-words verdict on the thin-layer model from its relative error (thin - full) / full."""
    if not math.isfinite(error):
        return (f"the full {quantity} vanishes here (uncharged walls, or walls of opposite sign): the "
                "relative error of the thin-layer model is undefined; compare the profiles")
    percent = abs(error) * 100.0
    amount = f"{percent:.2g} %" if percent < 10 else f"{percent:.0f} %"
    limit = f"{tolerance * 100:g} %"
    if abs(error) <= tolerance:
        return f"thin-layer slip is within {amount} of the full {quantity} here: valid at {limit}"
    direction = "over-predicts" if error > 0 else "under-predicts"
    return f"thin-layer slip {direction} the {quantity} by {amount} here: not valid at {limit}"
