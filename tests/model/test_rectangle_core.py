"""The numerical core of the rectangular cross-section (``model.rectangle``): closed-form series, the slit limit,
the identities of the scheme and its observed order."""

from __future__ import annotations

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.errors import InputError
from edl_solver.model.rectangle import solve_rectangle_section
from tests.helpers import SOLVENT, kcl

SYMMETRIC = ([1, -1], [1.0, 1.0])


def mean_of_duct_series(a: float, b: float, kappa: float, source: float, terms: int = 2_000_000) -> float:
    """Mean over the rectangle [0, a] x [0, b] of phi solving -lap phi + kappa^2 phi = source, phi = 0 on the walls.

    Derived here; series of the kind in Arulanandam & Li 2000, J. Colloid Interface Sci. 225, 421 (from memory).
    The double sine series phi = sum_{m,n odd} 16 source / (pi^2 m n (kappa^2 + (m pi/a)^2 + (n pi/b)^2))
    sin(m pi y/a) sin(n pi z/b), summed over n in closed form (the 1-D problem f'' - k_m^2 f = -4 source/(m pi),
    k_m^2 = kappa^2 + (m pi/a)^2, f = 0 at z = 0, b), leaves
    mean phi = source sum_{m odd} 8 / (m^2 pi^2 k_m^2) [1 - tanh(k_m b/2) / (k_m b/2)],
    whose terms fall as m^-4: 1e6 terms leave a tail below 1e-17 of the sum for the sizes used here.
    kappa = 0, source = -1 is Poiseuille flow in a rectangular duct (lap u = 1; e.g. White, Viscous Fluid Flow, from
    memory).
    """
    m = np.arange(1, 2 * terms, 2, dtype=float)
    k = np.sqrt(kappa**2 + (m * np.pi / a) ** 2)
    x = 0.5 * k * b
    return float(source * np.sum(8.0 / (m**2 * np.pi**2 * k**2) * (1.0 - np.tanh(x) / x)))


@pytest.mark.parametrize(("a", "b"), [(2.0, 2.0), (2.0, 10.0)])
def test_duct_series_is_symmetric_in_its_two_directions(a: float, b: float) -> None:
    """The reference sums one direction in closed form: summing the other one instead must give the same mean
    (a check of the derivation itself; the double series is symmetric in y and z)."""
    for kappa in (0.0, 1.0, 10.0):
        assert mean_of_duct_series(a, b, kappa, -1.0) == pytest.approx(mean_of_duct_series(b, a, kappa, -1.0),
                                                                        rel=1e-12)


@pytest.mark.parametrize(("width", "height", "kappa_h"), [(2.0, 2.0, 1.0), (2.0, 2.0, 10.0), (10.0, 2.0, 1.0),
                                                         (2.0, 10.0, 10.0)])
def test_debye_hueckel_rectangle_against_fourier_series(width: float, height: float, kappa_h: float) -> None:
    """Mean EO velocity (no slip: mean of psi - zeta) and mean pressure-driven velocity of a Debye-Hueckel square and
    1:5 rectangle against the duct series (``mean_of_duct_series``), to 1e-8 with accuracy 1e-9."""
    zeta = -1.3
    sol = solve_rectangle_section(width, height, 1.0 / kappa_h, *SYMMETRIC, model="dh", zeta=zeta, accuracy=1e-9)
    eo = mean_of_duct_series(width, height, kappa_h, -kappa_h**2 * zeta)
    pressure = mean_of_duct_series(width, height, 0.0, -1.0)
    assert sol.area == pytest.approx(width * height, rel=1e-14)
    assert sol.estimate <= 1e-9
    assert sol.mean_velocity_eo == pytest.approx(eo, rel=1e-8)
    assert sol.integrals["u_p"] / sol.area == pytest.approx(pressure, rel=1e-8)
    assert sol.mean_potential == pytest.approx(eo + zeta, rel=1e-8)


def test_wide_rectangle_tends_to_the_slit() -> None:
    """Nonlinear PB: as W/H grows, the EO ratio (mean EO velocity over the Helmholtz-Smoluchowski one) of the
    rectangle tends to that of the slit of the same height (the 1-D solver), the side walls' correction shrinking as
    H/W (each side wall removes a strip of fixed width from the slit-like middle; common practice)."""
    case = edl.Case(geometry=edl.Slit(height=20e-9), electrolyte=kcl(10.0), wall=edl.Wall(zeta=-0.08),
                    solvent=SOLVENT, model="pb", numerics=edl.Numerics(accuracy=1e-9))
    summary = edl.solve(case).summary
    zeta = summary["zeta"] / SOLVENT.thermal_voltage
    debye = summary["debye_length"] / 10e-9  # in h = H/2
    corrections = {}
    for ratio in (20, 50):
        sol = solve_rectangle_section(2.0 * ratio, 2.0, debye, *SYMMETRIC, model="pb", zeta=zeta, accuracy=1e-8)
        corrections[ratio] = sol.mean_velocity_eo / -zeta / summary["eo_ratio"] - 1.0
    assert -0.02 < corrections[20] < 0.0
    assert corrections[50] * 50 == pytest.approx(corrections[20] * 20, rel=1e-4)


@pytest.mark.parametrize(("width", "kappa_h"), [(2.0, 3.0), (6.0, 20.0)])
def test_eo_velocity_is_potential_minus_zeta_pointwise(width: float, kappa_h: float) -> None:
    """Equal walls, no slip, uniform viscosity: u_eo = psi - zeta (dimensionless) pointwise for nonlinear PB, an
    identity of Stokes with the PB charge (common practice). The discrete Poisson and Stokes operators are the same
    5-point operator, so it holds on the grid to round-off: a check of the 2-D Stokes solve and its boundary rows."""
    sol = solve_rectangle_section(width, 2.0, 1.0 / kappa_h, [2, -1], [1.0, 2.0], model="pb", zeta=-4.0,
                                  accuracy=1e-6)
    fine = sol.finest
    assert np.max(np.abs(fine.u_eo - (fine.psi - (-4.0)))) < 1e-11
    assert sol.eo_identity < 1e-11
    assert fine.psi[0, 0] > -4.0 and np.all(fine.u_eo >= 0.0)


@pytest.mark.parametrize(("model", "zeta"), [("pb", -3.0), ("dh", 2.0), ("pb", 0.0)])
def test_charge_balance_and_reciprocity(model: str, zeta: float) -> None:
    """Gauss: the wall flux equals -kappa^2 int rho dA; Onsager reciprocity (Onsager 1931): int u_eo dA =
    -kappa^2 int rho u_p dA. Both hold for the discrete system to round-off (symmetric operator, wall flux from the
    wall cells' balances)."""
    sol = solve_rectangle_section(8.0, 2.0, 0.2, *SYMMETRIC, model=model, zeta=zeta, accuracy=1e-6)
    v = sol.integrals
    assert sol.charge_balance < 1e-10 and sol.reciprocity < 1e-10
    if zeta != 0.0:
        assert v["wall_flux"] == pytest.approx(-sol.kappa**2 * v["rho"], rel=1e-10)
        assert v["u_eo"] == pytest.approx(-sol.kappa**2 * v["rho_u_p"], rel=1e-10)
        assert np.sign(v["wall_flux"]) == np.sign(zeta)
    else:
        assert abs(v["wall_flux"]) < 1e-12 and abs(v["u_eo"]) < 1e-12


def test_observed_order() -> None:
    """Raw integrals converge as h^2 (observed order 2 under halving, common practice for the 5-point scheme);
    after extrapolation the order is about 4: the corner's r^2 log r singularity (Dirichlet walls meeting at a right
    angle with a nonzero charge there) leaves an h^4-type term that the h^4 removal only partly takes out."""
    a, b, kappa_h, zeta = 10.0, 2.0, 1.0, -1.0
    exact = mean_of_duct_series(a, b, kappa_h, -kappa_h**2 * zeta)
    raw, extrapolated = [], []
    for n in (32, 64, 128):
        sol = solve_rectangle_section(a, b, 1.0 / kappa_h, *SYMMETRIC, model="dh", zeta=zeta, intervals=n)
        raw.append(sol.finest.integrals[1] / sol.area - exact)
        extrapolated.append(sol.mean_velocity_eo - exact)
    raw_order = np.log2(np.abs(np.array(raw[:-1]) / raw[1:]))
    extrapolated_order = np.log2(np.abs(np.array(extrapolated[:-1]) / extrapolated[1:]))
    assert raw_order == pytest.approx([2.0, 2.0], abs=0.01)
    assert np.all(extrapolated_order > 3.5)
    assert abs(extrapolated[-1]) < 1e-3 * abs(raw[-1])


def test_error_estimate_meets_the_accuracy() -> None:
    """Every integral of a PB solve at accuracy 1e-6 is within 1e-6 of the same solve at 1e-9 (the error control
    of the 1-D solver, common practice), and a DH layer of huge wall potential is stretched for its Debye length
    alone (it once refined past any grid for a Gouy-Chapman inner scale it does not have)."""
    for model, zeta in (("pb", -6.0), ("dh", 50.0)):
        coarse, fine = (solve_rectangle_section(12.0, 2.0, 0.05, *SYMMETRIC, model=model, zeta=zeta, accuracy=acc)
                        for acc in (1e-6, 1e-9))
        assert coarse.estimate <= 1e-6
        for key, value in fine.integrals.items():
            # the centre potential, exponentially small here, is measured against the wall potential (1-D solver)
            tolerance = 1e-6 * abs(zeta) if key == "psi_centre" else 0.0
            assert coarse.integrals[key] == pytest.approx(value, rel=1e-6, abs=tolerance, nan_ok=True), key
        assert coarse.ion_integrals == pytest.approx(fine.ion_integrals, rel=1e-6)


def test_integer_inputs_solve_as_floats() -> None:
    """Integers are numbers like any other: an integer wall potential once made integer node arrays."""
    as_int = solve_rectangle_section(2, 2, 1, [1, -1], [1, 1], zeta=-2, accuracy=1e-6)
    as_float = solve_rectangle_section(2.0, 2.0, 1.0, [1.0, -1.0], [1.0, 1.0], zeta=-2.0, accuracy=1e-6)
    np.testing.assert_equal(as_int.integrals, as_float.integrals)  # NaN (the undefined wall split) equals NaN


@pytest.mark.parametrize(("field", "kwargs"), [("width", {"width": -1.0}), ("debye_length", {"debye_length": 0.0}),
                                               ("model", {"model": "steric"}),
                                               ("concentrations", {"concentrations": [1.0, 2.0]})])
def test_bad_input_names_the_field(field: str, kwargs: dict) -> None:
    """Bad input: one InputError naming the field (house rule)."""
    args = {"width": 2.0, "height": 2.0, "debye_length": 1.0, "valences": [1, -1], "concentrations": [1.0, 1.0]}
    args.update(kwargs)
    with pytest.raises(InputError, match=f"^{field} = "):
        solve_rectangle_section(**args)
