"""The conductance curve and its limits, and the channel characteristics (``edl_solver.channel.conductance``).
The figures are checked in tests/plot/test_transport.py, the ``edl transport`` command in
tests/cli/test_transport_command.py.

Conventions of ``edl_solver.channel.model``: x from the left reservoir (0) to the right one (L); Delta V = V(L) - V(0);
currents positive along +x; slit values per unit width.
"""

from __future__ import annotations

import math
import re

import numpy as np
import pytest

import edl_solver as edl
from edl_solver import channel as ch
from edl_solver.channel.conductance import (
    channel_characteristics,
    conductance_curve,
    counterion_convection,
    crossover_concentration,
)
from edl_solver.constants import FARADAY
from edl_solver.errors import InputError
from tests.helpers import KCL, RT, SOLVENT, case_of

# -- the conductance curve against its limits ---------------------------------------------------------


def test_plateau_of_an_overlapped_fixed_charge_slit_is_the_counterion_conduction() -> None:
    """Counter-ions alone (c -> 0 in an overlapped channel): charge balance puts a charge -2 sigma per unit area
    of wall pair into K+, each conducting with the mobility e D/kT, so G L / W = 2 (e D_K / kT) |sigma| (derived;
    common practice). A 2 nm slit at 1 uM (kappa h = 0.003) with a weak charge, where the co-ions (~(c/c_K)^2)
    and the EO convection of the counter-ions (~sigma h kT / (3 eta e D) = 2.5e-4, see ``counterion_convection``)
    stay below 1e-3; at 1 mM the bulk dominates and the estimate fails."""
    sigma = -0.05e-3
    case = case_of(edl.Slit(height="2 nm"), edl.Wall(charge_density=sigma))
    curve = conductance_curve(case, [1e-3, 1.0])  # mol/m^3: 1 uM and 1 mM
    estimate = 2.0 * FARADAY * KCL.ions[0].diffusivity / RT * abs(sigma)
    assert float(curve["plateau_conduction"][0]) == pytest.approx(estimate, rel=1e-12)
    full = curve["conductance"].values
    assert float(curve["kappa_h"][0]) < 0.01
    assert abs(full[0] / estimate - 1.0) < 1e-3
    assert abs(full[1] / estimate - 1.0) > 1.0


@pytest.mark.parametrize("geometry", [edl.Slit(height="10 nm"), edl.Capillary(radius="5 nm")],
                         ids=["slit", "capillary"])
def test_strong_charge_plateau_needs_the_electroosmotic_convection(geometry: object) -> None:
    """At -5 mC/m^2 the counter-ions' EO convection adds 7-10 % to their conduction (Bikerman's correction to
    surface conductance); the counter-ion-only closed forms (Engström & Wennerström 1978 for the slit, the radial
    Liouville solution for the capillary; ``counterion_convection``) make the limit exact: at kappa h ~ 0.02 the
    full model agrees with conduction + convection to the co-ion share, ~1e-8."""
    curve = conductance_curve(case_of(geometry, edl.Wall(charge_density="-5 mC/m^2")), [1e-3, 10.0])
    full = curve["conductance"].values
    assert abs(full[0] / float(curve["plateau_estimate"][0]) - 1.0) < 1e-6
    assert full[0] / float(curve["plateau_conduction"][0]) - 1.0 > 0.05


def test_counterion_convection_tends_to_its_weak_charge_limits() -> None:
    """Weak charge: the counter-ions are uniform, phi is parabolic and (eps^2/eta) int |grad phi|^2 dA gives
    2 sigma^2 h / (3 eta) per unit width of a slit of half-height h, and pi sigma^2 a^2 / (2 eta) for a capillary of
    radius a (derived by hand); the first correction is of relative order h / l_GC ~ 1e-8 here."""
    sigma = -1e-6
    slit = case_of(edl.Slit(height="20 nm"), edl.Wall(charge_density=sigma))
    capillary = case_of(edl.Capillary(radius="10 nm"), edl.Wall(charge_density=sigma))
    eta = SOLVENT.viscosity
    assert counterion_convection(slit, sigma) == pytest.approx(2.0 * sigma**2 * 10e-9 / (3.0 * eta), rel=1e-6)
    assert counterion_convection(capillary, sigma) == pytest.approx(math.pi * sigma**2 * 1e-16 / (2.0 * eta),
                                                                    rel=1e-6)
    assert math.isnan(counterion_convection(case_of(edl.Slit(height="20 nm"), edl.Wall(charge_density=sigma),
                                                    model="dh"), sigma))


def test_bulk_line_of_a_wide_channel_at_high_concentration() -> None:
    """A 2 um slit at 100 mM (kappa h ~ 1000, zeta -20 mV): the double layers' share of the current (~1e-4) is
    below 1e-3, so G = K H with K = (F^2/RT) sum z^2 D c (Nernst-Einstein, common practice); at 0.01 mM
    (kappa h ~ 10) surface conduction is 2 % and the bulk line fails."""
    case = case_of(edl.Slit(height="2 um"), edl.Wall(zeta="-20 mV"))
    curve = conductance_curve(case, [0.01, 100.0])
    bulk = FARADAY**2 / RT * sum(ion.diffusivity for ion in KCL.ions) * 100.0 * 2e-6
    assert float(curve["bulk_conductance"][1]) == pytest.approx(bulk, rel=1e-12)
    full = curve["conductance"].values
    assert abs(full[1] / bulk - 1.0) < 1e-3
    assert full[0] / float(curve["bulk_conductance"][0]) - 1.0 > 1e-2
    # the bulk line is the thin-layer model's conductance
    solved = edl.solve(case)
    assert float(curve["bulk_conductance"][0]) * 100.0 / 0.01 == pytest.approx(
        solved.summary["thin_layer_conductance_per_length"] * 100.0, rel=1e-12)


def test_a_channel_length_divides_the_curve_and_sets_its_unit() -> None:
    case = case_of(edl.Capillary(radius="20 nm"), edl.Wall(zeta="-30 mV"))
    per_length = conductance_curve(case, ["0.1 mM", "1 mM", "10 mM"])
    channel = conductance_curve(case, ["0.1 mM", "1 mM", "10 mM"], length="4 um")
    assert per_length["conductance"].attrs["units"] == "S*m" and channel["conductance"].attrs["units"] == "S"
    for name in ("conductance", "bulk_conductance", "plateau_conduction", "plateau_estimate"):
        np.testing.assert_allclose(channel[name].values, per_length[name].values / 4e-6, rtol=1e-12)
    assert channel.attrs["length_m"] == pytest.approx(4e-6)
    # a fixed zeta: the wall charge, and so the counter-ion estimate, falls with the concentration
    sigma = np.abs(per_length["wall_charge_density"].values)
    assert np.all(np.diff(sigma) > 0.0)


def test_crossover_concentration_of_a_slit() -> None:
    """Where K(c) H meets 2 mu |sigma|: for KCl, c* = 2 D_K |sigma| / (F (D_K + D_Cl) H) (derived). The estimate
    adds the EO convection, a constant factor at fixed charge, which moves c* by that factor; the bulk line is
    straight and the estimate flat in log-log, so the interpolated crossing is exact."""
    sigma, height = -2e-3, 50e-9
    case = case_of(edl.Slit(height=height), edl.Wall(charge_density=sigma))
    curve = conductance_curve(case, np.geomspace(0.01, 100.0, 13))
    d_k, d_cl = (ion.diffusivity for ion in KCL.ions)
    conduction_only = 2.0 * d_k * abs(sigma) / (FARADAY * (d_k + d_cl) * height)
    factor = float(curve["plateau_estimate"][0] / curve["plateau_conduction"][0])
    assert 1.1 < factor < 1.3  # the convective share of a -2 mC/m^2, 50 nm slit
    assert crossover_concentration(curve) == pytest.approx(conduction_only * factor, rel=1e-9)


@pytest.mark.parametrize(("concentrations", "length", "field"), [
    (["1 mM"], None, "concentrations"),
    (["1 mM", "-1 mM"], None, "concentrations[1]"),
    (["1 mM", "1 mm"], None, "concentrations[1]"),
    (["1 mM", "2 mM"], "-5 um", "length"),
    (["1 mM", "2 mM"], "5 mV", "length"),
])
def test_bad_curve_inputs_raise_one_line_input_errors(concentrations: list[str], length: str | None,
                                                      field: str) -> None:
    case = case_of(edl.Slit(height="20 nm"), edl.Wall(zeta="-30 mV"))
    with pytest.raises(InputError, match=re.escape(field)) as error:
        conductance_curve(case, concentrations, length)
    assert "\n" not in str(error.value)


def test_channel_characteristics_of_an_uncharged_channel_follow_free_solution_electrodiffusion() -> None:
    """Uncharged channel, 1:1 salt: the I-V curve is Planck's electroneutral solution (``planck_current``,
    also checked in tests/channel/test_model.py), its zero the Henderson potential, and the power a linear source
    delivers peaks at V_oc / 2 (common practice)."""
    case = edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=edl.Electrolyte.from_ions({"Na+": 1, "Cl-": 1}),
                    wall=edl.Wall(zeta=0.0), solvent=SOLVENT)
    data = channel_characteristics(ch.Channel(case, "5 um", "1 mM", "10 mM"), np.linspace(-0.1, 0.1, 9))
    assert np.all(data["status"].values == 0)
    scale = np.max(np.abs(data["current"].values))
    assert np.max(np.abs(data["current"].values - data["bulk_current"].values)) < 1e-6 * scale
    assert float(data["membrane_potential"]) == pytest.approx(float(data["henderson_potential"]), rel=1e-6)
    assert float(data["short_circuit_current"]) == pytest.approx(float(data["current"].sel(voltage=0.0)), rel=1e-9)
    assert float(data["voltage_at_max_power"]) == pytest.approx(float(data["membrane_potential"]) / 2, rel=1e-3)
    slope = -np.polyfit(data["voltage"].values, data["current"].values, 1)[0]
    assert float(data["conductance"]) == pytest.approx(slope, rel=1e-6)
    assert data["conductance"].attrs["units"] == "S/m" and data["max_power"].attrs["units"] == "W/m"
