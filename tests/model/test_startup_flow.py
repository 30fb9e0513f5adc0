"""``edl.transient`` for a step of the drives (issue 14): EO start-up against the classical eigenfunction series.

Debye-Hueckel layer, field stepped from 0 to E at t = 0 (the layer stays at equilibrium), no slip. The velocity is
the steady one less decaying modes of the unsteady Stokes operator (Fourier series in cos(alpha_n y) for a slit,
Fourier-Bessel in J0(j_n r / a) for a capillary; derived here, the classical expansion, e.g. Carslaw & Jaeger's
heat-conduction solutions, from memory):
    slit, half-height h, alpha_n = (2n + 1) pi / (2h):
        mean u(t) = mean_s + (eps zeta E / eta) sum_n 2 kappa^2 exp(-alpha_n^2 nu t)
                                                      / (h^2 alpha_n^2 (kappa^2 + alpha_n^2))
    capillary, radius a, j_n the zeros of J0:
        mean u(t) = mean_s + (eps zeta E / eta) sum_n 4 (kappa a)^2 exp(-j_n^2 nu t / a^2)
                                                      / (j_n^2 ((kappa a)^2 + j_n^2))
with mean_s the steady Debye-Hueckel mean velocity; at t = 0 the sums are the steady value (u = 0 at rest).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.special import i0e, i1e, jn_zeros

import edl_solver as edl

SALT = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})
ZETA = -0.005
FIELD = 2e3


def _series(case: edl.Case, times: np.ndarray) -> np.ndarray:
    solvent = case.solvent
    kappa, size = 1.0 / case.debye_length, case.geometry.half_size
    nu = solvent.viscosity / solvent.density
    scale = solvent.permittivity * ZETA * FIELD / solvent.viscosity
    ka = kappa * size
    if isinstance(case.geometry, edl.Slit):
        alpha = (2 * np.arange(400_000) + 1) * np.pi / (2 * size)
        steady = -scale * (1 - np.tanh(ka) / ka)
        weights, rates = 2 * kappa**2 / (size**2 * alpha**2 * (kappa**2 + alpha**2)), alpha**2 * nu
    else:
        zeros = jn_zeros(0, 20_000)
        steady = -scale * (1 - 2 * i1e(ka) / (ka * i0e(ka)))
        weights, rates = 4 * ka**2 / (zeros**2 * (ka**2 + zeros**2)), zeros**2 * nu / size**2
    return np.array([steady + scale * np.sum(weights * np.exp(-rates * t)) for t in times])


@pytest.mark.parametrize("geometry", [edl.Slit(height="40 nm"), edl.Capillary(radius="20 nm")],
                         ids=["slit", "capillary"])
def test_debye_hueckel_startup_against_the_eigenfunction_series(geometry) -> None:
    """From the first tenth of a viscous time to steady state, within 1e-6 of the steady value; the end is the
    steady solve's mean velocity."""
    case = edl.Case(geometry, SALT, edl.Wall(zeta=ZETA), field=FIELD, model="dh")
    viscous = case.solvent.density * case.geometry.half_size**2 / case.solvent.viscosity
    times = viscous * np.array([0.01, 0.1, 0.3, 1.0, 3.0, 30.0])
    run = edl.transient(case, times)
    steady = edl.solve(case).summary["mean_velocity_eo"]
    assert run["mean_velocity_eo"].values == pytest.approx(_series(case, times), abs=1e-6 * abs(steady))
    assert run["mean_velocity_eo"].values[-1] == pytest.approx(steady, rel=1e-6)
    assert np.all(np.diff(run["mean_velocity_eo"].values) > 0)  # a start-up from rest rises monotonically
    assert run.attrs["viscous_time_s"] == pytest.approx(viscous, rel=1e-14)


def test_a_step_between_two_drives_is_linear_and_keeps_the_layer() -> None:
    """Field 1 kV/m and a pressure gradient stepped to -2 kV/m and none (PB, -80 mV walls): the flow starts from the
    old steady flow and ends at the new one, the response is the new drives' start-up plus the old flow's decay
    (linearity, common practice), and the wall charge does not change."""
    base = edl.Case(edl.Slit(height="60 nm"), SALT, edl.Wall(zeta="-80 mV"), field=1e3, pressure_gradient=-1e9)
    after = edl.Case(base.geometry, SALT, base.wall, field=-2e3)
    viscous = base.solvent.density * base.geometry.half_size**2 / base.solvent.viscosity
    times = viscous * np.array([1e-4, 0.2, 1.0, 50.0])
    run = edl.transient(after, times, before=base)
    start_new = edl.transient(after, times)
    decay_old = edl.transient(edl.Case(base.geometry, SALT, base.wall), times, before=base)
    old, new = edl.solve(base).summary, edl.solve(after).summary
    assert run["mean_velocity"].values[0] == pytest.approx(old["mean_velocity_eo"] + old["mean_velocity_pressure"],
                                                           rel=1e-3)  # 1e-4 of a viscous time after the step
    assert run["mean_velocity"].values[-1] == pytest.approx(new["mean_velocity_eo"], rel=1e-6)
    assert run["mean_velocity"].values == pytest.approx(
        start_new["mean_velocity"].values + decay_old["mean_velocity"].values, rel=1e-9, abs=1e-12)
    assert np.all(run["wall_charge_density"].values == new["wall_charge_density"])


def test_what_a_closed_section_cannot_follow_is_refused() -> None:
    """A step of the walls goes to the Poisson-Nernst-Planck solver; a step of the electrolyte cannot happen in a
    closed section."""
    case = edl.Case(edl.Slit(height="60 nm"), SALT, edl.Wall(zeta="-80 mV"), field=1e3)
    other_salt = edl.Case(case.geometry, edl.Electrolyte.from_ions({"K+": "2 mM", "Cl-": "2 mM"}), case.wall)
    with pytest.raises(edl.InputError, match=r"before: differs from case in electrolyte.*closed"):
        edl.transient(case, [1e-9], before=other_salt)
    for bad in ([0.0], [2e-9, 1e-9], [], "soon"):
        with pytest.raises(edl.InputError, match="times"):
            edl.transient(case, bad)


def test_thin_layers_start_up_as_the_slip_driven_series() -> None:
    """kappa h = 200: the full start-up follows the slit whose walls slip at the Helmholtz-Smoluchowski velocity
    u_s from t = 0, mean u(t) = u_s [1 - sum_n 8 / ((2n+1)^2 pi^2) exp(-alpha_n^2 nu t)], alpha_n = (2n+1) pi / (2h)
    (the classical Fourier series of a suddenly moved wall pair, e.g. Carslaw & Jaeger, from memory), within the
    layer's share lambda_D / h plus lambda_D / sqrt(nu t), the layer against the momentum's diffusion length."""
    salt = edl.Electrolyte.from_ions({"K+": "100 mM", "Cl-": "100 mM"})
    case = edl.Case(edl.Slit(height="200 nm"), salt, edl.Wall(zeta=-0.02), field=FIELD, model="dh")
    h, debye = case.geometry.half_size, case.debye_length
    nu = case.solvent.viscosity / case.solvent.density
    viscous = h**2 / nu
    times = viscous * np.array([0.03, 0.1, 0.3, 1.0, 3.0])
    slip = -case.solvent.permittivity * (-0.02) * FIELD / case.solvent.viscosity  # u_s = -eps zeta E / eta
    n = np.arange(200_000)
    alpha = (2 * n + 1) * np.pi / (2 * h)
    thin = np.array([slip * (1 - np.sum(8 / ((2 * n + 1) ** 2 * np.pi**2) * np.exp(-alpha**2 * nu * t)))
                     for t in times])
    full = edl.transient(case, times)["mean_velocity_eo"].values
    assert np.all(np.abs(full / thin - 1) < 3 * (debye / h + debye / np.sqrt(nu * times)))
    assert np.all(np.abs(full / thin - 1) > 0.1 * debye / h)  # the layer's share is there: a check that can fail
