"""The one place where SI turns into the dimensionless cross-section problem and back.

Dimensionless variables: potential psi = e phi / kT; position x in units of the half-size L (slit
half-height h = H/2 or capillary radius a); charge density rho_hat = rho_e / (e N_A sum z^2 c), so
that Poisson's equation reads laplacian(psi) = -(kappa L)^2 rho_hat with kappa = 1/lambda_D; wall
charge sigma_hat = sigma e L / (eps kT) (the outward-normal derivative of psi); EO velocity in units
of eps E kT / (e eta) and pressure-driven velocity in units of (dp/dx) L^2 / eta.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from edl_solver import _kernels, walls
from edl_solver.case import Capillary, Case
from edl_solver.constants import AVOGADRO, ELEMENTARY_CHARGE


@dataclass(frozen=True)
class SectionProblem:
    """Dimensionless statement of one cross-section problem, ready for the kernels (see _kernels.py for
    the packed ``ions``, ``walls`` and ``flow_walls`` arrays).

    The grid's left end is the bottom wall (full slit section) or the centre (half section); the right
    end is the top wall or the single wall.
    """

    metric: int
    half: bool
    kappa2: float
    ions: np.ndarray
    model: int
    walls: np.ndarray
    flow_walls: np.ndarray
    visco: float
    wall_potential_guess: np.ndarray
    counter_valence: np.ndarray

    @property
    def valence(self) -> np.ndarray:
        """Ion valences."""
        return self.ions[:, 0]


@dataclass(frozen=True)
class Scales:
    """SI values of the dimensionless units of one case.

    Attributes
    ----------
    thermal_voltage : float
        kT/e, V (unit of psi).
    length : float
        Half-size L, m (unit of x).
    debye_length : float
        lambda_D, m.
    charge_density : float
        eps kT / (e L), C/m^2 (unit of sigma_hat).
    volume_charge : float
        e N_A sum z^2 c, C/m^3 (unit of rho_hat).
    eo_velocity_per_field : float
        eps kT / (e eta), m^2/(V s) (unit of u_eo per unit field).
    pressure_velocity_per_gradient : float
        L^2 / eta, m^3/(Pa s) (unit of u_p per unit pressure gradient).
    area : float
        Converts a section sum over the computed nodes to the full-section integral: L (times 2 for a
        half slit) per unit width for a slit, 2 pi L^2 for a capillary.
    section_area : float
        Cross-section area: H (per unit width) or pi a^2.
    """

    thermal_voltage: float
    length: float
    debye_length: float
    charge_density: float
    volume_charge: float
    eo_velocity_per_field: float
    pressure_velocity_per_gradient: float
    area: float
    section_area: float


def scales(case: Case) -> Scales:
    """Dimensionless units of ``case`` (see the module docstring)."""
    solvent = case.solvent
    kt_e = solvent.thermal_voltage
    length = case.geometry.half_size
    capillary = isinstance(case.geometry, Capillary)
    if capillary:
        area, section_area = 2.0 * math.pi * length**2, math.pi * length**2
    else:
        area, section_area = length * (2.0 if case.symmetric else 1.0), 2.0 * length
    strength = sum(ion.valence**2 * ion.concentration for ion in case.electrolyte.ions)
    return Scales(
        thermal_voltage=kt_e,
        length=length,
        debye_length=case.debye_length,
        charge_density=solvent.permittivity * kt_e / length,
        volume_charge=ELEMENTARY_CHARGE * AVOGADRO * strength,
        eo_velocity_per_field=solvent.permittivity * kt_e / solvent.viscosity,
        pressure_velocity_per_gradient=length**2 / solvent.viscosity,
        area=area,
        section_area=section_area,
    )


MODEL_CODES = {"pb": _kernels.PB, "dh": _kernels.DH, "steric": _kernels.STERIC}


def section_problem(case: Case, units: Scales,
                    isolated: tuple[tuple[float, float], tuple[float, float]] | None = None) -> SectionProblem:
    """Dimensionless kernel inputs of ``case``; ``isolated`` are the walls' (zeta, sigma) when alone in the
    bulk (``walls.isolated_walls``), which start the Newton iteration and set the grid stretching."""
    if isolated is None:
        isolated = walls.isolated_walls(case)
    electrolyte, solvent = case.electrolyte, case.solvent
    ions = electrolyte.ions
    valence = np.array([float(ion.valence) for ion in ions])
    conc = np.array([ion.concentration for ion in ions])
    diameter = ions[0].diameter if case.model == "steric" else 0.0
    packing = conc * AVOGADRO * diameter**3
    packed_ions = np.column_stack((valence, valence * conc / np.sum(valence**2 * conc), packing))
    half = case.symmetric
    sides = tuple(zip(case.walls, isolated))[1:] if half else tuple(zip(case.walls, isolated))
    rows, flows, guesses, counters = [], [], [], []
    for wall, (zeta, _) in sides:
        rows.append(walls.wall_row(wall, electrolyte, solvent, units.length))
        guesses.append(zeta / units.thermal_voltage)
        sign = -1.0 if zeta >= 0.0 else 1.0  # counter-ions carry the sign opposite to the wall's
        counters.append(max((abs(z) for z in valence if z * sign > 0), default=1.0))
        slip = wall.slip_length / units.length
        flows.append((_kernels.ROBIN, 1.0 / slip) if slip > 0.0 else (_kernels.POTENTIAL, 0.0))
    if half:  # the left end is the symmetry plane (slit mid-plane or capillary axis)
        symmetry = np.zeros(_kernels.WALL_SIZE)
        symmetry[_kernels.W_TYPE] = _kernels.FLUX
        rows.insert(0, symmetry)
        flows.insert(0, (_kernels.FLUX, 0.0))
        guesses.insert(0, 0.0)
        counters.insert(0, 1.0)
    field_unit = units.thermal_voltage / units.length
    return SectionProblem(
        metric=1 if isinstance(case.geometry, Capillary) else 0,
        half=half,
        kappa2=(units.length / units.debye_length) ** 2,
        ions=packed_ions,
        model=MODEL_CODES[case.model],
        walls=np.array(rows),
        flow_walls=np.array(flows, dtype=float),
        visco=solvent.viscoelectric_coefficient * field_unit**2,
        wall_potential_guess=np.array(guesses),
        counter_valence=np.array(counters),
    )
