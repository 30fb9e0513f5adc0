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

The conditions this gives along a channel between different reservoirs, and their quadrature in ln c, are
in ``edl_solver.channel.quadrature``; their solution (Newton's method, continuation; equal reservoirs
exactly) in ``edl_solver.channel.path``; the operating functions (I-V curve, membrane potential, osmotic
power) in ``edl_solver.channel.operating``.

Tables
------
M(c) costs one cross-section solve; ``tabulate`` solves it on ``points`` log-spaced concentrations a
little beyond [c_L, c_R] and interpolates in ln c with cubic splines (of the logs of the diagonal
entries and of the correlations L_ij / sqrt(L_ii L_jj) of the ion-resolved matrix, which stays well
conditioned where the reduced M does not), then checks the interpolation against direct solves at the
midpoints of the grid and stores the error.

Access resistance (``edl_solver.channel.access``), in series: R = 1/(4 K a) per end of a capillary, K the
reservoir's bulk conductivity (Hall 1975, J. Gen. Physiol. 66, 531, from memory); (ln(8 W/H) - 1)/(pi K W)
per end of a slit of width W (given as ``width``), times W per unit width. The concentration at each end is
the reservoir's, and no hydraulic access resistance is added.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Sequence
from dataclasses import dataclass, field
from numbers import Integral
from typing import Any

import numpy as np

from edl_solver.channel.path import Path, Uniform
from edl_solver.channel.relations import SaltRatios, reduce_matrices
from edl_solver.channel.relations import basis_of as _basis
from edl_solver.channel.relations import zero_current_gradient as _zero_current_gradient
from edl_solver.channel.shape import make_shape
from edl_solver.channel.wall_profile import make_wall_profile
from edl_solver.channel.wall_segments import make_wall_segments
from edl_solver.constants import GAS_CONSTANT
from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.units import to_positive_si
from edl_solver.model.bulk import bulk_conductivity

__all__ = ["Channel", "ChannelTable", "cases_at", "table_of", "tabulate"]

#: Reservoir concentrations closer than this (relative) are equal: the uniform channel, solved exactly.
EQUAL_CONCENTRATIONS = 1e-12
#: Smallest width in ln c of the table (so that nearly equal reservoirs still get a sensible grid).
MIN_TABLE_WIDTH = 0.2


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
        Add the reservoirs' access resistances in series: 1/(4 K a) per end of a capillary (Hall 1975, J. Gen.
        Physiol. 66, 531, from memory); (ln(8 W/H) - 1)/(pi K W) per end of a slit of width W (needs
        ``width``; ``edl_solver.channel.access``).
    points : int
        Concentrations of the table of cross-section solves (``tabulate``), at least 8.
    width : float or str, optional
        Width W of a slit, m (or "1 um"), at least ten times its height; used for its access resistance (and
        by ``Device`` to turn per-width values into a channel's). None for a capillary.
    size : pair, callable or table, optional
        The radius (capillary) or height (slit) along x, replacing the case's (``edl_solver.channel.shape``):
        ``(a, b)`` at x = 0 and x = L, linear between them (a cone, a tapered slit); a callable size(x), both
        in m; or a table ``{"position": [...], "size": [...]}``. Stored as a ``shape.Shape``. None (default):
        the case's own geometry, a uniform channel. A channel with a size is tabulated over (concentration,
        size) and solved along x (``taper_table``, ``taper_path``).
    size_points : int
        Sizes of that table, log-spaced between the smallest and largest, from 4 to 100 (one for a uniform
        size).
    wall_segments : list of (x_end, Wall), optional
        The wall along x, replacing the case's (``edl_solver.channel.wall_segments``): each wall holds up to its
        x_end (m or "500 nm"), the ends rising to L; walls of the case's kind (e.g. a bipolar channel: -20 and
        +20 mC/m^2). Stored as a ``WallSegments``; the channel is then tabulated once per distinct wall and solved
        along x as a channel with a ``size`` is (a uniform ``size`` of the case's is set when none is given).
    wall_profile : callable or table, optional
        The wall along x as a continuous profile of what the case's wall fixes (``edl_solver.channel.wall_profile``):
        zeta (V, "-40 mV") of a potential wall, the charge density (C/m^2, "-20 mC/m^2") of a charge wall, the site
        density (1/m^2, "2 nm^-2") of a wall regulated by one kind of site; a callable value(x) (x in m, sampled as
        a callable ``size`` is) or a table ``{"position": [...], "value": [...]}``, linear in x between the rows.
        It applies to both walls of a slit given an equal pair; different walls, several kinds of site, a gate and
        ``wall_segments`` with it are refused. Stored as a ``WallProfile``; the channel is tabulated at
        ``wall_points`` values spanning the profile (one for a constant profile: the plain channel's table),
        interpolated across the value by a local cubic (``wall_profile.ProfileSpline``) whose error, measured at the
        midpoints of those values, is part of the table's ``interpolation_error``, and solved along x as a channel
        with a ``size`` is.
    wall_points : int
        Wall values of that table, from 2 to 50 (one for a constant profile): equally spaced over the profile's
        range, a charge density's in asinh(sigma / (F c size)), denser near zero (``taper_table.wall_nodes``).
    concentration_span : float
        Factor by which the table of a channel varying along x (``size``, ``wall_segments``, ``wall_profile``)
        extends beyond the reservoirs' concentrations on each side, from 2 to 1e6 (default
        ``taper_table.CONCENTRATION_SPAN``, 50): the concentration polarisation inside must stay within it. An I-V
        point whose salt leaves the table is solved again on a table ten times wider (``operating``), up to
        ``operating.WIDEST_SPAN``.
    """

    case: Case
    length: float | str
    left_concentration: float | str
    right_concentration: float | str
    access_resistance: bool = False
    points: int = 32
    width: float | str | None = None
    size: Any = None
    size_points: int = 12
    wall_segments: Any = None
    wall_profile: Any = None
    wall_points: int = 9
    concentration_span: float = 50.0

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
        if self.size is not None:
            object.__setattr__(self, "size", make_shape(self.size, length, self.case.geometry.kind))
        if self.wall_segments is not None and self.wall_profile is not None:
            raise InputError("channel.wall_profile: given with wall_segments, expected one of them (a piecewise or a "
                             "continuous wall along x)")
        if self.wall_segments is not None:
            object.__setattr__(self, "wall_segments", make_wall_segments(self.wall_segments, length, self.case))
        if self.wall_profile is not None:
            object.__setattr__(self, "wall_profile", make_wall_profile(self.wall_profile, length, self.case))
        _whole(self, "wall_points", 2, 50)
        if (self.wall_segments is not None or self.wall_profile is not None) and self.size is None:
            size = self.case.geometry.size
            object.__setattr__(self, "size", make_shape((size, size), length, self.case.geometry.kind))
        self._check_width()
        _whole(self, "size_points", 4, 100)
        _whole(self, "points", 8, 400)
        span = self.concentration_span
        if isinstance(span, bool) or not isinstance(span, int | float) or not 2.0 <= span <= 1e6:
            raise InputError(f"channel.concentration_span: {span!r} is not allowed, expected a factor from 2 to 1e6")
        object.__setattr__(self, "concentration_span", float(span))

    def _check_width(self) -> None:
        from edl_solver.channel.access import slit_access_resistance

        geometry = self.case.geometry
        if self.width is None:
            if self.access_resistance and geometry.kind == "slit":
                raise InputError("channel.access_resistance: True for a slit without a width, expected width= the "
                                 "slit's width (e.g. '1 um'), on which its access resistance depends")
            return
        if geometry.kind != "slit":
            raise InputError(f"channel.width: {self.width!r} for a {geometry.kind}, expected None (a width belongs "
                             "to a slit)")
        width = to_positive_si(self.width, "m", "channel.width", "a slit width in m (or '1 um')")
        object.__setattr__(self, "width", width)
        highest = geometry.height if self.size is None else max(self.size.sizes)
        slit_access_resistance(1.0, highest, width)  # refuses a width under ten heights

    @property
    def equal_reservoirs(self) -> bool:
        """True when both reservoirs hold the same concentration (uniform channel)."""
        return math.isclose(self.left_concentration, self.right_concentration, rel_tol=EQUAL_CONCENTRATIONS)



def _whole(channel: Channel, name: str, low: int, high: int) -> None:
    """Check the count ``name`` of ``channel`` (any integer type, numpy's too, but not a bool) and store it as an
    int."""
    value = getattr(channel, name)
    if isinstance(value, bool | np.bool_) or not isinstance(value, Integral) or not low <= value <= high:
        raise InputError(f"channel.{name}: {value!r} is not allowed, expected an integer from {low} to {high}")
    object.__setattr__(channel, name, int(value))


# ----------------------------------------------------------------------------------------------
# Tables of cross-section solves


def cases_at(case: Case, concentrations: Sequence[float]) -> list[Case]:
    """The case at each salt concentration, built as the sweep path "electrolyte.concentration" builds it.

    Raises
    ------
    InputError
        If the electrolyte cannot be scaled (H+ or OH- among the ions) or a case is invalid.
    """
    from edl_solver.inputs import paths as sweep_axes
    from edl_solver.inputs.casefile import case_to_mapping

    axes = sweep_axes.make_axes({"electrolyte.concentration": [float(c) for c in concentrations]})
    table = case_to_mapping(case)
    return [sweep_axes.case_at(table, axes, (i,)) for i in range(len(concentrations))]


def _solve_all(case: Case, concentrations: np.ndarray) -> tuple[np.ndarray, np.ndarray, tuple[str, ...]]:
    """Ion and reduced response matrices at each concentration, and the solves' validity notes."""
    from edl_solver.pipeline import solve

    ions, reduced, notes = [], [], []
    for c, sub in zip(concentrations, cases_at(case, concentrations)):
        try:
            result = solve(sub)
        except ConvergenceError as error:
            raise ConvergenceError(f"channel: the cross-section solve at c = {c:.6g} mol/m^3 failed ({error})") \
                from error
        ions.append(result.ion_response_matrix)
        reduced.append(result.response_matrix)
        notes.extend(note for note in result.warnings if note not in notes)
    return np.array(ions), np.array(reduced), tuple(notes)


class IonMatrixSpline:
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
    sizes : ndarray or None
        The sizes of the table of a channel with a ``size`` (``taper_table``), m; ``matrices`` then has shape
        (sizes, concentrations, 3, 3). None for a uniform channel.
    seconds : float
        Wall time of the tabulation, s (measured for a channel with a ``size``, else 0).
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
    _path: Path | Uniform | Any = field(repr=False)
    sizes: np.ndarray | None = None
    seconds: float = 0.0


def _access_resistance(channel: Channel) -> float:
    """Both ends' access resistances in series, ohm (ohm m per unit width of a slit: one channel's times W):
    ``channel.access``'s for an opening into each reservoir, K = F^2/(RT) sum z_i^2 D_i c_i the reservoir's
    conductivity (Kohlrausch-free dilute limit, Nernst-Einstein)."""
    from edl_solver.channel.access import end_access_resistance

    if not channel.access_resistance:
        return 0.0
    per_salt = bulk_conductivity(channel.case) / channel.case.electrolyte.ions[0].concentration
    geometry = channel.case.geometry
    total = sum(end_access_resistance(geometry, per_salt * c, channel.width)
                for c in (channel.left_concentration, channel.right_concentration))
    return total * channel.width if geometry.kind == "slit" else total


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
    if channel.size is not None:
        from edl_solver.channel.taper_table import tabulate_taper

        return ChannelTable(channel, **tabulate_taper(channel))
    case = channel.case
    rt = GAS_CONSTANT * case.solvent.temperature
    access = _access_resistance(channel)
    if channel.equal_reservoirs:
        grid = np.array([channel.left_concentration])
        _, reduced, notes = _solve_all(case, grid)
        return ChannelTable(channel, grid, reduced, 0.0, 0.0, access, 1, notes,
                            Uniform(channel, reduced[0], rt, access))
    u_left, u_right = math.log(channel.left_concentration), math.log(channel.right_concentration)
    n = channel.points
    width = max(abs(u_right - u_left) * (n - 1) / (n - 5), MIN_TABLE_WIDTH)
    u = 0.5 * (u_left + u_right) + width * np.linspace(-0.5, 0.5, n)
    midpoints = 0.5 * (u[1:] + u[:-1])
    ion_all, reduced_all, notes = _solve_all(case, np.exp(np.concatenate((u, midpoints))))
    ion, reduced = ion_all[:n], reduced_all[:n]
    spline = IonMatrixSpline(u, ion)
    basis = _basis(case)
    # the interpolation against direct solves at the midpoints
    direct = ion_all[n:]
    guessed = spline(midpoints)
    diagonal = np.diagonal(direct, axis1=1, axis2=2)
    scale = np.sqrt(diagonal[:, :, None] * diagonal[:, None, :])
    matrix_error = float(np.max(np.abs(guessed - direct) / scale))
    salt = SaltRatios(case)
    total_c = salt.total_concentration * np.exp(midpoints)
    exact = _zero_current_gradient(reduced_all[n:], rt, salt.total_nu, total_c)
    approx = _zero_current_gradient(reduce_matrices(guessed, basis), rt, salt.total_nu, total_c)
    potential_error = float(np.max(np.abs(approx - exact)) / np.max(np.abs(exact))) if np.any(exact) else 0.0
    path = Path(channel, spline, basis, rt, access)
    return ChannelTable(channel, np.exp(u), reduced, matrix_error, potential_error, access, len(ion_all), notes,
                        path)


@functools.lru_cache(maxsize=16)
def _cached_table(channel: Channel) -> ChannelTable:
    return tabulate(channel)


def table_of(channel: Channel | ChannelTable) -> ChannelTable:
    """The table of a channel: a ChannelTable as it is, a Channel tabulated on first use (and cached)."""
    if isinstance(channel, ChannelTable):
        return channel
    if not isinstance(channel, Channel):
        raise InputError(f"channel: {type(channel).__name__} is not a Channel, expected edl_solver.channel.Channel "
                         "or the ChannelTable of tabulate(channel)")
    return _cached_table(channel)
