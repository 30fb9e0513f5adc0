"""A finite channel between two reservoirs: the cross-section transport relations integrated along it.

Geometry and signs
------------------
x runs along the channel from the left reservoir (x = 0) to the right one (x = L). Positive volume
flow Q, current I and salt flux J_s go from left to right (+x). The applied voltage is
Delta V = V(L) - V(0) (right reservoir against left) and the pressure difference Delta p = p(L) - p(0)
(hydrostatic). A passive channel therefore has dI/d(Delta V) < 0: its conductance is -dI/d(Delta V), and
the electrical power it delivers to an external load is P = I Delta V (positive for a generator).
Slit values are per unit width (A/m, m^2/s, mol/(m s), W/m).

The model (long-channel space-charge model)
-------------------------------------------
Each section is in local equilibrium with a virtual bulk of salt concentration c(x) (every ion in its
reservoir ratio; c is the first ion's concentration, as in the sweep path "electrolyte.concentration"),
potential V(x) and pressure p(x). The section's response matrix M(c) (``Result.response_matrix``, per
unit length) relates the fluxes to the local forces (Gross & Osterle 1968, J. Chem. Phys. 49, 228;
Peters, van Roij, Bazant & Biesheuvel 2016, Phys. Rev. E 94, 032120, from memory)::

    (Q, I, J_s) = M(c) (X_P, E, X_s),
    X_P = -dp/dx + RT sum_i c_i d ln c/dx,   E = -dV/dx,   X_s = -RT sum(nu) d ln c/dx.

In steady state Q, I and J_s are uniform. Write M = [[A, m], [m^T, M_ss]] with A the (Q, I) block; then

    (X_P, E) = A^-1 (Q, I) - A^-1 m X_s,      X_s = (J_s - m^T A^-1 (Q, I)) / S,   S = M_ss - m^T A^-1 m,

S > 0 being the salt permeance at zero flow and zero current (the co-ion leak of a selective channel;
the Schur complement keeps its relative accuracy where M itself is nearly singular).

Formulation: ln c as the independent variable
---------------------------------------------
u = ln c obeys du/dx = -X_s(u) / (RT sum nu), an autonomous first-order equation, so c(x) is monotone
between c_L and c_R and u can replace x (for c_L != c_R): dx/du = -RT sum(nu) / X_s(u). Integrating the
definitions of the forces over the channel gives three conditions on the three fluxes::

    L                                  = int_{u_L}^{u_R} dx/du du
    -(Delta V + R_acc I)               = int E dx   = int E(u) dx/du du
    -Delta p + RT sum_i (c_iR - c_iL)  = int X_P dx = int X_P(u) dx/du du

(R_acc the access resistance of both ends in series, zero by default). X_s must keep one sign on
[u_L, u_R]: with J(u) = m^T A^-1 (Q, I) (the salt flux at zero salt force) and s = sign(u_R - u_L),
that holds iff s (J* - J_s) > 0 where J* = min J(u) for s > 0 and max J(u) for s < 0. The unknowns are
therefore (Q, I, t) with J_s = J* - s exp(t) j_0: every iterate is feasible, and the steep (logarithmic)
dependence of L on J_s near J*, where a concentration layer forms at one end (large Peclet number),
becomes a smooth one in t. The length condition enters as ln(L(F)/L).

Solver: Newton's method (finite-difference Jacobian, then Broyden updates while full steps succeed,
backtracking line search on the scaled residuals), MINPACK's hybrid method as a fallback, and
continuation in the drive: a point without a nearby solution is reached from zero drive (no voltage or
current, no pressure difference: pure diffusion) in adaptive steps; an I-V curve is solved outward from
its smallest voltage, each point started from the extrapolation of the last two. Where a concentration
layer forms, its position (t) is fixed only to round-off while the fluxes are not: such a point is
accepted once the fluxes stop moving (1e-11) with scaled residuals below 1e-6.

Quadrature: N = 1024 equal intervals in u; on each, X_s and the other forces are taken linear in u,
dx/du = -RT sum(nu)/X_s is integrated exactly (logarithmic mean) and E and X_P are taken at the
dx-weighted centroid. The rule is exact for linear data (an exponential boundary layer, X_s nearly zero
at one end, costs no refinement) and symmetric in the ends of an interval, so its error runs in h^2, h^4:
the sums on all nodes and on every other node are Richardson-extrapolated (fourth order where the data
are smooth; second order inside a thin layer). The error is estimated from the same rule on a grid twice
as coarse; a point whose estimate exceeds ``QUADRATURE_LIMIT``, or whose concentration has a plateau
inside the channel (an interior extreme of J(u), which the linear rule does not resolve), is reported as
failed rather than returned as converged.

Equal reservoirs (c_L = c_R): c is uniform, X_s = 0 and the forces are uniform: F = M X, exactly, with M
from a direct solve.

Tables
------
M(c) costs one cross-section solve; ``tabulate`` solves it on ``points`` log-spaced concentrations a
little beyond [c_L, c_R] and interpolates in ln c with cubic splines (of the logs of the diagonal
entries and of the correlations L_ij / sqrt(L_ii L_jj) of the ion-resolved matrix, which stays well
conditioned where the reduced M does not), then checks the interpolation against direct solves at the
midpoints of the grid and stores the error.

Access resistance (capillary only): R = 1/(4 K a) per end, K the reservoir's bulk conductivity
(Hall 1975, J. Gen. Physiol. 66, 531, from memory), in series; the concentration at each end is the
reservoir's, and no hydraulic access resistance is added.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Capillary
from edl_solver.inputs.units import to_positive_si, to_si
from edl_solver.model import transport
from edl_solver.model.bulk import bulk_conductivity

__all__ = [
    "Channel",
    "ChannelTable",
    "OperatingPoint",
    "OsmoticPower",
    "current_voltage",
    "membrane_potential",
    "operating_point",
    "osmotic_power",
    "salt_flux",
    "tabulate",
]

#: Intervals in ln c of the quadrature along the channel (second order, exact for exponential layers).
QUADRATURE_INTERVALS = 1024
#: Newton tolerance on the scaled residuals (length: ln L; voltage: kT/e; pressure: osmotic pressure).
NEWTON_TOLERANCE = 1e-11
NEWTON_ITERATIONS = 60
#: Converged at round-off when the fluxes move less than this (relative) and the residual is below
#: LOOSE_TOLERANCE: in a concentration layer the residual cannot go lower (see ``_Path._stagnated``).
STAGNATION = 1e-11
LOOSE_TOLERANCE = 1e-6
#: Bound on t = ln(distance of J_s from J*) (keeps exp(t) a normal float).
T_LIMIT = 600.0
#: Function evaluations of the hybrid method (the fallback when Newton fails).
HYBRID_EVALUATIONS = 300
#: Smallest continuation step, as a fraction of the drive still to go.
MIN_CONTINUATION_STEP = 1e-3
#: Reservoir concentrations closer than this (relative) are equal: the uniform channel, solved exactly.
EQUAL_CONCENTRATIONS = 1e-12
#: Smallest width in ln c of the table (so that nearly equal reservoirs still get a sensible grid).
MIN_TABLE_WIDTH = 0.2
#: Estimated quadrature error above which an operating point is reported as failed.
QUADRATURE_LIMIT = 1e-3


def _concentration(value: object, name: str) -> float:
    return to_positive_si(value, "mol/m^3", f"channel.{name}", "a salt concentration in mol/m^3 (or '1 mM')")


@dataclass(frozen=True)
class Channel:
    """A channel of length L between two well-mixed reservoirs of different salt concentration.

    Parameters
    ----------
    case : Case
        The cross-section (geometry, walls, solvent, model, numerics); its electrolyte's composition defines
        the salt. Its concentrations are replaced along the channel (all ions scaled with the first), its
        field and pressure gradient are ignored. Fixed-zeta walls keep zeta, fixed-charge walls keep sigma,
        regulated walls re-equilibrate at each concentration.
    length : float or str
        Channel length L, m (or "10 um").
    left_concentration, right_concentration : float or str
        Salt concentration of the left (x = 0) and right (x = L) reservoirs: the first ion's concentration,
        mol/m^3 (or "1 mM"), as for the sweep path "electrolyte.concentration".
    access_resistance : bool
        Add the reservoirs' access resistances 1/(4 K a) per end in series (Hall 1975, J. Gen. Physiol. 66,
        531, from memory); capillaries only.
    points : int
        Concentrations of the table of cross-section solves (``tabulate``), at least 8.
    """

    case: Case
    length: float | str
    left_concentration: float | str
    right_concentration: float | str
    access_resistance: bool = False
    points: int = 32

    def __post_init__(self) -> None:
        if not isinstance(self.case, Case):
            raise InputError(f"channel.case: {type(self.case).__name__} is not a Case, expected edl_solver.Case(...)")
        length = to_positive_si(self.length, "m", "channel.length", "a length in m (or '10 um')")
        object.__setattr__(self, "length", length)
        object.__setattr__(self, "left_concentration", _concentration(self.left_concentration,
                                                                      "left_concentration"))
        object.__setattr__(self, "right_concentration", _concentration(self.right_concentration,
                                                                       "right_concentration"))
        if not isinstance(self.access_resistance, bool):
            raise InputError(f"channel.access_resistance: {self.access_resistance!r} is not a bool, "
                             "expected True or False")
        if self.access_resistance and not isinstance(self.case.geometry, Capillary):
            raise InputError("channel.access_resistance: True for a slit, expected False (only the circular "
                             "pore's access resistance, Hall 1975, is implemented)")
        if isinstance(self.points, bool) or not isinstance(self.points, int) or not 8 <= self.points <= 400:
            raise InputError(f"channel.points: {self.points!r} is not allowed, expected an integer from 8 to 400")

    @property
    def equal_reservoirs(self) -> bool:
        """True when both reservoirs hold the same concentration (uniform channel)."""
        return math.isclose(self.left_concentration, self.right_concentration, rel_tol=EQUAL_CONCENTRATIONS)


# ----------------------------------------------------------------------------------------------
# Tables of cross-section solves


def _cases_at(case: Case, concentrations: np.ndarray) -> list[Case]:
    """The case at each salt concentration, built exactly as the sweep path "electrolyte.concentration"."""
    from edl_solver.inputs import paths as sweep_axes
    from edl_solver.inputs.casefile import case_to_mapping

    axes = sweep_axes.make_axes({"electrolyte.concentration": [float(c) for c in concentrations]})
    table = case_to_mapping(case)
    return [sweep_axes.case_at(table, axes, (i,)) for i in range(len(concentrations))]


def _solve_all(case: Case, concentrations: np.ndarray) -> tuple[np.ndarray, np.ndarray, tuple[str, ...]]:
    """Ion and reduced response matrices at each concentration, and the solves' validity notes."""
    from edl_solver.pipeline import solve

    ions, reduced, notes = [], [], []
    for c, sub in zip(concentrations, _cases_at(case, concentrations)):
        try:
            result = solve(sub)
        except ConvergenceError as error:
            raise ConvergenceError(f"channel: the cross-section solve at c = {c:.6g} mol/m^3 failed ({error})") \
                from error
        ions.append(result.ion_response_matrix)
        reduced.append(result.response_matrix)
        notes.extend(note for note in result.warnings if note not in notes)
    return np.array(ions), np.array(reduced), tuple(notes)


class _IonMatrixSpline:
    """Cubic splines in u = ln c of ln L_ii and of the correlations L_ij / sqrt(L_ii L_jj)."""

    def __init__(self, u: np.ndarray, matrices: np.ndarray):
        from scipy.interpolate import CubicSpline

        size = matrices.shape[1]
        diagonal = np.diagonal(matrices, axis1=1, axis2=2)
        self._upper = np.triu_indices(size, 1)
        scale = np.sqrt(diagonal[:, :, None] * diagonal[:, None, :])
        self._size = size
        self._log_diagonal = CubicSpline(u, np.log(diagonal), axis=0)
        self._correlation = CubicSpline(u, (matrices / scale)[:, self._upper[0], self._upper[1]], axis=0)

    def __call__(self, u: np.ndarray) -> np.ndarray:
        diagonal = np.exp(self._log_diagonal(u))
        out = np.empty((len(u), self._size, self._size))
        correlation = self._correlation(u)
        i, j = self._upper
        scale = np.sqrt(diagonal[:, i] * diagonal[:, j])
        out[:, i, j] = out[:, j, i] = correlation * scale
        out[:, np.arange(self._size), np.arange(self._size)] = diagonal
        return out


def _reduce(ion_matrices: np.ndarray, basis: np.ndarray) -> np.ndarray:
    """M = B^T L B (``_summary.reduced_matrix``) for a stack of ion matrices."""
    return np.einsum("ai,kab,bj->kij", basis, ion_matrices, basis)


def _zero_current_gradient(matrices: np.ndarray, rt: float, total_nu: float, total_c: np.ndarray) -> np.ndarray:
    """dV/d ln c at zero current and no hydrostatic gradient: X_P = RT sum c_i, X_s = -RT sum nu per unit
    d ln c/dx, E = -(M_IP X_P + M_Is X_s) / M_II (as ``_summary.lab_quantities``)."""
    x_p, x_s = rt * total_c, -rt * total_nu
    return (matrices[:, 1, 0] * x_p + matrices[:, 1, 2] * x_s) / matrices[:, 1, 1]


@dataclass(frozen=True, eq=False)
class ChannelTable:
    """The precomputed cross-section relations of a channel (``tabulate``): what every I-V point uses.

    Attributes
    ----------
    channel : Channel
    concentrations : ndarray
        Salt concentrations of the direct solves, mol/m^3 (one when the reservoirs are equal).
    matrices : ndarray
        Their 3 x 3 response matrices (``Result.response_matrix``), shape (points, 3, 3), SI.
    interpolation_error : float
        Largest error of the interpolated ion-resolved matrix against direct solves at the midpoints (in
        ln c) of the grid, entry by entry relative to sqrt(L_ii L_jj); 0 for equal reservoirs.
    potential_interpolation_error : float
        Largest relative error of the interpolated zero-current potential gradient dV/d ln c at the same
        midpoints (it bounds the relative error of the membrane potential).
    access_resistance : float
        Both ends' access resistance in series, ohm (0 without it).
    solves : int
        Cross-section solves made.
    warnings : tuple of str
        The solves' notes on the model's physical validity.
    """

    channel: Channel
    concentrations: np.ndarray
    matrices: np.ndarray
    interpolation_error: float
    potential_interpolation_error: float
    access_resistance: float
    solves: int
    warnings: tuple[str, ...]
    _path: _Path | _Uniform = field(repr=False)


def _access_resistance(channel: Channel, rt: float) -> float:
    """1/(4 K a) at each end, K = F^2/(RT) sum z_i^2 D_i c_i the reservoir's conductivity (Hall 1975, from
    memory; Kohlrausch-free dilute limit, Nernst-Einstein)."""
    if not channel.access_resistance:
        return 0.0
    per_salt = bulk_conductivity(channel.case) / channel.case.electrolyte.ions[0].concentration
    radius = channel.case.geometry.radius
    return sum(1.0 / (4.0 * per_salt * c * radius) for c in (channel.left_concentration,
                                                             channel.right_concentration))


def tabulate(channel: Channel) -> ChannelTable:
    """Solve the cross-section on a grid of concentrations and build the interpolated channel relations.

    ``channel.points`` concentrations log-spaced over [c_L, c_R] widened by two grid steps at each end
    (at least ``MIN_TABLE_WIDTH`` in ln c), plus one direct solve at each grid midpoint to measure the
    interpolation error; one solve for equal reservoirs.

    Raises
    ------
    InputError
        If ``channel`` is not a Channel.
    ConvergenceError
        If a cross-section solve fails (the message names the concentration).
    """
    if not isinstance(channel, Channel):
        raise InputError(f"channel: {type(channel).__name__} is not a Channel, expected edl_solver.channel.Channel")
    case = channel.case
    rt = GAS_CONSTANT * case.solvent.temperature
    access = _access_resistance(channel, rt)
    if channel.equal_reservoirs:
        grid = np.array([channel.left_concentration])
        _, reduced, notes = _solve_all(case, grid)
        return ChannelTable(channel, grid, reduced, 0.0, 0.0, access, 1, notes,
                            _Uniform(channel, reduced[0], rt, access))
    u_left, u_right = math.log(channel.left_concentration), math.log(channel.right_concentration)
    n = channel.points
    width = max(abs(u_right - u_left) * (n - 1) / (n - 5), MIN_TABLE_WIDTH)
    u = 0.5 * (u_left + u_right) + width * np.linspace(-0.5, 0.5, n)
    midpoints = 0.5 * (u[1:] + u[:-1])
    ion_all, reduced_all, notes = _solve_all(case, np.exp(np.concatenate((u, midpoints))))
    ion, reduced = ion_all[:n], reduced_all[:n]
    spline = _IonMatrixSpline(u, ion)
    basis = _basis(case)
    # the interpolation against direct solves at the midpoints
    direct = ion_all[n:]
    guessed = spline(midpoints)
    diagonal = np.diagonal(direct, axis1=1, axis2=2)
    scale = np.sqrt(diagonal[:, :, None] * diagonal[:, None, :])
    matrix_error = float(np.max(np.abs(guessed - direct) / scale))
    salt = _Salt(case)
    total_c = salt.total_concentration * np.exp(midpoints)
    exact = _zero_current_gradient(reduced_all[n:], rt, salt.total_nu, total_c)
    approx = _zero_current_gradient(_reduce(guessed, basis), rt, salt.total_nu, total_c)
    potential_error = float(np.max(np.abs(approx - exact)) / np.max(np.abs(exact))) if np.any(exact) else 0.0
    path = _Path(channel, spline, basis, rt, access)
    return ChannelTable(channel, np.exp(u), reduced, matrix_error, potential_error, access, len(ion_all), notes,
                        path)


def _basis(case: Case) -> np.ndarray:
    """The (1 + n) x 3 matrix B of ``_summary.reduced_matrix``: M = B^T L B."""
    valence = np.array([ion.valence for ion in case.electrolyte.ions], dtype=float)
    total = float(np.sum(transport.salt_stoichiometry(case)))
    basis = np.zeros((valence.size + 1, 3))
    basis[0, 0] = 1.0
    basis[1:, 1] = valence * FARADAY
    basis[1:, 2] = 1.0 / total
    return basis


class _Salt:
    """Sum of nu_i and sum_i c_i per unit salt concentration (the electrolyte's fixed ratios)."""

    def __init__(self, case: Case):
        ions = case.electrolyte.ions
        self.total_nu = float(np.sum(transport.salt_stoichiometry(case)))
        self.total_concentration = sum(i.concentration for i in ions) / ions[0].concentration


@functools.lru_cache(maxsize=16)
def _cached_table(channel: Channel) -> ChannelTable:
    return tabulate(channel)


def _table(channel: Channel | ChannelTable) -> ChannelTable:
    if isinstance(channel, ChannelTable):
        return channel
    if not isinstance(channel, Channel):
        raise InputError(f"channel: {type(channel).__name__} is not a Channel, expected edl_solver.channel.Channel "
                         "or the ChannelTable of tabulate(channel)")
    return _cached_table(channel)


# ----------------------------------------------------------------------------------------------
# Operating points


@dataclass(frozen=True)
class OperatingPoint:
    """The steady state of the channel at one applied voltage (or current) and pressure difference.

    Attributes
    ----------
    voltage : float
        Delta V = V(L) - V(0) between the reservoirs, V.
    current, volume_flow, salt_flux : float
        I (A; A/m for a slit), Q (m^3/s; m^2/s), J_s (mol/s of formula units; mol/(m s)), positive along +x.
    pressure_difference : float
        Delta p = p(L) - p(0), Pa.
    channel_voltage : float
        Voltage across the channel proper, Delta V + R_access I, V.
    position, concentration, potential, pressure : ndarray
        Profiles along the channel: x (m), salt concentration c(x) (mol/m^3), V(x) and the hydrostatic p(x)
        relative to the left reservoir (V, Pa).
    status : str
        "converged" or "failed".
    message : str
    iterations : int
        Newton iterations (0 for equal reservoirs).
    quadrature_error : float
        Estimated relative error of the fluxes (and of the voltage) from the quadrature along the channel.
    """

    voltage: float
    current: float
    volume_flow: float
    salt_flux: float
    pressure_difference: float
    channel_voltage: float
    position: np.ndarray = field(repr=False)
    concentration: np.ndarray = field(repr=False)
    potential: np.ndarray = field(repr=False)
    pressure: np.ndarray = field(repr=False)
    status: str = "converged"
    message: str = ""
    iterations: int = 0
    quadrature_error: float = 0.0
    unknown_t: float = field(default=0.0, repr=False)  # the solver's t, to start a nearby solve from

    @property
    def power(self) -> float:
        """Electrical power delivered to the external circuit, P = I Delta V, W (W/m for a slit)."""
        return self.current * self.voltage


def _uniform_fluxes(m: np.ndarray, length: float, access: float, x_p: float, x_s: float,
                    voltage: float | None, current: float | None) -> tuple[np.ndarray, float]:
    """Fluxes F = M X of a channel with uniform forces X_P, X_s and E = -(Delta V + R_access I)/L.

    Exact for equal reservoirs; with the mean M, the linear-response start of the Newton solve.
    """
    known = m[1, 0] * x_p + m[1, 2] * x_s
    if voltage is not None:
        # I = known + M_II E, E = -(Delta V + R I) / L
        current = (known - m[1, 1] * voltage / length) / (1.0 + m[1, 1] * access / length)
    else:
        voltage = -length * (current - known) / m[1, 1] - access * current
    field_ = -(voltage + access * current) / length
    fluxes = m @ np.array([x_p, field_, x_s])
    fluxes[1] = current  # the same number, kept exact
    return fluxes, float(voltage)


class _Uniform:
    """Equal reservoirs: c uniform, X_s = 0, X_P = -Delta p / L, E = -(Delta V + R I)/L; F = M X exactly."""

    def __init__(self, channel: Channel, matrix: np.ndarray, rt: float, access: float):
        self.channel, self.matrix, self.rt, self.access = channel, matrix, rt, access

    def solve(self, dp: float, voltage: float | None, current: float | None, guess: Any = None) -> OperatingPoint:
        """The uniform channel's operating point (``guess`` is not needed)."""
        length = self.channel.length
        fluxes, voltage = _uniform_fluxes(self.matrix, length, self.access, -dp / length, 0.0, voltage, current)
        x = np.array([0.0, length])
        c = self.channel.left_concentration
        left = -self.access / 2.0 * fluxes[1]  # half the access resistance at each end (equal reservoirs)
        channel_voltage = voltage + self.access * fluxes[1]
        return OperatingPoint(voltage=voltage, current=float(fluxes[1]), volume_flow=float(fluxes[0]),
                              salt_flux=float(fluxes[2]), pressure_difference=dp, channel_voltage=channel_voltage,
                              position=x, concentration=np.array([c, c]),
                              potential=np.array([left, left + channel_voltage]), pressure=np.array([0.0, dp]),
                              message="exact (uniform channel)")

    def unknowns(self, point: OperatingPoint, mode: str = "voltage") -> np.ndarray:
        return np.zeros(3)

    def continue_to(self, mode: str, anchors: Any, given: float, dp: float) -> OperatingPoint:
        """No continuation needed: the uniform channel is linear."""
        return self.solve(dp, given, None) if mode == "voltage" else self.solve(dp, None, given)


def _log_mean(a: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Logarithmic mean Lambda = (b - a)/ln(b/a) of same-sign a, b, and the centroid (Lambda - a)/(b - a) in
    [0, 1] of 1/phi on [0, 1] for phi linear from a to b. For e = b/a - 1 small, the series
    Lambda/a = 1 + e/2 - e^2/12 + e^3/24 and centroid = 1/2 - e/12 + e^2/24 - 19 e^3/720."""
    difference = b - a
    with np.errstate(divide="ignore", invalid="ignore"):
        mean = difference / (np.log(np.abs(b)) - np.log(np.abs(a)))
        centroid = (mean - a) / difference
    small = np.abs(difference) < 1e-3 * np.abs(a)
    if small.any():
        e = difference[small] / a[small]
        mean[small] = a[small] * (1.0 + e * (0.5 - e * (1.0 / 12.0 - e / 24.0)))
        centroid[small] = 0.5 - e * (1.0 / 12.0 - e * (1.0 / 24.0 - 19.0 / 720.0 * e))
    return mean, centroid


@dataclass
class _State:
    """Fluxes, voltage and the integrals along the channel for one vector of unknowns."""

    flow: float
    current: float
    salt: float
    voltage: float
    dx: np.ndarray  # length of each u-interval, m
    within: np.ndarray  # (X_P, E) at the dx-weighted centroid of each interval, shape (2, N)
    length: float
    integral: np.ndarray  # (int X_P dx, int E dx)


@dataclass
class _Found:
    """The outcome of one nonlinear solve at a given drive."""

    ok: bool
    z: np.ndarray
    state: _State
    residual: np.ndarray
    iterations: int
    jacobian: np.ndarray | None
    method: str
    mode: str
    given: float


def _resistance(inverse: np.ndarray, carried: np.ndarray, permeance: np.ndarray) -> np.ndarray:
    """R = M^-1 from the (Q, I) block's inverse A^-1, A^-1 m and the Schur complement S (block inversion):
    R = [[A^-1 + A^-1 m m^T A^-1 / S, -A^-1 m / S], [-m^T A^-1 / S, 1 / S]]."""
    out = np.empty((len(permeance), 3, 3))
    out[:, :2, :2] = inverse + np.einsum("ki,kj->kij", carried, carried) / permeance[:, None, None]
    out[:, :2, 2] = out[:, 2, :2] = -carried / permeance[:, None]
    out[:, 2, 2] = 1.0 / permeance
    return out


def _nodes(u_left: float, u_right: float) -> np.ndarray:
    """Quadrature nodes in u: QUADRATURE_INTERVALS equal intervals (a multiple of 4, so that every second
    and every fourth node are grids too)."""
    return np.linspace(u_left, u_right, QUADRATURE_INTERVALS + 1)


class _Path:
    """Different reservoirs: the three conditions integrated in u = ln c (see the module docstring).

    Unknowns z = (Q / Q0, I / I0 or Delta V / (kT/e), t) with J_s = J* - s j_0 exp(t); Q0, I0 and j_0 are
    the fluxes of a uniform channel at the mean concentration under unit forces.
    """

    def __init__(self, channel: Channel, spline: _IonMatrixSpline, basis: np.ndarray, rt: float, access: float):
        self.channel, self.rt, self.access = channel, rt, access
        self.spline, self.basis = spline, basis
        salt = _Salt(channel.case)
        self.rt_nu = rt * salt.total_nu
        self.total_concentration = salt.total_concentration
        cl, cr = channel.left_concentration, channel.right_concentration
        self.osmotic = rt * salt.total_concentration * (cr - cl)  # RT sum_i (c_iR - c_iL), Pa
        self.u = _nodes(math.log(cl), math.log(cr))
        self.du = {step: np.diff(self.u[::step]) for step in (1, 2, 4)}
        self.sign = 1.0 if cr > cl else -1.0
        m = _reduce(spline(self.u), basis)
        self.mid_matrix = _reduce(spline(np.array([0.5 * (self.u[0] + self.u[-1])])), basis)[0]
        inverse = np.linalg.inv(m[:, :2, :2])  # (X_P, E) per (Q, I) at X_s = 0
        carried = np.einsum("kij,kj->ki", inverse, m[:, :2, 2])  # A^-1 m
        permeance = m[:, 2, 2] - np.einsum("ki,ki->k", m[:, :2, 2], carried)  # S, the salt Schur complement
        if not np.all(permeance > 0.0):
            raise ConvergenceError(f"channel: the interpolated response matrix is not positive definite between "
                                   f"{cl:.6g} and {cr:.6g} mol/m^3; use more table points")
        # columns as contiguous arrays: forces = inverse (Q, I) - carried X_s, J(u) = carried . (Q, I)
        self.inverse = [np.ascontiguousarray(inverse[:, i, j]) for i in range(2) for j in range(2)]
        self.carried = [np.ascontiguousarray(carried[:, i]) for i in range(2)]
        self.inverse_permeance = 1.0 / permeance
        self.v_scale = rt / FARADAY
        self.p_scale = rt * salt.total_concentration * max(cl, cr)
        forces = np.array([self.p_scale, self.v_scale, self.rt_nu]) / channel.length
        self.f_scale = np.abs(self.mid_matrix) @ forces
        # int R dx for c linear in x (dx/du proportional to c), by the trapezoidal rule: the start's resistance
        weight = np.exp(self.u)
        weight = np.concatenate(([0.0], self.du[1])) * weight + np.concatenate((self.du[1], [0.0])) * weight
        self.linear_resistance = np.einsum("k,kij->ij", weight * channel.length / weight.sum(),
                                           _resistance(inverse, carried, permeance))

    def _state(self, z: np.ndarray, mode: str, given: float, step: int = 1) -> _State:
        """The state for unknowns z. The integrals are Richardson-extrapolated from the nodes taken every
        ``step`` and every ``2 step`` (the rule is second order with an error expansion in h^2, h^4: the
        interval rule is symmetric in its ends), so ``step=2`` gives a coarser value for the error estimate."""
        flow = z[0] * self.f_scale[0]
        current, voltage = (z[1] * self.f_scale[1], given) if mode == "voltage" else (given, z[1] * self.v_scale)
        pick = slice(None, None, step)
        carried_p, carried_e = self.carried[0][pick], self.carried[1][pick]
        salt_at_zero_force = carried_p * flow + carried_e * current  # J(u)
        s = self.sign
        extreme = float(salt_at_zero_force.min() if s > 0 else salt_at_zero_force.max())
        delta = self.f_scale[2] * math.exp(min(max(z[2], -T_LIMIT), T_LIMIT))
        x_s = (-s * delta - (salt_at_zero_force - extreme)) * self.inverse_permeance[pick]
        pq, pi, eq, ei = (column[pick] for column in self.inverse)
        forces = np.array([pq * flow + pi * current - carried_p * x_s, eq * flow + ei * current - carried_e * x_s])
        dx, within = self._intervals(x_s, forces, self.du[step])
        coarse_dx, coarse_within = self._intervals(x_s[::2], forces[:, ::2], self.du[2 * step])
        length = (4.0 * dx.sum() - coarse_dx.sum()) / 3.0
        integral = (4.0 * (within @ dx) - coarse_within @ coarse_dx) / 3.0
        return _State(flow=flow, current=current, salt=extreme - s * delta, voltage=voltage, dx=dx, within=within,
                      length=float(length), integral=integral)

    def _intervals(self, x_s: np.ndarray, forces: np.ndarray, du: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Length of each interval, dx = -RT sum(nu) du / Lambda(X_s), and (X_P, E) at its dx-centroid."""
        mean, centroid = _log_mean(x_s[:-1], x_s[1:])
        return (-self.rt_nu * du) / mean, forces[:, :-1] + centroid * (forces[:, 1:] - forces[:, :-1])

    def _residual(self, z: np.ndarray, mode: str, given: float, dp: float, step: int = 1
                  ) -> tuple[np.ndarray, _State]:
        st = self._state(z, mode, given, step)
        length = st.length if st.length > 0.0 and math.isfinite(st.length) else math.nan
        residual = np.array([math.log(length / self.channel.length),
                             (st.integral[1] + st.voltage + self.access * st.current) / self.v_scale,
                             (st.integral[0] + dp - self.osmotic) / self.p_scale])
        return residual, st

    def _fit_t(self, z: np.ndarray, mode: str, given: float, dp: float) -> np.ndarray:
        """Solve the length condition for t alone: L decreases monotonically as t grows."""
        from scipy.optimize import brentq

        def length_error(t: float) -> float:
            value = self._residual(np.array([z[0], z[1], t]), mode, given, dp)[0][0]
            return value if math.isfinite(value) else math.inf

        low, high, width = z[2] - 1.0, z[2] + 1.0, 2.0
        while length_error(low) < 0.0 and low > -T_LIMIT:
            width *= 2.0
            low = max(low - width, -T_LIMIT)
        while length_error(high) > 0.0 and high < T_LIMIT:
            width *= 2.0
            high = min(high + width, T_LIMIT)
        if not length_error(low) >= 0.0 >= length_error(high):
            return z
        return np.array([z[0], z[1], brentq(length_error, low, high, xtol=1e-10)])

    def _start(self, dp: float, mode: str, given: float, guess: np.ndarray | None) -> np.ndarray:
        """Unknowns from a guess (Q, I, Delta V, t), else from the integrated resistance of a linear
        concentration profile (exact for an uncharged channel, where the salt diffuses as in free solution)."""
        if guess is None:
            fluxes, voltage = self._linear_guess(dp, mode, given)
            salt = self.carried[0] * fluxes[0] + self.carried[1] * fluxes[1]
            gap = self.sign * ((salt.min() if self.sign > 0 else salt.max()) - fluxes[2])
            guess = np.array([fluxes[0], fluxes[1], voltage, math.log(gap / self.f_scale[2]) if gap > 0 else 0.0])
        second = guess[1] / self.f_scale[1] if mode == "voltage" else guess[2] / self.v_scale
        return self._fit_if_far(np.array([guess[0] / self.f_scale[0], second, guess[3]]), mode, given, dp)

    def _fit_if_far(self, z: np.ndarray, mode: str, given: float, dp: float) -> np.ndarray:
        z = np.array([z[0], z[1], min(max(z[2], -T_LIMIT), T_LIMIT)])
        first = self._residual(z, mode, given, dp)[0][0]
        return z if abs(first) < 0.5 else self._fit_t(z, mode, given, dp)

    def solve(self, dp: float, voltage: float | None, current: float | None,
              guess: np.ndarray | None = None) -> OperatingPoint:
        """The operating point: from the guess if one is given and converges, else by continuation in the
        drive (voltage or current, and pressure difference) from zero drive, the gentlest state."""
        mode, given = ("voltage", voltage) if voltage is not None else ("current", current)
        if guess is not None:
            found = self._converge(dp, mode, given, self._start(dp, mode, given, guess))
            if found.ok:
                return self._finish(found, dp)
        base = self._converge(0.0, mode, 0.0, self._start(0.0, mode, 0.0, None))
        if not base.ok or (given == 0.0 and dp == 0.0):
            return self._finish(base, 0.0)
        return self._finish(self._march(mode, [(0.0, 0.0, base.z)], given, dp, base), dp)

    def unknowns(self, point: OperatingPoint, mode: str = "voltage") -> np.ndarray:
        """The solver's unknowns z of a converged point."""
        second = point.current / self.f_scale[1] if mode == "voltage" else point.voltage / self.v_scale
        return np.array([point.volume_flow / self.f_scale[0], second, point.unknown_t])

    def continue_to(self, mode: str, anchors: list[tuple[float, float, np.ndarray]], given: float,
                    dp: float) -> OperatingPoint:
        """The operating point at (given, dp) by continuation from converged (given, dp, z) anchors."""
        last_given, last_dp, z = anchors[-1]
        found = self._converge(dp, mode, given, self._fit_if_far(self._extrapolate(anchors, given, dp), mode,
                                                                   given, dp))
        if not found.ok:
            start = self._converge(last_dp, mode, last_given, z)
            found = self._march(mode, anchors[-2:], given, dp, start) if start.ok else found
        return self._finish(found, dp)

    @staticmethod
    def _extrapolate(anchors: list[tuple[float, float, np.ndarray]], given: float, dp: float) -> np.ndarray:
        """Linear extrapolation of the unknowns from the last two anchors along the drive."""
        if len(anchors) < 2:
            return anchors[-1][2]
        (g0, p0, z0), (g1, p1, z1) = anchors[-2], anchors[-1]
        span = math.hypot(g1 - g0, p1 - p0)
        if span == 0.0:
            return z1
        along = ((given - g1) * (g1 - g0) + (dp - p1) * (p1 - p0)) / span**2
        return z1 + along * (z1 - z0)

    def _march(self, mode: str, anchors: list[tuple[float, float, np.ndarray]], given: float, dp: float,
               state: _Found) -> _Found:
        """Adaptive continuation along the straight path from the last anchor to (given, dp): each step
        starts from the extrapolated unknowns; a failed step is quartered, a quick one doubled."""
        g0, p0, _ = anchors[-1]
        anchors = list(anchors)
        done, step = 0.0, 1.0
        while done < 1.0:
            ahead = min(1.0, done + step)
            g, p = g0 + ahead * (given - g0), p0 + ahead * (dp - p0)
            trial = self._converge(p, mode, g, self._fit_if_far(self._extrapolate(anchors, g, p), mode, g, p))
            if trial.ok:
                done, state = ahead, trial
                anchors.append((g, p, trial.z))
                step = min(2.0 * step, 1.0) if trial.iterations <= 6 else step
            else:
                step /= 4.0
                if step < MIN_CONTINUATION_STEP:
                    return trial
        return state

    def _converge(self, dp: float, mode: str, given: float, z: np.ndarray) -> _Found:
        """Newton's method, then MINPACK's hybrid method (``scipy.optimize.root``) if Newton fails."""
        found = self._newton(dp, mode, given, z)
        if found.ok:
            return found
        from scipy.optimize import root

        scale = self._scale(dp, mode, given)

        def scaled(x: np.ndarray) -> np.ndarray:
            value = self._residual(x, mode, given, dp)[0]
            return np.where(np.isfinite(value), value / scale, 1e3)

        hybrid = root(scaled, z, method="hybr", options={"xtol": 1e-13, "maxfev": HYBRID_EVALUATIONS})
        residual, st = self._residual(hybrid.x, mode, given, dp)
        ok = bool(np.all(np.abs(residual) <= LOOSE_TOLERANCE * scale))
        if not ok:
            return found
        return _Found(True, hybrid.x, st, residual, found.iterations + int(hybrid.nfev), None, "hybrid method", mode,
                      given)

    def _scale(self, dp: float, mode: str, given: float) -> np.ndarray:
        """Scale of each residual: 1 plus the size of its drive in its unit."""
        return np.array([1.0, 1.0 + abs(given) / self.v_scale if mode == "voltage" else 1.0,
                         1.0 + abs(dp - self.osmotic) / self.p_scale])

    def _newton(self, dp: float, mode: str, given: float, z: np.ndarray) -> _Found:
        """Newton's method with a finite-difference Jacobian, then Broyden updates while full steps succeed;
        a backtracking line search on the scaled residual norm."""
        residual, st = self._residual(z, mode, given, dp)
        scale = self._scale(dp, mode, given)
        ok, jacobian, fresh = False, None, False
        iterations = 0
        while iterations < NEWTON_ITERATIONS and np.all(np.isfinite(residual)):
            if np.all(np.abs(residual) <= NEWTON_TOLERANCE * scale):
                ok = True
                break
            iterations += 1
            if jacobian is None:
                jacobian, fresh = self._jacobian(z, residual, mode, given, dp), True
            try:
                step = np.linalg.solve(jacobian, -residual)
            except np.linalg.LinAlgError:
                step = np.linalg.lstsq(jacobian, -residual, rcond=None)[0]
            if abs(step[2]) > 20.0:
                step *= 20.0 / abs(step[2])
            norm, damping, accepted = float(np.linalg.norm(residual / scale)), 1.0, False
            while damping > 1e-8:
                trial = z + damping * step
                trial[2] = min(max(trial[2], -T_LIMIT), T_LIMIT)
                new_residual, new_state = self._residual(trial, mode, given, dp)
                if np.all(np.isfinite(new_residual)) and \
                        np.linalg.norm(new_residual / scale) <= (1.0 - 1e-4 * damping) * norm:
                    accepted = True
                    break
                if not fresh:
                    break
                damping *= 0.5
            if not accepted:
                if not fresh:  # a stale (Broyden) Jacobian: refresh it at the same point
                    jacobian = None
                    continue
                # no decrease along a fresh Newton direction: round-off, or failure
                ok = self._stagnated(st, self._state(z + step, mode, given), residual, scale)
                break
            moved = self._change(st, new_state)
            taken = trial - z  # Broyden's (good) update along the step taken
            jacobian = jacobian + np.outer(new_residual - residual - jacobian @ taken, taken) / (taken @ taken)
            fresh = False
            z, residual, st = trial, new_residual, new_state
            if moved < STAGNATION and self._stagnated(st, st, residual, scale):
                ok = True
                break
        return _Found(ok, z, st, residual, iterations, jacobian, "Newton", mode, given)

    def _finish(self, found: _Found, dp: float) -> OperatingPoint:
        """The operating point with its status: the quadrature error estimated, a plateau checked."""
        mode, given = found.mode, found.given
        scale = self._scale(dp, mode, given)
        worst = float(np.max(np.abs(found.residual / scale)))
        if not found.ok:
            return self._point(found, dp, "failed", f"no convergence at {mode} {given:.6g} after "
                               f"{found.iterations} iterations (scaled residual {worst:.2g})", math.nan)
        error = self._quadrature_error(found, mode, given, dp)
        plateau = self._plateau(found.state)
        if error > QUADRATURE_LIMIT or plateau:
            why = "an interior concentration plateau" if plateau else f"quadrature error {error:.2g}"
            return self._point(found, dp, "failed", f"{why} above what {QUADRATURE_INTERVALS} intervals in ln c "
                               "resolve", error)
        return self._point(found, dp, "converged", f"converged ({found.method}): {found.iterations} iterations, "
                           f"scaled residual {worst:.1g}", error)

    def _plateau(self, st: _State) -> bool:
        """True when J(u) has its extreme inside the channel and X_s there is far below its neighbours'
        (a plateau of c inside the channel, a quadratic minimum the linear interval rule misses)."""
        salt = self.carried[0] * st.flow + self.carried[1] * st.current
        k = int(np.argmin(salt) if self.sign > 0 else np.argmax(salt))
        if k in (0, len(salt) - 1):
            return False
        gap = self.sign * (salt[[k - 1, k + 1]] - salt[k])
        delta = self.sign * (salt[k] - st.salt)
        return bool(delta < 0.1 * gap.max())

    def _change(self, old: _State, new: _State) -> float:
        """Largest change of Q, I, J_s and Delta V between two states, relative to their size and scale."""
        before = np.array([old.flow, old.current, old.salt, old.voltage])
        after = np.array([new.flow, new.current, new.salt, new.voltage])
        size = np.maximum(np.abs(before), np.array([*self.f_scale, self.v_scale]))
        return float(np.max(np.abs(after - before) / size))

    def _stagnated(self, old: _State, new: _State, residual: np.ndarray, scale: np.ndarray) -> bool:
        """Converged to round-off: the fluxes no longer move and the residual is small. In a concentration
        layer t (the layer's position) is fixed only to the round-off of J(u) while the fluxes are not."""
        return self._change(old, new) < STAGNATION and bool(np.all(np.abs(residual) <= LOOSE_TOLERANCE * scale))

    def _linear_guess(self, dp: float, mode: str, given: float) -> tuple[np.ndarray, float]:
        """Fluxes and voltage from (int R dx) F + e_E (Delta V + R_access I) = (int X_P, 0, int X_s dx) for the
        linear profile's resistance; the unknowns scaled to O(1) before the solve."""
        b = np.array([-dp + self.osmotic, 0.0, -self.rt_nu * (self.u[-1] - self.u[0])])
        system = np.zeros((3, 4))
        system[:, :3] = self.linear_resistance
        system[1, 1] += self.access
        system[1, 3] = 1.0
        scales = np.array([*self.f_scale, self.v_scale])
        system = system * scales  # columns in units of their scales
        fixed = 3 if mode == "voltage" else 1
        free = [j for j in range(4) if j != fixed]
        rhs = b - system[:, fixed] * given / scales[fixed]
        rows = np.max(np.abs(system[:, free]), axis=1)
        solution = np.linalg.solve(system[:, free] / rows[:, None], rhs / rows) * scales[free]
        unknowns = np.empty(4)
        unknowns[free] = solution
        unknowns[fixed] = given
        return unknowns[:3], float(unknowns[3])

    def _jacobian(self, z: np.ndarray, residual: np.ndarray, mode: str, given: float, dp: float) -> np.ndarray:
        jacobian = np.empty((3, 3))
        for j in range(3):
            step = 1e-7 * max(1.0, abs(z[j]))
            shifted = z.copy()
            shifted[j] += step
            jacobian[:, j] = (self._residual(shifted, mode, given, dp)[0] - residual) / step
        return jacobian

    def _quadrature_error(self, found: _Found, mode: str, given: float, dp: float) -> float:
        """Richardson estimate: the residual from every second and fourth node (the same extrapolated rule on
        a grid twice as coarse) differs from the fine one by about 15 times the fine error where the data are
        smooth and 3 times in a concentration layer (second order there); the change of Q, I, J_s and Delta V
        that a third of the difference implies, relative to their size and scale (conservative)."""
        coarse, _ = self._residual(found.z, mode, given, dp, step=2)
        jacobian = self._jacobian(found.z, found.residual, mode, given, dp)  # fresh: a Broyden one is too rough
        try:
            shift = np.linalg.solve(jacobian, -(coarse - found.residual) / 3.0)
        except np.linalg.LinAlgError:
            return math.inf
        if not np.all(np.isfinite(shift)):
            return math.inf
        moved = self._change(found.state, self._state(found.z + shift, mode, given))
        return moved if math.isfinite(moved) else math.inf

    def _point(self, found: _Found, dp: float, status: str, message: str, error: float) -> OperatingPoint:
        st = found.state
        if status == "failed":
            nothing = np.array([])
            voltage = found.given if found.mode == "voltage" else math.nan
            current = found.given if found.mode == "current" else math.nan
            return OperatingPoint(voltage=voltage, current=current, volume_flow=math.nan, salt_flux=math.nan,
                                  pressure_difference=dp, channel_voltage=math.nan, position=nothing,
                                  concentration=nothing, potential=nothing, pressure=nothing, status=status,
                                  message=message, iterations=found.iterations, quadrature_error=error)
        x = np.concatenate(([0.0], np.cumsum(st.dx)))
        running = np.concatenate((np.zeros((2, 1)), np.cumsum(st.within * st.dx, axis=1)), axis=1)
        c = np.exp(self.u)
        potential = -self._left_access() * st.current - running[1]
        pressure = -running[0] + self.rt * self.total_concentration * (c - c[0])
        return OperatingPoint(voltage=float(st.voltage), current=float(st.current), volume_flow=float(st.flow),
                              salt_flux=float(st.salt), pressure_difference=dp,
                              channel_voltage=float(st.voltage + self.access * st.current), position=x,
                              concentration=c, potential=potential, pressure=pressure, status=status,
                              message=message, iterations=found.iterations, quadrature_error=error,
                              unknown_t=float(found.z[2]))

    def _left_access(self) -> float:
        """The left end's share of the access resistance: R_L / (R_L + R_R) = c_R / (c_L + c_R)."""
        cl, cr = self.channel.left_concentration, self.channel.right_concentration
        return self.access * cr / (cl + cr)


def _guess(point: OperatingPoint | None) -> np.ndarray | None:
    if point is None or point.status != "converged":
        return None
    return np.array([point.volume_flow, point.current, point.voltage, point.unknown_t])


def operating_point(channel: Channel | ChannelTable, voltage: float | str | None = None,
                    current: float | str | None = None, pressure_difference: float | str = 0.0,
                    guess: OperatingPoint | None = None) -> OperatingPoint:
    """The steady state at an applied voltage or an imposed current (exactly one of them).

    Parameters
    ----------
    channel : Channel or ChannelTable
        A Channel is tabulated on first use (and cached); pass ``tabulate(channel)`` to control when.
    voltage : float or str, optional
        Delta V = V(L) - V(0), V.
    current : float or str, optional
        I along +x, A (A/m for a slit).
    pressure_difference : float or str
        Delta p = p(L) - p(0), Pa.
    guess : OperatingPoint, optional
        A nearby solution to start Newton's method from.

    Returns
    -------
    OperatingPoint
        Its ``status`` is "failed" (not raised) when Newton's method does not converge.
    """
    table = _table(channel)
    if (voltage is None) == (current is None):
        raise InputError(f"operating_point: voltage={voltage!r} and current={current!r}, expected exactly one")
    dp = to_si(pressure_difference, "Pa", "pressure_difference")
    if voltage is not None:
        voltage = to_si(voltage, "V", "voltage")
    else:
        current = to_si(current, "A", "current")
    return _solve_point(table, dp, voltage, current, _guess(guess))


def _solve_point(table: ChannelTable, dp: float, voltage: float | None, current: float | None,
                 guess: np.ndarray | None) -> OperatingPoint:
    return table._path.solve(dp, voltage, current, guess)


def membrane_potential(channel: Channel | ChannelTable, pressure_difference: float | str = 0.0) -> float:
    """The zero-current (open-circuit) voltage Delta V = V(L) - V(0), V.

    An ideally cation-selective channel gives the Nernst value -(kT/ze) ln(c_R/c_L); an uncharged one the
    free-solution diffusion potential (Henderson 1907; Planck 1890), for a 1:1 salt
    -(kT/e) (D+ - D-)/(D+ + D-) ln(c_R/c_L).

    Raises
    ------
    ConvergenceError
        If the operating point does not converge.
    """
    point = operating_point(channel, current=0.0, pressure_difference=pressure_difference)
    _raise_failed(point, "membrane_potential")
    return point.voltage


def salt_flux(channel: Channel | ChannelTable, voltage: float | str | None = None,
              pressure_difference: float | str = 0.0) -> float:
    """Salt flux J_s along +x (mol/s of formula units; mol/(m s) for a slit) at the applied voltage, or at
    zero current (open circuit) when ``voltage`` is None.

    Raises
    ------
    ConvergenceError
        If the operating point does not converge.
    """
    point = operating_point(channel, voltage=voltage, current=0.0 if voltage is None else None,
                            pressure_difference=pressure_difference)
    _raise_failed(point, "salt_flux")
    return point.salt_flux


def _raise_failed(point: OperatingPoint, what: str) -> None:
    if point.status != "converged":
        raise ConvergenceError(f"{what}: {point.message}")


def current_voltage(channel: Channel | ChannelTable, voltages: Any, pressure_difference: float | str = 0.0) -> Any:
    """The I-V curve: the steady state at each applied voltage.

    Parameters
    ----------
    channel : Channel or ChannelTable
    voltages : sequence of float
        Delta V = V(L) - V(0), V.
    pressure_difference : float or str
        Delta p = p(L) - p(0), Pa.

    Returns
    -------
    xarray.Dataset
        Dimension ``voltage``; ``current``, ``volume_flow``, ``salt_flux``, ``power`` (I Delta V, delivered to
        the external circuit), ``channel_voltage``, ``status`` (0 converged, 1 failed), ``message``,
        ``iterations`` and ``quadrature_error`` per voltage, each with ``units`` and ``long_name``; the
        channel and the table's interpolation error as attributes. Points are solved in order of voltage,
        each Newton solve starting from the previous solution.
    """
    import xarray as xr

    table = _table(channel)
    values = np.atleast_1d(np.asarray([to_si(v, "V", "voltages") for v in np.ravel(np.asarray(voltages, dtype=object))],
                                      dtype=float))
    dp = to_si(pressure_difference, "Pa", "pressure_difference")
    points: list[OperatingPoint] = [None] * values.size  # type: ignore[list-item]
    path = table._path
    order = np.argsort(values, kind="stable")
    centre = int(np.argmin(np.abs(values[order])))
    first = path.solve(dp, float(values[order[centre]]), None, None)
    points[order[centre]] = first
    for direction in (1, -1):  # outward from the smallest voltage, each point continued from the last two
        anchors = [] if first.status != "converged" else [(first.voltage, dp, path.unknowns(first))]
        k = centre + direction
        while 0 <= k < values.size:
            v = float(values[order[k]])
            point = path.continue_to("voltage", anchors, v, dp) if anchors else path.solve(dp, v, None, None)
            points[order[k]] = point
            if point.status == "converged":
                anchors = [*anchors, (v, dp, path.unknowns(point))][-2:]
            k += direction
    capillary = isinstance(table.channel.case.geometry, Capillary)

    def unit(capillary_unit: str, slit_unit: str) -> str:
        return capillary_unit if capillary else slit_unit

    def column(name: str, unit_: str, text: str, dtype: Any = float) -> tuple[tuple[str], np.ndarray, dict[str, str]]:
        data = np.array([getattr(p, name) for p in points], dtype=dtype)
        return ("voltage",), data, {"units": unit_, "long_name": text}

    failed = np.array([0 if p.status == "converged" else 1 for p in points], dtype=np.int8)
    data = {
        "current": column("current", unit("A", "A/m"), "electric current along +x (left to right)"),
        "volume_flow": column("volume_flow", unit("m^3/s", "m^2/s"), "volume flow along +x"),
        "salt_flux": column("salt_flux", unit("mol/s", "mol/(m*s)"), "salt flux (formula units) along +x"),
        "power": column("power", unit("W", "W/m"), "electrical power delivered to the external circuit, I dV"),
        "channel_voltage": column("channel_voltage", "V", "voltage across the channel proper, dV + R_access I"),
        "iterations": column("iterations", "1", "Newton iterations", int),
        "quadrature_error": column("quadrature_error", "1", "estimated relative error of the quadrature along x"),
        "status": (("voltage",), failed, {"units": "1", "long_name": "0 converged, 1 failed (see message)"}),
        "message": (("voltage",), np.array([p.message for p in points], dtype=object),
                    {"long_name": "solver message"}),
    }
    ch = table.channel
    attrs = {
        "length": ch.length, "left_concentration": ch.left_concentration,
        "right_concentration": ch.right_concentration, "pressure_difference": dp,
        "access_resistance": table.access_resistance,
        "interpolation_error": table.interpolation_error,
        "potential_interpolation_error": table.potential_interpolation_error,
        "conventions": "x from the left (0) to the right (L) reservoir; voltage = V(L) - V(0); flows positive "
                       "along +x; slit values per unit width",
        "case": ch.case.describe(),
    }
    coords = {"voltage": ("voltage", values, {"units": "V", "long_name": "applied voltage V(L) - V(0)"})}
    return xr.Dataset(data, coords=coords, attrs=attrs)


@dataclass(frozen=True)
class OsmoticPower:
    """Reverse-electrodialysis power of a channel between reservoirs of different salt concentration.

    Attributes
    ----------
    max_power : float
        Largest electrical power P = I Delta V delivered to a load, over the load, W (W/m for a slit).
    voltage_at_max_power, current_at_max_power : float
        The operating point there, V and A (A/m).
    open_circuit_voltage, short_circuit_current : float
        The membrane potential (V) and the current at Delta V = 0 (A, A/m).
    linear_estimate : float
        I_sc V_oc / 4, the maximum power of a linear source (common practice), W (W/m).
    efficiency : float
        P / (J_s Delta mu_s) at maximum power: electrical power out over the Gibbs energy released by the salt
        flux, Delta mu_s = mu_s(left) - mu_s(right) = RT sum(nu) ln(c_L/c_R) per formula unit.
    efficiency_total : float
        P over the whole free-energy input J_s Delta mu_s + Q (Delta pi - Delta p), Delta pi = RT sum_i
        (c_iR - c_iL) (van 't Hoff), which the second law bounds by 1.
    salt_flux, volume_flow : float
        J_s and Q at maximum power.
    status : str
        "converged", or "failed" when a point did not converge.
    message : str
    """

    max_power: float
    voltage_at_max_power: float
    current_at_max_power: float
    open_circuit_voltage: float
    short_circuit_current: float
    linear_estimate: float
    efficiency: float
    efficiency_total: float
    salt_flux: float
    volume_flow: float
    status: str
    message: str


def osmotic_power(channel: Channel | ChannelTable, pressure_difference: float | str = 0.0) -> OsmoticPower:
    """Maximum electrical power over the load between short circuit and open circuit, and its efficiency.

    P(Delta V) = I(Delta V) Delta V is maximised over Delta V between 0 and the open-circuit voltage
    (bounded Brent search, each point a full channel solve). For a linear I-V curve the maximum is
    I_sc V_oc / 4 at V_oc / 2 (common practice for a linear source).
    """
    from scipy.optimize import minimize_scalar

    table = _table(channel)
    dp = to_si(pressure_difference, "Pa", "pressure_difference")
    ch = table.channel
    open_circuit = operating_point(table, current=0.0, pressure_difference=dp)
    short = operating_point(table, voltage=0.0, pressure_difference=dp, guess=open_circuit)
    salt = _Salt(ch.case)
    rt = GAS_CONSTANT * ch.case.solvent.temperature
    released = rt * salt.total_nu * math.log(ch.left_concentration / ch.right_concentration)
    osmotic = rt * salt.total_concentration * (ch.right_concentration - ch.left_concentration)
    failed = [p for p in (open_circuit, short) if p.status != "converged"]
    if failed:
        return OsmoticPower(*(math.nan,) * 10, status="failed", message=failed[0].message)
    v_oc, i_sc = open_circuit.voltage, short.current
    best = short
    if v_oc != 0.0:
        state = {"last": short}

        def negative_power(v: float) -> float:
            point = operating_point(table, voltage=v, pressure_difference=dp, guess=state["last"])
            if point.status != "converged":
                raise ConvergenceError(point.message)
            state["last"] = point
            return -point.current * v

        try:
            found = minimize_scalar(negative_power, bounds=sorted((0.0, v_oc)), method="bounded",
                                    options={"xatol": 1e-9 * abs(v_oc)})
            best = operating_point(table, voltage=float(found.x), pressure_difference=dp, guess=state["last"])
        except ConvergenceError as error:
            return OsmoticPower(*(math.nan,) * 10, status="failed", message=str(error))
    power = best.current * best.voltage
    gibbs = best.salt_flux * released
    total = gibbs + best.volume_flow * (osmotic - dp)
    return OsmoticPower(max_power=power, voltage_at_max_power=best.voltage, current_at_max_power=best.current,
                        open_circuit_voltage=v_oc, short_circuit_current=i_sc, linear_estimate=i_sc * v_oc / 4.0,
                        efficiency=power / gibbs if gibbs != 0.0 else math.nan,
                        efficiency_total=power / total if total != 0.0 else math.nan,
                        salt_flux=best.salt_flux, volume_flow=best.volume_flow, status=best.status,
                        message=best.message)
