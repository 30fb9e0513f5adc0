"""Weighted least squares over the parameters (scipy ``least_squares``, trust-region reflective, with bounds).

The optimiser works in scaled coordinates z: the logarithm of a positive quantity (height, site density,
capacitance, ...), so that steps are relative and the sign cannot flip, and x / s for the others (charge, zeta,
pK, slip length) with s the magnitude of the start value or a typical size. The residual of point j is
(model - measured) / sigma_j with sigma_j the given uncertainty or, without one, the root mean square of the
data set's values (so that data sets of different units weigh alike; the covariance is then scaled by the
reduced chi^2). The Jacobian is forward differences in z: the k shifted parameter vectors for all points are one
batch of forward solves (``Forward.evaluate``), the unshifted values reused from the residual call.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.paths import PATH_UNITS

from .forward import Forward
from .problem import Dataset, is_positive_path

#: Typical sizes (SI) of the inputs fitted on a linear scale, by the last part of the path.
_TYPICAL = {"charge_density": 1e-3, "zeta": 0.025, "pK": 1.0, "pH": 1.0, "slip_length": 1e-9, "gate_voltage": 0.1,
            "field": 1e3, "pressure_gradient": 1e6, "viscoelectric_coefficient": 1e-2}
#: Default bounds (SI) of inputs that have natural ones.
_BOUNDS = {"slip_length": (0.0, math.inf), "electrolyte.pH": (0.0, 14.0)}
#: Forward-difference step in the scaled coordinates (the model is smooth to ~1e-10 relative there).
STEP = 1e-6


@dataclass(frozen=True)
class Scaling:
    """The scaled coordinate of each parameter: ``log`` (z = ln x) or linear (z = x / scale)."""

    log: np.ndarray
    scale: np.ndarray

    def to_x(self, z: np.ndarray) -> np.ndarray:
        return np.where(self.log, np.exp(np.where(self.log, z, 0.0)), z * self.scale)

    def to_z(self, x: np.ndarray) -> np.ndarray:
        return np.where(self.log, np.log(np.where(self.log, np.abs(x), 1.0)), x / self.scale)

    def dx_dz(self, z: np.ndarray) -> np.ndarray:
        return np.where(self.log, self.to_x(z), self.scale)


def make_scaling(paths: Sequence[str], start: np.ndarray) -> Scaling:
    """Log for positive quantities, else linear with the start value's magnitude or a typical size."""
    log = np.array([is_positive_path(p) for p in paths])
    for path, value, positive in zip(paths, start, log):
        if positive and not value > 0:
            raise InputError(f"parameters[{path!r}]: start value {value!r} is not positive, expected a value > 0 "
                             f"in {PATH_UNITS[path]}")
    typical = np.array([_TYPICAL.get(p.rsplit(".", 1)[-1], 1.0) for p in paths])
    scale = np.where(np.abs(start) > 0, np.maximum(np.abs(start), typical * 1e-3), typical)
    return Scaling(log=log, scale=scale)


def scaled_bounds(paths: Sequence[str], scaling: Scaling, bounds: Mapping[str, Sequence[float]] | None
                  ) -> tuple[np.ndarray, np.ndarray]:
    """Lower and upper bounds in z from the user's SI bounds (``bounds``) and the natural ones."""
    from edl_solver.inputs.units import to_si

    bounds = dict(bounds or {})
    unknown = [key for key in bounds if key not in paths]
    if unknown:
        raise InputError(f"bounds: {unknown[0]!r} is not one of the parameters, expected one of {', '.join(paths)}")
    lo, hi = np.full(len(paths), -np.inf), np.full(len(paths), np.inf)
    for k, path in enumerate(paths):
        pair = bounds.get(path, _BOUNDS.get(path, _BOUNDS.get(path.rsplit(".", 1)[-1])))
        if pair is None:
            continue
        low, high = (to_si(v, PATH_UNITS[path], f"bounds[{path!r}]") if v is not None else None for v in pair)
        low = -math.inf if low is None else low
        high = math.inf if high is None else high
        if scaling.log[k]:
            lo[k] = math.log(low) if low > 0 else -np.inf
            hi[k] = math.log(high) if high > 0 else -np.inf
        else:
            lo[k], hi[k] = low / scaling.scale[k], high / scaling.scale[k]
        if not lo[k] < hi[k]:
            raise InputError(f"bounds[{path!r}]: {pair!r} is not an interval, expected (lower, upper) with lower < "
                             "upper (and upper > 0 for a positive quantity)")
    return lo, hi


def residual_scale(datasets: Sequence[Dataset]) -> np.ndarray:
    """The divisor of each residual: its uncertainty, or the root mean square of its data set's values."""
    sigma = []
    for one in datasets:
        if one.uncertainty is not None:
            sigma.append(one.uncertainty)
        else:
            rms = float(np.sqrt(np.mean(one.values**2)))
            sigma.append(np.full(one.size, rms if rms > 0 else 1.0))
    return np.concatenate(sigma)


class Objective:
    """Weighted residuals and their Jacobian in the scaled coordinates, counting batches."""

    def __init__(self, forward: Forward, datasets: Sequence[Dataset], scaling: Scaling) -> None:
        self.forward = forward
        self.scaling = scaling
        self.measured = np.concatenate([one.values for one in datasets])
        self.sigma = residual_scale(datasets)
        self.absolute = all(one.uncertainty is not None for one in datasets)
        self._last: tuple[np.ndarray, np.ndarray] | None = None

    def residuals(self, z: np.ndarray) -> np.ndarray:
        model = self.forward.evaluate(self.scaling.to_x(z)[None, :])[0]
        r = (model - self.measured) / self.sigma
        self._last = (np.array(z, dtype=float), r)
        return r

    def jacobian(self, z: np.ndarray) -> np.ndarray:
        """d residuals / dz by forward differences: one batch of the shifted vectors (and the unshifted one when
        the last residual call was elsewhere)."""
        z = np.asarray(z, dtype=float)
        k = z.size
        shifted = z[None, :] + STEP * np.eye(k)
        cached = self._last is not None and np.array_equal(self._last[0], z)
        rows = shifted if cached else np.vstack([shifted, z[None, :]])
        model = self.forward.evaluate(self.scaling.to_x(rows))
        r_all = (model - self.measured) / self.sigma
        base = self._last[1] if cached else r_all[-1]
        return ((r_all[:k] - base) / STEP).T


def minimise(objective: Objective, z0: np.ndarray, lo: np.ndarray, hi: np.ndarray, free: np.ndarray | None = None,
             max_nfev: int = 100) -> object:
    """scipy ``least_squares`` from ``z0``; with ``free`` only those coordinates move (the profile likelihood)."""
    from scipy.optimize import least_squares

    free = np.ones(z0.size, dtype=bool) if free is None else free
    fixed = np.array(z0, dtype=float)

    def full(zf: np.ndarray) -> np.ndarray:
        z = fixed.copy()
        z[free] = zf
        return z

    low, high = lo[free], hi[free]
    margin = 1e-9 * np.maximum(1.0, np.abs(np.where(np.isfinite(low), low, 0.0)))
    inside = np.clip(z0[free], np.where(np.isfinite(low), low + margin, -np.inf),
                     np.where(np.isfinite(high), high - margin, np.inf))  # least_squares starts strictly inside
    result = least_squares(lambda zf: objective.residuals(full(zf)), inside,
                           jac=lambda zf: objective.jacobian(full(zf))[:, free], bounds=(low, high),
                           method="trf", x_scale=1.0, ftol=1e-12, xtol=1e-11, gtol=1e-12, max_nfev=max_nfev)
    result.z_full = full(result.x)
    return result
