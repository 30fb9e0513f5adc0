"""The finite-element peer for the rectangle: Poisson-Boltzmann and Stokes across W x H with scikit-fem.

Independent of edl_solver's numerics (it imports nothing from the package). Dimensionless: lengths in
h = min(W, H)/2, potential in kT/e, velocities in eps kT E / (e eta) (EO) and h^2 (-dp/dz) / eta (pressure).
The quarter [0, a] x [0, b] (a = W/(2h), b = H/(2h)) with symmetry (natural BC) on x = 0 and y = 0 and the
walls at x = a, y = b. Q2 (nine-node quadrilateral, biquadratic) elements on a tensor mesh graded toward the
walls: at distance d from a wall the spacing grows like sqrt(d^2 + delta^2), delta the smallest screening
length (Debye length, or the inner Gouy-Chapman length 2 exp(-|zeta|/2)/kappa in PB), by the sinh map
d(s) = L sinh(c s) / sinh(c), c = asinh(L / delta).

Problems:
  equilibrium  DH: -lap psi + k^2 psi = 0;  PB (z:z, here 1:1): -lap psi + k^2 sinh(psi) = 0 (Newton);
               psi = zeta on the walls.
  EO flow      -lap u = k^2 rho_hat(psi), rho_hat = -psi (DH) or -sinh(psi) (PB), u = 0 on the walls;
               then u = psi - zeta (the Helmholtz-Smoluchowski sign), checked.
  pressure     -lap u_p = 1, u_p = 0 on the walls.
Reported: <u> (the mean EO velocity), <psi - zeta> (its check), <u_p>, the DOFs per field.

Requires scikit-fem (the optional extra `bench`: pip install -e .[bench]).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from skfem import Basis, BilinearForm, ElementQuad2, Functional, LinearForm, MeshQuad, condense, solve
from skfem.helpers import dot, grad


@dataclass(frozen=True)
class FemResult:
    """Means over the section and the size of one FE solve."""

    mean_eo: float          # <u>, from the Stokes solve
    mean_psi_minus_zeta: float
    mean_pressure: float    # <u_p>
    dofs: int               # unknowns per scalar field (Q2 nodes of the quarter)
    newton_iterations: int


def graded_points(length: float, delta: float, cells: int) -> np.ndarray:
    """Points on [0, length], the wall at `length`; spacing ~ sqrt(d^2 + delta^2) at distance d from it."""
    c = math.asinh(length / max(delta, 1e-300)) if delta < length else 1e-9
    s = np.linspace(1.0, 0.0, cells + 1)
    d = length * np.sinh(c * s) / math.sinh(c)
    points = length - d
    points[0], points[-1] = 0.0, length
    return points


def screening_length(kappa_h: float, zeta: float, model: str) -> float:
    """The thinnest layer to resolve: 1/kappa in DH, the inner Gouy-Chapman length in PB."""
    inner = 2.0 * math.exp(-abs(zeta) / 2.0) if model == "pb" else 1.0
    return min(1.0, inner) / kappa_h


@BilinearForm
def _laplace(u, v, w):
    return dot(grad(u), grad(v))


@BilinearForm
def _mass(u, v, w):
    return u * v


@BilinearForm
def _pb_jacobian(u, v, w):
    return dot(grad(u), grad(v)) + w.k2 * np.cosh(w.psi) * u * v


@LinearForm
def _pb_residual(v, w):
    return dot(w.psi.grad, grad(v)) + w.k2 * np.sinh(w.psi) * v


@LinearForm
def _charge_source(v, w):
    # k^2 rho_hat with rho_hat = -sinh(psi) (PB) or -psi (DH)
    rho = -np.sinh(w.psi) if w.pb else -w.psi
    return w.k2 * rho * v


@LinearForm
def _unit_source(v, w):
    return 1.0 * v


@Functional
def _integral(w):
    return w.f


def _wall_guess(basis: Basis, a: float, b: float, kappa_h: float, zeta: float) -> np.ndarray:
    """Gouy-Chapman layer of the nearest wall, psi = 4 artanh(tanh(zeta/4) exp(-k d)), at the DOF points."""
    x, y = basis.doflocs
    d = np.minimum(a - x, b - y)
    return 4.0 * np.arctanh(math.tanh(zeta / 4.0) * np.exp(-kappa_h * d))


def _newton_pb(basis: Basis, walls: np.ndarray, psi: np.ndarray, k2: float) -> tuple[np.ndarray, int]:
    """Newton's method on the PB residual with halving steps.

    Stops after a full step below 1e-9 (max norm, kT/e): Newton converges quadratically, so the iterate is then
    within ~1e-18 of the discrete solution; a tighter stop only adds a confirming iteration to the peer's time.
    """
    free = basis.complement_dofs(walls)
    residual = _pb_residual.assemble(basis, psi=basis.interpolate(psi), k2=k2)
    for iteration in range(1, 60):
        jac = _pb_jacobian.assemble(basis, psi=basis.interpolate(psi), k2=k2)
        step = solve(*condense(jac, -residual, D=walls))
        norm0, t = np.linalg.norm(residual[free]), 1.0
        while True:
            trial = psi + t * step
            residual = _pb_residual.assemble(basis, psi=basis.interpolate(trial), k2=k2)
            if np.linalg.norm(residual[free]) < norm0 or t * np.max(np.abs(step)) < 1e-12:
                break
            t *= 0.5
        psi = trial
        if t == 1.0 and np.max(np.abs(step)) < 1e-9:
            return psi, iteration
    raise RuntimeError("PB Newton did not converge in 60 iterations")


def solve_rectangle(aspect: float, kappa_h: float, zeta: float, model: str, cells: int) -> FemResult:
    """One FE solve of equilibrium, EO flow and pressure flow on the quarter of a rectangle.

    Parameters
    ----------
    aspect : float
        W / H >= 1 (the long side along x; the short half side is 1).
    kappa_h : float
        Inverse Debye length times h = H/2.
    zeta : float
        Wall potential in kT/e.
    model : {"dh", "pb"}
        Debye-Hueckel or nonlinear Poisson-Boltzmann (1:1 salt).
    cells : int
        Cells across the short half side; the long half side gets cells * (1 + log(aspect)) of them.

    Returns
    -------
    FemResult
    """
    a, b = float(aspect), 1.0
    delta = screening_length(kappa_h, zeta, model)
    nx = round(cells * (1.0 + math.log(aspect)))
    mesh = MeshQuad.init_tensor(graded_points(a, delta, nx), graded_points(b, delta, cells))
    basis = Basis(mesh, ElementQuad2(), intorder=5)
    # exact wall coordinates: np.isclose's default rtol would catch the first graded points off the wall too
    walls = basis.get_dofs(lambda p: (np.abs(p[0] - a) < 1e-13 * a) | (np.abs(p[1] - b) < 1e-13)).all()
    k2 = kappa_h * kappa_h
    stiffness = _laplace.assemble(basis)  # shared by DH and both Stokes solves
    if model == "dh":
        psi = np.full(basis.N, float(zeta))
        psi = solve(*condense(stiffness + k2 * _mass.assemble(basis), np.zeros(basis.N), x=psi, D=walls))
        iterations = 0
    else:
        psi = _wall_guess(basis, a, b, kappa_h, zeta)
        psi[walls] = zeta
        psi, iterations = _newton_pb(basis, walls, psi, k2)
    source = _charge_source.assemble(basis, psi=basis.interpolate(psi), k2=k2, pb=(model == "pb"))
    u = solve(*condense(stiffness, source, D=walls))
    u_p = solve(*condense(stiffness, _unit_source.assemble(basis), D=walls))
    area = a * b
    mean = lambda f: float(_integral.assemble(basis, f=basis.interpolate(f))) / area  # noqa: E731
    return FemResult(mean(u), mean(psi - zeta), mean(u_p), int(basis.N), iterations)
