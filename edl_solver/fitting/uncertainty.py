"""How well the data fix the parameters: covariance from the Jacobian, identifiability, profile likelihood.

The covariance is (J^T J)^-1 of the weighted residuals (Gauss-Newton, common practice), scaled by the reduced
chi^2 when the data carry no uncertainties (their scatter then estimates the noise). A parameter is not
identifiable when the Jacobian has a (nearly) flat direction: in the column-normalised Jacobian a singular
value below ``FLAT`` times the largest (for two parameters, a correlation above about 0.999998), or a direction
along which the data leave the scaled parameters (the logarithm of a positive quantity) undetermined by more
than ``LOOSE`` standard deviations' worth, or a parameter that moves no residual at all; the warning names the
parameters that make up that direction.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from .least_squares import Objective, minimise

#: Smallest over largest singular value of the column-normalised Jacobian below which a direction is flat.
FLAT = 1e-3
#: Standard deviation along the flattest direction, in the scaled coordinates (a factor e for a positive quantity),
#: above which the data do not fix that combination of parameters.
LOOSE = 1.0
#: Share of the flat direction a parameter must carry to be named in the warning.
_NAMED = 0.2


class IdentifiabilityWarning(UserWarning):
    """A parameter (or a combination of them) is not fixed by the data."""


def covariance(jac_z: np.ndarray, dx_dz: np.ndarray, scale: float) -> np.ndarray:
    """Covariance of the parameters (SI) from the Jacobian in the scaled coordinates, times ``scale``; a
    direction the data do not see at all gives infinite variances to the parameters along it."""
    _, s, vt = np.linalg.svd(jac_z, full_matrices=False)
    seen = s > (s.max() if s.size else 0.0) * 1e-14
    cov_z = (vt[seen].T / s[seen] ** 2) @ vt[seen]
    blind = np.any(np.abs(vt[~seen]) > 1e-12, axis=0) if (~seen).any() else np.zeros(s.size, dtype=bool)
    cov_z[blind, :] = np.inf
    cov_z[:, blind] = np.inf
    return cov_z * np.outer(dx_dz, dx_dz) * scale


def correlation(cov: np.ndarray) -> np.ndarray:
    sd = np.sqrt(np.diag(cov))
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(sd, sd)
    np.fill_diagonal(corr, 1.0)
    return corr


def identifiability(jac_z: np.ndarray, names: Sequence[str], scale: float = 1.0) -> list[str]:
    """Warnings naming the parameters of flat directions of the Jacobian (none when all are identifiable);
    ``scale`` multiplies the covariance (the reduced chi^2 without uncertainties)."""
    norms = np.linalg.norm(jac_z, axis=0)
    warnings = [f"{name} is not identifiable from the data: the model does not change with it"
                for name, norm in zip(names, norms) if not norm > 1e-12 * max(norms.max(), 1e-300)]
    if warnings or len(names) < 2:
        return warnings
    _, s, vt = np.linalg.svd(jac_z / norms, full_matrices=False)
    ratio = s[-1] / s[0]
    spread = math.sqrt(scale) * float(np.linalg.norm(vt[-1] / norms)) / s[-1] if s[-1] > 0 else math.inf
    if ratio < FLAT or (ratio < 0.1 and spread > LOOSE):
        # named along the direction of the normalised columns: it does not depend on how each parameter is scaled
        named = [name for name, part in zip(names, vt[-1]) if abs(part) >= _NAMED]
        combo = " ".join(f"{part:+.3g} {name}" for name, part in zip(names, vt[-1]) if abs(part) >= _NAMED)
        warnings.append(f"{' and '.join(named)} {'are' if len(named) > 1 else 'is'} not identifiable from the data: "
                        f"the fit is nearly flat along {combo} (relative to each parameter's effect; smallest/largest "
                        f"singular value {ratio:.2g}, standard deviation along it {spread:.2g} in scaled parameters), "
                        "so only a combination is determined")
    return warnings


def profile_interval(objective: Objective, z_best: np.ndarray, k: int, se_z: float, lo: np.ndarray, hi: np.ndarray,
                     delta: float) -> tuple[float, float]:
    """The profile-likelihood interval of parameter ``k`` (SI): where chi^2, minimised over the other parameters,
    rises by ``delta`` above its minimum (1 for one standard error of absolute uncertainties; the reduced
    chi^2 otherwise). A side that does not rise within 64 standard errors (or a bound) is infinite."""
    from scipy.optimize import brentq

    free = np.ones(z_best.size, dtype=bool)
    free[k] = False
    chi2_min = float(np.sum(objective.residuals(z_best) ** 2))
    step = se_z if math.isfinite(se_z) and se_z > 0 else 0.1

    def rise(value: float) -> float:
        z = z_best.copy()
        z[k] = value
        if free.any():
            z = minimise(objective, z, lo, hi, free=free, max_nfev=50).z_full
        return float(np.sum(objective.residuals(z) ** 2)) - chi2_min - delta

    ends = []
    for sign in (-1.0, 1.0):
        inner, t, end = z_best[k], 1.0, None
        while t <= 64:
            outer = float(np.clip(z_best[k] + sign * t * step, lo[k], hi[k]))
            if rise(outer) > 0:
                end = brentq(rise, inner, outer, xtol=1e-6 * step)
                break
            if outer in (lo[k], hi[k]):
                break
            inner, t = outer, 2 * t
        ends.append(end)
    x = [objective.scaling.to_x(_at(z_best, k, e))[k] if e is not None else sign * math.inf
         for e, sign in zip(ends, (-1.0, 1.0))]
    if objective.scaling.log[k] and ends[0] is None:
        x[0] = 0.0
    return float(x[0]), float(x[1])


def _at(z: np.ndarray, k: int, value: float) -> np.ndarray:
    out = z.copy()
    out[k] = value
    return out
