"""``edl_solver.fit``: case inputs fitted to measured summary quantities by weighted least squares.

The pieces: ``problem`` reads the data and parameters, ``forward`` evaluates the model at all points in one
compiled batch, ``least_squares`` minimises in scaled coordinates, ``uncertainty`` gives standard errors,
correlations, identifiability warnings and profile intervals, ``thin_layer`` fits the same data with the
thin-layer formulas, and ``result`` holds the ``Fit``.
"""

from __future__ import annotations

import math
import warnings as _warnings
from collections.abc import Mapping, Sequence
from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.case import Case

from . import thin_layer
from .forward import Forward
from .least_squares import Objective, make_scaling, minimise, residual_scale, scaled_bounds
from .problem import Dataset, parse_data, parse_parameters
from .result import Fit, FittedDataset
from .uncertainty import IdentifiabilityWarning, correlation, covariance, identifiability, profile_interval


def fit(case: Case, data: Any, parameters: Sequence[str] | Mapping[str, Any], *,
        bounds: Mapping[str, Sequence[Any]] | None = None, profile: bool = False, max_evaluations: int = 100) -> Fit:
    """Fit case inputs (``parameters``) to measured summary quantities.

    Parameters
    ----------
    case : Case
        The template: every input not in the data or the parameters is taken from it. A parameter replaces its
        wall condition as a sweep axis does (fitting ``wall.charge_density`` on a fixed-zeta template fits a
        fixed-charge wall).
    data : mapping or list of mappings
        Keys that are case inputs (dotted paths: ``electrolyte.concentration``, ``electrolyte.pH``,
        ``geometry.height``, ``pressure_gradient``, ...) are the independent variables; the one key that is a
        summary quantity (``conductance_per_length``, ``streaming_conductance``, ...) is the measured value;
        ``"uncertainty"`` (optional) is one absolute standard deviation per point in its SI unit. A list of
        mappings is fitted together with shared parameters.
    parameters : sequence of str, or mapping of str to start value
        Sweepable input paths to fit (``wall.charge_density``, ``wall.zeta``, ``wall.site[0].density``,
        ``wall.site[0].pK``, ``wall.stern_capacitance``, ``wall.slip_length``, ``geometry.height``, ...); with a
        mapping, start values (SI or strings with units; None: the default start).
    bounds : mapping of str to (lower, upper), optional
        Bounds of parameters, SI (None for no bound on a side).
    profile : bool
        Also compute profile-likelihood intervals (``Fit.intervals``; each costs a few fits).
    max_evaluations : int
        Most residual evaluations of the optimiser.

    Returns
    -------
    Fit
        ``parameters`` and ``standard_errors`` (SI), covariance, correlation, chi^2, warnings (also issued as
        ``IdentifiabilityWarning``), the data sets against the model, the thin-layer fit beside it.

    Raises
    ------
    InputError
        Bad data or parameters (one line naming the field).
    ConvergenceError
        A forward solve that does not converge, naming its point.
    """
    if not isinstance(case, Case):
        raise InputError(f"case: {type(case).__name__} is not a Case, expected edl_solver.Case(...)")
    datasets = parse_data(data)
    paths, given = parse_parameters(parameters, datasets)
    _check_options(profile, max_evaluations)
    template = Forward(case, datasets, paths, np.array([_template_value(case, p, given) for p in paths]))
    cases = [[template.case(d, i) for i in range(one.size)] for d, one in enumerate(datasets)]
    absolute = all(one.uncertainty is not None for one in datasets)
    thin, notes = None, []
    if thin_layer.applies(datasets, paths):
        try:
            thin = thin_layer.make_thin_layer(cases, datasets, paths[0], _sign(case, paths[0]),
                                              residual_scale(datasets), absolute, None)
        except (ValueError, ArithmeticError, RuntimeError) as error:  # the full fit does not need it
            notes.append(f"the thin-layer fit failed ({error}); the full fit starts from the template")
    if thin is not None and abs(thin.parameters[paths[0]]) < (1e-4 if paths[0] == "wall.zeta" else 1e-5):
        thin_start = None  # conductance is even in the charge: no slope at 0, so the full fit starts elsewhere
    else:
        thin_start = thin.parameters if thin is not None else None
    start = np.array([given.get(p, thin_start[p] if thin_start is not None and p in thin_start
                                else template_start(template, [p])[0]) for p in paths])
    forward = Forward(case, datasets, paths, start) if thin_start is not None else template
    scaling = make_scaling(paths, start)
    lo, hi = scaled_bounds(paths, scaling, bounds)
    objective = Objective(forward, datasets, scaling)
    solution = minimise(objective, scaling.to_z(start), lo, hi, max_nfev=max_evaluations)
    z = solution.z_full
    return _result(objective, datasets, paths, z, solution, thin, notes, (lo, hi, profile), start)


def _check_options(profile: Any, max_evaluations: Any) -> None:
    if not isinstance(profile, bool):
        raise InputError(f"profile: {profile!r} is not allowed, expected True or False")
    if isinstance(max_evaluations, bool) or not isinstance(max_evaluations, int) or max_evaluations < 1:
        raise InputError(f"max_evaluations: {max_evaluations!r} is not allowed, expected a positive integer")


def template_start(forward: Forward, paths: Sequence[str]) -> np.ndarray:
    """The parameters as the forward model's template holds them (its start values)."""
    return np.array([_table_value(forward.table, p) for p in paths])


def _sign(case: Case, path: str) -> float:
    """The sign of the template's wall charge (negative, as silica, when it has none)."""
    from edl_solver.model.walls import isolated_wall

    wall = case.walls[0]
    zeta, sigma = isolated_wall(wall, case.electrolyte, case.solvent, "pb")
    value = zeta if path == "wall.zeta" else sigma
    return 1.0 if value > 0 else -1.0


def _table_value(table: Mapping[str, Any], path: str) -> float:
    """The value at a dotted path of a case mapping (the bottom wall of a pair, the first ion's concentration)."""
    if path == "electrolyte.concentration":
        return float(table["electrolyte"]["ions"][0]["concentration"])
    node: Any = table
    parts = path.split(".")
    if parts[0] == "wall" and ("bottom" in table["wall"] or "top" in table["wall"]) and parts[1] not in ("bottom",
                                                                                                          "top"):
        parts.insert(1, "bottom")
    for part in parts:
        if part.startswith("site["):
            node = node["site"][int(part[5:part.index("]")])]
        else:
            node = node[part]
    value = node[0] if isinstance(node, (list, tuple)) else node
    return float(value)


def _template_value(case: Case, path: str, given: Mapping[str, float]) -> float:
    """The start value of a parameter: given, the template's, or the isolated wall's charge or zeta."""
    from edl_solver.inputs.casefile import case_to_mapping
    from edl_solver.model.walls import isolated_wall

    if path in given:
        return given[path]
    try:
        return _table_value(case_to_mapping(case), path)
    except (KeyError, IndexError, TypeError, ValueError):
        pass
    leaf = path.rsplit(".", 1)[-1]
    if leaf in ("charge_density", "zeta"):
        side = 1 if ".top." in path else 0
        zeta, sigma = isolated_wall(case.walls[side], case.electrolyte, case.solvent, "pb")
        return sigma if leaf == "charge_density" else zeta
    if leaf == "slip_length":
        return 0.0
    raise InputError(f"parameters: {path!r} has no value in the template case, expected a start value, e.g. "
                     f"parameters={{{path!r}: ...}}")


def _result(objective: Objective, datasets: Sequence[Dataset], paths: Sequence[str], z: np.ndarray, solution: Any,
            thin: Any, notes: list[str], options: tuple[Any, ...], start: np.ndarray) -> Fit:
    """The ``Fit`` at the optimum ``z``: uncertainty, warnings, data sets, thin-layer comparison."""
    lo, hi, profile = options
    scaling = objective.scaling
    x = scaling.to_x(z)
    residuals, jac = solution.fun, solution.jac  # at the optimum, from the optimiser's last step
    chi2 = float(np.sum(residuals**2))
    dof = residuals.size - len(paths)
    reduced = chi2 / dof if dof > 0 else math.nan
    scale = 1.0 if objective.absolute else (reduced if dof > 0 else math.inf)
    cov = covariance(jac, scaling.dx_dz(z), scale)
    errors = np.sqrt(np.diag(cov))
    flat = identifiability(jac, paths, scale)
    for note in flat:
        _warnings.warn(note, IdentifiabilityWarning, stacklevel=3)
    notes = [*flat, *notes]
    model = objective.measured + residuals * objective.sigma
    fitted, at = [], 0
    for one in datasets:
        values = model[at:at + one.size]
        at += one.size
        fitted.append(FittedDataset(inputs=one.inputs, quantity=one.quantity, values=one.values,
                                    uncertainty=one.uncertainty, model=values, residuals=values - one.values))
    if thin is not None:
        full = float(x[0])
        thin = type(thin)(formula=thin.formula, parameters=thin.parameters, standard_errors=thin.standard_errors,
                          relative_difference={paths[0]: (thin.parameters[paths[0]] - full) / full if full else
                                               math.nan}, model=thin.model)
    intervals = None
    if profile:
        se_z = np.sqrt(np.diag(cov) / np.maximum(scaling.dx_dz(z) ** 2, 1e-300))
        intervals = {p: profile_interval(objective, z, k, float(se_z[k]), lo, hi, scale if dof > 0 else 1.0)
                     for k, p in enumerate(paths)}
    return Fit(names=tuple(paths), parameters=dict(zip(paths, map(float, x))),
               standard_errors=dict(zip(paths, map(float, errors))), covariance=cov, correlation=correlation(cov),
               chi2=chi2, reduced_chi2=reduced, dof=dof, absolute_uncertainty=objective.absolute,
               warnings=tuple(notes), datasets=tuple(fitted), thin_layer=thin,
               forward_solves=objective.forward.forward_solves, batches=objective.forward.batches,
               success=bool(solution.success), message=str(solution.message), intervals=intervals,
               start=dict(zip(paths, map(float, start))))
