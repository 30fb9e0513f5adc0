"""A rectangular channel through ``edl.solve`` (issue 13): the public contract (``edl.Rectangle``; ``eo_ratio``,
``flow_rate_eo`` in m^3/s, ``mean_velocity_eo``, ``current_per_field`` as for a capillary), the summary against
closed forms, the wide rectangle against the slit, and the shape's own closed forms (duct flow, slip share)."""

from __future__ import annotations

import math

import mpmath
import pytest

import edl_solver as edl
from edl_solver.constants import BOLTZMANN, ELEMENTARY_CHARGE
from edl_solver.inputs.geometry import duct_flow_per_gradient, harmonic_share
from tests.model.test_rectangle_core import mean_of_duct_series

SALT = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})
FIELD = 1e4


def _case(width: str, height: str, wall: edl.Wall, **kwargs) -> edl.Case:
    return edl.Case(edl.Rectangle(width=width, height=height), SALT, wall, field=FIELD, **kwargs)


def test_public_contract_values_mean_what_they_mean_for_a_capillary() -> None:
    """flow_rate_eo is the channel's flow in m^3/s (mean velocity times W H), eo_ratio the mean EO velocity over the
    thin-layer one (Helmholtz-Smoluchowski, u = -eps zeta E / eta, common practice), current_per_field the current
    per unit field in S m (no pressure gradient): as the schema states for a capillary."""
    result = edl.solve(_case("200 nm", "40 nm", edl.Wall(zeta="-40 mV")))
    s = result.summary
    area = 200e-9 * 40e-9
    assert s["flow_rate_eo"] == pytest.approx(s["mean_velocity_eo"] * area, rel=1e-14)
    solvent = result.case.solvent
    smoluchowski = -solvent.permittivity * -0.040 * FIELD / solvent.viscosity
    assert s["hs_velocity"] == pytest.approx(smoluchowski, rel=1e-12)
    assert s["eo_ratio"] == pytest.approx(s["mean_velocity_eo"] / smoluchowski, rel=1e-12)
    assert s["current_per_field"] == pytest.approx(s["current"] / FIELD, rel=1e-12)
    assert s["kappa_h"] == pytest.approx(20e-9 / result.case.debye_length, rel=1e-14)  # h = min(W, H) / 2
    assert 0.0 < s["eo_ratio"] < 1.0  # the layers slow the flow: below the thin-layer value (common practice)
    assert s["charge_balance"] < 1e-10 and s["reciprocity_residual"] < 1e-10
    assert "Rectangle of width W = 200 nm and height H = 40 nm" in result.report()
    assert "All four walls" in result.report()


@pytest.mark.parametrize(("width", "height"), [("60 nm", "60 nm"), ("300 nm", "60 nm"), ("60 nm", "300 nm")])
def test_debye_hueckel_mean_velocity_against_the_duct_series(width: str, height: str) -> None:
    """Debye-Hueckel rectangle: the mean EO velocity (E eps kT / (e eta) times the mean of psi - zeta) and the
    pressure-driven flow against the double Fourier series (``mean_of_duct_series``; series of the kind in
    Arulanandam & Li 2000, J. Colloid Interface Sci. 225, 421, from memory) to 1e-8, and the Poiseuille flow also
    against White's duct series (``duct_flow_per_gradient``)."""
    zeta = -0.01
    case = _case(width, height, edl.Wall(zeta=zeta), model="dh", pressure_gradient=-1e9,
                 numerics=edl.Numerics(accuracy=1e-9))
    s = edl.solve(case).summary
    w, h_full = case.geometry.width, case.geometry.height
    h = 0.5 * min(w, h_full)
    kt_e = BOLTZMANN * case.solvent.temperature / ELEMENTARY_CHARGE
    kappa_h = h / case.debye_length
    mean_hat = mean_of_duct_series(w / h, h_full / h, kappa_h, -kappa_h**2 * zeta / kt_e)
    scale = FIELD * case.solvent.permittivity * kt_e / case.solvent.viscosity
    assert s["mean_velocity_eo"] == pytest.approx(scale * mean_hat, rel=1e-8)
    poiseuille = -1e9 * h**4 / case.solvent.viscosity * mean_of_duct_series(w / h, h_full / h, 0.0, -1.0) * w * h_full \
        / h**2
    assert s["flow_rate_pressure"] == pytest.approx(poiseuille, rel=1e-8)
    white = duct_flow_per_gradient(w, h_full, case.solvent.viscosity) * 1e9
    assert s["flow_rate_pressure"] == pytest.approx(white, rel=1e-8)


def test_wide_rectangle_tends_to_the_slit_of_its_height() -> None:
    """A rectangle W >> H carries the slit's flow and current per unit width (nonlinear PB, charged walls), less a
    side-wall correction that shrinks like H / W (the side walls' layers and the slow flow near them span ~H of
    the width; common practice)."""
    wall = edl.Wall(charge_density="-5 mC/m^2")
    slit = edl.solve(edl.Case(edl.Slit(height="20 nm"), SALT, wall, field=FIELD)).summary
    corrections = []
    for width in (200e-9, 400e-9):
        result = edl.solve(edl.Case(edl.Rectangle(width=width, height="20 nm"), SALT, wall, field=FIELD))
        s = result.summary
        corrections.append(abs(s["flow_rate_eo"] / width / slit["flow_rate_eo"] - 1.0))
        beside = result.slit_comparison  # the same slit, scaled to the width, with the side walls' effect
        assert beside["flow_rate_eo"] == pytest.approx(slit["flow_rate_eo"] * width, rel=1e-14)
        assert beside["side_wall_effect_mean_velocity_eo"] == pytest.approx(-corrections[-1], rel=1e-12)
        assert s["current_per_field"] / width == pytest.approx(slit["current_per_field"], rel=0.2 * 20e-9 / width * 10)
    assert corrections[0] < 0.2
    assert corrections[1] == pytest.approx(corrections[0] / 2, rel=0.1)  # ~ H / W


def test_thin_layers_meet_the_thin_layer_model() -> None:
    """At kappa h ~ 100 the mean EO velocity is the Helmholtz-Smoluchowski velocity less the layers' share of the
    section (eo_ratio -> 1 - O(1 / kappa h); common practice), and the verdict calls the slip model valid."""
    salt = edl.Electrolyte.from_ions({"K+": "100 mM", "Cl-": "100 mM"})
    result = edl.solve(edl.Case(edl.Rectangle(width="600 nm", height="200 nm"), salt, edl.Wall(zeta="-25 mV"),
                                field=FIELD))
    s = result.summary
    assert s["kappa_h"] > 100
    assert 0.97 < s["eo_ratio"] < 1.0
    assert "valid" in result.verdict and "not valid" not in result.verdict


def test_uncharged_rectangle_conducts_as_bulk() -> None:
    """Uncharged walls: conductance x length is K W H with K the bulk conductivity (Kohlrausch, common practice),
    and there is no EO flow."""
    s = edl.solve(_case("100 nm", "30 nm", edl.Wall(zeta=0.0))).summary
    assert s["conductance_per_length"] == pytest.approx(s["thin_layer_conductance_per_length"], rel=1e-10)
    assert abs(s["flow_rate_eo"]) < 1e-30


def test_duct_flow_against_the_series_and_the_square_constant() -> None:
    """White's duct series (``duct_flow_per_gradient``) against mpmath's sum of it and the square duct's
    Q = 0.0351 a^4 (dp/dx) / eta (White, Viscous Fluid Flow, from memory), and symmetric in W and H."""
    assert duct_flow_per_gradient(1.0, 1.0, 1.0) == pytest.approx(0.0351, abs=5e-5)

    def series(a: float, b: float) -> float:
        total = mpmath.nsum(lambda k: mpmath.tanh((2 * k + 1) * mpmath.pi * a / (2 * b)) / (2 * k + 1) ** 5,
                            [0, mpmath.inf])
        return float(a * b**3 / 12 * (1 - 192 * b / (mpmath.pi**5 * a) * total))

    for w, h in ((1.0, 1.0), (5.0, 1.0), (1.0, 20.0), (1000.0, 1.0)):
        assert duct_flow_per_gradient(w, h, 1.0) == pytest.approx(series(max(w, h), min(w, h)), rel=1e-13)
        assert duct_flow_per_gradient(w, h, 1.0) == pytest.approx(duct_flow_per_gradient(h, w, 1.0), rel=1e-15)


def test_slip_share_against_its_series() -> None:
    """The top and bottom walls' share of slip-driven flow (``harmonic_share``): 1/2 for a square (symmetry), the
    two pairs' shares sum to 1, and mpmath's sum of the series agrees to 1e-13."""
    assert harmonic_share(3.0, 3.0) == pytest.approx(0.5, rel=1e-14)

    def series(w: float, h: float, terms: int = 3000) -> float:
        # 3000 terms in mpmath (tanh is 1 to 1e-30 beyond them for these shapes), the rest exactly: sum over
        # k >= K of (2k + 1)^-3 = zeta(3, K + 1/2) / 8 (Hurwitz); mpmath's nsum extrapolation misses this slowly
        # saturating series by 5e-6
        c = 16 * w / (mpmath.pi**3 * h)
        head = mpmath.fsum(mpmath.tanh((2 * k + 1) * mpmath.pi * h / (2 * w)) / (2 * k + 1) ** 3 for k in range(terms))
        return float(c * (head + mpmath.zeta(3, terms + 0.5) / 8))

    for w, h in ((2.0, 1.0), (1.0, 5.0), (20.0, 1.0), (1.0, 20.0)):
        assert harmonic_share(w, h) + harmonic_share(h, w) == pytest.approx(1.0, rel=1e-14)
        assert harmonic_share(w, h) == pytest.approx(series(w, h), rel=1e-13)
    assert harmonic_share(1e4, 1.0) == pytest.approx(1.0 - 16 / math.pi**3 * 7 / 8 * 1.2020569031595942e0 * 1e-4,
                                                     rel=1e-12)


def test_refusals_name_the_field() -> None:
    """What the rectangle does not model is refused at the edge, naming the field and what is expected."""
    with pytest.raises(edl.InputError, match=r"wall.slip_length: .* not modelled for a rectangle"):
        _case("100 nm", "30 nm", edl.Wall(zeta="-20 mV", slip_length="5 nm"))
    with pytest.raises(edl.InputError, match=r"wall.sides.zeta: .* differs from wall.top_bottom.zeta"):
        _case("100 nm", "30 nm", (edl.Wall(zeta="-20 mV"), edl.Wall(zeta="-30 mV")))
    with pytest.raises(edl.InputError, match=r"geometry.width: .*below the solver's domain"):
        edl.Rectangle(width="0.01 nm", height="30 nm")



def test_slit_comparison_goes_to_the_file_and_back(tmp_path) -> None:
    """The slit beside a rectangle is written to its HDF5 file and read back as it was (common practice: a file
    holds what the report shows)."""
    result = edl.solve(_case("120 nm", "40 nm", edl.Wall(zeta="-30 mV")))
    back = edl.load(result.to_hdf5(tmp_path / "rectangle.h5"))
    assert back.slit_comparison == result.slit_comparison


def test_two_wall_pairs_through_solve() -> None:
    """Top and bottom walls of fixed charge beside uncharged (zeta = 0) side walls: the pair values come as
    (top_bottom, sides); the given charge is returned exactly; the thin-layer mean velocity is the top pair's slip
    times its share of slip-driven flow (``harmonic_share``, derived by separation of variables); Newton's residual
    is reported."""
    case = _case("200 nm", "40 nm", (edl.Wall(charge_density="-20 mC/m^2"), edl.Wall(zeta=0.0)))
    result = edl.solve(case)
    s = result.summary
    assert s["wall_charge_density"][0] == pytest.approx(-0.020, rel=1e-12)
    assert s["zeta"][1] == 0.0 and s["hs_velocity"][1] == 0.0
    thin_mean = harmonic_share(200e-9, 40e-9) * s["hs_velocity"][0]
    assert s["thin_layer_flow_rate_eo"] == pytest.approx(thin_mean * 200e-9 * 40e-9, rel=1e-12)
    assert s["eo_ratio"] == pytest.approx(s["mean_velocity_eo"] / thin_mean, rel=1e-12)
    assert s["charge_balance"] < 1e-10 and result.residual < 1e-8
    assert "Top and bottom walls" in result.report() and "Side walls" in result.report()


def test_steric_rectangle_through_solve_tends_to_the_steric_slit() -> None:
    """The steric (Bikerman) model through edl.solve: a wide rectangle's mean EO velocity approaches the steric
    slit's (its slit comparison) within a side-wall correction of order H / W (common practice)."""
    ions = [edl.Ion(name, concentration="100 mM", diameter="0.7 nm") for name in ("K+", "Cl-")]
    case = edl.Case(edl.Rectangle(width="400 nm", height="20 nm"), edl.Electrolyte(ions), edl.Wall(zeta="-150 mV"),
                    field=FIELD, model="steric")
    result = edl.solve(case)
    assert abs(result.slit_comparison["side_wall_effect_mean_velocity_eo"]) < 2 * 20 / 400
