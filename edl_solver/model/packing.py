"""The flat vector of one case's inputs (SI floats) that the compiled pipeline reads.

A single solve packs one case (``case_vector``); a sweep assembles the vectors of many cases at once from
its axes (``sweep_plan.py``). Both then run the same compiled steps (``_prepare``, ``_summary``), so a
sweep's values equal single solves. Layout (indices ``P_*``): scalars, the two slip lengths, the two walls
as SI rows in the ``_kernels.W_*`` layout (see ``wall_row_si``), then three values per ion (valence,
bulk concentration, diffusivity).
"""

from __future__ import annotations

import math

import numpy as np

from edl_solver.inputs.case import Case
from edl_solver.inputs.electrolyte import Electrolyte
from edl_solver.inputs.geometry import Capillary
from edl_solver.inputs.wall import Wall
from edl_solver.kernels import fv1d as k

P_LENGTH = 0  # half-size L: slit half-height or capillary radius, m
P_CAPILLARY = 1  # 1 capillary, 0 slit
P_SYMMETRIC = 2  # 1 when one condition holds on every wall (half section solved)
P_MODEL = 3  # _kernels.PB, DH or STERIC
P_TEMPERATURE = 4  # K
P_PERMITTIVITY = 5  # F/m
P_VISCOSITY = 6  # Pa s
P_VISCOELECTRIC = 7  # m^2/V^2
P_FIELD = 8  # V/m
P_PRESSURE_GRADIENT = 9  # Pa/m
P_PROTONS = 10  # bulk H+ concentration, mol/m^3 (NaN when the case has no pH)
P_DIAMETER = 11  # common ion diameter of the steric model, m (0 otherwise)
P_ACCURACY = 12
P_INTERVALS = 13  # fixed cells per half section, 0: adaptive
P_MAX_ITERATIONS = 14
P_MAX_INTERVALS = 15
P_SLIP = 16  # Navier slip lengths of the (bottom, top) walls, m
P_WALLS = 18  # (bottom, top) SI wall rows, WALL_SIZE each
P_IONS = P_WALLS + 2 * k.WALL_SIZE  # (valence, concentration mol/m^3, diffusivity m^2/s) per ion
ION_SIZE = 3

MODEL_CODES = {"pb": k.PB, "dh": k.DH, "steric": k.STERIC}


def vector_size(n_ions: int) -> int:
    """Length of the vector of a case with ``n_ions`` ions."""
    return P_IONS + ION_SIZE * n_ions


def wall_row_si(wall: Wall) -> np.ndarray:
    """A wall in the ``_kernels.W_*`` layout with SI values: W_VALUE the potential (V) or charge (C/m^2),
    W_SIGMA the fixed charge (C/m^2), W_GATE_C the gate capacitance (F/m^2), W_GATE_V its voltage (V),
    W_STERN the inverse Stern capacitance (m^2/F, 0 without a Stern layer); per kind of site its density
    (1/m^2), number of states, their charges, and the pK of each step where the kernels keep
    ln(K / [H+]). ``_prepare.dimensionless_wall`` turns it into the kernels' row."""
    row = np.zeros(k.WALL_SIZE)
    if wall.kind == "potential":
        row[k.W_TYPE], row[k.W_VALUE] = k.POTENTIAL, wall.zeta
        return row
    if wall.kind == "charge":
        row[k.W_TYPE], row[k.W_VALUE] = k.FLUX, wall.charge_density
        return row
    row[k.W_TYPE] = k.REGULATED
    row[k.W_SIGMA] = wall.fixed_charge
    if wall.gate_voltage is not None:
        row[k.W_GATE_C] = wall.gate_capacitance
        row[k.W_GATE_V] = wall.gate_voltage
    if wall.stern_capacitance is not None:
        row[k.W_STERN] = 1.0 / wall.stern_capacitance
    row[k.W_SITES] = len(wall.sites)
    for j, site in enumerate(wall.sites):
        base = k.W_SITE0 + j * k.SITE_SIZE
        row[base] = site.density
        row[base + 1] = len(site.charges)
        for q, charge in enumerate(site.charges):
            row[base + 2 + q] = charge
        for i, pk in enumerate(site.pks):
            row[base + 2 + k.MAX_STATES + i] = pk
    return row


def ion_rows(electrolyte: Electrolyte) -> np.ndarray:
    """The ions as (valence, concentration mol/m^3, diffusivity m^2/s) rows, the layout of the ion block."""
    return np.array([[ion.valence, ion.concentration, ion.diffusivity] for ion in electrolyte.ions], dtype=float)


def case_vector(case: Case) -> np.ndarray:
    """The packed inputs of ``case`` (layout ``P_*``)."""
    ions = case.electrolyte.ions
    p = np.zeros(vector_size(len(ions)))
    numerics, solvent = case.numerics, case.solvent
    p[P_LENGTH] = case.geometry.half_size
    p[P_CAPILLARY] = isinstance(case.geometry, Capillary)
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
    for side, wall in enumerate(case.walls):
        p[P_SLIP + side] = wall.slip_length
        p[P_WALLS + side * k.WALL_SIZE:P_WALLS + (side + 1) * k.WALL_SIZE] = wall_row_si(wall)
    p[P_IONS:] = ion_rows(case.electrolyte).ravel()
    return p
