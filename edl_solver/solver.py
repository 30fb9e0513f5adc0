"""The pipeline of one solve: Case -> scaling -> equilibrium (with flow) -> currents -> thin layer -> Result."""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from edl_solver import _adaptive, equilibrium, flow, scaling, thin_layer, transport, validity, walls
from edl_solver import _kernels as k
from edl_solver.case import Capillary, Case
from edl_solver.constants import AVOGADRO, ELEMENTARY_CHARGE
from edl_solver.equilibrium import SectionSolution
from edl_solver.errors import ConvergenceError
from edl_solver.result import Profiles, Result
from edl_solver.scaling import Scales

#: Discrete identities (charge balance, Onsager reciprocity) hold to round-off; beyond this the
#: solve is declared failed rather than returned.
IDENTITY_TOLERANCE = 1e-8
#: The thin-layer profile is compared with the full one farther than this many Debye lengths from
#: the walls (the outer region of the matched-asymptotic picture).
OUTER_REGION_DEBYE_LENGTHS = 3.0


def solve(case: Case) -> Result:
    """Solve the equilibrium double layer and the flow across one section and compare with the
    thin-layer slip model.

    Parameters
    ----------
    case : Case

    Returns
    -------
    Result

    Raises
    ------
    ConvergenceError
        If the nonlinear solve or the grid refinement fails, or a discrete conservation law is
        violated; the message names the case.
    """
    if not isinstance(case, Case):
        from edl_solver.errors import InputError

        raise InputError(f"case: {type(case).__name__} is not a Case, expected edl_solver.Case(...)")
    units = scaling.scales(case)
    isolated = walls.isolated_walls(case)
    problem = scaling.section_problem(case, units, isolated)
    numerics = case.numerics
    section = equilibrium.solve_section(problem, numerics.accuracy, numerics.intervals,
                                        numerics.max_iterations, numerics.max_intervals, case.describe)
    summary = _equilibrium_summary(section, units, case)
    summary.update(flow.flow_summary(section.integrals, units, case))
    summary.update(transport.current_summary(section.integrals, units, case))
    slip = _thin_layer_slip(case, isolated)
    profiles = _profiles(section, units, case, slip)
    comparison = _thin_layer_summary(summary, profiles, units, case, isolated, slip)
    summary.update(comparison)
    ion_matrix = transport.ion_response_matrix(section.integrals, units, case)
    matrix = transport.reduced_matrix(ion_matrix, case)
    thin_matrix = thin_layer.thin_layer_matrix(case, units.section_area, isolated, slip)
    summary.update(_transport_summary(ion_matrix, matrix, thin_matrix, units, case))
    summary.update(_identity_checks(section, problem.kappa2, case, ion_matrix))
    summary["error_estimate"] = section.error_estimate
    for private in ("_flow_rate_eo_per_field", "_flow_rate_per_gradient", "_streaming_current_per_gradient"):
        del summary[private]  # intermediate values of the steps above, not results
    summary = {key: _plain(value) for key, value in summary.items()}
    return Result(
        case=case,
        profiles=profiles,
        summary=summary,
        verdict=thin_layer.verdict(summary["thin_layer_flow_rate_error"], case.tolerance),
        status="converged",
        message=f"converged: {section.iterations} Newton iterations, {section.grid.x.size} nodes on the "
                f"finest grid, estimated relative error {section.error_estimate:.1g}",
        iterations=section.iterations,
        residual=section.residual,
        warnings=validity.notes(case, profiles, units.thermal_voltage),
        response_matrix=matrix,
        ion_response_matrix=ion_matrix,
    )


def _plain(value: Any) -> Any:
    """Python floats (and tuples of them) instead of numpy scalars, for a clean summary dict."""
    # "+ 0.0" turns a negative zero (e.g. the flow of a case with no drive) into a plain zero
    return tuple(float(v) + 0.0 for v in value) if type(value) is tuple else float(value) + 0.0


def _pair(values: tuple[float, float], case: Case) -> Any:
    """A float when one condition holds on every wall, else the (bottom, top) pair."""
    return values[1] if case.symmetric else (values[0], values[1])


def _equilibrium_summary(section: SectionSolution, units: Scales, case: Case) -> dict[str, Any]:
    """Wall, centre and mean potentials and the wall charge, SI."""
    i = section.integrals
    vt = units.thermal_voltage
    zetas = (i[k.I_PSI_LEFT] * vt, i[k.I_PSI_RIGHT] * vt)
    sigmas = (i[k.I_FLUX_LEFT] * units.charge_density, i[k.I_FLUX_RIGHT] * units.charge_density)
    extra: dict[str, Any] = {}
    if any(w.stern_capacitance is not None for w in case.walls):
        # potential of the charge plane, behind the Stern layer: psi_0 = zeta + sigma / C_S
        extra["stern_potential"] = _pair(tuple(
            z + q / w.stern_capacitance if w.stern_capacitance is not None else math.nan
            for z, q, w in zip(zetas, sigmas, case.walls)), case)
    return extra | {
        "debye_length": units.debye_length,
        "kappa_h": units.length / units.debye_length,
        "zeta": _pair(zetas, case),
        "wall_charge_density": _pair(sigmas, case),
        "centre_potential": i[k.I_PSI_CENTRE] * vt,
        "mean_potential": i[k.I_PSI] * units.area / units.section_area * vt,
    }


def _profiles(section: SectionSolution, units: Scales, case: Case, slip: tuple[float, float]) -> Profiles:
    """Profiles across the whole section; a symmetric slit's half section is mirrored."""
    x = section.grid.x
    psi, u_eo_hat, u_p_hat = section.psi, section.u_eo, section.u_p
    capillary = isinstance(case.geometry, Capillary)
    if case.symmetric and not capillary:
        x = np.concatenate((-x[:0:-1], x))
        psi, u_eo_hat, u_p_hat = (np.concatenate((f[:0:-1], f)) for f in (psi, u_eo_hat, u_p_hat))
    coordinate = units.length * (x if capillary else 1.0 + x)
    if not capillary:
        coordinate[0], coordinate[-1] = 0.0, case.geometry.height
    u_eo, u_p = flow.velocity_profiles(u_eo_hat, u_p_hat, units, case)
    conc = transport.concentrations(psi, case)
    valence = np.array([ion.valence for ion in case.electrolyte.ions])[:, None]
    rho = ELEMENTARY_CHARGE * AVOGADRO * np.sum(valence * conc, axis=0)
    if capillary:
        thin = np.full_like(coordinate, slip[1])
    else:
        thin = slip[0] + (slip[1] - slip[0]) * coordinate / case.geometry.height
    return Profiles(
        coordinate=coordinate,
        coordinate_name="r" if capillary else "y",
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


def _thin_layer_slip(case: Case, isolated: tuple[tuple[float, float], tuple[float, float]]
                     ) -> tuple[float, float]:
    """Slip velocity per unit field at each wall, m^2/(V s), of the isolated walls (thin-layer picture)."""
    return tuple(thin_layer.slip_velocity(zeta, case.solvent, 1.0, sigma, wall.slip_length)
                 for (zeta, sigma), wall in zip(isolated, case.walls))


def _thin_layer_summary(summary: dict[str, Any], profiles: Profiles, units: Scales, case: Case,
                        isolated: tuple[tuple[float, float], tuple[float, float]], slip: tuple[float, float]
                        ) -> dict[str, Any]:
    """The thin-layer counterparts and the errors of the thin-layer model (independent of E)."""
    zetas = (isolated[0][0], isolated[1][0])
    thin_per_field = units.section_area * 0.5 * (slip[0] + slip[1])
    full_per_field = summary["_flow_rate_eo_per_field"]
    # Between walls of opposite sign either flow may vanish; below round-off of the slip scale the
    # relative error and the ratio are undefined (NaN) rather than noise.
    negligible = 1e-10 * units.section_area * max(abs(slip[0]), abs(slip[1]))
    error = (thin_per_field - full_per_field) / full_per_field if abs(full_per_field) > negligible else math.nan
    eo_ratio = full_per_field / thin_per_field if abs(thin_per_field) > negligible else math.nan
    return {
        "hs_velocity": _pair(tuple(s * case.field for s in slip), case),
        "eo_ratio": eo_ratio,
        "thin_layer_zeta": _pair(zetas, case),
        "thin_layer_flow_rate_eo": thin_per_field * case.field,
        "thin_layer_flow_rate_error": error,
        "thin_layer_mean_velocity_error": error,  # same area, so the same relative error
        "thin_layer_max_outer_deviation": _outer_deviation(profiles, slip, units),
    }


def _outer_deviation(profiles: Profiles, slip: tuple[float, float], units: Scales) -> float:
    """Largest |thin-layer - full| EO velocity outside the double layers, over the largest slip speed.

    The outer region lies farther than ``OUTER_REGION_DEBYE_LENGTHS`` Debye lengths from every wall;
    when the layers overlap it shrinks to the centre. Inside the layers the slip model does not claim
    to hold, so the comparison stops there.
    """
    largest = max(abs(slip[0]), abs(slip[1]))
    if largest == 0.0:
        return math.nan
    y = profiles.coordinate
    if profiles.coordinate_name == "r":
        distance = units.length - y
        thin = np.full_like(y, slip[1])
    else:
        distance = units.length - np.abs(y - units.length)
        thin = slip[0] + (slip[1] - slip[0]) * y / (2.0 * units.length)
    outer = distance >= min(OUTER_REGION_DEBYE_LENGTHS * units.debye_length, float(distance.max()))
    full = profiles.eo_per_field
    return float(np.max(np.abs(thin - full)[outer])) / largest


#: Lab quantities whose thin-layer counterparts are reported with their relative error.
COMPARED = ("conductance_per_length", "streaming_potential_coefficient", "electroviscous_ratio",
            "eo_pump_pressure_per_voltage", "diffusioosmotic_flow", "diffusion_potential", "cation_transference",
            "max_efficiency")


def _relative_error(thin: float, full: float) -> float:
    return (thin - full) / full if full != 0.0 and math.isfinite(thin) else math.nan


def _transport_summary(ion_matrix: np.ndarray, matrix: np.ndarray, thin_matrix: np.ndarray, units: Scales,
                       case: Case) -> dict[str, float]:
    """Lab quantities from the response matrix, their thin-layer counterparts and errors."""
    full = transport.lab_quantities(matrix, case, units) | transport.transference(ion_matrix, case)
    thin = transport.lab_quantities(thin_matrix, case, units)
    ions = case.electrolyte.ions
    bulk = [ion.valence**2 * ion.diffusivity * ion.concentration for ion in ions]
    thin["cation_transference"] = sum(b for b, ion in zip(bulk, ions) if ion.valence > 0) / sum(bulk)
    out = dict(full)
    for key in COMPARED:
        out[f"thin_layer_{key}"] = thin[key]
        out[f"thin_layer_{key}_error"] = _relative_error(thin[key], full[key])
    return out


def _identity_checks(section: SectionSolution, kappa2: float, case: Case, ion_matrix: np.ndarray
                     ) -> dict[str, float]:
    """Charge balance and Onsager reciprocity of the discrete solution; both are exact identities of
    the scheme (the operator is symmetric and the wall charge comes from the end cells' balance), so a
    violation means the solve went wrong."""
    i = section.integrals
    left_is_wall = section.grid.x[0] != 0.0  # a half section starts at the centre, not at a wall
    left = i[k.I_FLUX_LEFT] if left_is_wall else 0.0
    wall = abs(left) + abs(i[k.I_FLUX_RIGHT]) + _adaptive.POTENTIAL_FLOOR * max(1.0, math.sqrt(kappa2))
    net = kappa2 * i[k.I_RHO] + i[k.I_FLUX_RIGHT] + left
    balance = abs(net) / wall
    # Onsager (1931): streaming current per pressure gradient = EO flow rate per field, i.e.
    # int u_eo_hat dV = -kappa2 int rho_hat u_p_hat dV in the dimensionless variables.
    # Measured against the larger of the two and the wall-potential scale, since both vanish between
    # walls of opposite sign.
    eo, streaming = i[k.I_UEO], -kappa2 * i[k.I_RHO_UP]
    wall_scale = max(abs(i[k.I_PSI_LEFT]), abs(i[k.I_PSI_RIGHT]), _adaptive.POTENTIAL_FLOOR) * float(
        np.sum(section.grid.volume))
    reciprocity = abs(eo - streaming) / max(abs(eo), abs(streaming), wall_scale, 1e-300)
    # the whole ion-resolved matrix must be symmetric too (each entry against its row and column scale)
    entries = ion_matrix.tolist()
    size = [math.sqrt(abs(entries[a][a])) for a in range(len(entries))]
    onsager = max((abs(entries[a][b] - entries[b][a]) / (size[a] * size[b])
                   for a in range(len(entries)) for b in range(a)), default=0.0)
    worst = max(balance, reciprocity, onsager)
    if not worst <= IDENTITY_TOLERANCE:
        raise ConvergenceError(f"{case.describe()}: the discrete solution violates charge balance "
                               f"({balance:.2g}) or reciprocity ({reciprocity:.2g}, matrix {onsager:.2g}); "
                               "not returned")
    return {"charge_balance": balance, "reciprocity_residual": max(reciprocity, onsager)}
