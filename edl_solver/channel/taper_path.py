"""The steady along-channel problem of a channel whose section varies along x: a boundary-value problem in x.

Signs and the local model are ``edl_solver.channel.model``'s: in steady state Q, I and J_s are uniform, and
at each x the section's response matrix M(c, size(x)) gives the forces (X_P, E, X_s) from them (the Schur
complement form of ``model``). For a uniform section M depends on c alone and ln c can replace x
(``quadrature``); here it cannot, so the conditions are integrated in xi = x/L: with y = (u, w, q),
u = ln c, w = (V(x) - V(0))/(kT/e) and q = p(x)/p_scale,

    du/dx = -X_s / (RT sum nu),   dV/dx = -E,   dp/dx = -X_P + RT sum_i c_i du/dx,

with the fluxes (Q, I or Delta V, J_s) as unknown parameters and six boundary conditions: u = ln c_L at
x = 0 and ln c_R at x = L, V(0) = p(0) = 0, V(L) - V(0) = Delta V + R_access I (the channel proper) and
p(L) = Delta p. ``scipy.integrate.solve_bvp`` (fourth-order collocation, mesh refined to its tolerance) solves
it; a point starts from the previous one of an I-V curve and is reached by continuation in the drive (halved
steps) when a direct solve fails. A point whose concentration leaves the table, or whose solve does not meet
the tolerance, is reported as failed, never returned as converged. With a ``wall_profile`` M also depends on the
wall value at x (linear between the profile's rows, nodes of the starting mesh when at most 65), interpolated
between the tables of the wall nodes (``wall_profile.ProfileSpline``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from edl_solver.channel.point import CONVERGED_WORD, FAILED_WORD, OperatingPoint
from edl_solver.channel.relations import SaltRatios, reduce_matrices
from edl_solver.constants import FARADAY, GAS_CONSTANT

if TYPE_CHECKING:
    from edl_solver.channel.model import Channel
    from edl_solver.channel.taper_table import SectionSpline

__all__ = ["BVP_TOLERANCE", "LEAVES_TABLE", "TaperPath"]

#: The words of a failed point whose salt left the table (``operating`` then widens the table).
LEAVES_TABLE = "leaves the table"

#: Relative tolerance of the collocation residuals (``solve_bvp``'s tol): the fluxes then agree with a 1e-9 solve to
#: 4e-7 (measured over a 100-point I-V curve of a rectifying cone, +-0.5 V), below the tables' interpolation error.
BVP_TOLERANCE = 1e-4
#: Most collocation nodes of one solve (solutions of the tests and benchmarks use up to ~1,400; a mesh that outgrows
#: this is a point whose layers the tolerance cannot follow, or a step too long).
BVP_NODES = 6000
#: Steps of one continuation whose mesh outgrew ``BVP_NODES`` before the point is given up: shorter steps rarely
#: help then, and each such solve is the dearest there is.
CROWDED_STEPS = 2
#: Nodes of a start from a previous solution (each half: equal in x, equal in ln c).
START_NODES = 64
#: Halvings of a continuation step before a point is given up.
CONTINUATION_HALVINGS = 8


def _coarse_mesh(xi: np.ndarray, u: np.ndarray) -> np.ndarray:
    """At most 2 ``START_NODES`` nodes: equal steps in xi and equal steps of the arc length of u (ln c) through
    its layers. A refined mesh is not carried from point to point (solve_bvp only adds nodes)."""
    if xi.size <= 2 * START_NODES:
        return xi
    arc = np.concatenate(([0.0], np.cumsum(np.abs(np.diff(u)) + 1e-12)))
    along = np.interp(np.linspace(0.0, arc[-1], START_NODES), arc, xi)
    return np.union1d(np.linspace(0.0, 1.0, START_NODES), along)


@dataclass(frozen=True)
class Profile:
    """A solution to start from: mesh xi, the states y (3, n) and the fluxes (Q, I, J_s) and Delta V."""

    xi: np.ndarray
    y: np.ndarray
    fluxes: np.ndarray
    voltage: float


class TaperPath:
    """The steady state of a channel of varying section (see the module docstring); the interface of
    ``path.Path`` (``solve``, ``unknowns``, ``continue_to``) that ``operating`` uses."""

    def __init__(self, channel: Channel, splines: list[SectionSpline], basis: np.ndarray,
                 ends: tuple[float, float], wall_nodes: np.ndarray | None = None):
        case = channel.case
        self.channel, self.splines, self.spline, self.basis = channel, splines, splines[0], basis
        self.crowded = False
        segments = channel.wall_segments
        # the segments of the wall along x (xi from bounds[k] to bounds[k + 1]) and the table of each
        self.bounds = np.array([0.0, 1.0]) if segments is None else np.array([0.0, *segments.ends]) / channel.length
        self.bounds[-1] = 1.0
        self.tables = (0,) if segments is None else segments.table_index
        self.rt = GAS_CONSTANT * case.solvent.temperature
        salt = SaltRatios(case)
        self.rt_nu, self.total_concentration = self.rt * salt.total_nu, salt.total_concentration
        self.length = channel.length
        self.left_access, self.access = ends[0], ends[0] + ends[1]
        cl, cr = channel.left_concentration, channel.right_concentration
        self.u_ends = (math.log(cl), math.log(cr))
        shape = channel.size
        self.xi_rows = np.array(shape.positions) / self.length
        self.sizes = np.array(shape.sizes)
        self.v_scale = self.rt / FARADAY
        self._wall_profile(channel, splines, wall_nodes)
        self.p_scale = self.rt * salt.total_concentration * max(cl, cr)
        middle = self._matrices(np.array([0.5 * sum(self.u_ends)]), np.array([0.5]))[0]
        forces = np.array([self.p_scale, self.v_scale, self.rt_nu]) / self.length
        self.f_scale = np.abs(middle) @ forces
        self._last: list[tuple[np.ndarray, np.ndarray, tuple[np.ndarray, np.ndarray, np.ndarray], int | None]] = []
        self.mesh = np.union1d(np.linspace(0.0, 1.0, 33), self.xi_rows if len(self.xi_rows) <= 65 else [])
        if self.profile is not None and len(self.wall_rows[0]) <= 65:  # the profile's kinks are nodes
            self.mesh = np.union1d(self.mesh, self.wall_rows[0])

    def _wall_profile(self, channel: Channel, splines: list[SectionSpline], nodes: np.ndarray | None) -> None:
        """The interpolation across the wall value of a ``wall_profile`` between the tables at the wall ``nodes``
        (None for a constant profile: a single table) and the profile's rows (xi, value)."""
        from edl_solver.channel.wall_profile import ProfileSpline

        profile = channel.wall_profile
        self.profile = None if profile is None or len(splines) == 1 else \
            ProfileSpline(splines, nodes, profile.quantity)
        if self.profile is not None:
            self.wall_rows = (np.array(profile.positions) / channel.length, np.array(profile.values))

    def _matrices(self, u: np.ndarray, xi: np.ndarray, segment: int | None = None) -> np.ndarray:
        """Reduced M at (u, xi) with the table of the wall ``segment`` (by default that of the segment containing
        each xi) or, with a wall profile, interpolated at the wall value at xi; u clipped to the table (a solution
        that leaves it is refused afterwards)."""
        low, high = self.spline.u_range
        s = np.log(np.interp(xi, self.xi_rows, self.sizes))  # the size linear in x between the rows
        u = np.clip(u, low, high)
        if self.profile is not None:  # the wall value linear in x between the profile's rows
            return reduce_matrices(self.profile(u, s, np.interp(xi, *self.wall_rows)), self.basis)
        if len(self.splines) == 1:
            return reduce_matrices(self.splines[0](u, s), self.basis)
        if segment is not None:
            return reduce_matrices(self.splines[self.tables[segment]](u, s), self.basis)
        tables = np.array(self.tables)[np.searchsorted(self.bounds[1:-1], xi, side="left")]
        out = np.empty((len(u), 3, 3))
        for k in np.unique(tables):
            out[tables == k] = reduce_matrices(self.splines[k](u[tables == k], s[tables == k]), self.basis)
        return out

    def _blocks(self, u: np.ndarray, xi: np.ndarray, segment: int | None = None
                ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """A^-1 (2, 2, k), A^-1 m (2, k) and the salt Schur complement S (k) at (u, xi). The last two calls' are
        kept: solve_bvp's finite-difference Jacobian moves u once, then w, q and the fluxes, which leave them."""
        for last in self._last:
            if last[3] == segment and np.array_equal(last[0], u) and np.array_equal(last[1], xi):
                return last[2]
        m = self._matrices(u, xi, segment)
        a, b, c, d = m[:, 0, 0], m[:, 0, 1], m[:, 1, 0], m[:, 1, 1]
        inverse = np.array([[d, -b], [-c, a]]) / (a * d - b * c)
        carried = np.einsum("ijk,kj->ik", inverse, m[:, :2, 2])
        permeance = m[:, 2, 2] - m[:, 0, 2] * carried[0] - m[:, 1, 2] * carried[1]
        self._last = [(u.copy(), xi.copy(), (inverse, carried, permeance), segment), *self._last[:1]]
        return inverse, carried, permeance

    def _rates(self, xi: np.ndarray, y: np.ndarray, flow: float, current: float, salt: float,
               segment: int | None = None) -> np.ndarray:
        inverse, carried, permeance = self._blocks(y[0], xi, segment)
        x_s = (salt - (carried[0] * flow + carried[1] * current)) / permeance
        x_p = inverse[0, 0] * flow + inverse[0, 1] * current - carried[0] * x_s
        e = inverse[1, 0] * flow + inverse[1, 1] * current - carried[1] * x_s
        du = -self.length * x_s / self.rt_nu
        dq = (-self.length * x_p + self.rt * self.total_concentration * np.exp(y[0]) * du) / self.p_scale
        return np.array([du, -self.length * e / self.v_scale, dq])

    def _drives(self, p: np.ndarray, mode: str, given: float) -> tuple[float, float, float, float]:
        """(Q, I, J_s, Delta V) from the scaled parameters."""
        flow, salt = p[0] * self.f_scale[0], p[2] * self.f_scale[2]
        if mode == "voltage":
            return flow, p[1] * self.f_scale[1], salt, given
        return flow, given, salt, p[1] * self.v_scale

    def _bvp(self, mode: str, given: float, dp: float, start: Profile) -> Any:
        if len(self.bounds) > 2:
            from edl_solver.channel.wall_path import segmented_bvp

            return segmented_bvp(self, mode, given, dp, start, BVP_TOLERANCE, BVP_NODES)
        from scipy.integrate import solve_bvp

        def rates(xi: np.ndarray, y: np.ndarray, p: np.ndarray) -> np.ndarray:
            flow, current, salt, _ = self._drives(p, mode, given)
            return self._rates(xi, y, flow, current, salt)

        def ends(ya: np.ndarray, yb: np.ndarray, p: np.ndarray) -> np.ndarray:
            _, current, _, voltage = self._drives(p, mode, given)
            return np.array([ya[0] - self.u_ends[0], ya[1], ya[2], yb[0] - self.u_ends[1],
                             yb[1] - (voltage + self.access * current) / self.v_scale, yb[2] - dp / self.p_scale])

        second = start.fluxes[1] / self.f_scale[1] if mode == "voltage" else start.voltage / self.v_scale
        p0 = np.array([start.fluxes[0] / self.f_scale[0], second, start.fluxes[2] / self.f_scale[2]])
        with np.errstate(all="ignore"):
            return solve_bvp(rates, ends, start.xi, start.y, p0, tol=BVP_TOLERANCE, max_nodes=BVP_NODES)

    def _linear_start(self, mode: str, given: float, dp: float) -> Profile:
        """Fluxes from the resistance M^-1 integrated along x with c linear in x; linear profiles."""
        xi = self.mesh
        c = np.exp(self.u_ends[0]) + xi * (np.exp(self.u_ends[1]) - np.exp(self.u_ends[0]))
        resistance = np.linalg.inv(self._matrices(np.log(c), xi))
        weights = np.gradient(xi) * self.length
        weights[[0, -1]] = 0.5 * np.diff(xi)[[0, -1]] * self.length
        total = np.einsum("k,kij->ij", weights, resistance)
        osmotic = self.rt * self.total_concentration * (c[-1] - c[0])
        b = np.array([-dp + osmotic, 0.0, -self.rt_nu * (self.u_ends[1] - self.u_ends[0])])
        system = np.zeros((3, 4))
        system[:, :3], system[1, 1], system[1, 3] = total, total[1, 1] + self.access, 1.0
        scales = np.array([*self.f_scale, self.v_scale])
        system = system * scales
        fixed = 3 if mode == "voltage" else 1
        free = [j for j in range(4) if j != fixed]
        unknowns = np.empty(4)
        unknowns[free] = np.linalg.solve(system[:, free], b - system[:, fixed] * given / scales[fixed]) * scales[free]
        unknowns[fixed] = given
        channel_voltage = unknowns[3] + self.access * unknowns[1]
        y = np.array([np.log(c), xi * channel_voltage / self.v_scale, xi * dp / self.p_scale])
        return Profile(xi, y, unknowns[:3], float(unknowns[3]))

    def _attempt(self, mode: str, given: float, dp: float, start: Profile) -> tuple[OperatingPoint, Profile | None]:
        """One solve from ``start``: the point (failed when the solve fails or leaves the table) and its
        profile to continue from (None when failed)."""
        sol = self._bvp(mode, given, dp, start)
        self.crowded = sol.status == 1  # the mesh reached BVP_NODES (``_march`` gives up after CROWDED_STEPS)
        low, high = self.spline.u_range
        if sol.status != 0 or not np.all(np.isfinite(sol.y)):
            return self._failed(mode, given, dp, f"no convergence at {mode} {given:.6g}: {sol.message}"), None
        if sol.y[0].min() < low - 1e-9 or sol.y[0].max() > high + 1e-9:
            return self._failed(mode, given, dp, f"the concentration ({np.exp(sol.y[0].min()):.3g} to "
                                f"{np.exp(sol.y[0].max()):.3g} mol/m^3) {LEAVES_TABLE} ({math.exp(low):.3g} to "
                                f"{math.exp(high):.3g} mol/m^3)"), None
        flow, current, salt, voltage = self._drives(sol.p, mode, given)
        error = float(np.max(sol.rms_residuals)) if len(sol.rms_residuals) else 0.0
        x = sol.x * self.length
        potential = -self.left_access * current + sol.y[1] * self.v_scale
        point = OperatingPoint(voltage=float(voltage), current=float(current), volume_flow=float(flow),
                               salt_flux=float(salt), pressure_difference=dp,
                               channel_voltage=float(voltage + self.access * current), position=x,
                               concentration=np.exp(sol.y[0]), potential=potential, pressure=sol.y[2] * self.p_scale,
                               status=CONVERGED_WORD, message=f"converged (collocation): {sol.niter} iterations, "
                               f"{sol.x.size} nodes", iterations=int(sol.niter), quadrature_error=error)
        # the next step starts from a coarsened mesh, not this one: solve_bvp only adds nodes, and a continuation
        # that carried its refined meshes on would solve ever larger systems
        mesh = _coarse_mesh(sol.x, sol.y[0])
        start = np.array([np.interp(mesh, sol.x, row) for row in sol.y])
        return point, Profile(mesh, start, np.array([flow, current, salt]), float(voltage))

    def _failed(self, mode: str, given: float, dp: float, message: str) -> OperatingPoint:
        nothing = np.array([])
        return OperatingPoint(voltage=given if mode == "voltage" else math.nan,
                              current=given if mode == "current" else math.nan, volume_flow=math.nan,
                              salt_flux=math.nan, pressure_difference=dp, channel_voltage=math.nan, position=nothing,
                              concentration=nothing, potential=nothing, pressure=nothing, status=FAILED_WORD,
                              message=message, quadrature_error=math.nan)

    def solve(self, dp: float, voltage: float | None, current: float | None, guess: Any = None) -> OperatingPoint:
        """The operating point at the drive: directly from a linear start, else by continuation from zero."""
        mode, given = ("voltage", voltage) if voltage is not None else ("current", current)
        point, _ = self._attempt(mode, given, dp, self._linear_start(mode, given, dp))
        if point.status == CONVERGED_WORD or (given == 0.0 and dp == 0.0):
            return point
        _, profile = self._attempt(mode, 0.0, 0.0, self._linear_start(mode, 0.0, 0.0))
        return self._march(mode, (0.0, 0.0, profile), given, dp) if profile is not None else point

    def unknowns(self, point: OperatingPoint, mode: str = "voltage") -> Profile:
        """The profile of a converged point, to start a nearby solve from."""
        y = np.array([np.log(point.concentration), (point.potential - point.potential[0]) / self.v_scale,
                      point.pressure / self.p_scale])
        fluxes = np.array([point.volume_flow, point.current, point.salt_flux])
        xi = point.position / self.length
        mesh = _coarse_mesh(xi, y[0])
        return Profile(mesh, np.array([np.interp(mesh, xi, row) for row in y]), fluxes, point.voltage)

    def continue_to(self, mode: str, anchors: list[tuple[float, float, Profile]], given: float,
                    dp: float) -> OperatingPoint:
        """The point at (given, dp) from the last converged anchor (given, dp, profile)."""
        return self._march(mode, anchors[-1], given, dp)

    def _march(self, mode: str, anchor: tuple[float, float, Profile], given: float, dp: float) -> OperatingPoint:
        """Continuation along the straight path from the anchor to (given, dp): a failed step is halved, a
        successful one doubled."""
        g0, p0, profile = anchor
        done, step, halvings, crowded = 0.0, 1.0, 0, 0
        point = self._failed(mode, given, dp, "no step taken")
        while done < 1.0:
            ahead = min(1.0, done + step)
            trial, found = self._attempt(mode, g0 + ahead * (given - g0), p0 + ahead * (dp - p0), profile)
            if found is None:
                if LEAVES_TABLE in trial.message:  # a converged state outside the table: no shorter step brings it in
                    return self._failed(mode, given, dp, f"continuation stopped at {done:.3g} of the way: "
                                        f"{trial.message}")
                halvings, crowded = halvings + 1, crowded + self.crowded
                step *= 0.5
                if halvings > CONTINUATION_HALVINGS or crowded >= CROWDED_STEPS:
                    return self._failed(mode, given, dp, f"continuation stopped at {done:.3g} of the way: "
                                        f"{trial.message}")
                continue
            done, profile, point, step = ahead, found, trial, 2.0 * step
        return point
