"""The thin-double-layer (slip) model of every quantity and its error against the full solution.

In the thin-layer limit the double layer is replaced by the Helmholtz-Smoluchowski slip velocity
u_s = -eps zeta E / eta at each wall (Smoluchowski 1903), and the liquid outside carries no charge:
plug flow between equal walls, the linear (Couette-like) profile between two different slip velocities
in a slit. For a wall of fixed charge the thin-layer model takes zeta from the single-wall Grahame
relation at the bulk concentration, as a practitioner would (a regulating wall: the self-consistent
charge and potential of the isolated wall).

The thin-layer counterparts in a result's summary (its response matrix with chemiosmotic slip, the lab
quantities and their errors) are computed, compiled, in ``kernels/thin_layer.py`` (``thin_layer_matrix``).
"""

from __future__ import annotations

import math

from edl_solver.inputs.electrolyte import Electrolyte
from edl_solver.inputs.geometry import Geometry
from edl_solver.inputs.solvent import Solvent
from edl_solver.inputs.wall import Wall
from edl_solver.model.walls import isolated_wall
from edl_solver.report.formatting import percent


def grahame_zeta(charge_density: float, electrolyte: Electrolyte, solvent: Solvent, linear: bool = False
                 ) -> float:
    """Wall potential of an isolated wall of given charge in contact with the bulk electrolyte.

    General Grahame relation for any mixture (Grahame 1947, Chem. Rev. 41, 441)::

        sigma^2 = 2 eps kT N_A sum_i c_i (exp(-z_i e zeta / kT) - 1),  sign(zeta) = sign(sigma)

    and its linearisation sigma = eps kappa zeta when ``linear`` (the Debye-Hueckel model); see
    ``walls.isolated_wall`` for regulated walls and the steric model.

    Returns
    -------
    float
        zeta, V.
    """
    zeta, _ = isolated_wall(Wall(charge_density=charge_density), electrolyte, solvent, "dh" if linear else "pb")
    return zeta


def slip_velocity(zeta: float, solvent: Solvent, field: float, charge_density: float = 0.0,
                  slip_length: float = 0.0) -> float:
    """Helmholtz-Smoluchowski slip velocity, m/s: u_s = -eps zeta E / eta (Smoluchowski 1903); with a
    Navier slip length b, u_s = -(eps E / eta)(zeta + b sigma / eps), which is -eps zeta E / eta
    (1 + b / lambda_D) for a Debye-Hueckel layer (Joly, Ybert, Trizac & Bocquet 2004, Phys. Rev. Lett. 93,
    257805; from memory). Derivation: in the layer eta u' = eps E phi' (no stress outside), and the slip
    condition u(0) = b u'(0) with eps phi'(0) = -sigma."""
    return -solvent.permittivity * field / solvent.viscosity * (zeta + slip_length * charge_density
                                                                  / solvent.permittivity)


def verdict(error: float, tolerance: float, quantity: str = "EO flow rate") -> str:
    """Plain-words verdict on the thin-layer model from its relative error (thin - full) / full."""
    if not math.isfinite(error):
        return (f"the full {quantity} vanishes here (uncharged walls, or walls of opposite sign): the "
                "relative error of the thin-layer model is undefined; compare the profiles")
    amount = percent(abs(error))  # the report's error line prints this same number
    limit = f"{tolerance * 100:g} %"
    if abs(error) <= tolerance:
        return f"thin-layer slip is within {amount} of the full {quantity} here: valid at {limit}"
    direction = "over-predicts" if error > 0 else "under-predicts"
    return f"thin-layer slip {direction} the {quantity} by {amount} here: not valid at {limit}"


def poiseuille_per_gradient(geometry: Geometry, viscosity: float, slip: tuple[float, float]) -> float:
    """Flow rate per unit solvent force -dp/dx of plain Poiseuille flow with Navier slip, m^4/(Pa s) (slit: per
    unit width, m^3/(Pa s)); the closed form of each geometry (``geometry.poiseuille_per_gradient``: plane
    Poiseuille flow between two slipping walls, Hagen-Poiseuille with slip in a capillary)."""
    return geometry.poiseuille_per_gradient(viscosity, slip)
