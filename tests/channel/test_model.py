"""Finite channels between two reservoirs (``edl_solver.channel``) against published limits and closed forms.

Conventions of the module: x from the left reservoir (0) to the right one (L); Delta V = V(L) - V(0);
I, Q and J_s positive along +x. The power delivered to a load is I Delta V.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import edl_solver as edl
from edl_solver import channel as ch
from edl_solver.channel.model import cases_at
from edl_solver.constants import FARADAY
from tests.helpers import RT, SOLVENT

VT = RT / FARADAY  # kT/e


def salt(cation: str, anion: str, millimolar: float = 1.0) -> edl.Electrolyte:
    return edl.Electrolyte.from_ions({cation: millimolar, anion: millimolar})


@pytest.fixture(scope="module")
def selective() -> ch.ChannelTable:
    """2 nm slit, -50 mC/m^2, KCl 0.1 | 1 mM over 1 um: strongly overlapped and highly charged."""
    case = edl.Case(geometry=edl.Slit(height="2 nm"), electrolyte=salt("K+", "Cl-"),
                    wall=edl.Wall(charge_density="-50 mC/m^2"), solvent=SOLVENT)
    return ch.tabulate(ch.Channel(case, "1 um", "0.1 mM", "1 mM"))


@pytest.fixture(scope="module")
def uncharged() -> ch.ChannelTable:
    """Uncharged (zeta = 0) 50 nm capillary, NaCl 1 | 10 mM over 5 um: free-solution electrodiffusion."""
    case = edl.Case(geometry=edl.Capillary(radius="50 nm"), electrolyte=salt("Na+", "Cl-"), wall=edl.Wall(zeta=0.0),
                    solvent=SOLVENT)
    return ch.tabulate(ch.Channel(case, "5 um", "1 mM", "10 mM"))


def test_nernst_potential_of_an_ideally_selective_channel(selective: ch.ChannelTable) -> None:
    """Zero-current potential of an ideally cation-selective channel: mu~+ = RT ln c + F V is uniform, so
    V(L) - V(0) = -(kT/ze) ln(c_R/c_L) (Nernst). The space-charge model's own departure here is the streaming
    current of the osmotic flow (relative ~2 F c M_IP / M_II, 7e-4 at 1 mM, 7e-5 at 0.1 mM: computed), so the
    check is at 1e-3; the interpolation error of the potential gradient (stored, < 1e-6) is far below it."""
    case = selective.channel.case
    for c in (0.1, 1.0):  # the selectivity t+ - t- at both ends exceeds 0.999
        ends = edl.solve(cases_at(case, np.array([c]))[0])
        assert ends.summary["selectivity"] > 0.999
    nernst = -VT * math.log(10.0)
    potential = ch.membrane_potential(selective)
    assert potential == pytest.approx(nernst, rel=1e-3)
    assert selective.potential_interpolation_error < 1e-6


def test_henderson_diffusion_potential_of_an_uncharged_channel(uncharged: ch.ChannelTable) -> None:
    """Uncharged channel, 1:1 salt, no flow (Q = -L_PP dp/dx there, and Delta p = 0): J+ = J- with
    J_i = -D_i (c' + z_i c F V'/RT) gives V' = -(kT/e) (D+ - D-)/(D+ + D-) (ln c)', so
    V(L) - V(0) = -(kT/e) (D+ - D-)/(D+ + D-) ln(c_R/c_L) (Henderson 1907; Planck 1890). NaCl (D+ < D-) makes it
    positive: the faster Cl- runs ahead down the gradient toward the left. Agreement is limited by the
    interpolation and quadrature (both ~1e-9 here, where M is proportional to c)."""
    na, cl = (ion.diffusivity for ion in uncharged.channel.case.electrolyte.ions)
    henderson = -VT * (na - cl) / (na + cl) * math.log(10.0)
    assert henderson > 0.0
    assert ch.membrane_potential(uncharged) == pytest.approx(henderson, rel=1e-6)


def test_uncharged_channel_follows_plancks_electroneutral_solution(uncharged: ch.ChannelTable) -> None:
    """Planck's electroneutral solution (Planck 1890, from memory; derived here): for a 1:1 salt without flow,
    J+/D+ + J-/D- = -2 c' makes c linear in x, and J+/D+ - J-/D- = -2 c phi' (phi = FV/RT) integrates to
    -2 Delta c Delta phi / (L ln(c_R/c_L)). So I = F A (J+ - J-) is linear in Delta V with the conductance of the
    log-mean concentration, and J_s = (J+ + J-)/2."""
    channel = uncharged.channel
    na, cl = (ion.diffusivity for ion in channel.case.electrolyte.ions)
    area = math.pi * channel.case.geometry.radius**2
    c_left, c_right, length = channel.left_concentration, channel.right_concentration, channel.length
    total = -2.0 * (c_right - c_left) / length
    for voltage in (-0.2, -0.05, 0.0, 0.1, 0.3):
        difference = -2.0 * (c_right - c_left) * voltage / VT / (length * math.log(c_right / c_left))
        j_plus, j_minus = na * (total + difference) / 2.0, cl * (total - difference) / 2.0
        point = ch.operating_point(uncharged, voltage=voltage)
        assert point.status == "converged"
        assert point.current == pytest.approx(FARADAY * area * (j_plus - j_minus), rel=1e-7)
        assert point.salt_flux == pytest.approx(area * (j_plus + j_minus) / 2.0, rel=1e-7)
        # no flow: Q = -L_PP dp/dx with L_PP = pi a^4/(8 eta) (Hagen-Poiseuille) and Delta p = 0; measured
        # against the flow the osmotic pressure difference would drive, to the interpolation error (~1e-6)
        osmotic_flow = math.pi * channel.case.geometry.radius**4 / (8 * SOLVENT.viscosity) * RT * 2 * c_right / length
        assert abs(point.volume_flow) < 1e-6 * osmotic_flow
        # c(x) linear between the reservoirs
        linear = c_left + (c_right - c_left) * point.position / length
        assert np.max(np.abs(point.concentration - linear)) < 1e-6 * c_right


def test_equal_reservoirs_give_a_linear_iv_curve_with_the_section_conductance() -> None:
    """Uniform channel: E = -Delta V / L everywhere, so I = -G Delta V / L with G the section's conductance per
    length (Ohm's law; I along +x, Delta V = V(L) - V(0)); with Delta p only, I = the section's streaming current
    at dp/dx = Delta p / L and Q its pressure-driven flow (common practice)."""
    case = edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=salt("K+", "Cl-"),
                    wall=edl.Wall(charge_density="-5 mC/m^2"), solvent=SOLVENT)
    channel = ch.Channel(case, "10 um", "1 mM", "1 mM")
    section = edl.solve(case)
    conductance = section.summary["conductance_per_length"]
    voltages = np.linspace(-1.0, 1.0, 9)
    curve = ch.current_voltage(channel, voltages)
    assert np.all(curve.status.values == 0)
    expected = -conductance / channel.length * voltages
    assert np.max(np.abs(curve.current.values - expected)) <= 1e-8 * np.max(np.abs(expected))
    dp = 2e5  # Pa, p(L) - p(0)
    point = ch.operating_point(channel, voltage=0.0, pressure_difference=dp)
    driven = edl.solve(edl.Case(geometry=case.geometry, electrolyte=case.electrolyte, wall=case.wall,
                                solvent=SOLVENT, pressure_gradient=dp / channel.length))
    assert point.current == pytest.approx(driven.summary["streaming_current"], rel=1e-8)
    assert point.volume_flow == pytest.approx(driven.summary["flow_rate_pressure"], rel=1e-8)


def test_access_resistance_of_a_capillary_adds_in_series() -> None:
    """Hall 1975 (J. Gen. Physiol. 66, 531, from memory): each end adds 1/(4 K a), K = F^2/(RT) sum z^2 D c
    (Nernst-Einstein); in series with the channel, L / G."""
    case = edl.Case(geometry=edl.Capillary(radius="20 nm"), electrolyte=salt("K+", "Cl-", 10.0),
                    wall=edl.Wall(zeta="-30 mV"), solvent=SOLVENT)
    plain = ch.Channel(case, "2 um", "10 mM", "10 mM")
    with_access = ch.Channel(case, "2 um", "10 mM", "10 mM", access_resistance=True)
    conductivity = FARADAY**2 / RT * sum(ion.diffusivity * ion.concentration for ion in case.electrolyte.ions)
    access = 2.0 / (4.0 * conductivity * case.geometry.radius)
    channel_resistance = plain.length / edl.solve(case).summary["conductance_per_length"]
    for channel, resistance in ((plain, channel_resistance), (with_access, channel_resistance + access)):
        slope = np.polyfit([-0.1, 0.1], [ch.operating_point(channel, voltage=v).current for v in (-0.1, 0.1)], 1)[0]
        assert slope == pytest.approx(-1.0 / resistance, rel=1e-8)
    assert ch.tabulate(with_access).access_resistance == pytest.approx(access, rel=1e-12)
    # between different reservoirs each end has its own reservoir's K: the potential just inside the right
    # end is the right reservoir's plus I R_right (V(0) = 0 in the left reservoir); the profile uses the plain
    # second-order rule (the conditions its Richardson extrapolation), hence 1e-6
    graded = ch.Channel(case, "2 um", "1 mM", "10 mM", access_resistance=True)
    point = ch.operating_point(graded, voltage=0.1)
    right = 1.0 / (4.0 * conductivity * case.geometry.radius)  # K at 10 mM, the right reservoir's
    assert point.potential[-1] == pytest.approx(0.1 + point.current * right, rel=1e-6)
    assert point.channel_voltage == pytest.approx(0.1 + point.current * (right + 10.0 * right), rel=1e-12)


def test_maximum_osmotic_power_of_a_linear_source(uncharged: ch.ChannelTable) -> None:
    """A linear source delivers at most I_sc V_oc / 4, at V_oc / 2 (common practice). The uncharged channel's
    I-V curve is exactly linear (Planck's solution above): the maximum found over the load must equal the value
    from our own I-V curve's short-circuit current and open-circuit voltage."""
    power = ch.osmotic_power(uncharged)
    assert power.status == "converged"
    short = ch.current_voltage(uncharged, [0.0]).current.values[0]
    open_circuit = ch.membrane_potential(uncharged)
    assert power.max_power > 0.0
    assert power.max_power == pytest.approx(short * open_circuit / 4.0, rel=1e-7)
    assert power.voltage_at_max_power == pytest.approx(open_circuit / 2.0, rel=1e-3)  # flat maximum
    assert 0.0 < power.efficiency_total < 1.0  # second law


def test_reverse_electrodialysis_of_a_selective_channel(selective: ch.ChannelTable) -> None:
    """Nearly ideal cation selectivity: the I-V curve is nearly linear (measured: the current at V_oc / 2 is half
    the short-circuit current to the relative deviation `bend`), so the maximum power approaches I_sc V_oc / 4
    to within that deviation, and the efficiency at maximum power approaches 1/2 (linear irreversible
    thermodynamics for a perfectly coupled converter: Kedem & Caplan 1965, from memory); the second law bounds
    the total efficiency by 1."""
    power = ch.osmotic_power(selective)
    assert power.status == "converged"
    half = ch.operating_point(selective, voltage=power.open_circuit_voltage / 2.0).current
    bend = abs(half / (power.short_circuit_current / 2.0) - 1.0)
    assert bend < 0.05
    assert power.max_power == pytest.approx(power.linear_estimate, rel=2.0 * bend + 1e-6)
    assert power.max_power >= power.linear_estimate * (1.0 - 1e-9)  # a bent curve can only do better here
    assert power.efficiency == pytest.approx(0.5, abs=0.02)
    assert power.efficiency_total < 1.0


def test_swapping_the_reservoirs_mirrors_every_flux(selective: ch.ChannelTable) -> None:
    """Mirror symmetry x -> L - x (common practice): exchanging the reservoirs reverses the membrane potential
    and gives I(Delta V) -> -I(-Delta V), Q -> -Q, J_s -> -J_s."""
    channel = selective.channel
    mirrored = ch.tabulate(ch.Channel(channel.case, channel.length, channel.right_concentration,
                                      channel.left_concentration))
    assert ch.membrane_potential(mirrored) == pytest.approx(-ch.membrane_potential(selective), rel=1e-9)
    voltages = np.array([-0.3, 0.0, 0.2])
    forward = ch.current_voltage(selective, voltages)
    backward = ch.current_voltage(mirrored, -voltages)
    for name in ("current", "volume_flow", "salt_flux"):
        np.testing.assert_allclose(backward[name].values, -forward[name].values, rtol=1e-7)


def test_imposed_current_returns_the_voltage_that_drives_it(selective: ch.ChannelTable) -> None:
    """The voltage and current modes solve the same three conditions (consistency)."""
    driven = ch.operating_point(selective, voltage=0.25)
    back = ch.operating_point(selective, current=driven.current)
    assert back.voltage == pytest.approx(0.25, rel=1e-8)
    assert back.salt_flux == pytest.approx(driven.salt_flux, rel=1e-7)


def test_nearly_equal_reservoirs_approach_the_uniform_channel() -> None:
    """As c_R -> c_L the ln c path must reduce to the uniform channel (continuity of the two formulations):
    with c_R = 1.001 c_L, the I-V slope is -G(c)/L to O(1e-3) and the membrane potential is the section's
    diffusion_potential times ln(c_R/c_L) to O(1e-3)."""
    case = edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=salt("Na+", "Cl-"),
                    wall=edl.Wall(charge_density="-5 mC/m^2"), solvent=SOLVENT)
    table = ch.tabulate(ch.Channel(case, "5 um", 1.0, 1.001))
    section = edl.solve(case).summary
    currents = [ch.operating_point(table, voltage=v).current for v in (-0.01, 0.01)]
    slope = (currents[1] - currents[0]) / 0.02
    assert slope == pytest.approx(-section["conductance_per_length"] / 5e-6, rel=2e-3)
    assert ch.membrane_potential(table) == pytest.approx(section["diffusion_potential"] * math.log(1.001), rel=2e-3)


def test_interpolation_error_is_measured_and_falls_with_more_points() -> None:
    """The stored error compares the splines with direct solves at the grid midpoints; cubic splines in ln c
    converge as h^4 (common practice), so doubling the points cuts it by well over 4."""
    case = edl.Case(geometry=edl.Capillary(radius="10 nm"), electrolyte=salt("K+", "Cl-"),
                    wall=edl.Wall(charge_density="-20 mC/m^2"), solvent=SOLVENT)
    coarse = ch.tabulate(ch.Channel(case, "5 um", 100.0, 1.0, points=12))
    fine = ch.tabulate(ch.Channel(case, "5 um", 100.0, 1.0, points=24))
    assert 0.0 < fine.interpolation_error < coarse.interpolation_error / 4.0
    assert fine.solves == 2 * 24 - 1
    assert fine.interpolation_error < 1e-4


def test_iv_curve_dataset_has_units_status_and_the_table_error(selective: ch.ChannelTable) -> None:
    curve = ch.current_voltage(selective, np.linspace(-0.5, 0.5, 5))
    assert curve.current.attrs["units"] == "A/m" and curve.volume_flow.attrs["units"] == "m^2/s"
    assert list(curve.voltage.values) == pytest.approx([-0.5, -0.25, 0.0, 0.25, 0.5])
    assert np.all(curve.status.values == 0)
    assert curve.attrs["interpolation_error"] == selective.interpolation_error
    np.testing.assert_allclose(curve.power.values, curve.current.values * curve.voltage.values)


@pytest.mark.parametrize(("kwargs", "field"), [
    ({"length": "-1 um"}, "channel.length"),
    ({"length": 0.0}, "channel.length"),
    ({"left_concentration": 0.0}, "channel.left_concentration"),
    ({"right_concentration": "0 mM"}, "channel.right_concentration"),
    ({"right_concentration": "1 mm"}, "channel.right_concentration"),  # millimetre, not millimolar
    ({"access_resistance": True}, "channel.access_resistance"),  # a slit: no published formula used
    ({"points": 4}, "channel.points"),
])
def test_bad_inputs_raise_one_line_input_errors(kwargs: dict, field: str) -> None:
    case = edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=salt("K+", "Cl-"), wall=edl.Wall(zeta=-0.05))
    arguments = {"case": case, "length": "1 um", "left_concentration": 1.0, "right_concentration": 10.0} | kwargs
    with pytest.raises(edl.InputError) as info:
        ch.Channel(**arguments)
    message = str(info.value)
    assert message.startswith(field) and "\n" not in message


def test_operating_point_needs_exactly_one_drive(uncharged: ch.ChannelTable) -> None:
    with pytest.raises(edl.InputError, match="exactly one"):
        ch.operating_point(uncharged, voltage=0.1, current=1e-12)
    with pytest.raises(edl.InputError, match=r"^channel:"):
        ch.current_voltage("not a channel", [0.0])
