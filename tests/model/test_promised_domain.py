"""Cases inside the domain the README promises (|zeta| <= 15 kT/e, kappa h 0.01-1000, valences up to 3, 1 uM-1 M,
slit and capillary, every wall and ion model, 0-100 degC) either solve, meeting their checks, or raise
ConvergenceError naming the case: never another exception (issue 10)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import special

import edl_solver as edl
from edl_solver.constants import AVOGADRO, BOLTZMANN, ELEMENTARY_CHARGE, VACUUM_PERMITTIVITY
from edl_solver.errors import ConvergenceError
from edl_solver.kernels import adaptive
from tests.model.domain_sampler import cases

#: Summary values every converged solve reports as finite numbers (the lab quantities may be NaN, see lab.py).
CORE_KEYS = ("zeta", "wall_charge_density", "centre_potential", "flow_rate_eo", "flow_rate_pressure",
             "conduction_current", "current_per_field", "charge_balance", "reciprocity_residual")


def _debye_hueckel_capillary() -> edl.Case:
    """The issue's example: 2.7 nm capillary, 0.3 mM K+ and 0.15 mM SO4 2-, -137 mC/m^2, model 'dh'."""
    return edl.Case(geometry=edl.Capillary(radius="2.7 nm"),
                    electrolyte=edl.Electrolyte.from_ions({"K+": "0.3 mM", "SO4-2": "0.15 mM"}),
                    wall=edl.Wall(charge_density="-137 mC/m^2"), field="1 kV/m", model="dh")


def test_debye_hueckel_wall_of_large_charge_solves_with_a_note():
    # a linear model, so a solution exists at any charge: in a capillary much thinner than the Debye length the
    # charge balance 2 sigma / a = -eps kappa^2 psi puts psi near -30 V (common practice), far beyond |z psi| < 1
    result = edl.solve(_debye_hueckel_capillary())
    summary = result.summary
    assert summary["zeta"] == pytest.approx(-30.2, rel=0.02)
    assert abs(summary["charge_balance"]) < 1e-8
    assert summary["wall_charge_density"] == pytest.approx(-0.137, rel=1e-8)
    assert any("Debye-Hueckel linearisation is outside its range" in note for note in result.warnings)


def test_debye_hueckel_wall_whose_layer_underflows_the_grid_is_not_a_bare_numpy_error():
    # a 2:2 salt at 0.054 mM and -0.64 C/m^2: the isolated Debye-Hueckel wall sits at ~740 kT/e, where the
    # grid's wall cell underflowed and numpy refused to allocate ("negative dimensions not allowed")
    case = edl.Case(geometry=edl.Slit(height=2.3580401781173877e-07),
                    electrolyte=edl.Electrolyte((edl.Ion("A", 2, 0.05427021970196943, 1e-9),
                                                 edl.Ion("B", -2, 0.05427021970196943, 1.5e-9))),
                    wall=edl.Wall(charge_density=-0.6378009737323066), solvent=edl.Water(temperature=301.87),
                    field=1e3, model="dh")
    try:
        result = edl.solve(case)
    except ConvergenceError as error:
        assert "slit H" in str(error) and "kT" in str(error)
    else:
        assert abs(result.summary["charge_balance"]) < 1e-8


def test_stretching_and_start_stay_finite_at_any_wall_potential():
    # the grid map and the Gouy-Chapman start must not overflow for a saturated wall potential
    assert math.isfinite(adaptive.stretching(0.0))
    x = np.linspace(-1.0, 1.0, 9)
    psi = np.empty(x.size)
    adaptive.gouy_chapman_guess(x, 1.0, False, np.array([0.0, -1e4]), np.array([1.0, 1.0]), psi)
    assert np.isfinite(psi).all()


@pytest.mark.parametrize("seed", [11, 12])
def test_random_cases_of_the_promised_domain_solve_or_refuse_in_words(seed):
    # the only refusal left in the domain is physical: a steric section that cannot hold its walls' counter-charge
    for case in cases(seed, 2500):
        try:
            result = edl.solve(case)
        except ConvergenceError as error:
            assert case.describe() in str(error) and "close packing" in str(error), str(error)
            continue
        summary = result.summary
        for key in CORE_KEYS:
            assert np.all(np.isfinite(summary[key])), (case.describe(), key)


def test_nan_energy_conversion_of_a_debye_hueckel_layer_comes_with_a_note():
    # 1:1 salt, 3.3 mM, -7.8 mC/m^2 in a 2.4 nm capillary: the linearised layer reaches |z e phi / kT| ~ 5, its
    # concentrations turn negative near the wall and the coupling q^2 exceeds 1 (lab.py returns NaN there)
    case = edl.Case(geometry=edl.Capillary(radius=2.369e-09),
                    electrolyte=edl.Electrolyte((edl.Ion("A", 1, 3.329, 1e-9), edl.Ion("B", -1, 3.329, 1.5e-9))),
                    wall=edl.Wall(charge_density=-0.007789), field=1e3, model="dh")
    result = edl.solve(case)
    assert math.isnan(result.summary["figure_of_merit"])
    assert any("figure_of_merit" in note and "q^2" in note for note in result.warnings)


def test_debye_hueckel_slit_whose_stretched_grid_failed_solves_to_the_exact_linear_solution():
    # 2:1 salt at 76 degC, +30 mC/m^2, kappa h = 1.97: the isolated layer is at z e zeta / kT ~ 54, whose
    # Gouy-Chapman-stretched grid (~1e-12 h wall cells) lost Newton to rounding; a linear layer needs none of it
    case = edl.Case(geometry=edl.Slit(height=5.8028718654586194e-08),
                    electrolyte=edl.Electrolyte((edl.Ion("A", 2, 0.13117099834595047, 1e-9),
                                                 edl.Ion("B", -1, 0.26234199669190095, 1.5e-9))),
                    wall=edl.Wall(charge_density=0.02999381156122451), solvent=edl.Water(temperature=349.1618272274558),
                    field=1e3, model="dh")
    summary = edl.solve(case).summary
    # Debye-Hueckel slit of fixed charge: zeta = sigma / (eps kappa) coth(kappa h) (from memory)
    eps = case.solvent.relative_permittivity * VACUUM_PERMITTIVITY
    exact = 0.02999381156122451 * summary["debye_length"] / eps / math.tanh(summary["kappa_h"])
    assert summary["zeta"] == pytest.approx(exact, rel=1e-6)


def test_a_sweep_through_debye_hueckel_walls_of_large_charge_completes():
    # the compiled batch raised inside its parallel loop (SystemError) at the issue's -137 mC/m^2
    data = edl.sweep(_debye_hueckel_capillary(), {"wall.charge_density": [-0.001, -0.137]}, progress=False)
    assert list(data["status"].values) == [0, 0]
    assert data["zeta"].values[1] == pytest.approx(-30.2, rel=0.02)


@pytest.mark.parametrize(("radius", "ions", "sigma"), [
    # 2:3 salt, 0.6 mM ionic strength, -0.19 C/m^2, kappa a = 0.55: zeta ~ -1.1 V was returned with a wall charge
    # of 1e-61 (refused by the charge-balance check) on a grid stretched for a Gouy-Chapman layer at 1000 kT/e
    (6.607466990345826e-09, (edl.Ion("A", 2, 0.1193180849283557, 1e-9), edl.Ion("B", -3, 0.07954538995223714, 1.5e-9)),
     -0.18658851777053176),
    # 1:1 salt at 0.5 uM, +0.07 C/m^2 in a 2.5 nm capillary: the linear layer sits near 1e5 kT/e, where Newton's
    # absolute step tolerance was below the round-off of the potential and it never stopped
    (2.506e-09, (edl.Ion("A", 1, 0.0005019, 1e-9), edl.Ion("B", -1, 0.0005019, 1.5e-9)), 0.07),
])
def test_debye_hueckel_capillary_of_large_charge_solves_to_the_exact_linear_solution(radius, ions, sigma):
    case = edl.Case(geometry=edl.Capillary(radius=radius), electrolyte=edl.Electrolyte(ions),
                    wall=edl.Wall(charge_density=sigma), solvent=edl.Water(temperature=338.2651835898513), field=1e3,
                    model="dh")
    summary = edl.solve(case).summary
    # Debye-Hueckel capillary of fixed charge: psi = A I0(kappa r), sigma = eps kappa A I1(kappa a), so
    # zeta = sigma I0(kappa a) / (eps kappa I1(kappa a)) (Rice & Whitehead 1965, J. Phys. Chem. 69, 4017, from memory)
    eps = case.solvent.relative_permittivity * VACUUM_PERMITTIVITY
    ka = summary["kappa_h"]
    exact = sigma * summary["debye_length"] / eps * special.i0(ka) / special.i1(ka)
    assert summary["zeta"] == pytest.approx(exact, rel=1e-6)
    assert summary["wall_charge_density"] == pytest.approx(sigma, rel=1e-8)


def _sized_slit(sigma: float) -> edl.Case:
    ions = edl.Electrolyte([edl.Ion(name=name, concentration=100.0, diameter=0.7e-9) for name in ("Na+", "Cl-")])
    return edl.Case(geometry=edl.Slit(height="1 nm"), electrolyte=ions, wall=edl.Wall(charge_density=sigma),
                    model="steric", field=1e3)


def test_steric_slit_that_cannot_hold_its_counter_charge_is_refused_for_that_reason():
    # the lattice-gas charge density is bounded by z e / d^3 (Bikerman 1942; Kilic, Bazant & Ajdari 2007, from
    # memory): a 1 nm slit of 0.7 nm ions holds at most e H / d^3 = 0.467 C/m^2, less than two walls of
    # -0.5 C/m^2; the continuation used to stall with no physical reason given
    with pytest.raises(ConvergenceError, match=r"exceeds the counter-charge the slit can hold .* close packing "
                                               r"\(0\.467 C/m\^2\)"):
        edl.solve(_sized_slit(-0.5))


def test_steric_slit_just_below_its_close_packing_solves():
    summary = edl.solve(_sized_slit(-0.23)).summary  # 98.5 % of the capacity
    assert summary["wall_charge_density"] == pytest.approx(-0.23, rel=1e-8)
    assert abs(summary["charge_balance"]) < 1e-8


def test_eo_flow_of_a_slip_wall_at_a_steep_layer_meets_the_navier_slip_identity():
    # 3:3 salt at 4.2 mM, zeta = 14.6 kT/e (z e zeta / kT = 44), slip length 9.2 nm in a 137 nm capillary: the
    # Stokes pivots lost the slip term to cancellation against the wall cells' links (1/h_min ~ 1e11) and the
    # error estimate grew with refinement (accuracy missed at 4096 cells). Navier slip adds b sigma / eps to zeta
    # in the EO velocity (Joly, Ybert, Trizac & Bocquet 2004, Phys. Rev. Lett. 93, 257805, from memory), so the
    # flow rate grows by -pi a^2 E b sigma / eta over the no-slip one
    ions = (edl.Ion("A", 3, 4.228013935985838, 1e-9), edl.Ion("B", -3, 4.228013935985838, 1.5e-9))
    radius, slip = 1.366552971135913e-07, 9.203363985194566e-09

    def case(slip_length):
        return edl.Case(geometry=edl.Capillary(radius=radius), electrolyte=edl.Electrolyte(ions),
                        wall=edl.Wall(zeta=0.4192406842807145, slip_length=slip_length),
                        solvent=edl.Water(temperature=332.1391762292659), field=1e3)

    sticking, slipping = edl.solve(case(0.0)).summary, edl.solve(case(slip)).summary
    eta = case(0.0).solvent.viscosity
    added = -math.pi * radius**2 * 1e3 * slip * sticking["wall_charge_density"] / eta
    assert slipping["flow_rate_eo"] - sticking["flow_rate_eo"] == pytest.approx(added, rel=1e-6, abs=0.0)


def test_steric_wall_at_fifteen_thermal_voltages_meets_the_crowded_grahame_charge():
    # 3:3 salt at 4.1 mM, 0.64 nm ions, zeta = -13.5 kT/e, kappa h ~ 130: the grid was stretched for a
    # Gouy-Chapman layer at z e zeta / kT = 41 (wall cells ~1e-9 Debye lengths) where the crowded layer is a
    # film of close-packed counter-ions, and the charge balance lost 1e-8 to rounding (refused)
    diameter, c = 6.41504030465218e-10, 4.115052543956444
    ions = (edl.Ion("A", 3, c, 1e-9, diameter), edl.Ion("B", -3, c, 1.5e-9, diameter))
    solvent = edl.Water(temperature=311.1976693236329)
    case = edl.Case(geometry=edl.Slit(height=4.287637799438264e-07), electrolyte=edl.Electrolyte(ions),
                    wall=edl.Wall(zeta=-0.36337320959282693), solvent=solvent, field=1e3, model="steric")
    summary = edl.solve(case).summary
    # Grahame's relation of the lattice gas: sigma^2 = (2 eps kT / d^3) ln(1 + sum_k nu_k (exp(-z_k e zeta/kT) - 1)),
    # nu_k = c_k N_A d^3 (Kilic, Bazant & Ajdari 2007, Phys. Rev. E 75, 021502, from memory); a wide slit's wall
    # is an isolated one up to exp(-kappa h)
    kt = BOLTZMANN * solvent.temperature
    reduced = -0.36337320959282693 * ELEMENTARY_CHARGE / kt
    crowd = 1.0 + sum(c * AVOGADRO * diameter**3 * math.expm1(-z * reduced) for z in (3, -3))
    eps = solvent.relative_permittivity * VACUUM_PERMITTIVITY
    grahame = -math.sqrt(2.0 * eps * kt / diameter**3 * math.log(crowd))
    assert summary["wall_charge_density"] == pytest.approx(grahame, rel=1e-6)
