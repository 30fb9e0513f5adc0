"""Solving the along-channel problem: the operating point of a channel at one drive.

The conditions and their quadrature are in ``edl_solver.channel.quadrature``; the model and its signs in
``edl_solver.channel.model``.

Solver: Newton's method (finite-difference Jacobian, then Broyden updates while full steps succeed,
backtracking line search on the scaled residuals), MINPACK's hybrid method as a fallback, and
continuation in the drive: a point without a nearby solution is reached from zero drive (no voltage or
current, no pressure difference: pure diffusion) in adaptive steps; an I-V curve is solved outward from
its smallest voltage, each point started from the extrapolation of the last two. Where a concentration
layer forms, its position (t) is fixed only to round-off while the fluxes are not: such a point is
accepted once the fluxes stop moving (1e-11) with scaled residuals below 1e-6.

Equal reservoirs (c_L = c_R): c is uniform, X_s = 0 and the forces are uniform: F = M X, exactly, with M
from a direct solve.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np

from edl_solver.channel.point import CONVERGED_WORD, FAILED_WORD, OperatingPoint
from edl_solver.channel.quadrature import (
    LOOSE_TOLERANCE,
    QUADRATURE_INTERVALS,
    STAGNATION,
    T_LIMIT,
    PathProblem,
    State,
)

if TYPE_CHECKING:
    from edl_solver.channel.model import Channel

__all__ = ["Path", "Uniform"]

#: Newton tolerance on the scaled residuals (length: ln L; voltage: kT/e; pressure: osmotic pressure).
NEWTON_TOLERANCE = 1e-11
NEWTON_ITERATIONS = 60
#: Function evaluations of the hybrid method (the fallback when Newton fails).
HYBRID_EVALUATIONS = 300
#: Smallest continuation step, as a fraction of the drive still to go.
MIN_CONTINUATION_STEP = 1e-3
#: Estimated quadrature error above which an operating point is reported as failed.
QUADRATURE_LIMIT = 1e-3


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


class Uniform:
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


@dataclass
class Found:
    """The outcome of one nonlinear solve at a given drive."""

    ok: bool
    z: np.ndarray
    state: State
    residual: np.ndarray
    iterations: int
    jacobian: np.ndarray | None
    method: str
    mode: str
    given: float


class Path(PathProblem):
    """Different reservoirs: the operating point from the three conditions of ``PathProblem`` by Newton's
    method, the hybrid method and continuation in the drive (see the module docstring)."""

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
               state: Found) -> Found:
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

    def _converge(self, dp: float, mode: str, given: float, z: np.ndarray) -> Found:
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
        return Found(True, hybrid.x, st, residual, found.iterations + int(hybrid.nfev), None, "hybrid method", mode,
                      given)

    def _newton(self, dp: float, mode: str, given: float, z: np.ndarray) -> Found:
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
        return Found(ok, z, st, residual, iterations, jacobian, "Newton", mode, given)

    def _finish(self, found: Found, dp: float) -> OperatingPoint:
        """The operating point with its status: the quadrature error estimated, a plateau checked."""
        mode, given = found.mode, found.given
        scale = self._scale(dp, mode, given)
        worst = float(np.max(np.abs(found.residual / scale)))
        if not found.ok:
            return self._point(found, dp, FAILED_WORD, f"no convergence at {mode} {given:.6g} after "
                               f"{found.iterations} iterations (scaled residual {worst:.2g})", math.nan)
        error = self._quadrature_error(found, mode, given, dp)
        plateau = self._plateau(found.state)
        if error > QUADRATURE_LIMIT or plateau:
            why = "an interior concentration plateau" if plateau else f"quadrature error {error:.2g}"
            return self._point(found, dp, FAILED_WORD, f"{why} above what {QUADRATURE_INTERVALS} intervals in ln c "
                               "resolve", error)
        return self._point(found, dp, CONVERGED_WORD, f"converged ({found.method}): {found.iterations} iterations, "
                           f"scaled residual {worst:.1g}", error)

    def _quadrature_error(self, found: Found, mode: str, given: float, dp: float) -> float:
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

    def _point(self, found: Found, dp: float, status: str, message: str, error: float) -> OperatingPoint:
        st = found.state
        if status == FAILED_WORD:
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
