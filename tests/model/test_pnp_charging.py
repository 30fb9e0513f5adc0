"""Transient Poisson-Nernst-Planck (issue 14): charging of the double layers of a closed slit.

Linear charging between blocking electrodes (Bazant, Thornton & Ajdari 2004, Phys. Rev. E 70, 021506): a 1:1
salt with equal diffusivities D, walls at x = -L, L (L the half gap) stepped from 0 to -V/2, +V/2 at t = 0. The
linearised charge density relaxes as exp(-s t) f(x) with f'' = k^2 f, k^2 = kappa^2 - s / D; the antisymmetric
mode with psi(+-L) = 0 and no flux at the walls gives (derived here)

    s = D kappa^2 tanh(k L) / (k L),

whose slowest root tends to D kappa / L, the inverse RC time lambda_D L / D of that paper, for kappa L >> 1.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.optimize import brentq

import edl_solver as edl

D = 2e-9
SALT = edl.Electrolyte([edl.Ion("A+", valence=1, concentration="10 mM", diffusivity=D),
                        edl.Ion("B-", valence=-1, concentration="10 mM", diffusivity=D)])
SLIT = edl.Slit(height="60 nm")


def _electrodes(volts: float, model: str, geometry=SLIT) -> tuple[edl.Case, edl.Case]:
    rest = edl.Case(geometry, SALT, edl.Wall(zeta=0.0), model=model)
    charged = edl.Case(geometry, SALT, (edl.Wall(zeta=-volts / 2), edl.Wall(zeta=volts / 2)), model=model)
    return rest, charged


def _slowest_rate(kappa: float, half_gap: float) -> float:
    def pole(s: float) -> float:
        k = np.sqrt(kappa**2 - s / D)
        return s - D * kappa**2 * np.tanh(k * half_gap) / (k * half_gap)

    return brentq(pole, 1e-3 * D * kappa / half_gap, 0.999 * D * kappa**2, xtol=1e-30, rtol=1e-15)


@pytest.mark.parametrize("model", ["dh", "pb"])
def test_linear_charging_relaxes_at_the_exact_pole(model: str) -> None:
    """V = 1 mV (0.04 kT/e), kappa L = 9.9: the wall charge's decay rate between 1 and 2 RC times within 1e-4 of
    the pole (the full problem differs by O(V^2)); the charge starts at the dielectric's eps V / (2 L)."""
    rest, case = _electrodes(1e-3, model)
    kappa, half_gap = 1.0 / case.debye_length, case.geometry.half_size
    rc = half_gap / (kappa * D)
    times = rc * np.array([1e-6, 1.0, 2.0, 1e3])
    sigma = edl.transient(case, times, before=rest)["wall_charge_density"].sel(wall="top").values
    rate = np.log((sigma[1] - sigma[-1]) / (sigma[2] - sigma[-1])) / rc
    assert rate == pytest.approx(_slowest_rate(kappa, half_gap), rel=1e-4)
    assert sigma[0] == pytest.approx(case.solvent.permittivity * 1e-3 / (2 * half_gap), rel=1e-3)


def test_the_pole_tends_to_the_inverse_rc_time() -> None:
    """kappa L = 1000: s lambda_D L / D = 1 within 1e-3 (Bazant, Thornton & Ajdari 2004, the RC time)."""
    kappa, half_gap = 1e3 / 30e-9, 30e-9
    assert _slowest_rate(kappa, half_gap) * half_gap / (kappa * D) == pytest.approx(1.0, rel=1e-3)


def test_nonlinear_charging_keeps_storing_salt_after_the_charge() -> None:
    """V = 0.2 V (7.8 kT/e) across a 200 nm slit (kappa L = 33): when the wall charge is within 1 % of its end
    (30 RC times, about one diffusion time L^2 / D) the salt the layers store is still several times further from
    its end, having started far behind (Bazant, Thornton & Ajdari 2004: neutral salt adsorption on the diffusion
    time, from memory)."""
    rest, case = _electrodes(0.2, "pb", edl.Slit(height="200 nm"))
    kappa, half_gap = 1.0 / case.debye_length, case.geometry.half_size
    rc, diffusion = half_gap / (kappa * D), half_gap**2 / D
    run = edl.transient(case, np.array([10 * rc, 30 * rc, 30 * diffusion]), before=rest)
    top = run["wall_charge_density"].sel(wall="top").values
    charge = np.abs(top[:2] / top[-1] - 1)
    salt = np.abs(run["salt_stored"].values[:2] / run["salt_stored"].values[-1] - 1)
    assert charge[1] < 0.01
    assert np.all(salt > 3 * charge)
    assert salt[0] > 0.2
    assert run["salt_stored"].values[-1] > 0  # the layers hold more ions than the depleted centre


def test_large_steps_conserve_ions_and_keep_them_positive() -> None:
    """0.3 V across a 10 nm slit (12 kT/e, the counter-ions packed at the walls, the co-ions down by e^-6): the
    inventory of each ion within 1e-10 of the start, every concentration positive, the charges balance."""
    rest, case = _electrodes(0.3, "pb", edl.Slit(height="10 nm"))
    times = np.geomspace(1e-10, 1e-5, 12)
    run = edl.transient(case, times, before=rest)
    inventory = run["inventory"].values
    assert np.max(np.abs(inventory / inventory[0] - 1)) < 1e-10
    assert np.all(run["concentration"].values > 0)
    sigma = run["wall_charge_density"].values
    area = case.geometry.height  # per unit width
    assert np.max(np.abs(run["space_charge"].values + (sigma[:, 0] + sigma[:, 1]))) < 1e-9 * np.max(np.abs(sigma))
    del area


def test_the_long_time_limit_is_the_closed_section_equilibrium() -> None:
    """After 40 diffusion times the state is the closed section's equilibrium, solved directly with the fixed
    inventory (c_k = n_k exp(-z_k psi)), within 1e-8 of the wall potential; it holds the start's ions, so it
    differs from the reservoir's equilibrium of the same walls."""
    rest, case = _electrodes(0.1, "pb")
    run = edl.transient(case, [40 * case.geometry.half_size**2 / D], before=rest)
    last = run["potential"].values[-1]
    assert np.max(np.abs(last - run["closed_potential"].values)) < 1e-8 * 0.05
    conc = run["closed_concentration"].values
    boltzmann = conc * np.exp(np.array([[1.0], [-1.0]]) * run["closed_potential"].values / 0.025693)
    assert np.ptp(boltzmann, axis=1) / np.mean(boltzmann, axis=1) == pytest.approx([0, 0], abs=3e-3)
    assert run.attrs["reservoir_inventory_difference"] > 1e-4


def test_a_steady_state_stays_steady() -> None:
    """The same wall given as a pair: the Poisson-Nernst-Planck path starts at equilibrium and nothing moves."""
    wall = edl.Wall(zeta="-60 mV")
    case = edl.Case(SLIT, SALT, wall)
    before = edl.Case(SLIT, SALT, (wall, wall))
    run = edl.transient(case, np.geomspace(1e-10, 1e-5, 5), before=before)
    assert run.attrs["kind"] == "poisson-nernst-planck"
    sigma = run["wall_charge_density"].values
    assert np.ptp(sigma) < 1e-12 * abs(sigma[0])
    assert sigma[0] == pytest.approx(edl.solve(case).summary["wall_charge_density"], rel=1e-5)
    assert np.ptp(run["concentration"].values, axis=0).max() < 1e-10 * run["concentration"].values.max()


def test_a_closed_section_cannot_take_in_counter_ions() -> None:
    """Both walls of a closed slit stepped from -50 to -80 mV: no ion can enter, so the wall charge stays and the
    potential shifts by -30 mV everywhere while the concentrations stay (an exact solution of the equations)."""
    before = edl.Case(SLIT, SALT, edl.Wall(zeta="-50 mV"))
    case = edl.Case(SLIT, SALT, edl.Wall(zeta="-80 mV"))
    run = edl.transient(case, [1e-9, 1e-6], before=before)
    conc = run["concentration"].values
    assert np.max(np.abs(conc[1] / conc[0] - 1)) < 1e-10
    steady = edl.solve(before).summary
    assert run["wall_charge_density"].values == pytest.approx(steady["wall_charge_density"], rel=1e-6)
    assert run["wall_potential"].values == pytest.approx(-0.08, rel=1e-12)
    centre = run["potential"].sel(x=0.0).values
    assert centre == pytest.approx(steady["centre_potential"] - 0.03, abs=1e-6 * 0.08)  # the finest grid's profile
