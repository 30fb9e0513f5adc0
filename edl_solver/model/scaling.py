"""The one place where SI turns into the dimensionless cross-section problem and back.

Dimensionless variables: potential psi = e phi / kT; position x in units of the half-size L (slit
half-height h = H/2 or capillary radius a); charge density rho_hat = rho_e / (e N_A sum z^2 c), so
that Poisson's equation reads laplacian(psi) = -(kappa L)^2 rho_hat with kappa = 1/lambda_D; wall
charge sigma_hat = sigma e L / (eps kT) (the outward-normal derivative of psi); EO velocity in units
of eps E kT / (e eta) and pressure-driven velocity in units of (dp/dx) L^2 / eta.

The arithmetic is compiled (``kernels.prepare``) and reads the packed case vector (``packing.py``), so that
sweeps, which pack many cases at once, turn them into the same numbers. ``SectionProblem``, the dimensionless
statement of the section problem, is the kernels' record (``kernels.records``).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from edl_solver.inputs.case import Case
from edl_solver.kernels import prepare as _prepare
from edl_solver.kernels.layout import ISO_SIGMA, ISO_ZETA
from edl_solver.kernels.records import SectionInputs, SectionProblem
from edl_solver.model import packing

__all__ = ["Prepared", "Scales", "SectionProblem", "prepare"]


class Scales(NamedTuple):
    """SI values of the dimensionless units of one case, in the order of the kernels' scales vector
    (``layout.S_*``; a named tuple, cheap to build once per solve).

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


@dataclass(frozen=True)
class Prepared:
    """A case turned into the compiled pipeline's inputs.

    Attributes
    ----------
    vector : ndarray
        The packed SI inputs (``packing.case_vector``).
    inputs : SectionInputs
        The compiled steps' record of the section problem, the scales and the isolated walls
        (``kernels.prepare.section_inputs``).
    units : Scales
    isolated : tuple
        ((zeta V, sigma C/m^2) of the bottom wall, the same of the top wall), each alone in the bulk
        (``walls.isolated_wall``): the thin-layer picture, the Newton start and the grid stretching.
    """

    vector: np.ndarray
    inputs: SectionInputs
    units: Scales
    isolated: tuple[tuple[float, float], tuple[float, float]]

    @property
    def problem(self) -> SectionProblem:
        """The dimensionless section problem."""
        return self.inputs.problem

    @property
    def scale_vector(self) -> np.ndarray:
        """The scales as the compiled steps take them (``layout.S_*``)."""
        return self.inputs.scales

    @property
    def isolated_array(self) -> np.ndarray:
        """The isolated walls as the compiled steps take them ((2, 2) rows ``layout.ISO_*``)."""
        return self.inputs.isolated


def prepare(case: Case) -> Prepared:
    """The dimensionless kernel inputs, scales and isolated walls of ``case`` (``kernels.prepare.section_inputs``).

    Raises
    ------
    ConvergenceError
        If the isolated wall has no solution (its root is not bracketed).
    """
    vector = packing.case_vector(case)
    inputs = _prepare.section_inputs(vector)
    iso = inputs.isolated
    if not np.isfinite(iso).all():  # never seen: the wall and layer charges always cross (walls.py)
        from edl_solver.errors import ConvergenceError

        raise ConvergenceError(f"{case.describe()}: no potential balances the charge of a wall alone in the bulk "
                               "(the thin-layer picture and the start of the solve); not solved")
    units = Scales(*inputs.scales.tolist())
    isolated = ((float(iso[0, ISO_ZETA]), float(iso[0, ISO_SIGMA])),
                (float(iso[1, ISO_ZETA]), float(iso[1, ISO_SIGMA])))
    return Prepared(vector, inputs, units, isolated)
