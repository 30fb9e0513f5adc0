"""The flat vector of one case's inputs (SI floats) that the compiled pipeline reads.

A single solve packs one case (``case_vector``); a sweep assembles the vectors of many cases at once from
its axes (``sweeping.plan``). Both then run the same compiled steps (``kernels.prepare``, ``kernels.summary``),
so a sweep's values equal single solves. The layout is ``kernels.layout``'s (indices ``P_*``): scalars, the
two slip lengths, the two walls as SI rows in the ``W_*`` layout (see ``wall_row_si``), then an ``ION_*`` row
per ion (valence, bulk concentration, diffusivity at the case temperature).
"""

from __future__ import annotations

import math

import numpy as np

from edl_solver.inputs.case import Case
from edl_solver.inputs.electrolyte import Electrolyte
from edl_solver.inputs.wall import Wall
from edl_solver.kernels import layout
from edl_solver.kernels.layout import (
    FLUX,
    MODEL_CODES,
    P_ACCURACY,
    P_BULK_FACTOR,
    P_DIAMETER,
    P_FIELD,
    P_INTERVALS,
    P_IONS,
    P_LENGTH,
    P_MAX_INTERVALS,
    P_MAX_ITERATIONS,
    P_METRIC,
    P_MODEL,
    P_PERMITTIVITY,
    P_PRESSURE_GRADIENT,
    P_PROTONS,
    P_SLIP,
    P_SYMMETRIC,
    P_TEMPERATURE,
    P_VISCOELECTRIC,
    P_VISCOSITY,
    P_WALLS,
    POTENTIAL,
    REGULATED,
    SITE_CHARGES,
    SITE_DENSITY,
    SITE_LOG_K,
    SITE_SIZE,
    SITE_STATES,
    W_GATE_C,
    W_GATE_V,
    W_SIGMA,
    W_SITE0,
    W_SITES,
    W_STERN,
    W_TYPE,
    W_VALUE,
    WALL_SIZE,
)


def vector_size(n_ions: int) -> int:
    """Length of the vector of a case with ``n_ions`` ions (``layout.case_size``)."""
    return layout.case_size(n_ions)


def wall_row_si(wall: Wall) -> np.ndarray:
    """A wall in the ``W_*`` layout with SI values: W_VALUE the potential (V) or charge (C/m^2),
    W_SIGMA the fixed charge (C/m^2), W_GATE_C the gate capacitance (F/m^2), W_GATE_V its voltage (V),
    W_STERN the inverse Stern capacitance (m^2/F, 0 without a Stern layer); per kind of site its density
    (1/m^2), number of states, their charges, and the pK of each step where the kernels keep
    ln(K / [H+]) (the ``SITE_*`` layout). ``kernels.walls.dimensionless_wall`` turns it into the kernels' row."""
    row = np.zeros(WALL_SIZE)
    if wall.kind == "potential":
        row[W_TYPE], row[W_VALUE] = POTENTIAL, wall.zeta
        return row
    if wall.kind == "charge":
        row[W_TYPE], row[W_VALUE] = FLUX, wall.charge_density
        return row
    row[W_TYPE] = REGULATED
    row[W_SIGMA] = wall.fixed_charge
    if wall.gate_voltage is not None:
        row[W_GATE_C] = wall.gate_capacitance
        row[W_GATE_V] = wall.gate_voltage
    if wall.stern_capacitance is not None:
        row[W_STERN] = 1.0 / wall.stern_capacitance
    row[W_SITES] = len(wall.sites)
    for j, site in enumerate(wall.sites):
        base = W_SITE0 + j * SITE_SIZE
        row[base + SITE_DENSITY] = site.density
        row[base + SITE_STATES] = len(site.charges)
        for q, charge in enumerate(site.charges):
            row[base + SITE_CHARGES + q] = charge
        for i, pk in enumerate(site.pks):
            row[base + SITE_LOG_K + i] = pk
    return row


def ion_rows(electrolyte: Electrolyte, temperature: float | None = None) -> np.ndarray:
    """The ions as ``ION_*`` rows (valence, concentration mol/m^3, diffusivity m^2/s), as the case vector holds
    them: the diffusivities at ``temperature`` (K; ``Ion.diffusivity_at``), as given when it is None."""
    return np.array([[ion.valence, ion.concentration,
                      ion.diffusivity if temperature is None else ion.diffusivity_at(temperature)]
                     for ion in electrolyte.ions], dtype=float)


def bulk_factor(case: Case) -> float:
    """The bulk conductivity of the case's law over its infinite-dilution value (1 for the limiting law): the
    factor on the bulk conduction of the thin-layer values (``kernels.thin_layer``)."""
    if case.bulk_conductivity == "limiting":
        return 1.0
    from edl_solver.model.bulk import bulk_conductivity

    return bulk_conductivity(case) / bulk_conductivity(case, "limiting")


def case_vector(case: Case) -> np.ndarray:
    """The packed inputs of ``case`` (layout ``P_*``)."""
    ions = case.electrolyte.ions
    p = np.zeros(vector_size(len(ions)))
    numerics, solvent = case.numerics, case.solvent
    p[P_LENGTH] = case.geometry.half_size
    p[P_METRIC] = case.geometry.metric
    p[P_SYMMETRIC] = case.symmetric
    p[P_MODEL] = MODEL_CODES[case.model]
    p[P_TEMPERATURE] = solvent.temperature
    p[P_PERMITTIVITY] = solvent.permittivity
    p[P_VISCOSITY] = solvent.viscosity
    p[P_VISCOELECTRIC] = solvent.viscoelectric_coefficient
    p[P_FIELD] = case.field
    p[P_PRESSURE_GRADIENT] = case.pressure_gradient
    protons = case.electrolyte.proton_concentration
    p[P_PROTONS] = math.nan if protons is None else protons
    p[P_DIAMETER] = ions[0].diameter if case.model == "steric" else 0.0
    p[P_ACCURACY] = numerics.accuracy
    p[P_INTERVALS] = numerics.intervals or 0
    p[P_MAX_ITERATIONS] = numerics.max_iterations
    p[P_MAX_INTERVALS] = numerics.max_intervals
    p[P_BULK_FACTOR] = bulk_factor(case)
    bottom, top = case.walls
    p[P_SLIP], p[P_SLIP + 1] = bottom.slip_length, top.slip_length
    row = wall_row_si(bottom)
    p[P_WALLS:P_WALLS + WALL_SIZE] = row
    p[P_WALLS + WALL_SIZE:P_WALLS + 2 * WALL_SIZE] = row if top is bottom else wall_row_si(top)
    # the ION_* rows, flat (a list converts faster than building the 2-D array of ion_rows); the diffusivities at
    # the case temperature, so every compiled step (sweeps included) sees the mobilities of that temperature
    diffusivities = case.electrolyte.diffusivities(solvent.temperature)
    p[P_IONS:] = [value for ion, d in zip(ions, diffusivities) for value in (ion.valence, ion.concentration, d)]
    return p
