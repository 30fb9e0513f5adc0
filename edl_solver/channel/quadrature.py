"""The along-channel problem for different reservoirs: three conditions on the three fluxes, integrated in
u = ln c by a quadrature exact for exponential concentration layers.

The model and its signs are in ``edl_solver.channel.model``; the nonlinear solve of these conditions is in
``edl_solver.channel.path``.

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

Quadrature: N = 1024 equal intervals in u; on each, X_s and the other forces are taken linear in u,
dx/du = -RT sum(nu)/X_s is integrated exactly (logarithmic mean) and E and X_P are taken at the
dx-weighted centroid. The rule is exact for linear data (an exponential boundary layer, X_s nearly zero
at one end, costs no refinement) and symmetric in the ends of an interval, so its error runs in h^2, h^4:
the sums on all nodes and on every other node are Richardson-extrapolated (fourth order where the data
are smooth; second order inside a thin layer). The error is estimated from the same rule on a grid twice
as coarse; a point whose estimate exceeds ``path.QUADRATURE_LIMIT``, or whose concentration has a plateau
inside the channel (an interior extreme of J(u), which the linear rule does not resolve), is reported as
failed rather than returned as converged.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from edl_solver.channel.relations import SaltRatios, reduce_matrices
from edl_solver.constants import FARADAY
from edl_solver.errors import ConvergenceError

if TYPE_CHECKING:
    from edl_solver.channel.model import Channel, IonMatrixSpline

__all__ = ["LOOSE_TOLERANCE", "QUADRATURE_INTERVALS", "STAGNATION", "T_LIMIT", "PathProblem", "State"]

#: Intervals in ln c of the quadrature along the channel (second order, exact for exponential layers).
QUADRATURE_INTERVALS = 1024
#: Converged at round-off when the fluxes move less than this (relative) and the residual is below
#: LOOSE_TOLERANCE: in a concentration layer the residual cannot go lower (see ``PathProblem._stagnated``).
STAGNATION = 1e-11
LOOSE_TOLERANCE = 1e-6
#: Bound on t = ln(distance of J_s from J*) (keeps exp(t) a normal float).
T_LIMIT = 600.0


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
class State:
    """Fluxes, voltage and the integrals along the channel for one vector of unknowns."""

    flow: float
    current: float
    salt: float
    voltage: float
    dx: np.ndarray  # length of each u-interval, m
    within: np.ndarray  # (X_P, E) at the dx-weighted centroid of each interval, shape (2, N)
    length: float
    integral: np.ndarray  # (int X_P dx, int E dx)


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


class PathProblem:
    """Different reservoirs: the three conditions integrated in u = ln c (see the module docstring).

    Unknowns z = (Q / Q0, I / I0 or Delta V / (kT/e), t) with J_s = J* - s j_0 exp(t); Q0, I0 and j_0 are
    the fluxes of a uniform channel at the mean concentration under unit forces. The residuals, the start
    and the measures of change live here; ``path.Path`` solves them.
    """

    def __init__(self, channel: Channel, spline: IonMatrixSpline, basis: np.ndarray, rt: float, access: float):
        self.channel, self.rt, self.access = channel, rt, access
        self.spline, self.basis = spline, basis
        salt = SaltRatios(channel.case)
        self.rt_nu = rt * salt.total_nu
        self.total_concentration = salt.total_concentration
        cl, cr = channel.left_concentration, channel.right_concentration
        self.osmotic = rt * salt.total_concentration * (cr - cl)  # RT sum_i (c_iR - c_iL), Pa
        self.u = _nodes(math.log(cl), math.log(cr))
        self.du = {step: np.diff(self.u[::step]) for step in (1, 2, 4)}
        self.sign = 1.0 if cr > cl else -1.0
        m = reduce_matrices(spline(self.u), basis)
        self.mid_matrix = reduce_matrices(spline(np.array([0.5 * (self.u[0] + self.u[-1])])), basis)[0]
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

    def _state(self, z: np.ndarray, mode: str, given: float, step: int = 1) -> State:
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
        return State(flow=flow, current=current, salt=extreme - s * delta, voltage=voltage, dx=dx, within=within,
                      length=float(length), integral=integral)

    def _intervals(self, x_s: np.ndarray, forces: np.ndarray, du: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Length of each interval, dx = -RT sum(nu) du / Lambda(X_s), and (X_P, E) at its dx-centroid."""
        mean, centroid = _log_mean(x_s[:-1], x_s[1:])
        return (-self.rt_nu * du) / mean, forces[:, :-1] + centroid * (forces[:, 1:] - forces[:, :-1])

    def _residual(self, z: np.ndarray, mode: str, given: float, dp: float, step: int = 1
                  ) -> tuple[np.ndarray, State]:
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

    def _scale(self, dp: float, mode: str, given: float) -> np.ndarray:
        """Scale of each residual: 1 plus the size of its drive in its unit."""
        return np.array([1.0, 1.0 + abs(given) / self.v_scale if mode == "voltage" else 1.0,
                         1.0 + abs(dp - self.osmotic) / self.p_scale])

    def _plateau(self, st: State) -> bool:
        """True when J(u) has its extreme inside the channel and X_s there is far below its neighbours'
        (a plateau of c inside the channel, a quadratic minimum the linear interval rule misses)."""
        salt = self.carried[0] * st.flow + self.carried[1] * st.current
        k = int(np.argmin(salt) if self.sign > 0 else np.argmax(salt))
        if k in (0, len(salt) - 1):
            return False
        gap = self.sign * (salt[[k - 1, k + 1]] - salt[k])
        delta = self.sign * (salt[k] - st.salt)
        return bool(delta < 0.1 * gap.max())

    def _change(self, old: State, new: State) -> float:
        """Largest change of Q, I, J_s and Delta V between two states, relative to their size and scale."""
        before = np.array([old.flow, old.current, old.salt, old.voltage])
        after = np.array([new.flow, new.current, new.salt, new.voltage])
        size = np.maximum(np.abs(before), np.array([*self.f_scale, self.v_scale]))
        return float(np.max(np.abs(after - before) / size))

    def _stagnated(self, old: State, new: State, residual: np.ndarray, scale: np.ndarray) -> bool:
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

    def _left_access(self) -> float:
        """The left end's share of the access resistance: R_L / (R_L + R_R) = c_R / (c_L + c_R)."""
        cl, cr = self.channel.left_concentration, self.channel.right_concentration
        return self.access * cr / (cl + cr)
