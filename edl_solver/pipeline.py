"""The pipeline of one solve: Case -> packed inputs -> section solved and summarised -> checks -> Result.

The section solve (kernel inputs, the nested-grid solve of the equilibrium double layer with its flow, the
Richardson-extrapolated integrals) and the summary (flow rates, currents, the response matrices, the lab
quantities and their thin-layer counterparts, the identity checks) run compiled in one call
(``model.section``); sweeps run the same compiled steps on many cases at once (``kernels.batch``). Everything that
can fail runs here, before the Result exists; what only presents the solution (profiles in SI, the summary as
a dict, the verdict, the message, the validity notes) is built when first read (``results.result.Deferred``).
"""

from __future__ import annotations

import dataclasses
import functools
from typing import Any

import numpy as np

from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Rectangle, Slit
from edl_solver.kernels import layout as _layout
from edl_solver.kernels import summary as _summary
from edl_solver.model import packing, profiles, section, thin_layer, validity
from edl_solver.model.section import SolvedSection
from edl_solver.results.result import Deferred, Result


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
        raise InputError(f"case: {type(case).__name__} is not a Case, expected edl_solver.Case(...)")
    if isinstance(case.geometry, Rectangle):
        return _solve_rectangle(case)
    vector = packing.case_vector(case)
    values = np.empty(_layout.SUMMARY_SIZE)
    solved = section.solve_and_summarize(vector, case, values)
    check_identities(values, case)
    return Result.converged(
        case=case,
        profiles=Deferred(lambda result: profiles.section_profiles(case, vector, solved)),
        summary=Deferred(lambda result: summary_dict(values, case)),
        verdict=Deferred(_verdict),
        message=Deferred(lambda result: _message(solved)),
        iterations=solved.iterations,
        residual=solved.residual,
        warnings=Deferred(lambda result: validity.notes(case, result.profiles, solved.units.thermal_voltage,
                                                          result.summary)
                          + validity.coupling_notes(result.summary)),
        response_matrix=solved.matrix,
        ion_response_matrix=solved.ion_matrix,
    )


def _solve_rectangle(case: Case) -> Result:
    """The pipeline of a rectangular section: the 2-D solve and the same summary (``model.rectangle_case``)."""
    from edl_solver.model import rectangle_case, rectangle_profiles

    values = np.full(_layout.SUMMARY_SIZE, np.nan)
    solved = rectangle_case.solve_rectangle_case(case, values)
    section = solved.section
    cells = section.finest.psi.shape
    message = (f"converged: {section.iterations} Newton iterations, {cells[0]} x {cells[1]} nodes on the finest "
               f"quarter grid, estimated relative error {section.estimate:.1g}")
    return Result.converged(
        case=case,
        profiles=Deferred(lambda result: rectangle_profiles.rectangle_profiles(case, solved)),
        summary=Deferred(lambda result: summary_dict(values, case)),
        verdict=Deferred(_verdict),
        message=message,
        iterations=section.iterations,
        residual=section.residual,
        warnings=Deferred(lambda result: validity.notes(case, result.profiles, solved.thermal_voltage,
                                                          result.summary) + validity.coupling_notes(result.summary)),
        response_matrix=solved.matrix,
        ion_response_matrix=solved.ion_matrix,
        slit_comparison=Deferred(lambda result: slit_beside(case, result.summary)),
    )


#: The slit values shown beside a rectangle's: intensive ones as they are, extensive ones (per unit width) times W.
SLIT_INTENSIVE = ("mean_velocity_eo", "eo_ratio", "thin_layer_flow_rate_error", "streaming_potential_coefficient",
                  "selectivity")
SLIT_EXTENSIVE = ("flow_rate_eo", "eo_pump_flow_per_field", "current_per_field", "conductance_per_length",
                  "streaming_conductance")
#: The side walls' effect on each of these, from values that do not depend on the drives (so that a case without a
#: field has them too): the mean EO velocity's from the EO flow per unit field.
SIDE_WALL_EFFECTS = {"mean_velocity_eo": "eo_pump_flow_per_field", "current_per_field": "current_per_field",
                     "conductance_per_length": "conductance_per_length",
                     "streaming_conductance": "streaming_conductance"}


def slit_beside(case: Case, summary: dict[str, Any]) -> dict[str, float]:
    """The slit of a rectangle's height with its top and bottom walls (the rectangle without side walls): its values
    (``SLIT_INTENSIVE`` as they are, ``SLIT_EXTENSIVE`` times the width W, so that both describe one channel) and
    ``side_wall_effect_<key>`` (``SIDE_WALL_EFFECTS``), the rectangle's value over the slit's less 1: what the side
    walls cost."""
    geometry = case.geometry
    wall = case.walls[0] if not case.symmetric else case.wall
    slit = solve(dataclasses.replace(case, geometry=Slit(height=geometry.height), wall=wall)).summary
    out: dict[str, float] = {"height": geometry.height, "width": geometry.width}
    for key in (*SLIT_INTENSIVE, *SLIT_EXTENSIVE):
        out[key] = slit[key] * (geometry.width if key in SLIT_EXTENSIVE else 1.0)
    for key, source in SIDE_WALL_EFFECTS.items():
        out[f"side_wall_effect_{key}"] = summary[source] / out[source] - 1.0 if out[source] else float("nan")
    return out


def check_identities(values: np.ndarray, case: Case) -> None:
    """Raise ConvergenceError when the discrete solution violates charge balance or Onsager reciprocity
    beyond ``kernels.identities.IDENTITY_TOLERANCE`` (``identities_hold``)."""
    if not _summary.identities_hold(values):
        summary = summary_dict(values, case)
        raise ConvergenceError(f"{case.describe()}: the discrete solution violates charge balance "
                               f"({summary['charge_balance']:.2g}) or reciprocity "
                               f"({summary['reciprocity_residual']:.2g}); not returned")


@functools.cache
def _summary_plan(symmetric: bool, stern: bool) -> tuple[tuple[str, ...], np.ndarray, tuple[bool, ...]]:
    """The keys of a summary, the slots they read (pair keys: the top wall's slot when symmetric, both slots
    else) and which keys are pairs, for one (symmetric, Stern layer) kind of case."""
    keys, slots, pairs = [], [], []
    for key, at in _layout.SLOTS.items():
        pair = key in _layout.PAIR_KEYS
        if key == "stern_potential" and not stern:
            continue
        keys.append(key)
        pairs.append(pair and not symmetric)
        slots.extend((at, at + 1) if pair and not symmetric else (at + 1 if pair else at,))
    return tuple(keys), np.array(slots), tuple(pairs)


def summary_dict(values: np.ndarray, case: Case) -> dict[str, Any]:
    """The summary of a case from its compiled summary vector (``_layout.SLOTS``): pair keys as a float
    when one condition holds on every wall, else (bottom, top); the Stern-plane potential only when a wall
    has a Stern layer. "+ 0.0" turns a negative zero (e.g. the flow of a case with no drive) into a plain
    zero."""
    stern = any(wall.stern_capacitance is not None for wall in case.walls)
    keys, slots, pairs = _summary_plan(case.symmetric, stern)
    flat = (values[slots] + 0.0).tolist()
    if not any(pairs):
        return dict(zip(keys, flat))
    taken = iter(flat)
    return {key: (next(taken), next(taken)) if pair else next(taken) for key, pair in zip(keys, pairs)}


def _verdict(result: Result) -> str:
    return thin_layer.verdict(result.summary["thin_layer_flow_rate_error"], result.case.tolerance)


def _message(solved: SolvedSection) -> str:
    return (f"converged: {solved.iterations} Newton iterations, {solved.s.size} nodes on the finest grid, "
            f"estimated relative error {solved.estimate:.1g}")
