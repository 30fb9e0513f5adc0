"""Wall electrostatics: the charge-potential relation of an isolated wall in contact with the bulk
electrolyte (the thin-layer picture).

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

import numpy as np

from edl_solver import _prepare, _walls, packing
from edl_solver.case import Case, Electrolyte, Wall
from edl_solver.solvent import Solvent


def _ions(electrolyte: Electrolyte) -> np.ndarray:
    return np.array([[ion.valence, ion.concentration, ion.diffusivity] for ion in electrolyte.ions], dtype=float)


def _diameter(electrolyte: Electrolyte, model: str) -> float:
    return electrolyte.ions[0].diameter if model == "steric" else 0.0


def isolated_charge(zeta: float, electrolyte: Electrolyte, solvent: Solvent, model: str) -> float:
    """Charge density (C/m^2) of an isolated wall at potential ``zeta`` (V): sigma = sign(zeta) sqrt(2 eps P)."""
    return float(_walls.isolated_charge(zeta, _ions(electrolyte), packing.MODEL_CODES[model],
                                        _diameter(electrolyte, model), solvent.thermal_voltage, solvent.permittivity))


def isolated_wall(wall: Wall, electrolyte: Electrolyte, solvent: Solvent, model: str) -> tuple[float, float]:
    """(zeta, sigma) of ``wall`` alone in contact with the bulk electrolyte, V and C/m^2.

    Fixed potential: sigma from the layer's first integral; fixed charge: zeta by inverting it; regulated:
    the root of sigma_wall(zeta) = sigma_layer(zeta) (the wall charge falls and the layer charge rises with
    zeta, so the root is unique). Compiled in ``_walls.isolated_wall``.
    """
    protons = electrolyte.proton_concentration
    zeta, sigma = _walls.isolated_wall(
        packing.wall_row_si(wall), _ions(electrolyte), packing.MODEL_CODES[model], _diameter(electrolyte, model),
        solvent.thermal_voltage, solvent.permittivity, np.nan if protons is None else protons,
        electrolyte.debye_length(solvent))
    return float(zeta), float(sigma)


def isolated_walls(case: Case) -> tuple[tuple[float, float], tuple[float, float]]:
    """``isolated_wall`` of the (bottom, top) walls of a case."""
    vector = packing.case_vector(case)
    iso = _prepare.isolated_walls(vector, _prepare.scales(vector))
    return (float(iso[0, 0]), float(iso[0, 1])), (float(iso[1, 0]), float(iso[1, 1]))
