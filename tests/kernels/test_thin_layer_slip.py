"""The thin-layer chemiosmotic slip of any electrolyte (``kernels.thin_layer``): its quadrature against the
closed form of a z:z salt, against an independent mpmath evaluation of int_0^inf y Pi(psi(y)) dy for
asymmetric salts and a mixture, and through ``edl.solve`` against the full model in a wide channel."""

from __future__ import annotations

import math

import mpmath as mp
import numpy as np
import pytest

import edl_solver as edl
from edl_solver.kernels import layout as lay
from edl_solver.kernels import thin_layer

EPS, ETA, VT = 7.0e-10, 0.89e-3, 0.025693


def rows(pairs: list[tuple[float, float]]) -> np.ndarray:
    """``ION_*`` rows of (valence, concentration mol/m^3) pairs."""
    out = np.zeros((len(pairs), lay.ION_SIZE))
    for i, (valence, concentration) in enumerate(pairs):
        out[i, lay.ION_VALENCE], out[i, lay.ION_CONCENTRATION] = valence, concentration
    return out


def parameters() -> np.ndarray:
    p = np.zeros(lay.P_IONS)
    p[lay.P_PERMITTIVITY], p[lay.P_VISCOSITY] = EPS, ETA
    return p


def prieve(zeta: float, valence: float) -> float:
    """u per d ln c/dx = -(eps / eta)(kT / z e)^2 4 ln cosh(z e zeta / 4kT), z:z salt (Prieve, Anderson, Ebel &
    Lowell 1984, J. Fluid Mech. 148, 247; from memory)."""
    return -EPS / ETA * (VT / valence) ** 2 * 4.0 * math.log(math.cosh(valence * zeta / (4.0 * VT)))


@pytest.mark.parametrize("valence", [1, 2, 3])
@pytest.mark.parametrize("potential", [-15.0, -6.0, -1.0, 0.02, 2.5, 9.0, 15.0])
def test_quadrature_meets_the_zz_closed_form(valence: int, potential: float) -> None:
    # J = (8 / z^2) ln cosh(z phi_w / 4) for a z:z salt, so that (eps/2)(kT/e)^2 J is Prieve et al.'s integral.
    got = thin_layer.chemiosmotic_integral(potential, rows([(valence, 3.0), (-valence, 3.0)]))
    assert got == pytest.approx(8.0 / valence**2 * math.log(math.cosh(valence * potential / 4.0)), rel=1e-13)


@pytest.mark.parametrize("zeta", [-0.3, -0.05, 0.1])
def test_mixture_of_one_one_salts_slips_as_their_sum(zeta: float) -> None:
    # K+, Na+ over Cl-, NO3-: every ion +-1, so Pi is that of one 1:1 salt of the summed concentration and the
    # general path must give Prieve's slip (the prefactor (eps/eta)(kT/e)^2 J/2 included).
    mixture = rows([(1, 1.0), (1, 2.0), (-1, 2.5), (-1, 0.5)])
    got = thin_layer._chemiosmotic_slip(zeta, mixture, parameters(), VT)
    assert got == pytest.approx(prieve(zeta, 1), rel=1e-13)


def reference(pairs: list[tuple[float, float]], potential: float) -> mp.mpf:
    """int_0^inf y Pi(psi(y)) dy / ((eps / 2)(kT / e)^2), from mpmath, in units eps = kT/e = RT = 1.

    psi(y) is the isolated Gouy-Chapman layer, psi'^2 = 2 Pi(psi) (its first integral; Pi = sum_i c_i
    (exp(-z_i psi) - 1)); its inverse y(psi) = int_psi^zeta dpsi' / sqrt(2 Pi) is an inner quadrature and the
    outer integral runs over psi, dy = dpsi / |psi'| -- the other order from the kernel's G(psi) / sqrt(P)."""
    with mp.workdps(20):
        sign, span = mp.sign(potential), abs(mp.mpf(potential))

        def pressure(t):
            return mp.fsum(mp.mpf(c) * mp.expm1(-z * sign * t) for z, c in pairs)

        def distance(t):
            return mp.quad(lambda s: 1 / mp.sqrt(2 * pressure(s)), [t, span])

        return 2 * mp.quad(lambda t: distance(t) * mp.sqrt(pressure(t) / 2), [0, span])


SALTS = {"2:1": [(2, 1.0), (-1, 2.0)], "1:2": [(1, 2.0), (-2, 1.0)], "3:1": [(3, 1.0), (-1, 3.0)],
         "mixture": [(2, 0.5), (1, 1.0), (-1, 2.0)]}


def salt_cases(fast: dict[str, float], slow: tuple[float, ...]) -> list:
    # One potential per salt always; the rest (~3 s each) only with -m slow.
    return [pytest.param(name, zeta, id=f"{name}-{zeta:g}kT",
                         marks=() if fast[name] == zeta else pytest.mark.slow)
            for name in SALTS for zeta in sorted({fast[name], *slow})]


@pytest.mark.parametrize("salt,potential", salt_cases({"2:1": -15.0, "1:2": 15.0, "3:1": -4.0, "mixture": 6.0},
                                                      (-15.0, 15.0)))
def test_quadrature_against_mpmath_double_integral(salt: str, potential: float) -> None:
    got = thin_layer.chemiosmotic_integral(potential, rows(SALTS[salt]))
    assert got == pytest.approx(float(reference(SALTS[salt], potential)), rel=1e-12)


def test_large_potentials_stay_finite_and_tend_to_the_counterion_slope() -> None:
    # Far out G / sqrt(P) -> 2 / z_counter (P ~ exp(z_counter phi)): no overflow at |phi| = 500 (the step is a
    # difference of two ~1e3 numbers, hence 1e-10).
    salt = rows([(2, 1.0), (-1, 2.0)])
    step = thin_layer.chemiosmotic_integral(501.0, salt) - thin_layer.chemiosmotic_integral(500.0, salt)
    assert step == pytest.approx(2.0, rel=1e-10)
    step = thin_layer.chemiosmotic_integral(-501.0, salt) - thin_layer.chemiosmotic_integral(-500.0, salt)
    assert step == pytest.approx(1.0, rel=1e-10)


@pytest.mark.parametrize("wall", [edl.Wall(zeta="-50 mV"), edl.Wall(charge_density="-20 mC/m^2")],
                         ids=["zeta", "charge"])
def test_cacl2_thin_layer_diffusioosmosis_meets_the_full_model_in_a_wide_slit(wall: edl.Wall) -> None:
    # kappa h ~ 1100 (Debye length 1.75 nm, 2 um slit): the thin-layer limit, where the slip model is expected
    # to agree with the full space-charge model to within the surface-conduction (Dukhin) corrections, a few
    # percent here (common practice). The thin-layer value was NaN for every salt but z:z before.
    case = edl.Case(geometry=edl.Slit(height="2 um"), wall=wall,
                    electrolyte=edl.Electrolyte.from_ions({"Ca2+": "10 mM", "Cl-": "20 mM"}))
    summary = edl.solve(case).summary
    thin, full = summary["thin_layer_diffusioosmotic_flow"], summary["diffusioosmotic_flow"]
    assert math.isfinite(thin)
    assert thin == pytest.approx(full, rel=0.03)
    assert summary["thin_layer_diffusioosmotic_flow_error"] == pytest.approx((thin - full) / full, rel=1e-9)
