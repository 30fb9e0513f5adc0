"""The thin-double-layer (slip) model of every quantity and its error against the full solution.

In the thin-layer limit the double layer is replaced by the Helmholtz-Smoluchowski slip velocity
u_s = -eps zeta E / eta at each wall (Smoluchowski 1903), and the liquid outside carries no charge:
plug flow between equal walls, the linear (Couette-like) profile between two different slip velocities
in a slit. For a wall of fixed charge the thin-layer model takes zeta from the single-wall Grahame
relation at the bulk concentration, as a practitioner would (a regulating wall: the self-consistent
charge and potential of the isolated wall).
"""

from __future__ import annotations

import math

import numpy as np

from edl_solver.case import Capillary, Case, Electrolyte, Slit, Wall
from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.solvent import Solvent
from edl_solver.walls import isolated_wall


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
    percent = abs(error) * 100.0
    amount = f"{percent:.2g} %" if percent < 10 else f"{percent:.0f} %"
    limit = f"{tolerance * 100:g} %"
    if abs(error) <= tolerance:
        return f"thin-layer slip is within {amount} of the full {quantity} here: valid at {limit}"
    direction = "over-predicts" if error > 0 else "under-predicts"
    return f"thin-layer slip {direction} the {quantity} by {amount} here: not valid at {limit}"


def poiseuille_per_gradient(geometry: Slit | Capillary, viscosity: float, slip: tuple[float, float]) -> float:
    """Flow rate per unit solvent force -dp/dx of plain Poiseuille flow with Navier slip, m^4/(Pa s) (slit: per
    unit width, m^3/(Pa s)).

    Slit of height H with slip lengths b1, b2: u = (G / 2 eta)(-y^2 + C y + b1 C), C = H (H + 2 b2)/(H + b1 + b2),
    so Q = (G / 2 eta)(-H^3/3 + C (H^2/2 + b1 H)) (H^3 G / 12 eta without slip; plane Poiseuille).
    Capillary: Q = pi a^4 G (1 + 4 b / a) / (8 eta) (Hagen-Poiseuille with slip).
    """
    if isinstance(geometry, Capillary):
        a = geometry.radius
        return math.pi * a**4 * (1.0 + 4.0 * slip[1] / a) / (8.0 * viscosity)
    h = geometry.height
    b1, b2 = slip
    c = h * (h + 2.0 * b2) / (h + b1 + b2)
    return (-h**3 / 3.0 + c * (h * h / 2.0 + b1 * h)) / (2.0 * viscosity)


def chemiosmotic_slip(zeta: float, electrolyte: Electrolyte, solvent: Solvent) -> float:
    """Thin-layer diffusio-osmotic slip velocity per unit d ln c/dx of a symmetric z:z electrolyte, m^2/s:
    u = -(eps / eta)(kT / z e)^2 4 ln cosh(z e zeta / 4 kT) d ln c/dx (chemiosmosis; Prieve, Anderson, Ebel &
    Lowell 1984, J. Fluid Mech. 148, 247, from memory; it follows from the Gouy-Chapman layer, since
    int_0^inf x (cosh psi - 1) dx = 4 ln cosh(psi_w / 4)). NaN for other electrolytes."""
    valences = sorted(ion.valence for ion in electrolyte.ions)
    if len(valences) != 2 or valences[0] != -valences[1]:
        return math.nan
    z = valences[1]
    vt = solvent.thermal_voltage / z
    return -solvent.permittivity / solvent.viscosity * vt * vt * 4.0 * math.log(math.cosh(zeta / (4.0 * vt)))


def thin_layer_matrix(case: Case, area: float, isolated: tuple[tuple[float, float], tuple[float, float]],
                      slip_per_field: tuple[float, float]) -> np.ndarray:
    """The 3 x 3 response matrix of the thin-layer model (see ``transport.reduced_matrix`` for its layout).

    Bulk electrolyte everywhere, the double layers reduced to slip velocities: Poiseuille flow with the walls'
    slip lengths; EO slip (mean of the walls' Helmholtz-Smoluchowski velocities) coupling flow and field both
    ways (Smoluchowski's streaming relation); bulk conduction K = (F^2 / RT) sum z_i^2 D_i c_i; bulk diffusion
    and convection of the salt; chemiosmotic slip for the salt force (z:z electrolytes only; NaN otherwise).
    ``area`` is the section area (H per unit width, or pi a^2).
    """
    from edl_solver.transport import salt_stoichiometry

    ions = case.electrolyte.ions
    rt = GAS_CONSTANT * case.solvent.temperature
    total_nu = float(np.sum(salt_stoichiometry(case)))
    total_c = sum(ion.concentration for ion in ions)
    poiseuille = poiseuille_per_gradient(case.geometry, case.solvent.viscosity,
                                         tuple(w.slip_length for w in case.walls))
    eo = area * 0.5 * (slip_per_field[0] + slip_per_field[1])
    chemi = 0.5 * sum(chemiosmotic_slip(z, case.electrolyte, case.solvent) for z, _ in isolated)
    salt_flow = total_c / total_nu * poiseuille + area * chemi / (-rt * total_nu)  # Q per X_s
    conductance = FARADAY**2 / rt * area * sum(ion.valence**2 * ion.diffusivity * ion.concentration for ion in ions)
    diffusion_current = FARADAY * area / (rt * total_nu) * sum(
        ion.valence * ion.diffusivity * ion.concentration for ion in ions)
    salt_diffusion = area / (rt * total_nu**2) * sum(ion.diffusivity * ion.concentration for ion in ions)
    # the salt force moves the bulk like a solvent force of (sum c / sum nu) per unit X_s, so its current
    # includes that share of the streaming coupling (Onsager partner of the Poiseuille part of salt_flow)
    salt_current = total_c / total_nu * eo + diffusion_current
    return np.array([
        [poiseuille, eo, salt_flow],
        [eo, conductance, salt_current],
        [salt_flow, salt_current, total_c / total_nu * salt_flow + salt_diffusion],
    ])
