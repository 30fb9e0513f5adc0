"""Wall chemistry and electrostatics: the kernels' packed description of a wall, and the charge-potential
relation of an isolated wall in contact with the bulk electrolyte (the thin-layer picture).

A wall fixes its potential, its charge, or a charge that regulates with its potential (acid-base sites,
a gate electrode, a Stern layer; see ``case.Wall`` and ``_kernels.plane_charge``). For the isolated wall
the diffuse layer holds the opposite charge, given by the first integral of the Poisson-Boltzmann
equation (Grahame 1947, Chem. Rev. 41, 441)::

    sigma^2 = 2 eps P(zeta),   P = kT N_A sum_i c_i (exp(-z_i e zeta / kT) - 1)      (point ions)
                               P = (kT / d^3) ln(1 + sum_i nu_i (exp(-z_i e zeta / kT) - 1))   (steric)

with nu_i = c_i N_A d^3 for the lattice-gas model (Kilic, Bazant & Ajdari 2007, Phys. Rev. E 75, 021502),
and sigma = eps kappa zeta in the Debye-Hueckel model.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.optimize import brentq

from edl_solver import _kernels as k
from edl_solver.case import Case, Electrolyte, Wall
from edl_solver.constants import AVOGADRO, ELEMENTARY_CHARGE
from edl_solver.solvent import Solvent


def wall_row(wall: Wall, electrolyte: Electrolyte, solvent: Solvent, length: float) -> np.ndarray:
    """The kernels' row (``_kernels.W_*`` layout) of a wall, with charges in units of eps kT / (e L),
    capacitances in eps / L and potentials in kT/e, L = ``length``."""
    row = np.zeros(k.WALL_SIZE)
    vt = solvent.thermal_voltage
    charge_unit = solvent.permittivity * vt / length
    if wall.kind == "potential":
        row[k.W_TYPE], row[k.W_VALUE] = k.POTENTIAL, wall.zeta / vt
        return row
    if wall.kind == "charge":
        row[k.W_TYPE], row[k.W_VALUE] = k.FLUX, wall.charge_density / charge_unit
        return row
    capacitance_unit = solvent.permittivity / length
    row[k.W_TYPE] = k.REGULATED
    row[k.W_SIGMA] = wall.fixed_charge / charge_unit
    if wall.gate_voltage is not None:
        row[k.W_GATE_C] = wall.gate_capacitance / capacitance_unit
        row[k.W_GATE_V] = wall.gate_voltage / vt
    if wall.stern_capacitance is not None:
        row[k.W_STERN] = capacitance_unit / wall.stern_capacitance
    row[k.W_SITES] = len(wall.sites)
    protons = electrolyte.proton_concentration
    for j, site in enumerate(wall.sites):
        base = k.W_SITE0 + j * k.SITE_SIZE
        row[base] = ELEMENTARY_CHARGE * site.density / charge_unit
        row[base + 1] = len(site.charges)
        for q, charge in enumerate(site.charges):
            row[base + 2 + q] = charge
        for i, pk in enumerate(site.pks):
            # ln(K_i / [H+]_bulk), K_i = 10^-pK mol/L = 1000 * 10^-pK mol/m^3
            row[base + 2 + k.MAX_STATES + i] = math.log(1000.0) - pk * math.log(10.0) - math.log(protons)
    return row


def _layer_pressure(zeta: float, electrolyte: Electrolyte, solvent: Solvent, model: str) -> float:
    """P(zeta) of the module docstring (J/m^3; Debye-Hueckel: its quadratic approximation)."""
    psi = zeta / solvent.thermal_voltage
    kt = ELEMENTARY_CHARGE * solvent.thermal_voltage
    conc = np.array([ion.concentration for ion in electrolyte.ions])
    valence = np.array([ion.valence for ion in electrolyte.ions], dtype=float)
    if model == "dh":
        return 0.5 * kt * AVOGADRO * float(np.sum(conc * valence**2)) * psi * psi
    excess = np.expm1(-valence * psi)
    if model == "steric":
        volume = electrolyte.ions[0].diameter ** 3
        return kt / volume * math.log1p(float(np.sum(conc * AVOGADRO * volume * excess)))
    return kt * AVOGADRO * float(np.sum(conc * excess))


def isolated_charge(zeta: float, electrolyte: Electrolyte, solvent: Solvent, model: str) -> float:
    """Charge density (C/m^2) of an isolated wall at potential ``zeta`` (V): sigma = sign(zeta) sqrt(2 eps P)."""
    pressure = max(_layer_pressure(zeta, electrolyte, solvent, model), 0.0)
    return math.copysign(math.sqrt(2.0 * solvent.permittivity * pressure), zeta)


def isolated_wall(wall: Wall, electrolyte: Electrolyte, solvent: Solvent, model: str) -> tuple[float, float]:
    """(zeta, sigma) of ``wall`` alone in contact with the bulk electrolyte, V and C/m^2.

    Fixed potential: sigma from the layer's first integral; fixed charge: zeta by inverting it; regulated:
    the root of sigma_wall(zeta) = sigma_layer(zeta) (the wall charge falls and the layer charge rises with
    zeta, so the root is unique).
    """
    if wall.kind == "potential":
        return wall.zeta, isolated_charge(wall.zeta, electrolyte, solvent, model)
    vt = solvent.thermal_voltage
    if wall.kind == "charge":
        def mismatch(psi: float) -> float:
            return isolated_charge(psi * vt, electrolyte, solvent, model) - wall.charge_density
    else:
        length = electrolyte.debye_length(solvent)
        row = wall_row(wall, electrolyte, solvent, length)
        unit = solvent.permittivity * vt / length

        def mismatch(psi: float) -> float:
            return isolated_charge(psi * vt, electrolyte, solvent, model) - k.regulated_charge(psi, row)[0] * unit
    low, high = -1.0, 1.0
    while mismatch(low) > 0.0:
        low *= 2.0
    while mismatch(high) < 0.0:
        high *= 2.0
    psi = brentq(mismatch, low, high, xtol=1e-14, rtol=1e-14, maxiter=500)
    zeta = psi * vt
    return zeta, isolated_charge(zeta, electrolyte, solvent, model)


def isolated_walls(case: Case) -> tuple[tuple[float, float], tuple[float, float]]:
    """``isolated_wall`` of the (bottom, top) walls of a case (computed once when they are equal)."""
    bottom, top = case.walls
    first = isolated_wall(bottom, case.electrolyte, case.solvent, case.model)
    second = first if top == bottom else isolated_wall(top, case.electrolyte, case.solvent, case.model)
    return first, second
