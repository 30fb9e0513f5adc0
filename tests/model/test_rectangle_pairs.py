"""One wall condition per wall pair in the rectangle core (``model.rectangle``, ``wall_rows``: top/bottom, sides): a
closed form derived here for two Debye-Hueckel charges, the symmetry W <-> H, the slit limit, a fixed potential with
a charge or a regulated wall (charge balance, reciprocity, error control), and bad input."""

from __future__ import annotations

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.errors import ConvergenceError, InputError
from edl_solver.kernels.layout import FLUX, POTENTIAL, REGULATED, W_TYPE, W_VALUE, WALL_SIZE
from edl_solver.model.rectangle import solve_rectangle_section
from tests.helpers import SOLVENT, kcl
from tests.model.test_rectangle_regulated import ELECTROLYTE, HEIGHT, silica_row

SYMMETRIC = ([1, -1], [1.0, 1.0])


def row(kind: int, value: float) -> np.ndarray:
    """The kernels' dimensionless row of a fixed-potential (kT/e) or fixed-charge (sigma_hat) wall."""
    out = np.zeros(WALL_SIZE)
    out[W_TYPE], out[W_VALUE] = kind, value
    return out


def dh_two_charges(a: float, b: float, kappa: float, sigma_tb: float, sigma_s: float) -> dict[str, float]:
    """Debye-Hueckel rectangle [0, a] x [0, b] with outward derivative sigma_tb on the walls z = 0, b and sigma_s on
    y = 0, a.

    Derived here. -lap psi + kappa^2 psi = 0 is solved by the sum of two slit profiles, psi = sigma_tb cosh(kappa z')
    / (kappa sinh(kappa b/2)) + sigma_s cosh(kappa y') / (kappa sinh(kappa a/2)) (y', z' from the centre): each
    satisfies the equation, has outward derivative sigma on its own pair of walls and zero on the other. With
    int cosh(kappa y') dy' = 2 sinh(kappa a/2) / kappa over the wall: mean psi = 2 (a sigma_tb + b sigma_s) /
    (kappa^2 a b) (Gauss), the mean on z = b: sigma_tb coth(kappa b/2) / kappa + 2 sigma_s / (kappa^2 a), on
    y = a: sigma_s coth(kappa a/2) / kappa + 2 sigma_tb / (kappa^2 b); the corner the sum of both walls' values.
    """
    return {"mean_psi": 2 * (a * sigma_tb + b * sigma_s) / (kappa**2 * a * b),
            "tb": sigma_tb / (kappa * np.tanh(kappa * b / 2)) + 2 * sigma_s / (kappa**2 * a),
            "sides": sigma_s / (kappa * np.tanh(kappa * a / 2)) + 2 * sigma_tb / (kappa**2 * b),
            "corner": sigma_tb / (kappa * np.tanh(kappa * b / 2)) + sigma_s / (kappa * np.tanh(kappa * a / 2))}


@pytest.mark.parametrize(("width", "height", "kappa_h", "sigma_tb", "sigma_s"),
                         [(2.0, 2.0, 3.0, -1.0, -0.3), (10.0, 2.0, 1.0, -0.5, 0.8)])
def test_debye_hueckel_two_charges_superpose_two_slits(width: float, height: float, kappa_h: float, sigma_tb: float,
                                                       sigma_s: float) -> None:
    """Mean potential, each pair's mean wall potential and charge density, and the corner against
    ``dh_two_charges`` (derived here), 1e-8 at accuracy 1e-9; charge balance and reciprocity to round-off."""
    sol = solve_rectangle_section(width, height, 1.0 / kappa_h, *SYMMETRIC, model="dh", accuracy=1e-9,
                                  wall_rows=(row(FLUX, sigma_tb), row(FLUX, sigma_s)))
    ref = dh_two_charges(width, height, kappa_h, sigma_tb, sigma_s)
    assert sol.estimate <= 1e-9
    assert sol.wall_types == (FLUX, FLUX)
    assert sol.mean_potential == pytest.approx(ref["mean_psi"], rel=1e-8)
    assert sol.pair_potentials["tb"] == pytest.approx(ref["tb"], rel=1e-8)
    assert sol.pair_potentials["sides"] == pytest.approx(ref["sides"], rel=1e-8)
    assert sol.wall_potentials["corner"] == pytest.approx(ref["corner"], rel=1e-8)
    assert sol.pair_charge_densities["tb"] == pytest.approx(sigma_tb, rel=1e-13)
    assert sol.pair_charge_densities["sides"] == pytest.approx(sigma_s, rel=1e-13)
    assert sol.charge_density == pytest.approx((2 * width * sigma_tb + 2 * height * sigma_s) / sol.perimeter,
                                               rel=1e-13)
    assert sol.charge_balance < 1e-10 and sol.reciprocity < 1e-10


def dh_zeta_and_charge(a: float, b: float, kappa: float, zeta: float, sigma: float,
                       terms: int = 2_000_000) -> dict[str, float]:
    """Debye-Hueckel rectangle [0, a] x [0, b], psi = zeta on the walls z = 0, b, outward derivative sigma on y = 0, a.

    Derived here. psi = zeta cosh(kappa z') / cosh(kappa b/2) + u (y', z' from the centre): the first is the zeta
    slit's profile (no flux through the sides), u vanishes on z' = +-b/2 and has the sides' flux: u = sum_n a_n
    cos(beta_n z') cosh(k_n y'), beta_n = (2n + 1) pi / b, k_n^2 = kappa^2 + beta_n^2, and the cosine series of the
    constant sigma on (-b/2, b/2), sum_n 4 sigma (-1)^n / ((2n + 1) pi) cos(beta_n z'), gives a_n k_n sinh(k_n a/2)
    = 4 sigma (-1)^n / ((2n + 1) pi). With int cos(beta_n z') dz' = 2 (-1)^n / beta_n: int psi dA = 2 a zeta
    tanh(kappa b/2) / kappa + sum 16 sigma / ((2n + 1) pi k_n^2 beta_n), the sides' mean potential 2 zeta
    tanh(kappa b/2) / (kappa b) + sum 8 sigma coth(k_n a/2) / ((2n + 1) pi k_n beta_n b) (terms ~ n^-3: 2e6 terms
    leave ~1e-13), and the top/bottom's flux kappa^2 int psi dA - 2 b sigma (Gauss, DH: rho = -psi).
    """
    odd = np.arange(2 * terms, dtype=float)[1::2]  # 2n + 1
    beta = odd * np.pi / b
    k2 = kappa**2 + beta**2
    total = 2 * a * zeta * np.tanh(kappa * b / 2) / kappa + np.sum(16 * sigma / (odd * np.pi * k2 * beta))
    sides = 2 * zeta * np.tanh(kappa * b / 2) / (kappa * b) + np.sum(
        8 * sigma / (np.tanh(np.sqrt(k2) * a / 2) * odd * np.pi * np.sqrt(k2) * beta * b))
    return {"mean_psi": total / (a * b), "sides": sides, "flux_tb": kappa**2 * total - 2 * b * sigma}


@pytest.mark.parametrize(("width", "height", "kappa_h"), [(2.0, 2.0, 2.0), (6.0, 2.0, 1.0)])
def test_debye_hueckel_zeta_and_charge_against_derived_series(width: float, height: float, kappa_h: float) -> None:
    """Top/bottom at zeta = 1, sides of sigma_hat = -0.5 (a fixed potential meeting a charge, the rough corner):
    mean potential, the sides' mean wall potential and the top/bottom's flux against ``dh_zeta_and_charge`` (derived
    here) to 1e-7 at accuracy 1e-8."""
    sol = solve_rectangle_section(width, height, 1.0 / kappa_h, *SYMMETRIC, model="dh", accuracy=1e-8,
                                  wall_rows=(row(POTENTIAL, 1.0), row(FLUX, -0.5)))
    ref = dh_zeta_and_charge(width, height, kappa_h, 1.0, -0.5)
    assert sol.estimate <= 1e-8
    assert sol.mean_potential == pytest.approx(ref["mean_psi"], rel=1e-7)
    assert sol.pair_potentials["sides"] == pytest.approx(ref["sides"], rel=1e-7)
    assert sol.integrals["flux_tb"] == pytest.approx(ref["flux_tb"], rel=1e-7)
    assert sol.pair_potentials["tb"] == pytest.approx(1.0, rel=1e-14)


@pytest.mark.parametrize("pairs", [(row(FLUX, -3.0), row(FLUX, -1.0)), (row(POTENTIAL, -2.0), row(FLUX, -1.0))])
def test_swapping_width_and_height_with_the_pairs_gives_the_same_integrals(pairs: tuple) -> None:
    """A W x H rectangle with conditions (top/bottom, sides) is the H x W one with them swapped, turned by a right
    angle (symmetry): the same integrals, the pairs' parts and mid-wall potentials exchanged."""
    a = solve_rectangle_section(6.0, 2.0, 1.0 / 3.0, *SYMMETRIC, wall_rows=pairs, accuracy=1e-6)
    b = solve_rectangle_section(2.0, 6.0, 1.0 / 3.0, *SYMMETRIC, wall_rows=pairs[::-1], accuracy=1e-6)
    swap = {"flux_tb": "flux_sides", "flux_sides": "flux_tb", "psi_tb": "psi_sides", "psi_sides": "psi_tb",
            "psi_mid_y": "psi_mid_z", "psi_mid_z": "psi_mid_y"}
    for key, value in a.integrals.items():
        assert b.integrals[swap.get(key, key)] == pytest.approx(value, rel=1e-10), key
    assert b.ion_integrals == pytest.approx(a.ion_integrals, rel=1e-10)


def test_zeta_and_charge_mix_balances_its_charge() -> None:
    """Top/bottom at zeta = -2, sides of sigma_hat = -1 (nonlinear PB): the sides' flux is their charge exactly, the
    two pairs' fluxes sum to -kappa^2 int rho (Gauss), int u_eo = -kappa^2 int rho u_p (Onsager 1931), both to
    round-off; the zeta pair and the corner hold zeta. The corner between a fixed potential and a charge is r log r
    (derived here: the wedge's odd integer exponents), whose h^2 log h error the Richardson steps leave (they needed
    464 cells per direction for 1e-7 here); the grids are fitted with that term instead: 1e-7 within 256 cells, and
    every integral of a solve at accuracy 1e-5 lies within 1e-5 of it (the error control, the pairs' parts
    included)."""
    pairs = (row(POTENTIAL, -2.0), row(FLUX, -1.0))
    coarse, fine = (solve_rectangle_section(6.0, 2.0, 1.0 / 3.0, *SYMMETRIC, wall_rows=pairs, accuracy=accuracy)
                    for accuracy in (1e-5, 1e-7))
    v = fine.integrals
    assert v["flux_sides"] == pytest.approx(-1.0 * 2 * fine.height, rel=1e-14)
    assert v["flux_tb"] + v["flux_sides"] == pytest.approx(-fine.kappa**2 * v["rho"], rel=1e-10)
    assert fine.charge_balance < 1e-10 and fine.reciprocity < 1e-10
    assert fine.eo_identity == 0.0  # not an identity with two wall conditions
    assert fine.pair_potentials["tb"] == pytest.approx(-2.0, rel=1e-13)
    assert fine.wall_potentials["corner"] == -2.0
    assert fine.charge_density == pytest.approx(v["wall_flux"] / fine.perimeter, rel=1e-14)
    assert coarse.estimate <= 1e-5 and fine.estimate <= 1e-7 and fine.intervals <= 256
    for key, value in v.items():  # every integral, the pairs' parts included
        assert coarse.integrals[key] == pytest.approx(value, rel=1e-5), key
    assert coarse.ion_integrals == pytest.approx(fine.ion_integrals, rel=1e-5)


def test_zeta_and_regulated_walls_balance_their_charge() -> None:
    """Silica sides (regulated, pH 7, 10 mM KCl, H = 20 nm), top/bottom at zeta = -2: Gauss and Onsager to round-off
    (the regulated pair's charge from its law at each wall node, the rest on the zeta pair), the corner at zeta, and
    both pairs' mean charge densities negative (silica's and the negative zeta's; common practice)."""
    h = HEIGHT / 2
    pairs = (row(POTENTIAL, -2.0), silica_row(h))
    sol = solve_rectangle_section(6.0, 2.0, 3.04e-9 / h, *SYMMETRIC, wall_rows=pairs, accuracy=1e-5)
    v = sol.integrals
    assert sol.wall_types == (POTENTIAL, REGULATED)
    assert v["flux_tb"] + v["flux_sides"] == pytest.approx(-sol.kappa**2 * v["rho"], rel=1e-10)
    assert sol.charge_balance < 1e-10 and sol.reciprocity < 1e-10
    assert sol.wall_potentials["corner"] == -2.0
    assert sol.pair_charge_densities["sides"] < 0.0 and sol.pair_charge_densities["tb"] < 0.0


def test_wide_rectangle_with_different_pairs_tends_to_the_slit() -> None:
    """Nonlinear PB, top/bottom charged as a 20 nm slit of -20 mC/m^2 in 10 mM KCl, sides uncharged: mid-way along
    the long wall the potential is the slit's wall potential (the 1-D solver, ``edl.solve``), and the mean EO
    velocity tends to the slit's, the side walls' correction shrinking as H/W (each removes a strip of fixed width;
    common practice). The slit's EO ratio is that of its zeta walls at the charged slit's wall potential (the same
    profile; as test_rectangle_charge)."""
    sigma, height = -0.02, 20e-9

    def slit(wall: edl.Wall) -> dict:
        return edl.solve(edl.Case(geometry=edl.Slit(height=height), electrolyte=kcl(10.0), wall=wall, solvent=SOLVENT,
                                  model="pb", numerics=edl.Numerics(accuracy=1e-9))).summary

    charged = slit(edl.Wall(charge_density=sigma))
    eo_ratio = slit(edl.Wall(zeta=charged["zeta"]))["eo_ratio"]
    zeta, h = charged["zeta"] / SOLVENT.thermal_voltage, height / 2
    sigma_hat = sigma * h / (SOLVENT.permittivity * SOLVENT.thermal_voltage)
    corrections = {}
    for ratio in (20, 50):
        sol = solve_rectangle_section(2.0 * ratio, 2.0, charged["debye_length"] / h, *SYMMETRIC, accuracy=1e-7,
                                      wall_rows=(row(FLUX, sigma_hat), row(FLUX, 0.0)))
        assert sol.wall_potentials["mid_z"] == pytest.approx(zeta, rel=1e-8)
        assert sol.pair_charge_densities["sides"] == 0.0
        corrections[ratio] = sol.mean_velocity_eo / (-zeta * eo_ratio) - 1.0
    assert -0.05 < corrections[20] < 0.0
    assert corrections[50] * 50 == pytest.approx(corrections[20] * 20, rel=1e-6)


def test_regulated_and_charged_pairs_meet_their_accuracy() -> None:
    """Silica top/bottom (pH 7, 10 mM KCl, H = 20 nm), sides of sigma_hat = -0.5: the corner's r^2 log r (derived
    here: the regulated charge varies along its wall) slows the Richardson steps (the corner potential converged at
    order 2), the grids are fitted with an h^2 log h term: every integral at accuracy 1e-5 lies within 1e-5 of the
    solve at 1e-6; Gauss to round-off."""
    h = HEIGHT / 2
    pairs = (silica_row(h), row(FLUX, -0.5))
    coarse, fine = (solve_rectangle_section(8.0, 2.0, 3.04e-9 / h, *SYMMETRIC, wall_rows=pairs, accuracy=accuracy)
                    for accuracy in (1e-5, 1e-6))
    assert coarse.estimate <= 1e-5 and fine.estimate <= 1e-6 and fine.charge_balance < 1e-10
    assert fine.pair_charge_densities["sides"] == pytest.approx(-0.5, rel=1e-14)
    for key, value in fine.integrals.items():
        assert coarse.integrals[key] == pytest.approx(value, rel=1e-5), key


def test_wide_regulated_and_uncharged_rectangle_tends_to_the_regulated_slit() -> None:
    """Silica top/bottom (pH 7, 10 mM KCl, H = 20 nm), uncharged sides, W = 20 H: mid-way along the long wall the
    potential, and the top/bottom's mean charge density, are the 1-D regulated slit's (``edl.solve``): an uncharged
    side wall barely disturbs the regulated layer (the correction to the mean charge stays below 1e-9 here)."""
    slit = edl.solve(edl.Case(geometry=edl.Slit(height=HEIGHT), electrolyte=ELECTROLYTE, wall=edl.Wall.silica(),
                              solvent=SOLVENT, model="pb", numerics=edl.Numerics(accuracy=1e-9))).summary
    h = HEIGHT / 2
    zeta = slit["zeta"] / SOLVENT.thermal_voltage
    sigma_hat = slit["wall_charge_density"] * h / (SOLVENT.permittivity * SOLVENT.thermal_voltage)
    sol = solve_rectangle_section(40.0, 2.0, slit["debye_length"] / h, *SYMMETRIC,
                                  wall_rows=(silica_row(h), row(FLUX, 0.0)), accuracy=1e-7)
    assert sol.wall_potentials["mid_z"] == pytest.approx(zeta, rel=1e-8)
    assert sol.pair_charge_densities["tb"] == pytest.approx(sigma_hat, rel=1e-7)
    assert sol.pair_charge_densities["sides"] == 0.0
    assert sol.charge_balance < 1e-10


def test_missed_accuracy_names_both_pairs() -> None:
    """A solve that cannot meet its accuracy within max_intervals raises ConvergenceError saying so, with both pairs'
    conditions (house rule: never a wrong answer silently)."""
    with pytest.raises(ConvergenceError, match=r"top/bottom zeta = -2 kT/e, sides sigma_hat = -1: accuracy 1e-10 "
                                               r"missed \(estimate .*\) with 32 cells per direction"):
        solve_rectangle_section(6.0, 2.0, 1.0 / 3.0, *SYMMETRIC, wall_rows=(row(POTENTIAL, -2.0), row(FLUX, -1.0)),
                                accuracy=1e-10, max_intervals=32)


def test_two_different_fixed_potentials_are_refused() -> None:
    """Two different fixed potentials: the wall charge would diverge (log) at the corners between them, so they are
    refused in one line naming the field, both values and the way out (charges or regulated walls)."""
    with pytest.raises(InputError, match=r"^wall_rows = \(zeta -1, zeta -2\) kT/e: expected .*charges") as error:
        solve_rectangle_section(2.0, 2.0, 1.0, *SYMMETRIC, wall_rows=(row(POTENTIAL, -1.0), row(POTENTIAL, -2.0)))
    assert "\n" not in str(error.value)


@pytest.mark.parametrize(("kwargs", "field"), [
    ({"wall_rows": (row(FLUX, -1.0),)}, "wall_rows"),
    ({"wall_rows": (row(FLUX, -1.0), row(FLUX, -1.0)[:4])}, r"wall_rows\[1\] \(sides\)"),
    ({"wall_rows": (row(5, -1.0), row(FLUX, -1.0))}, r"wall_rows\[0\] \(top/bottom\)"),
    ({"wall_rows": (row(FLUX, np.nan), row(FLUX, -1.0))}, r"wall_rows\[0\] \(top/bottom\)"),
    ({"wall_rows": (row(FLUX, -1.0), row(FLUX, -1.0)), "zeta": -1.0}, "wall condition"),
])
def test_bad_wall_pairs_are_input_errors(kwargs: dict, field: str) -> None:
    """Bad wall pairs: one one-line InputError naming the field (house rule)."""
    with pytest.raises(InputError, match=f"^{field} = ") as error:
        solve_rectangle_section(2.0, 2.0, 1.0, *SYMMETRIC, **kwargs)
    assert "\n" not in str(error.value)


def test_equal_zeta_pairs_are_the_one_zeta_path() -> None:
    """wall_rows with one potential on both pairs is ``zeta=``: the same integrals (the wall split undefined)."""
    a = solve_rectangle_section(4.0, 2.0, 0.5, *SYMMETRIC, zeta=-2.0, accuracy=1e-6)
    b = solve_rectangle_section(4.0, 2.0, 0.5, *SYMMETRIC, wall_rows=(row(POTENTIAL, -2.0), row(POTENTIAL, -2.0)),
                                accuracy=1e-6)
    np.testing.assert_equal(a.integrals, b.integrals)
    assert b.charge_density is None and np.isnan(b.pair_charge_densities["tb"])
