"""The cross-section relations of a channel whose section varies along x, tabulated once over (ln c, ln size).

A ``Channel`` with a ``size`` (``channel.shape``) is tabulated here instead of ``model.tabulate``: the cross-section
is solved at every pair of ``points`` log-spaced concentrations and ``size_points`` log-spaced sizes (the radius of
a capillary, the height of a slit). The concentration axis covers the reservoirs widened by
``Channel.concentration_span`` (``CONCENTRATION_SPAN``, 50, by default) each way, since a charged tapered channel
enriches or depletes its salt inside (concentration polarisation, the root of its rectification); it holds the left
reservoir's concentration as a node, so that a uniform section between equal reservoirs is interpolated exactly. The
ion-resolved matrix is interpolated as ``model.IonMatrixSpline`` does in ln c (logs of the diagonal, correlations),
by bicubic splines over (ln size, ln c); the interpolation is checked against direct solves at every cell centre
(the midpoints in both ln c and ln size, where a tensor-product interpolation is least accurate) and the largest
error stored, as ``model.tabulate`` does at the midpoints in ln c. A wall piecewise along x (``wall_segments``) gets
one such table per distinct wall; a wall profile (``wall_profile``) one per wall node (``wall_nodes``), interpolated
across the wall value by ``wall_profile.ProfileSpline``, whose error is checked at the midpoints of the nodes."""

from __future__ import annotations

import dataclasses
import math
import time
from typing import Any

import numpy as np

from edl_solver.channel.relations import SaltRatios, basis_of, reduce_matrices, zero_current_gradient
from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.case import Case

__all__ = ["CONCENTRATION_SPAN", "SectionSpline", "tabulate_taper", "wall_nodes"]

#: Factor by which the table's concentrations extend beyond the reservoirs' on each side, by default
#: (``Channel.concentration_span``).
CONCENTRATION_SPAN = 50.0


def _solve_grid(case: Case, concentrations: np.ndarray, sizes: np.ndarray, field: str = "channel.size"
                ) -> tuple[np.ndarray, np.ndarray, tuple[str, ...]]:
    """Ion and reduced response matrices at every (size, concentration), shape (sizes, concentrations, n, n);
    ``field`` names the input a refused point is blamed on."""
    from edl_solver.inputs import paths as sweep_axes
    from edl_solver.inputs.casefile import case_to_mapping
    from edl_solver.pipeline import solve

    axes = sweep_axes.make_axes({"electrolyte.concentration": [float(c) for c in concentrations]})
    base = case_to_mapping(case)
    scaled: dict[int, Case] = {}  # the case at each concentration, built as the sweep path builds it, once
    ions, reduced, notes = [], [], []
    for size in sizes:
        for i, c in enumerate(concentrations):
            try:
                if i not in scaled:
                    scaled[i] = sweep_axes.case_at(base, axes, (i,))
                # the size set on the geometry directly: the same Case as the sweep path "geometry.<size>" gives
                # (checked by the same __post_init__), several times cheaper than rebuilding it from a mapping
                sized = dataclasses.replace(scaled[i].geometry, **{case.geometry.size_name: float(size)})
                result = solve(dataclasses.replace(scaled[i], geometry=sized))
            except InputError as error:
                raise InputError(f"{field}: the table's point c = {c:.6g} mol/m^3, {case.geometry.size_name} "
                                 f"{size:.6g} m is refused ({error}), expected sizes and concentrations (the "
                                 "reservoirs' widened by the channel's concentration_span each way) inside the "
                                 "solver's domain") from None
            except ConvergenceError as error:
                raise ConvergenceError(f"channel: the cross-section solve at c = {c:.6g} mol/m^3 and "
                                       f"{case.geometry.size_name} {size:.6g} m failed ({error})") from error
            ions.append(result.ion_response_matrix)
            reduced.append(result.response_matrix)
            notes.extend(note for note in result.warnings if note not in notes)
    shape = (len(sizes), len(concentrations))
    return (np.array(ions).reshape(*shape, *ions[0].shape), np.array(reduced).reshape(*shape, 3, 3),
            tuple(notes))


class SectionSpline:
    """The ion-resolved response matrix at (u = ln c, s = ln size): bicubic splines of the logs of its diagonal
    and of its correlations L_ij / sqrt(L_ii L_jj) (cubic in u alone for a single size)."""

    def __init__(self, u: np.ndarray, s: np.ndarray, matrices: np.ndarray):
        from scipy.interpolate import CubicSpline, RectBivariateSpline

        size = matrices.shape[-1]
        self._size = size
        self._upper = np.triu_indices(size, 1)
        diagonal = np.diagonal(matrices, axis1=2, axis2=3)
        scale = np.sqrt(diagonal[..., :, None] * diagonal[..., None, :])
        correlation = (matrices / scale)[..., self._upper[0], self._upper[1]]
        features = np.concatenate((np.log(diagonal), correlation), axis=-1)  # (sizes, concentrations, features)
        self.feature_count = features.shape[-1]
        self.u_range = (float(u[0]), float(u[-1]))
        if len(s) == 1:
            spline = CubicSpline(u, features[0], axis=0)
            self._evaluate = lambda uu, ss: spline(uu)
        else:
            degree = min(3, len(s) - 1)
            splines = [RectBivariateSpline(s, u, features[:, :, k], kx=degree, ky=3) for k in range(features.shape[2])]
            self._evaluate = lambda uu, ss: np.stack([f.ev(ss, uu) for f in splines], axis=-1)

    def features(self, u: np.ndarray, s: np.ndarray) -> np.ndarray:
        """The interpolated features at the points (u_k, s_k): the logs of the diagonal, then the correlations of
        the upper triangle, shape (k, features)."""
        return self._evaluate(np.asarray(u, dtype=float), np.asarray(s, dtype=float))

    def rebuild(self, values: np.ndarray) -> np.ndarray:
        """The ion matrices of features (``features``), shape (k, n, n)."""
        n = self._size
        diagonal = np.exp(values[:, :n])
        out = np.empty((len(values), n, n))
        i, j = self._upper
        out[:, i, j] = out[:, j, i] = values[:, n:] * np.sqrt(diagonal[:, i] * diagonal[:, j])
        out[:, np.arange(n), np.arange(n)] = diagonal
        return out

    def __call__(self, u: np.ndarray, s: np.ndarray) -> np.ndarray:
        """Ion matrices at the points (u_k, s_k), shape (k, n, n)."""
        return self.rebuild(self.features(u, s))


def _axis(low: float, high: float, points: int, anchor: float) -> np.ndarray:
    """``points`` equal steps covering [low, high] (a little beyond), with ``anchor`` exactly a node."""
    step = (high - low) / (points - 1)
    first = anchor - round((anchor - low) / step) * step
    return first + step * np.arange(points) if first <= low + 1e-12 else first + step * np.arange(-1, points)


def _errors(case: Case, spline: SectionSpline, basis: np.ndarray, u: np.ndarray, s: np.ndarray
            ) -> tuple[float, float, int]:
    """The interpolation error at the cell centres against direct solves: the largest entry error relative to
    sqrt(L_ii L_jj), and the relative error of the zero-current dV/d ln c (``relations.zero_current_gradient``)."""
    u_mid = 0.5 * (u[1:] + u[:-1])
    s_mid = 0.5 * (s[1:] + s[:-1]) if len(s) > 1 else s
    direct, reduced, _ = _solve_grid(case, np.exp(u_mid), np.exp(s_mid))
    uu, ss = np.meshgrid(u_mid, s_mid)
    guessed = spline(uu.ravel(), ss.ravel())
    return (*_compare(case, basis, uu.ravel(), guessed, direct.reshape(guessed.shape), reduced), direct.shape[0] *
            direct.shape[1])


def _compare(case: Case, basis: np.ndarray, u: np.ndarray, guessed: np.ndarray, direct: np.ndarray,
             reduced: np.ndarray) -> tuple[float, float]:
    """The errors of ``guessed`` ion matrices (k, n, n) at ln c = u against ``direct`` ones and their ``reduced``
    matrices: the largest entry error relative to sqrt(L_ii L_jj), and the relative error of the zero-current
    dV/d ln c."""
    diagonal = np.diagonal(direct, axis1=1, axis2=2)
    scale = np.sqrt(diagonal[:, :, None] * diagonal[:, None, :])
    matrix_error = float(np.max(np.abs(guessed - direct) / scale))
    salt = SaltRatios(case)
    rt = GAS_CONSTANT * case.solvent.temperature
    total_c = salt.total_concentration * np.exp(u)
    exact = zero_current_gradient(reduced.reshape(-1, 3, 3), rt, salt.total_nu, total_c)
    approx = zero_current_gradient(reduce_matrices(guessed, basis), rt, salt.total_nu, total_c)
    potential_error = float(np.max(np.abs(approx - exact)) / np.max(np.abs(exact))) if np.any(exact) else 0.0
    return matrix_error, potential_error


def tabulate_taper(channel: Any) -> dict[str, Any]:
    """The fields of the ``ChannelTable`` of a channel with a ``size`` (``model.tabulate`` builds it): the
    cross-section solved over (ln c, ln size) once, its interpolation checked at the cell centres; its path is
    ``taper_path.TaperPath``. A channel with ``wall_segments`` gets one such table per distinct wall (``matrices``
    then has shape (walls, sizes, concentrations, 3, 3); the errors are the largest over the tables), and one with
    a ``wall_profile`` one per wall node (``wall_nodes``; the same shape), the errors then including that across the
    wall value (``_wall_errors``).

    Raises
    ------
    ConvergenceError
        If a cross-section solve fails (the message names the concentration and the size).
    """
    from edl_solver.channel.taper_path import TaperPath

    started = time.perf_counter()
    case, shape = channel.case, channel.size
    u_left, u_right = math.log(channel.left_concentration), math.log(channel.right_concentration)
    span = math.log(channel.concentration_span)
    u = _axis(min(u_left, u_right) - span, max(u_left, u_right) + span, channel.points, u_left)
    if shape.uniform:
        s = np.array([math.log(shape.sizes[0])])
    else:
        s = np.linspace(math.log(min(shape.sizes)), math.log(max(shape.sizes)), channel.size_points)
    field = "channel.size" if channel.wall_profile is None else "channel.wall_profile"
    splines, reduced, notes, solves, matrix_error, potential_error = [], [], [], 0, 0.0, 0.0
    for sub in _wall_cases(channel):  # one table per distinct wall (``wall_segments``) or wall node (profile)
        ion, matrices, found = _solve_grid(sub, np.exp(u), np.exp(s), field)
        splines.append(SectionSpline(u, s, ion))
        errors = _errors(sub, splines[-1], basis_of(sub), u, s)
        matrix_error, potential_error = max(matrix_error, errors[0]), max(potential_error, errors[1])
        reduced.append(matrices)
        notes.extend(note for note in found if note not in notes)
        solves += ion.shape[0] * ion.shape[1] + errors[2]
    if len(splines) > 1 and channel.wall_profile is not None:
        errors = _wall_errors(channel, splines, u, s)
        matrix_error, potential_error = max(matrix_error, errors[0]), max(potential_error, errors[1])
        solves += errors[2]
    ends = _end_access(channel)
    nodes = None if channel.wall_profile is None else wall_nodes(channel)
    path = TaperPath(channel, splines, basis_of(case), ends, nodes)
    return {"concentrations": np.exp(u), "matrices": reduced[0] if len(reduced) == 1 else np.array(reduced),
            "interpolation_error": matrix_error, "potential_interpolation_error": potential_error,
            "access_resistance": sum(ends), "solves": solves, "warnings": tuple(notes), "_path": path,
            "sizes": np.exp(s), "seconds": time.perf_counter() - started}


def wall_nodes(channel: Any) -> np.ndarray:
    """The wall values of the tables of a channel with a ``wall_profile`` (``WallProfile.nodes``, ``wall_points`` of
    them): a charge density's equally spaced in asinh(sigma / (F c size)) (``wall_profile.ProfileSpline``) at the
    smallest size and the lower reservoir's concentration over sqrt(``Channel.concentration_span``), midway in ln c
    between it and the table's lowest, where the relations turn most sharply across sigma = 0; other values equally
    spaced."""
    profile = channel.wall_profile
    if profile.quantity != "charge_density":
        return profile.nodes(channel.wall_points)
    concentration = min(channel.left_concentration, channel.right_concentration) / math.sqrt(channel.concentration_span)
    return profile.nodes(channel.wall_points, FARADAY * concentration * min(channel.size.sizes))


def _wall_cases(channel: Any) -> list[Case]:
    """The case of each table: the case itself, that of each distinct wall (``wall_segments``) or of each wall
    node (``wall_profile``, ``WallProfile.nodes``).

    Raises
    ------
    InputError
        If the case refuses a wall: named as the profile or the segment that gave it.
    """
    case, profile, segments = channel.case, channel.wall_profile, channel.wall_segments
    walls = (case.wall,) if segments is None else segments.distinct
    values = wall_nodes(channel) if profile is not None else walls
    out = []
    for value in values:  # a wall the case refuses is blamed on the channel's field that gave it
        try:
            out.append(profile.case_at(case, value) if profile is not None else
                       case if value == case.wall else dataclasses.replace(case, wall=value))
        except InputError as error:
            if profile is not None:
                raise InputError(f"channel.wall_profile: values from {min(profile.values):.6g} to "
                                 f"{max(profile.values):.6g} {profile.unit} are refused at {value:.6g} {profile.unit} "
                                 f"({error}), expected a profile inside the solver's domain") from None
            raise InputError(f"channel.wall_segments[{segments.walls.index(value)}]: {error}") from None
    return out


def _wall_errors(channel: Any, splines: list[SectionSpline], u: np.ndarray, s: np.ndarray
                 ) -> tuple[float, float, int]:
    """The interpolation error across the wall value (``wall_profile.ProfileSpline``) against direct solves at the
    midpoints of the wall nodes, on every other node of the (ln c, ln size) grid (where the tables are exact, so that
    the error is the wall direction's): the errors of ``_compare`` and the solves made."""
    from edl_solver.channel.wall_profile import ProfileSpline

    profile, case = channel.wall_profile, channel.case
    nodes = wall_nodes(channel)
    spline = ProfileSpline(splines, nodes, profile.quantity)
    uu, ss = np.meshgrid(u[::2], s[::2])
    matrix_error, potential_error, solves = 0.0, 0.0, 0
    for value in 0.5 * (nodes[1:] + nodes[:-1]):
        sub = profile.case_at(case, value)
        direct, reduced, _ = _solve_grid(sub, np.exp(u[::2]), np.exp(s[::2]), "channel.wall_profile")
        guessed = spline(uu.ravel(), ss.ravel(), np.full(uu.size, value))
        errors = _compare(sub, basis_of(sub), uu.ravel(), guessed, direct.reshape(guessed.shape), reduced)
        matrix_error, potential_error = max(matrix_error, errors[0]), max(potential_error, errors[1])
        solves += uu.size
    return matrix_error, potential_error, solves


def _end_access(channel: Any) -> tuple[float, float]:
    """Each end's access resistance (``model._access_resistance``'s, at that end's size), ohm (ohm m per unit
    width of a slit)."""
    from edl_solver.channel.access import end_access_resistance
    from edl_solver.model.bulk import bulk_conductivity

    if not channel.access_resistance:
        return 0.0, 0.0
    case = channel.case
    per_salt = bulk_conductivity(case) / case.electrolyte.ions[0].concentration
    geometry = case.geometry
    out = []
    for c, size in zip((channel.left_concentration, channel.right_concentration), channel.size.ends):
        end = dataclasses.replace(geometry, **{geometry.size_name: size})
        value = end_access_resistance(end, per_salt * c, channel.width)
        out.append(value * channel.width if geometry.kind == "slit" else value)
    if not all(math.isfinite(v) for v in out):
        raise InputError("channel.access_resistance: not finite at an end, expected a finite opening")
    return out[0], out[1]
