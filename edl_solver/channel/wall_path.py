"""The along-channel boundary-value problem of a channel whose wall is piecewise in x (``wall_segments``).

The local relations jump where the wall does, so the rates of ``taper_path`` are discontinuous there. Rather than
letting a collocation interval straddle a jump, each segment k (xi from a_k to b_k) gets its own copy of the state
y_k(t) = y(a_k + t (b_k - a_k)) on a common t in [0, 1], with the rates scaled by (b_k - a_k): a smooth problem of
3 n states with the channel's six end conditions and continuity of (ln c, V, p) at each of the n - 1 inner ends
(3 (n - 1) conditions), the fluxes being uniform parameters (Ascher, Mattheij & Russell 1995, Numerical Solution of
Boundary Value Problems for ODEs, multipoint problems, from memory).
"""

from __future__ import annotations

import itertools
from types import SimpleNamespace
from typing import Any

import numpy as np

__all__ = ["segmented_bvp"]


def _stacked_start(bounds: np.ndarray, xi: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The common mesh in t (every start node mapped into its segment's t) and the stacked states on it."""
    t = [np.array([0.0, 1.0])]
    for a, b in itertools.pairwise(bounds):
        inside = xi[(xi >= a) & (xi <= b)]
        t.append((inside - a) / (b - a))
    mesh = np.unique(np.clip(np.concatenate(t), 0.0, 1.0))
    # nodes of two segments that coincide up to rounding (a mesh mapped back and forth) would make it singular
    mesh = mesh[np.concatenate(([True], np.diff(mesh) > 1e-9))]
    mesh[-1] = 1.0
    rows = [np.interp(a + mesh * (b - a), xi, row) for a, b in itertools.pairwise(bounds) for row in y]
    return mesh, np.array(rows)


def segmented_bvp(path: Any, mode: str, given: float, dp: float, start: Any, tol: float,
                  max_nodes: int) -> SimpleNamespace:
    """``TaperPath._bvp`` for a piecewise wall: the stacked problem solved by ``solve_bvp`` and mapped back to xi
    (one node per inner end); ``tol`` and ``max_nodes`` are ``solve_bvp``'s. Returns what ``solve_bvp`` does
    (status, message, x, y, p, rms_residuals, niter)."""
    from scipy.integrate import solve_bvp

    bounds = path.bounds
    n = len(bounds) - 1
    widths = np.diff(bounds)

    def rates(t: np.ndarray, y: np.ndarray, p: np.ndarray) -> np.ndarray:
        flow, current, salt, _ = path._drives(p, mode, given)
        return np.vstack([widths[k] * path._rates(bounds[k] + t * widths[k], y[3 * k:3 * k + 3], flow, current,
                                                  salt, k) for k in range(n)])

    def ends(ya: np.ndarray, yb: np.ndarray, p: np.ndarray) -> np.ndarray:
        _, current, _, voltage = path._drives(p, mode, given)
        last = yb[3 * n - 3:]
        outer = [ya[0] - path.u_ends[0], ya[1], ya[2], last[0] - path.u_ends[1],
                 last[1] - (voltage + path.access * current) / path.v_scale, last[2] - dp / path.p_scale]
        inner = [ya[3 * k:3 * k + 3] - yb[3 * k - 3:3 * k] for k in range(1, n)]
        return np.concatenate((outer, *inner))

    mesh, y0 = _stacked_start(bounds, start.xi, start.y)
    second = start.fluxes[1] / path.f_scale[1] if mode == "voltage" else start.voltage / path.v_scale
    p0 = np.array([start.fluxes[0] / path.f_scale[0], second, start.fluxes[2] / path.f_scale[2]])
    with np.errstate(all="ignore"):
        sol = solve_bvp(rates, ends, mesh, y0, p0, tol=tol, max_nodes=max_nodes)
    xs = [bounds[k] + sol.x[1 if k else 0:] * widths[k] for k in range(n)]
    ys = [sol.y[3 * k:3 * k + 3, 1 if k else 0:] for k in range(n)]
    return SimpleNamespace(status=sol.status, message=sol.message, x=np.concatenate(xs), y=np.concatenate(ys, axis=1),
                           p=sol.p, rms_residuals=sol.rms_residuals, niter=sol.niter)
