"""The method-of-lines peer of the transient benchmark (benchmarks/transient_peers.py), checked without FiPy.

The peer is the reference that edl.transient's charging figures are measured against (bench_transient.py), so
its discretisation is checked here against an independent solution: the linearised charging problem solved by
Laplace transform (derived in ``linear_sigma``; the Laplace-domain route of Bazant, Thornton & Ajdari 2004,
Phys. Rev. E 70, 021506, from memory), exact as V -> 0.
"""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

import numpy as np
import pytest

PATH = Path(__file__).resolve().parents[2] / "benchmarks" / "transient_peers.py"


@pytest.fixture(scope="module")
def peers():
    spec = importlib.util.spec_from_file_location("transient_peers", PATH)
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # dataclasses look their module up by name
    try:
        spec.loader.exec_module(module)
        yield module
    finally:
        sys.modules.pop(spec.name, None)


def test_linear_limit_matches_laplace_at_second_order(peers):
    """At V = 1e-4 kT/e (nonlinear terms ~V^2 ~ 1e-10 relative) the peer converges to the Laplace solution at
    second order in the cell size (common practice: finite volumes with mean face concentrations on a smooth map):
    the error falls ~4x from 200 to 400 intervals, and is below 1e-3 at 200."""
    problem = peers.Problem(10.0, 1e-4)
    exact = peers.linear_sigma(problem)
    assert exact[-1] == pytest.approx(0.5e-4 * 10.0 / np.tanh(10.0), rel=1e-9)  # (V/2) kL coth kL at rest
    errors = [np.max(np.abs(peers.solve_ivp_peer(problem, n, 1e-10) / exact - 1.0)) for n in (200, 400)]
    assert errors[0] < 1e-3
    assert 3.5 < errors[0] / errors[1] < 4.5


def test_charge_formulation_is_the_potential_formulation(peers):
    """The sparse (charge, salt, wall field) variables integrate the same discrete system as psi eliminated by the
    Poisson solve (dense Jacobian): both series agree to the time tolerance, and the voltage the charge variables
    hold only through the integration stays at V."""
    problem = peers.Problem(10.0, 4.0)
    a = peers.solve_ivp_peer(problem, 60, 1e-10, formulation="charge")
    b = peers.solve_ivp_peer(problem, 60, 1e-10, formulation="potential")
    assert np.max(np.abs(a / b - 1.0)) < 1e-7
    lines = peers.ChargeLines(problem, peers.wall_grid(60, problem))
    sol = peers.solve_ivp(lines.rhs, (0.0, 3.0), lines.y0, method="BDF", rtol=1e-10, atol=1e-12 * lines.scale,
                          jac=lines.jac)
    assert np.max(np.abs(lines.voltage_drift(sol.y))) < 1e-8 * problem.voltage


def test_analytic_jacobians_match_differences(peers):
    """The analytic Jacobians given to BDF (sparse and dense) against central differences of the right-hand side
    at a perturbed state."""
    problem = peers.Problem(50.0, 4.0)
    nodes = peers.wall_grid(16, problem)
    rng = np.random.default_rng(14)
    for lines in (peers.ChargeLines(problem, nodes), peers.MethodOfLines(problem, nodes)):
        y = lines.y0 + 0.05 * rng.standard_normal(lines.y0.size)
        exact = lines.jac(0.0, y)
        exact = exact.toarray() if hasattr(exact, "toarray") else exact
        step = 1e-6
        numeric = np.column_stack([(lines.rhs(0.0, y + step * e) - lines.rhs(0.0, y - step * e)) / (2 * step)
                                   for e in np.eye(y.size)])
        assert np.max(np.abs(exact - numeric)) < 1e-6 * np.max(np.abs(exact))


def test_early_charge_is_the_bare_capacitor(peers):
    """Just after the step no ion has moved: sigma is the bare capacitor's V/2 (units eps kT/(e L)); the wall
    flux is blocked, so the first output (1e-3 RC times) is within 2 % above it (from the Laplace solution:
    sigma(s) -> V/2s for large s)."""
    problem = peers.Problem(10.0, 0.1)
    sigma = peers.solve_ivp_peer(problem, 200, 1e-8)
    assert 0.05 < sigma[0] < 0.05 * 1.02
    assert np.all(np.diff(sigma) > 0.0)  # charging is monotone for blocking walls (common practice)
