"""Wall electrostatics: the charge-potential relation of an isolated wall in contact with the bulk
electrolyte (the thin-layer picture).

A wall fixes its potential, its charge, or a charge that regulates with its potential (acid-base sites,
a gate electrode, a Stern layer; see ``case.Wall`` and ``kernels.walls.plane_charge``). For the isolated wall
the diffuse layer holds the opposite charge, given by the first integral of the Poisson-Boltzmann
equation (Grahame 1947, Chem. Rev. 41, 441)::

    sigma^2 = 2 eps P(zeta),   P = kT N_A sum_i c_i (exp(-z_i e zeta / kT) - 1)      (point ions)
                               P = (kT / d^3) ln(1 + sum_i nu_i (exp(-z_i e zeta / kT) - 1))   (steric)

with nu_i = c_i N_A d^3 for the lattice-gas model (Kilic, Bazant & Ajdari 2007, Phys. Rev. E 75, 021502),
and sigma = eps kappa zeta in the Debye-Hueckel model.
"""

from __future__ import annotations

import numpy as np

from edl_solver.inputs.electrolyte import Electrolyte
from edl_solver.inputs.solvent import Solvent
from edl_solver.inputs.wall import Wall
from edl_solver.kernels import walls as _walls
from edl_solver.model import packing


def isolated_wall(wall: Wall, electrolyte: Electrolyte, solvent: Solvent, model: str) -> tuple[float, float]:
    """(zeta, sigma) of ``wall`` alone in contact with the bulk electrolyte, V and C/m^2.

    Fixed potential: sigma from the layer's first integral; fixed charge: zeta by inverting it; regulated:
    the root of sigma_wall(zeta) = sigma_layer(zeta) (the wall charge falls and the layer charge rises with
    zeta, so the root is unique). Compiled in ``kernels.walls.isolated_wall``.
    """
    protons = electrolyte.proton_concentration
    diameter = electrolyte.ions[0].diameter if model == "steric" else 0.0
    zeta, sigma = _walls.isolated_wall(
        packing.wall_row_si(wall), packing.ion_rows(electrolyte), packing.MODEL_CODES[model], diameter,
        solvent.thermal_voltage, solvent.permittivity, np.nan if protons is None else protons,
        electrolyte.debye_length(solvent))
    return float(zeta), float(sigma)
