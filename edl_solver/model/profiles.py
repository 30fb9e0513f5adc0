"""Fields across the section in SI from a solved section: potential, ion concentrations, space charge,
the electroosmotic and pressure-driven velocities and the thin-layer slip profile.

The Stokes equation eta laplacian(u) = dp/dx - rho_e E is solved on the same grid as the potential
(in ``kernels.fv1d.section_integrals``): the EO part laplacian(u_eo) = -rho_e E / eta and the pressure part
laplacian(u_p) = (dp/dx) / eta, each with no slip at the walls. With uniform eps and eta the EO part
equals -(eps E / eta)(zeta - phi) exactly (the check of the numerical solve). The flow rates
Q_eo = E (eps kT / e eta) int u_eo_hat dA and Q_p = (dp/dx)(L^2 / eta) int u_p_hat dA are part of the
compiled summary (``kernels.summary.summarize``); this module turns the profiles into SI.
"""

from __future__ import annotations

import numpy as np

from edl_solver.constants import AVOGADRO, ELEMENTARY_CHARGE
from edl_solver.inputs.case import Case
from edl_solver.model import grid
from edl_solver.model.scaling import Scales
from edl_solver.model.section import SolvedSection
from edl_solver.results.profiles import Profiles


def velocity_profiles(u_eo_hat: np.ndarray, u_p_hat: np.ndarray, units: Scales, case: Case
                      ) -> tuple[np.ndarray, np.ndarray]:
    """EO and pressure-driven velocity profiles on the computed nodes, m/s."""
    return (case.field * units.eo_velocity_per_field * u_eo_hat,
            case.pressure_gradient * units.pressure_velocity_per_gradient * u_p_hat)


def concentrations(psi: np.ndarray, case: Case) -> np.ndarray:
    """Ion concentrations across the section, mol/m^3: c_i = c_i,bulk exp(-z_i psi) (linearised for the
    Debye-Hueckel model; divided by the crowding factor 1 + sum_j nu_j (exp(-z_j psi) - 1) for the steric
    model, Kilic, Bazant & Ajdari 2007)."""
    ions = case.electrolyte.ions
    if case.model == "dh":
        return np.array([ion.concentration * (1.0 - ion.valence * psi) for ion in ions])
    boltzmann = np.array([np.exp(-ion.valence * psi) for ion in ions])
    bulk = np.array([ion.concentration for ion in ions])[:, None]
    if case.model == "steric":
        packing = bulk * AVOGADRO * ions[0].diameter ** 3
        return bulk * boltzmann / (1.0 + np.sum(packing * (boltzmann - 1.0), axis=0))
    return bulk * boltzmann


def section_profiles(case: Case, vector: np.ndarray, solved: SolvedSection) -> Profiles:
    """The profiles across the whole section on the finest grid of ``solved`` (``vector`` is the packed case).

    A geometry with two walls (``wall_count`` 2) is measured from its first wall to its second, 0 to
    ``across``, and its half section (two equal walls) is mirrored; one with a single wall from the centre,
    0 to the half-size. The thin-layer profile is the slip velocity of the isolated walls
    (``kernels.thin_layer.thin_slip``): linear between two walls (the Couette-like profile of two slip velocities),
    uniform (plug) in a capillary.
    """
    units, geometry = solved.units, case.geometry
    x = grid.from_nodes(solved.s, solved.beta, geometry.metric).x
    psi, u_eo_hat, u_p_hat = solved.psi, solved.u_eo, solved.u_p
    two_walls = geometry.wall_count == 2
    if case.symmetric and two_walls:
        x = np.concatenate((-x[:0:-1], x))
        psi, u_eo_hat, u_p_hat = (np.concatenate((f[:0:-1], f)) for f in (psi, u_eo_hat, u_p_hat))
    coordinate = units.length * (1.0 + x if two_walls else x)
    if two_walls:
        coordinate[0], coordinate[-1] = 0.0, geometry.across
    u_eo, u_p = velocity_profiles(u_eo_hat, u_p_hat, units, case)
    conc = concentrations(psi, case)
    valence = np.array([ion.valence for ion in case.electrolyte.ions])[:, None]
    rho = ELEMENTARY_CHARGE * AVOGADRO * np.sum(valence * conc, axis=0)
    bottom, top = float(solved.slip[0]), float(solved.slip[1])
    if two_walls:
        thin = bottom + (top - bottom) * coordinate / geometry.across
    else:
        thin = np.full_like(coordinate, top)
    return Profiles(
        coordinate=coordinate,
        coordinate_name=geometry.coordinate_name,
        potential=psi * units.thermal_voltage,
        concentration=conc,
        charge_density=rho,
        velocity_eo=u_eo,
        velocity_pressure=u_p,
        velocity=u_eo + u_p,
        velocity_thin_layer=thin * case.field,
        ion_names=tuple(ion.name for ion in case.electrolyte.ions),
        eo_per_field=units.eo_velocity_per_field * u_eo_hat,
    )
