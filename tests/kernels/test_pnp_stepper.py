"""The SDIRK stepper of the transient Poisson-Nernst-Planck solver (issue 14): order in time, conservation."""

from __future__ import annotations

import numpy as np

import edl_solver as edl
from edl_solver.kernels import pnp_stepper
from edl_solver.model import pnp_quantities, pnp_setup

D = 2e-9
SALT = edl.Electrolyte([edl.Ion("A+", valence=1, concentration="10 mM", diffusivity=D),
                        edl.Ion("B-", valence=-1, concentration="10 mM", diffusivity=1.5 * D)])


def _start(setup: pnp_setup.Setup) -> tuple[np.ndarray, ...]:
    """The ions and potential, the velocities and their slopes right after the step."""
    nion = setup.bulk.size
    y, v = setup.start[:, :nion + 1].copy(), setup.start[:, nion + 1:].copy()
    slopes, flow_slopes = np.empty_like(y), np.empty_like(v)
    assert pnp_stepper.consistent(y, v, 0.0, setup.problem, slopes, flow_slopes)
    return y, v, slopes, flow_slopes


def _charge_after(setup: pnp_setup.Setup, t_end: float, steps: int) -> tuple[float, np.ndarray]:
    """Fixed steps from the step to t_end (dimensionless): the top wall's charge and the inventories."""
    y, v, slopes, flow_slopes = _start(setup)
    stats = np.zeros(4, dtype=np.int64)
    status, _ = pnp_stepper.advance(y, slopes, v, flow_slopes, 0.0, t_end, t_end / steps, setup.problem,
                                    setup.error_scales, 0.0, 10 * steps, stats)
    assert status == pnp_stepper.OK and stats[pnp_stepper.STAT_STEPS] == steps
    values = pnp_quantities.series(setup, np.hstack((y, v))[None], np.array([t_end * setup.time_unit]))
    return values[0, pnp_quantities.SERIES.index("wall_charge_density_right")], values[0, len(pnp_quantities.SERIES):]


def test_observed_order_in_time_is_three() -> None:
    """Fixed steps h, h/2, h/4 on the full problem (walls stepped to -+50 mV, unequal diffusivities): the error
    against h/128 falls by 8 per halving, the order of Alexander's three-stage SDIRK (Alexander 1977, SIAM J.
    Numer. Anal. 14, 1006; Hairer & Wanner, Solving ODEs II, sec. IV.6, from memory)."""
    rest = edl.Case(edl.Slit(height="30 nm"), SALT, edl.Wall(zeta=0.0))
    case = edl.Case(rest.geometry, SALT, (edl.Wall(zeta=-0.05), edl.Wall(zeta=0.05)))
    setup = pnp_setup.build(case, rest, None, 32, 1e-6)
    t_end = 0.05  # in L^2 / D_ref: about one RC time
    reference, _ = _charge_after(setup, t_end, 2560)
    errors = np.array([abs(_charge_after(setup, t_end, n)[0] - reference) for n in (20, 40, 80)])
    orders = np.log2(errors[:-1] / errors[1:])
    assert np.all(np.abs(orders - 3.0) < 0.1), orders


def test_long_steps_keep_the_inventory_and_positivity() -> None:
    """0.3 V across a 10 nm slit (12 kT/e) at a loose tolerance, so that the steps grow to many RC times: after
    ten diffusion times the inventories are within 1e-12 of the start and every concentration is positive."""
    rest = edl.Case(edl.Slit(height="10 nm"), SALT, edl.Wall(zeta=0.0))
    case = edl.Case(rest.geometry, SALT, (edl.Wall(zeta=-0.15), edl.Wall(zeta=0.15)))
    setup = pnp_setup.build(case, rest, None, 32, 1e-6)
    y, v, slopes, flow_slopes = _start(setup)
    stats = np.zeros(4, dtype=np.int64)
    status, h = pnp_stepper.advance(y, slopes, v, flow_slopes, 0.0, 10.0, 1e-6, setup.problem, setup.error_scales,
                                    1e-3, 10_000, stats)
    assert status == pnp_stepper.OK
    assert stats[pnp_stepper.STAT_STEPS] < 200 and h > 0.5  # the last steps span several diffusion times
    start = setup.problem.volume @ np.exp(setup.start[:, :2])
    assert np.max(np.abs(setup.problem.volume @ np.exp(y[:, :2]) / start - 1)) < 1e-12
    assert np.all(np.isfinite(y)) and np.min(np.exp(y[:, :2])) > 0
