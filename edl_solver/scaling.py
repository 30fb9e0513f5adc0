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

from edl_solver import _kernels
from edl_solver.case import Capillary, Case, Wall
from edl_solver.constants import AVOGADRO, ELEMENTARY_CHARGE


@dataclass(frozen=True)
class SectionProblem:
    """Dimensionless statement of one cross-section problem, ready for the kernels.

    The grid's left end is the bottom wall (full slit section) or the centre (half section); the right
    end is the top wall or the single wall.
    """

    metric: int
    half: bool
    kappa2: float
    valence: np.ndarray
    weight: np.ndarray
    linear: bool
    bc_type: np.ndarray
    bc_value: np.ndarray
    flow_type: np.ndarray
    flow_value: np.ndarray
    wall_potential_guess: tuple[float, float]
    counter_valence: tuple[float, float]


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


def _wall_condition(wall: Wall, units: Scales, kappa_l: float, counter: float) -> tuple[int, float, float]:
    """Kernel boundary code, dimensionless value and a wall-potential guess for one wall."""
    if wall.kind == "potential":
        value = wall.zeta / units.thermal_voltage
        return _kernels.POTENTIAL, value, value
    sigma_hat = wall.charge_density / units.charge_density
    # Gouy-Chapman/Grahame estimate of the wall potential from the charge in Debye units (a guess only)
    guess = 2.0 / counter * math.asinh(0.5 * counter * sigma_hat / kappa_l)
    return _kernels.FLUX, sigma_hat, guess


def section_problem(case: Case, units: Scales) -> SectionProblem:
    """Dimensionless kernel inputs of ``case``."""
    ions = case.electrolyte.ions
    valence = np.array([float(ion.valence) for ion in ions])
    conc = np.array([ion.concentration for ion in ions])
    weight = valence * conc / np.sum(valence**2 * conc)
    kappa_l = units.length / units.debye_length
    half = case.symmetric
    types, values, guesses, counters = [], [], [], []
    walls = case.walls[1:] if half else case.walls
    for wall in walls:
        sign = -1.0 if (wall.zeta if wall.kind == "potential" else wall.charge_density) >= 0 else 1.0
        counter = max((abs(z) for z in valence if z * sign > 0), default=1.0)
        t, v, g = _wall_condition(wall, units, kappa_l, counter)
        types.append(t)
        values.append(v)
        guesses.append(g)
        counters.append(counter)
    if half:  # left end is the symmetry plane (slit mid-plane or capillary axis)
        types.insert(0, _kernels.FLUX)
        values.insert(0, 0.0)
        guesses.insert(0, 0.0)
        counters.insert(0, 1.0)
    flow_type = np.array([_kernels.FLUX if half else _kernels.POTENTIAL, _kernels.POTENTIAL])
    return SectionProblem(
        metric=1 if isinstance(case.geometry, Capillary) else 0,
        half=half,
        kappa2=kappa_l**2,
        valence=valence,
        weight=weight,
        linear=case.model == "dh",
        bc_type=np.array(types, dtype=np.int64),
        bc_value=np.array(values),
        flow_type=flow_type.astype(np.int64),
        flow_value=np.zeros(2),
        wall_potential_guess=(guesses[0], guesses[1]),
        counter_valence=(counters[0], counters[1]),
    )
