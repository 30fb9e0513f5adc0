"""Compiled step from a packed case vector (``layout.P_*``, SI) to the dimensionless kernel inputs.

Dimensionless variables (see scaling.py): psi = e phi / kT; positions in the half-size L; charge density
over e N_A sum z^2 c, so that Poisson reads laplacian(psi) = -(kappa L)^2 rho_hat; wall charge in
eps kT / (e L); EO velocity in eps E kT / (e eta); pressure-driven velocity in (dp/dx) L^2 / eta.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.constants import AVOGADRO, BOLTZMANN, ELEMENTARY_CHARGE
from edl_solver.kernels.layout import (
    AXISYMMETRIC,
    DH,
    FLOW_CODE,
    FLOW_SIZE,
    FLOW_VALUE,
    FLUX,
    ION_CONCENTRATION,
    ION_SIZE,
    ION_VALENCE,
    ISO_SIGMA,
    ISO_ZETA,
    ISOLATED_SIZE,
    P_ACCURACY,
    P_DIAMETER,
    P_INTERVALS,
    P_IONS,
    P_LENGTH,
    P_MAX_INTERVALS,
    P_MAX_ITERATIONS,
    P_METRIC,
    P_MODEL,
    P_PERMITTIVITY,
    P_PROTONS,
    P_SLIP,
    P_SYMMETRIC,
    P_TEMPERATURE,
    P_VISCOELECTRIC,
    P_VISCOSITY,
    P_WALLS,
    POTENTIAL,
    ROBIN,
    S_AREA,
    S_CHARGE_DENSITY,
    S_DEBYE_LENGTH,
    S_EO_VELOCITY,
    S_LENGTH,
    S_PRESSURE_VELOCITY,
    S_SECTION_AREA,
    S_THERMAL_VOLTAGE,
    S_VOLUME_CHARGE,
    SCALE_SIZE,
    SPECIES_PACKING,
    SPECIES_SIZE,
    SPECIES_VALENCE,
    SPECIES_WEIGHT,
    STERIC,
    W_TYPE,
    W_VALUE,
    WALL_SIZE,
)
from edl_solver.kernels.records import Controls, SectionInputs, SectionProblem
from edl_solver.kernels.walls import dimensionless_wall, isolated_wall, twice_ionic_strength


@njit(cache=True)
def ion_block(p):
    """The ``ION_*`` rows of the ions, a view into ``p``."""
    return p[P_IONS:].reshape(((p.size - P_IONS) // ION_SIZE, ION_SIZE))


@njit(cache=True)
def wall_si(p, side):
    """SI row of the bottom (0) or top (1) wall, a view into ``p``."""
    return p[P_WALLS + side * WALL_SIZE:P_WALLS + (side + 1) * WALL_SIZE]


@njit(cache=True)
def controls(p):
    """The numerics of a case vector as ``Controls``."""
    return Controls(p[P_ACCURACY], int(p[P_INTERVALS]), int(p[P_MAX_INTERVALS]), int(p[P_MAX_ITERATIONS]))


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
    if p[P_METRIC] == AXISYMMETRIC:
        out[S_AREA] = 2.0 * np.pi * length**2
        out[S_SECTION_AREA] = np.pi * length**2
    else:
        out[S_AREA] = length * (2.0 if p[P_SYMMETRIC] != 0.0 else 1.0)
        out[S_SECTION_AREA] = 2.0 * length
    return out


@njit(cache=True)
def isolated_walls(p, sc):
    """(zeta V, sigma C/m^2) of the bottom and top walls alone in the bulk, ``ISO_*`` rows of a (2, 2) array."""
    out = np.empty((2, ISOLATED_SIZE))
    ions = ion_block(p)
    model = int(p[P_MODEL])
    for side in range(2):
        if side == 1 and p[P_SYMMETRIC] != 0.0:
            out[1] = out[0]
            break
        zeta, sigma = isolated_wall(wall_si(p, side), ions, model, p[P_DIAMETER], sc[S_THERMAL_VOLTAGE],
                                    p[P_PERMITTIVITY], p[P_PROTONS], sc[S_DEBYE_LENGTH])
        out[side, ISO_ZETA] = zeta
        out[side, ISO_SIGMA] = sigma
    return out


@njit(cache=True)
def _counter_valence(zeta, ions):
    """Largest valence among the ions of the sign opposite to the wall's (1 when there is none)."""
    sign = -1.0 if zeta >= 0.0 else 1.0
    best = 0.0
    for i in range(ions.shape[0]):
        if ions[i, ION_VALENCE] * sign > 0.0:
            best = max(best, abs(ions[i, ION_VALENCE]))
    return best if best > 0.0 else 1.0


@njit(cache=True)
def species(p):
    """The kernels' ``SPECIES_*`` rows of the ions: valence, weight z c / sum z^2 c and steric packing
    c N_A d^3 (0 unless the model is steric)."""
    block = ion_block(p)
    n = block.shape[0]
    twice_strength = twice_ionic_strength(block)
    steric = int(p[P_MODEL]) == STERIC
    ions = np.empty((n, SPECIES_SIZE))
    for i in range(n):
        ions[i, SPECIES_VALENCE] = block[i, ION_VALENCE]
        ions[i, SPECIES_WEIGHT] = block[i, ION_VALENCE] * block[i, ION_CONCENTRATION] / twice_strength
        ions[i, SPECIES_PACKING] = block[i, ION_CONCENTRATION] * AVOGADRO * p[P_DIAMETER] ** 3 if steric else 0.0
    return ions


#: z |psi_w| (kT/e) at most that sets the grid and start of a Debye-Hueckel case.
DH_LAYER_POTENTIAL = 2.0


@njit(cache=True)
def cap_linear_layer(guess, counter):
    """Cap the wall potentials that set the grid and start of a Debye-Hueckel case at ``DH_LAYER_POTENTIAL``
    (reduced by the counter-ion valence), in place.

    A linear layer has no Gouy-Chapman steepening: its smallest scale is the Debye length at any wall
    potential, and the cells that ``adaptive.inner_length`` would ask for at |z e psi / kT| of tens or hundreds
    (a large charge on a linear layer) are orders of magnitude thinner, which only spoils the precision of the
    discrete charge balance (it reached 1e-8 to 1e-6 relative). The start does not matter: Newton takes the
    exact step of a linear problem (``fv1d.pb_newton`` does not cap it).
    """
    for end in range(2):
        reduced = abs(guess[end]) * counter[end]
        if reduced > DH_LAYER_POTENTIAL:
            guess[end] *= DH_LAYER_POTENTIAL / reduced


#: z |psi_w| (kT/e) beyond the onset of crowding, ln(1 / nu) of the counter-ion, up to which the Gouy-Chapman
#: steepening of a steric layer sets its grid and start.
CROWDING_MARGIN = 2.0


@njit(cache=True)
def cap_crowded_layer(guess, counter, ions):
    """Cap the wall potentials that set the grid and start of a steric case where the counter-ions crowd, in
    place: at z |psi_w| = ln(1 / nu) (nu = c N_A d^3 of the counter-ion) its Boltzmann concentration reaches
    close packing, and beyond it the layer grows a condensed film of uniform concentration (Kilic, Bazant &
    Ajdari 2007, Phys. Rev. E 75, 021502, from memory) instead of steepening. Cells sized for a Gouy-Chapman
    layer at the full wall potential are orders of magnitude thinner than any feature of that film and only
    spoil the precision of the discrete charge balance (it reached 1e-8 to 1e-7 relative).
    """
    for end in range(2):
        sign = -1.0 if guess[end] >= 0.0 else 1.0  # counter-ions have the sign opposite to the wall's
        packing = 0.0
        for k in range(ions.shape[0]):
            if ions[k, SPECIES_VALENCE] * sign > 0.0:
                packing = max(packing, ions[k, SPECIES_PACKING])
        if packing <= 0.0:
            continue
        onset = np.log(1.0 / packing) + CROWDING_MARGIN
        reduced = abs(guess[end]) * counter[end]
        if reduced > onset > 0.0:
            guess[end] *= onset / reduced


@njit(cache=True)
def section_problem(p, sc, iso):
    """The dimensionless ``SectionProblem`` of a case with scales ``sc`` and isolated walls ``iso``.

    The grid's left end is the centre of a half section (a symmetry plane: no charge, no shear) or the
    bottom wall, its right end the top (or only) wall. Each wall end gets its dimensionless row, the
    potential of the wall alone in the bulk (the Newton start and the grid stretching), the counter-ion
    valence and its flow condition (no slip, or Navier slip as a Robin condition).
    """
    vt, length = sc[S_THERMAL_VOLTAGE], sc[S_LENGTH]
    half = p[P_SYMMETRIC] != 0.0
    walls = np.zeros((2, WALL_SIZE))
    flow_walls = np.zeros((2, FLOW_SIZE))
    guess = np.zeros(2)
    counter = np.ones(2)
    for end in range(2):
        if half and end == 0:  # the left end is the symmetry plane (slit mid-plane or capillary axis)
            walls[0, W_TYPE] = FLUX
            walls[0, W_VALUE] = 0.0
            flow_walls[0, FLOW_CODE] = FLUX
            continue
        side = 1 if half else end
        walls[end] = dimensionless_wall(wall_si(p, side), vt, p[P_PERMITTIVITY], length, p[P_PROTONS])
        guess[end] = iso[side, ISO_ZETA] / vt
        counter[end] = _counter_valence(iso[side, ISO_ZETA], ion_block(p))
        slip = p[P_SLIP + side] / length
        if slip > 0.0:
            flow_walls[end, FLOW_CODE] = ROBIN
            flow_walls[end, FLOW_VALUE] = 1.0 / slip
        else:
            flow_walls[end, FLOW_CODE] = POTENTIAL
    ions = species(p)
    if int(p[P_MODEL]) == DH:
        cap_linear_layer(guess, counter)
    elif int(p[P_MODEL]) == STERIC:
        cap_crowded_layer(guess, counter, ions)
    metric = int(p[P_METRIC])
    kappa2 = (length / sc[S_DEBYE_LENGTH]) ** 2
    visco = p[P_VISCOELECTRIC] * (vt / length) ** 2
    return SectionProblem(metric, half, kappa2, ions, int(p[P_MODEL]), walls, flow_walls, visco, guess, counter)


@njit(cache=True)
def section_inputs(p):
    """Everything the nested-grid solver needs for one case: ``SectionInputs`` of its ``SectionProblem``, its
    ``S_*`` scales and the (2, 2) isolated (zeta, sigma) of the bottom and top walls."""
    sc = scales(p)
    iso = isolated_walls(p, sc)
    return SectionInputs(section_problem(p, sc, iso), sc, iso)
