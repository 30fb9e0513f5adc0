"""Compiled step from a packed case vector (``packing.P_*``, SI) to the dimensionless kernel inputs.

Dimensionless variables (see scaling.py): psi = e phi / kT; positions in the half-size L; charge density
over e N_A sum z^2 c, so that Poisson reads laplacian(psi) = -(kappa L)^2 rho_hat; wall charge in
eps kT / (e L); EO velocity in eps E kT / (e eta); pressure-driven velocity in (dp/dx) L^2 / eta.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.constants import AVOGADRO, BOLTZMANN, ELEMENTARY_CHARGE
from edl_solver.kernels.fv1d import FLUX, POTENTIAL, ROBIN, STERIC, W_TYPE, W_VALUE, WALL_SIZE
from edl_solver.kernels.walls import dimensionless_wall, isolated_wall, twice_ionic_strength
from edl_solver.model.packing import (
    ION_SIZE,
    P_CAPILLARY,
    P_DIAMETER,
    P_IONS,
    P_LENGTH,
    P_MODEL,
    P_PERMITTIVITY,
    P_PROTONS,
    P_SLIP,
    P_SYMMETRIC,
    P_TEMPERATURE,
    P_VISCOELECTRIC,
    P_VISCOSITY,
    P_WALLS,
)

# Layout of the scales vector: SI values of the dimensionless units (see scaling.Scales).
S_THERMAL_VOLTAGE = 0  # kT/e, V
S_LENGTH = 1  # L, m
S_DEBYE_LENGTH = 2  # m
S_CHARGE_DENSITY = 3  # eps kT / (e L), C/m^2
S_VOLUME_CHARGE = 4  # e N_A sum z^2 c, C/m^3
S_EO_VELOCITY = 5  # eps kT / (e eta), m^2/(V s)
S_PRESSURE_VELOCITY = 6  # L^2 / eta, m^3/(Pa s)
S_AREA = 7  # section sum over the computed nodes -> full-section integral
S_SECTION_AREA = 8  # H per unit width, or pi a^2
SCALE_SIZE = 9


@njit(cache=True)
def ion_block(p):
    """The (valence, concentration, diffusivity) rows of the ions, a view into ``p``."""
    return p[P_IONS:].reshape(((p.size - P_IONS) // ION_SIZE, ION_SIZE))


@njit(cache=True)
def wall_si(p, side):
    """SI row of the bottom (0) or top (1) wall, a view into ``p``."""
    return p[P_WALLS + side * WALL_SIZE:P_WALLS + (side + 1) * WALL_SIZE]


@njit(cache=True)
def scales(p):
    """The scales vector (``S_*`` layout) of a case."""
    out = np.empty(SCALE_SIZE)
    vt = BOLTZMANN * p[P_TEMPERATURE] / ELEMENTARY_CHARGE
    length = p[P_LENGTH]
    eps = p[P_PERMITTIVITY]
    twice_strength = twice_ionic_strength(ion_block(p))
    out[S_THERMAL_VOLTAGE] = vt
    out[S_LENGTH] = length
    out[S_DEBYE_LENGTH] = np.sqrt(eps * vt / (ELEMENTARY_CHARGE * AVOGADRO * twice_strength))
    out[S_CHARGE_DENSITY] = eps * vt / length
    out[S_VOLUME_CHARGE] = ELEMENTARY_CHARGE * AVOGADRO * twice_strength
    out[S_EO_VELOCITY] = eps * vt / p[P_VISCOSITY]
    out[S_PRESSURE_VELOCITY] = length**2 / p[P_VISCOSITY]
    if p[P_CAPILLARY] != 0.0:
        out[S_AREA] = 2.0 * np.pi * length**2
        out[S_SECTION_AREA] = np.pi * length**2
    else:
        out[S_AREA] = length * (2.0 if p[P_SYMMETRIC] != 0.0 else 1.0)
        out[S_SECTION_AREA] = 2.0 * length
    return out


@njit(cache=True)
def isolated_walls(p, sc):
    """(zeta V, sigma C/m^2) of the bottom and top walls alone in the bulk, rows of a (2, 2) array."""
    out = np.empty((2, 2))
    ions = ion_block(p)
    model = int(p[P_MODEL])
    for side in range(2):
        if side == 1 and p[P_SYMMETRIC] != 0.0:
            out[1] = out[0]
            break
        zeta, sigma = isolated_wall(wall_si(p, side), ions, model, p[P_DIAMETER], sc[S_THERMAL_VOLTAGE],
                                    p[P_PERMITTIVITY], p[P_PROTONS], sc[S_DEBYE_LENGTH])
        out[side, 0] = zeta
        out[side, 1] = sigma
    return out


@njit(cache=True)
def _counter_valence(zeta, ions):
    """Largest valence among the ions of the sign opposite to the wall's (1 when there is none)."""
    sign = -1.0 if zeta >= 0.0 else 1.0
    best = 0.0
    for i in range(ions.shape[0]):
        if ions[i, 0] * sign > 0.0:
            best = max(best, abs(ions[i, 0]))
    return best if best > 0.0 else 1.0


@njit(cache=True)
def section_inputs(p):
    """Everything the nested-grid solver needs for one case, and the scales and isolated walls.

    Returns
    -------
    metric, half, kappa2, ions, model, walls, flow_walls, visco, wall_guess, counter, scales, isolated
        As ``_adaptive.solve_adaptive`` takes them (packed ions (n, 3) of valence, weight z c / sum z^2 c
        and steric packing c N_A d^3; wall rows and flow conditions of the grid's left and right ends),
        then the ``S_*`` scales and the (2, 2) isolated (zeta, sigma) of the bottom and top walls.
    """
    sc = scales(p)
    iso = isolated_walls(p, sc)
    block = ion_block(p)
    n = block.shape[0]
    twice_strength = twice_ionic_strength(block)
    model = int(p[P_MODEL])
    ions = np.empty((n, 3))
    for i in range(n):
        ions[i, 0] = block[i, 0]
        ions[i, 1] = block[i, 0] * block[i, 1] / twice_strength
        ions[i, 2] = block[i, 1] * AVOGADRO * p[P_DIAMETER] ** 3 if model == STERIC else 0.0
    vt, length = sc[S_THERMAL_VOLTAGE], sc[S_LENGTH]
    half = p[P_SYMMETRIC] != 0.0
    walls = np.zeros((2, WALL_SIZE))
    flow_walls = np.zeros((2, 2))
    guess = np.zeros(2)
    counter = np.ones(2)
    for end in range(2):
        if half and end == 0:  # the left end is the symmetry plane (slit mid-plane or capillary axis)
            walls[0, W_TYPE] = FLUX
            walls[0, W_VALUE] = 0.0
            flow_walls[0, 0] = FLUX
            continue
        side = 1 if half else end
        walls[end] = dimensionless_wall(wall_si(p, side), vt, p[P_PERMITTIVITY], length, p[P_PROTONS])
        guess[end] = iso[side, 0] / vt
        counter[end] = _counter_valence(iso[side, 0], block)
        slip = p[P_SLIP + side] / length
        if slip > 0.0:
            flow_walls[end, 0] = ROBIN
            flow_walls[end, 1] = 1.0 / slip
        else:
            flow_walls[end, 0] = POTENTIAL
    metric = 1 if p[P_CAPILLARY] != 0.0 else 0
    kappa2 = (length / sc[S_DEBYE_LENGTH]) ** 2
    visco = p[P_VISCOELECTRIC] * (vt / length) ** 2
    return metric, half, kappa2, ions, model, walls, flow_walls, visco, guess, counter, sc, iso
