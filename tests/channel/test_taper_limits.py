"""Channels whose section varies along x (``channel.taper_table``, ``channel.taper_path``) against the uniform
channel and closed forms.

Conventions of ``edl_solver.channel.model``: x from the left reservoir (0) to the right one (L); Delta V =
V(L) - V(0); I positive along +x; slit values per unit width.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import edl_solver as edl
from edl_solver import channel as ch
from edl_solver.constants import FARADAY
from edl_solver.model.bulk import bulk_conductivity
from tests.helpers import KCL, RT, SOLVENT

CHARGED = edl.Case(geometry=edl.Capillary(radius="10 nm"), electrolyte=KCL,
                   wall=edl.Wall(charge_density="-20 mC/m^2"), solvent=SOLVENT)


def test_a_uniform_size_through_the_tapered_path_is_the_uniform_channel() -> None:
    """size=(a, a) between equal reservoirs: c stays the reservoirs' and F = M X exactly (model.py), so the
    collocation along x must give the uniform Channel's fluxes to round-off (the table holds c_L and a as nodes)."""
    uniform = ch.Channel(CHARGED, "1 um", "1 mM", "1 mM")
    tapered = ch.tabulate(ch.Channel(CHARGED, "1 um", "1 mM", "1 mM", size=("10 nm", "10 nm"), points=8))
    assert tapered.sizes is not None and tapered.sizes.size == 1
    for voltage, dp in ((0.1, 0.0), (-0.3, 0.0), (0.05, 2e4)):
        want = ch.operating_point(uniform, voltage=voltage, pressure_difference=dp)
        got = ch.operating_point(tapered, voltage=voltage, pressure_difference=dp)
        assert got.status == "converged", got.message
        for name in ("current", "volume_flow", "salt_flux"):
            assert getattr(got, name) == pytest.approx(getattr(want, name), rel=1e-10, abs=0.0), name
        np.testing.assert_allclose(got.concentration, 1.0, rtol=1e-10)


def test_a_uniform_size_between_different_reservoirs_agrees_with_the_ln_c_quadrature() -> None:
    """The same uniform channel by two discretisations (collocation in x here, the ln c quadrature of
    ``quadrature.py`` there) and two tables: they agree to the tables' interpolation error."""
    uniform = ch.tabulate(ch.Channel(CHARGED, "1 um", "0.5 mM", "2 mM"))
    tapered = ch.tabulate(ch.Channel(CHARGED, "1 um", "0.5 mM", "2 mM", size=("10 nm", "10 nm")))
    bound = 10.0 * max(uniform.interpolation_error, tapered.interpolation_error)
    for voltage in (0.0, 0.1, -0.1):
        want = ch.operating_point(uniform, voltage=voltage)
        got = ch.operating_point(tapered, voltage=voltage)
        assert got.current == pytest.approx(want.current, rel=bound)
    want = ch.membrane_potential(uniform)
    assert ch.membrane_potential(tapered) == pytest.approx(want, rel=10.0 * tapered.potential_interpolation_error)


def _uncharged(geometry: edl.Slit | edl.Capillary) -> edl.Case:
    return edl.Case(geometry=geometry, electrolyte=KCL, wall=edl.Wall(zeta=0.0), solvent=SOLVENT)


def test_an_uncharged_cone_has_the_ohmic_resistance_of_its_shape() -> None:
    """R = int_0^L dx / (K pi r(x)^2) with r linear from a to b: dr = (b - a) dx / L gives
    L/(K pi (b - a)) (1/a - 1/b) = L/(K pi a b) (derived here; Ohm's law in a slowly varying section, common
    practice). Access resistance off; the I-V curve is odd (no rectification)."""
    case = _uncharged(edl.Capillary(radius="20 nm"))
    table = ch.tabulate(ch.Channel(case, "1 um", "1 mM", "1 mM", size=("20 nm", "80 nm")))
    closed = 1e-6 / (bulk_conductivity(case) * math.pi * 20e-9 * 80e-9)
    voltages = np.array([-0.4, -0.1, 0.1, 0.4])
    current = ch.current_voltage(table, voltages)["current"].values
    assert table.interpolation_error < 1e-3
    np.testing.assert_allclose(-voltages / current, closed, rtol=max(table.interpolation_error, 1e-6))
    np.testing.assert_allclose(current[::-1], -current, rtol=1e-6)


def test_an_uncharged_tapered_slit_has_the_ohmic_resistance_of_its_shape() -> None:
    """Per unit width, R = int_0^L dx / (K h(x)) = L ln(h2/h1) / (K (h2 - h1)) for h linear (derived here)."""
    case = _uncharged(edl.Slit(height="20 nm"))
    table = ch.tabulate(ch.Channel(case, "2 um", "1 mM", "1 mM", size=("20 nm", "60 nm")))
    closed = 2e-6 * math.log(3.0) / (bulk_conductivity(case) * 40e-9)
    voltages = np.array([-0.2, 0.2])
    current = ch.current_voltage(table, voltages)["current"].values
    np.testing.assert_allclose(-voltages / current, closed, rtol=max(table.interpolation_error, 1e-6))


def test_a_charged_cone_between_two_reservoirs_reaches_the_nernst_potential() -> None:
    """Ideally cation-selective everywhere (2 to 4 nm, -50 mC/m^2, KCl 0.1 | 1 mM, as test_model's uniform
    slit): mu~+ = RT ln c + F V is uniform whatever the shape, so V(L) - V(0) = -(kT/e) ln(c_R/c_L) (Nernst),
    checked at 1e-3 as for the uniform channel (the osmotic flow's streaming current departs from it by less)."""
    electrolyte = edl.Electrolyte.from_ions({"K+": 0.1, "Cl-": 0.1})
    case = edl.Case(geometry=edl.Capillary(radius="2 nm"), electrolyte=electrolyte,
                    wall=edl.Wall(charge_density="-50 mC/m^2"), solvent=SOLVENT)
    nernst = -RT / FARADAY * math.log(10.0)
    for size in (("2 nm", "4 nm"), ("4 nm", "2 nm")):
        table = ch.tabulate(ch.Channel(case, "1 um", "0.1 mM", "1 mM", size=size, points=16, size_points=6))
        assert ch.membrane_potential(table) == pytest.approx(nernst, rel=1e-3)


def test_a_tapered_channel_gives_lab_landmarks_without_the_uniform_closed_forms() -> None:
    """``channel_characteristics`` of a cone between different reservoirs: its landmarks, and no Planck
    ``bulk_current`` (that closed form, Planck 1890, is for a uniform section). A Device of cones finds its
    stall pressure where its flow vanishes (the secant, since a charged cone is not linear)."""
    from edl_solver.channel.characteristics import channel_characteristics

    data = channel_characteristics(ch.Channel(CHARGED, "1 um", "0.5 mM", "2 mM", size=("5 nm", "20 nm"), points=16,
                                              size_points=6), [-0.1, 0.0, 0.1])
    assert "bulk_current" not in data and np.all(data["status"].values == 0)
    assert float(data["conductance"]) > 0.0 and float(data["membrane_potential"]) < 0.0  # cation selective
    device = ch.Device(ch.Channel(CHARGED, "1 um", "1 mM", "1 mM", size=("5 nm", "20 nm"), points=16,
                                  size_points=6), 10)
    curve = device.pump_curve(0.1)
    assert abs(device.state(0.1, curve.stall_pressure).flow_rate) <= 1e-8 * abs(curve.free_flow)


def test_pressure_driven_flow_through_an_uncharged_cone_follows_lubrication() -> None:
    """Q = -Delta p / int_0^L 8 eta dx / (pi r^4) with r linear: int = 8 eta L (1/a^3 - 1/b^3) / (3 pi (b - a))
    (Poiseuille in a slowly varying section, common practice; derived here). No charge, so no current."""
    case = _uncharged(edl.Capillary(radius="20 nm"))
    table = ch.tabulate(ch.Channel(case, "1 um", "1 mM", "1 mM", size=("20 nm", "80 nm"), points=8))
    a, b = 20e-9, 80e-9
    resistance = 8.0 * SOLVENT.viscosity * 1e-6 * (1.0 / a**3 - 1.0 / b**3) / (3.0 * math.pi * (b - a))
    point = ch.operating_point(table, voltage=0.0, pressure_difference=1e5)
    assert point.volume_flow == pytest.approx(-1e5 / resistance, rel=max(table.interpolation_error, 1e-6))
    assert point.pressure[-1] == pytest.approx(1e5, rel=1e-9)
