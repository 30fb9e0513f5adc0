"""Concentration-corrected conductivity of the bulk electrolyte: the Debye-Hueckel-Onsager law with the ion-size
factor, for ``model.bulk.bulk_conductivity(case, law="onsager")``.

Each ion's molar conductivity lambda_i = z_i^2 F^2 D_i / RT of infinite dilution (Nernst-Einstein) is lowered
by the two effects of its ion atmosphere, each divided by (1 + kappa a):

- relaxation (the atmosphere lags behind and pulls the ion back):
  lambda_i |z_+ z_-| (l_B kappa / 3) q / (1 + sqrt q), l_B = e^2 / (4 pi eps kT) the Bjerrum length;
- electrophoresis (the atmosphere drags solvent the other way): z_i^2 F e kappa / (6 pi eta);

q = |z_+ z_-| / (|z_+| + |z_-|) (lambda_+ + lambda_-) / (|z_-| lambda_+ + |z_+| lambda_-) with equivalent
conductivities (1/2 for a symmetric salt). Without the (1 + kappa a) this is Onsager's limiting law
Lambda = Lambda_0 - (A + B Lambda_0) sqrt(c) (Onsager 1927; A = 60.2 S cm^2 mol^-1 (mol/L)^-1/2 and B = 0.229
(mol/L)^-1/2 for 1:1 in water at 25 degC, from memory); with it, the extended form
Lambda = Lambda_0 - (B_1 Lambda_0 + B_2) sqrt(c) / (1 + B a sqrt(c)) of Robinson & Stokes, Electrolyte
Solutions (2nd ed., 1959), ch. 7 (from memory), which holds to about 0.1 M for 1:1 salts. Every coefficient is
computed from the solvent's permittivity, viscosity and temperature, so it follows the temperature too.

A mixture of more than two ions is treated as one salt of mean valences and equivalent conductivities of its
cations and its anions (weighted by z^2 c): common practice for a small correction, not the full Onsager-Fuoss
theory of mixtures.

The double layer keeps the point-ion mobilities: the correction describes the ion atmosphere of a uniform bulk,
and inside the layer, where the concentrations vary over the width of that atmosphere, no local law of this
kind is established.
"""

from __future__ import annotations

import math

import numpy as np

from edl_solver.constants import ELEMENTARY_CHARGE, FARADAY, GAS_CONSTANT
from edl_solver.inputs.case import BULK_CONDUCTIVITY_LAWS, Case

__all__ = ["CLOSEST_APPROACH", "CONDUCTIVITY_LAWS", "onsager_conductivities"]

#: Bulk conductivity laws: infinite dilution (the default) or corrected for the ion atmosphere.
CONDUCTIVITY_LAWS = BULK_CONDUCTIVITY_LAWS

#: Distance of closest approach a of the extended law, m, when the ions give no diameter: 0.4 nm puts 10 mM
#: and 100 mM KCl within 0.5 % of their calibration standards (tests/model/test_bulk_conductivity.py).
CLOSEST_APPROACH = 0.4e-9


def onsager_conductivities(case: Case) -> np.ndarray:
    """Each ion's share z_i^2 F^2 D_i c_i / RT of the bulk conductivity corrected for its ion atmosphere (see
    the module docstring), S/m; the diffusivities at the case temperature."""
    ions = case.electrolyte.ions
    solvent = case.solvent
    rt = GAS_CONSTANT * solvent.temperature
    z = np.array([ion.valence for ion in ions], dtype=float)
    c = np.array([ion.concentration for ion in ions])
    limiting = z**2 * FARADAY**2 * np.array(case.electrolyte.diffusivities(solvent.temperature)) / rt  # S m^2/mol
    kappa = 1.0 / case.debye_length
    bjerrum = FARADAY * ELEMENTARY_CHARGE / (4.0 * math.pi * solvent.permittivity * rt)
    diameters = [ion.diameter for ion in ions if ion.diameter is not None]
    size = float(np.mean(diameters)) if diameters else CLOSEST_APPROACH
    plus, minus = z > 0, z < 0
    z_plus, z_minus = (np.sum(z[s] ** 2 * c[s]) / np.sum(np.abs(z[s]) * c[s]) for s in (plus, minus))
    # equivalent conductivities of the cations and of the anions: lambda_i / |z_i|, weighted by z^2 c
    eq_plus, eq_minus = (np.sum(limiting[s] / np.abs(z[s]) * z[s] ** 2 * c[s]) / np.sum(z[s] ** 2 * c[s])
                         for s in (plus, minus))
    q = z_plus * z_minus / (z_plus + z_minus) * (eq_plus + eq_minus) / (z_minus * eq_plus + z_plus * eq_minus)
    relaxation = z_plus * z_minus * bjerrum * kappa / 3.0 * q / (1.0 + math.sqrt(q))
    electrophoresis = z**2 * FARADAY * ELEMENTARY_CHARGE * kappa / (6.0 * math.pi * solvent.viscosity)
    corrected = limiting - (limiting * relaxation + electrophoresis) / (1.0 + kappa * size)
    return corrected * c
