"""The pipeline of one solve: Case -> scaling -> equilibrium (with flow) -> summary -> Result.

The summary (flow rates, currents, the response matrices, the lab quantities and their thin-layer
counterparts, the identity checks) is computed by the compiled ``_summary.summarize`` from the section
integrals; sweeps run the same compiled steps on many cases at once (``_batch.py``).
"""

from __future__ import annotations

from typing import Any

import numpy as np

from edl_solver.constants import AVOGADRO, ELEMENTARY_CHARGE
from edl_solver.errors import ConvergenceError
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Capillary
from edl_solver.kernels import layout as _layout
from edl_solver.kernels import summary as _summary
from edl_solver.model import equilibrium, flow, scaling, thin_layer, transport, validity
from edl_solver.model.equilibrium import SectionSolution
from edl_solver.model.scaling import Scales
from edl_solver.results.profiles import Profiles
from edl_solver.results.result import Result


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
    prepared = scaling.prepare(case)
    units = prepared.units
    values = np.empty(_layout.SUMMARY_SIZE)
    section, ion_matrix, matrix, slip = equilibrium.solve_summarized(prepared, values, case.describe)
    summary = summary_dict(values, case)
    if not _summary.identities_hold(values):
        raise ConvergenceError(f"{case.describe()}: the discrete solution violates charge balance "
                               f"({summary['charge_balance']:.2g}) or reciprocity "
                               f"({summary['reciprocity_residual']:.2g}); not returned")
    profiles = _profiles(section, units, case, (float(slip[0]), float(slip[1])))
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


def _plain(value: float) -> float:
    # "+ 0.0" turns a negative zero (e.g. the flow of a case with no drive) into a plain zero
    return value + 0.0


def summary_dict(values: np.ndarray, case: Case) -> dict[str, Any]:
    """The summary of a case from its compiled summary vector (``_layout.SLOTS``): pair keys as a float
    when one condition holds on every wall, else (bottom, top); the Stern-plane potential only when a wall
    has a Stern layer."""
    flat = values.tolist()
    stern = any(wall.stern_capacitance is not None for wall in case.walls)
    symmetric = case.symmetric
    summary: dict[str, Any] = {}
    for key, at in _layout.SLOTS.items():
        if key in _layout.PAIR_KEYS:
            if key == "stern_potential" and not stern:
                continue
            summary[key] = _plain(flat[at + 1]) if symmetric else (_plain(flat[at]), _plain(flat[at + 1]))
        else:
            summary[key] = _plain(flat[at])
    return summary


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
