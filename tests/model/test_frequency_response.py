"""The EO flow under an oscillating field (``edl.frequency_response``, issue 14 item 3) against closed forms.

Debye-Hueckel layer, field E0 cos(w t): with k^2 = i w rho_m / eta the mean of u^ solving
u'' - k^2 u = (eps kappa^2 E0 / eta) psi, psi the DH potential, u = 0 at the walls, is (derived here; the
oscillating EO flow of the kind in Soderman & Jonsson 1996, J. Chem. Phys. 105, 10300, from memory)
    slit (half-height h):  (eps kappa^2 zeta E0 / (eta (kappa^2 - k^2))) [tanh(kappa h)/(kappa h) - tanh(k h)/(k h)]
    capillary (radius a):  (eps kappa^2 zeta E0 / (eta (kappa^2 - k^2))) [2 I1(kappa a)/(kappa a I0(kappa a))
                                                                          - 2 I1(k a)/(k a I0(k a))]
which tends at w = 0 to the steady Debye-Hueckel result -(eps zeta E0 / eta)(1 - tanh(kappa h)/(kappa h)) (Rice &
Whitehead 1965 for the capillary, from memory).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.special import ive

import edl_solver as edl

SALT = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})
ZETA = -0.005
FIELD = 2e3
FREQUENCIES = [0.0, 1e5, 1e6, 1e7, 3e7, 1e8, 1e9, 1e10]


def _closed_form(case: edl.Case, frequencies: np.ndarray) -> np.ndarray:
    solvent = case.solvent
    kappa = 1.0 / case.debye_length
    k = np.sqrt(1j * 2 * np.pi * frequencies * solvent.density / solvent.viscosity)
    prefactor = solvent.permittivity * kappa**2 * ZETA * FIELD / (solvent.viscosity * (kappa**2 - k**2))
    size = case.geometry.half_size
    if isinstance(case.geometry, edl.Slit):
        def shape(x):
            return np.where(np.abs(x) > 0, np.tanh(x) / np.where(x == 0, 1, x), 1.0)
    else:
        def shape(x):
            safe = np.where(x == 0, 1, x)
            return np.where(np.abs(x) > 0, 2 * ive(1, safe) / (safe * ive(0, safe)), 1.0)
    return prefactor * (shape(kappa * size + 0j) - shape(k * size))


@pytest.mark.parametrize("geometry", [edl.Slit(height="40 nm"), edl.Capillary(radius="20 nm")],
                         ids=["slit", "capillary"])
def test_debye_hueckel_response_against_its_closed_form(geometry) -> None:
    """Amplitude and phase from quasi-steady (f = 0) to the Stokes-layer regime (f >> nu / h^2), within 1e-6 of
    the closed form (the default accuracy); A cos(2 pi f t + phase) is the mean EO velocity."""
    case = edl.Case(geometry, SALT, edl.Wall(zeta=ZETA), field=FIELD, model="dh")
    fr = edl.frequency_response(case, FREQUENCIES)
    exact = _closed_form(case, np.array(FREQUENCIES))
    assert fr["eo_velocity_amplitude"].values == pytest.approx(np.abs(exact), rel=1e-6)
    assert fr["eo_velocity_phase"].values == pytest.approx(np.angle(exact), abs=1e-6)
    assert fr["eo_velocity_amplitude"].values[0] == pytest.approx(abs(edl.solve(case).summary["mean_velocity_eo"]),
                                                                  rel=1e-6)
    assert fr["eo_velocity_phase"].values[-1] < -1.0  # inertia: the flow lags the field, towards -pi/2


def test_nonlinear_response_is_the_steady_flow_at_zero_frequency_and_lags_above() -> None:
    """Poisson-Boltzmann at -100 mV: f = 0 gives the steady solve's mean EO velocity (phase 0), the amplitude falls
    and the lag grows monotonically with frequency; a negative field shifts the phase by pi (common practice)."""
    case = edl.Case(edl.Slit(height="100 nm"), SALT, edl.Wall(zeta="-100 mV"), field=FIELD)
    fr = edl.frequency_response(case, FREQUENCIES)
    steady = edl.solve(case).summary
    assert fr["eo_velocity_amplitude"].values[0] == pytest.approx(steady["mean_velocity_eo"], rel=1e-6)
    assert fr["flow_rate_amplitude"].values[0] == pytest.approx(steady["flow_rate_eo"], rel=1e-6)
    assert fr["convection_current_amplitude"].values[0] == pytest.approx(abs(steady["eo_convection_current"]),
                                                                         rel=1e-6)
    assert np.all(np.diff(fr["eo_velocity_amplitude"].values) < 0)
    assert np.all(np.diff(fr["eo_velocity_phase"].values) < 0)
    reversed_field = edl.frequency_response(edl.Case(case.geometry, SALT, case.wall, field=-FIELD), [1e7])
    assert reversed_field["eo_velocity_amplitude"].values[0] == pytest.approx(
        fr["eo_velocity_amplitude"].values[3], rel=1e-12)
    shifted = reversed_field["eo_velocity_phase"].values[0] - fr["eo_velocity_phase"].values[3]
    assert abs(abs(shifted) - np.pi) < 1e-9


def test_bad_inputs_name_the_field() -> None:
    case = edl.Case(edl.Slit(height="100 nm"), SALT, edl.Wall(zeta="-50 mV"), field=FIELD)
    for bad in ([-1.0], [], [np.nan], "fast"):
        with pytest.raises(edl.InputError, match="frequencies"):
            edl.frequency_response(case, bad)
    rectangle = edl.Case(edl.Rectangle(width="200 nm", height="40 nm"), SALT, edl.Wall(zeta="-50 mV"))
    with pytest.raises(edl.InputError, match=r"case\.geometry"):
        edl.frequency_response(rectangle, [1.0])


@pytest.mark.parametrize("geometry", [edl.Slit(height="60 nm"), edl.Capillary(radius="30 nm")],
                         ids=["slit", "capillary"])
def test_slip_walls_and_two_different_walls_meet_the_steady_flow(geometry) -> None:
    """Navier slip (a Robin wall), a slit's two different walls and the steric model: at f = 0 the response is the
    steady solve's mean EO velocity (the same finite volumes, common practice), and it lags at 100 MHz."""
    walls = [edl.Wall(zeta="-60 mV", slip_length="5 nm")]
    if isinstance(geometry, edl.Slit):
        walls.append((edl.Wall(zeta="-60 mV"), edl.Wall(charge_density="5 mC/m^2")))
    steric = edl.Electrolyte([edl.Ion(name, concentration="100 mM", diameter="0.7 nm") for name in ("K+", "Cl-")])
    cases = [edl.Case(geometry, SALT, wall, field=1e3) for wall in walls]
    cases.append(edl.Case(geometry, steric, edl.Wall(zeta="-150 mV"), field=1e3, model="steric"))
    for case in cases:
        fr = edl.frequency_response(case, [0.0, 1e8])
        assert fr["eo_velocity_amplitude"].values[0] == pytest.approx(abs(edl.solve(case).summary["mean_velocity_eo"]),
                                                                      rel=1e-6)
        assert fr["eo_velocity_phase"].values[1] < 0.0


def test_bode_figure_is_written(tmp_path) -> None:
    """The Bode figure of a response is a PNG file (the figure itself was looked at by hand)."""
    from edl_solver.plot.frequency_figure import bode_figure

    case = edl.Case(edl.Slit(height="100 nm"), SALT, edl.Wall(zeta="-50 mV"), field=FIELD)
    path = bode_figure(edl.frequency_response(case, [0.0, 1e6, 1e8, 1e10]), tmp_path / "bode.png")
    assert path.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def test_thin_layers_follow_the_slip_driven_womersley_profile() -> None:
    """kappa h ~ 1000: the response tends to that of a slit driven by the Helmholtz-Smoluchowski slip at its walls,
    mean u = u_s tanh(k h) / (k h), k^2 = i w / nu (the oscillating Couette-type flow; derived here, of the kind in
    Womersley 1955, J. Physiol. 127, 553, from memory), within the layer's share lambda_D / h plus lambda_D / delta,
    delta = sqrt(2 nu / w) the Stokes layer (common practice)."""
    salt = edl.Electrolyte.from_ions({"K+": "100 mM", "Cl-": "100 mM"})
    case = edl.Case(edl.Slit(height="2 um"), salt, edl.Wall(zeta="-30 mV"), field=FIELD)
    frequencies = np.array([0.0, 1e5, 1e6, 1e7, 1e8])
    fr = edl.frequency_response(case, frequencies)
    solvent, h, debye = case.solvent, case.geometry.half_size, case.debye_length
    nu = solvent.viscosity / solvent.density
    slip = -solvent.permittivity * -0.030 * FIELD / solvent.viscosity
    k = np.sqrt(1j * 2 * np.pi * frequencies / nu)
    thin = slip * np.where(frequencies > 0, np.tanh(k * h) / np.where(k == 0, 1, k * h), 1.0)
    full = fr["eo_velocity_amplitude"].values * np.exp(1j * fr["eo_velocity_phase"].values)
    delta = np.sqrt(2 * nu / np.maximum(2 * np.pi * frequencies, 1e-300))
    assert np.all(np.abs(full / thin - 1) < 3 * (debye / h + debye / delta))
