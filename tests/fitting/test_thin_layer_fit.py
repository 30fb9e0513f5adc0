"""The thin-layer fit beside the full one: Bikerman's surface conductance, Smoluchowski, and the bias of the
thin-layer estimate on overlapped double layers (the surface-charge plateau)."""

from __future__ import annotations

import math

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.constants import FARADAY
from edl_solver.fitting.thin_layer import _Point
from tests.helpers import RT


def _kcl(mm: float) -> edl.Electrolyte:
    return edl.Electrolyte.from_ions({"K+": f"{mm} mM", "Cl-": f"{mm} mM"})


def test_surface_conductance_is_bikermans_closed_form_for_a_symmetric_salt() -> None:
    # Bikerman 1940 (Kolloid-Z. 72, 100), as in Lyklema, Fundamentals of Interface and Colloid Science II, sec. 4.3
    # (from memory): K^s = 2 F^2 z^2 c / (RT kappa) sum_+- D_i (exp(-+z y / 2) - 1)(1 + 3 m_i / z^2),
    # m_i = (RT / F)^2 2 eps / (3 eta D_i)
    case = edl.Case(geometry=edl.Slit(height="1 um"), electrolyte=_kcl(1.0), wall=edl.Wall(zeta="-90 mV"))
    point = _Point(case)
    kappa = 1 / case.electrolyte.debye_length(case.solvent)
    eps, eta = case.solvent.permittivity, case.solvent.viscosity
    y = FARADAY * -0.09 / RT
    total = 0.0
    for d, sign in zip(point.d, (-1, 1)):
        m = (RT / FARADAY) ** 2 * 2 * eps / (3 * eta * d)
        total += d * (math.exp(sign * y / 2) - 1) * (1 + 3 * m)
    closed = 2 * FARADAY**2 * 1.0 / (RT * kappa) * total
    assert point.surface_conductance(-0.09) == pytest.approx(closed, rel=1e-9)


def test_thin_layer_formulas_match_the_full_model_in_a_wide_channel() -> None:
    # far from overlap the full model's excess conductance is the thin layer's surface conductance and its
    # streaming current and EO velocity are Smoluchowski's (the thin-layer limit; common practice)
    case = edl.Case(geometry=edl.Slit(height="2 um"), electrolyte=_kcl(1.0), wall=edl.Wall(zeta="-80 mV"),
                    field="1 kV/m")
    full = edl.solve(case).summary
    point = _Point(case)
    assert point.value("conductance_per_length", -0.08) == pytest.approx(full["conductance_per_length"], rel=1e-7)
    assert point.value("streaming_conductance", -0.08) == pytest.approx(full["streaming_conductance"], rel=0.01)
    assert point.value("mean_velocity_eo", -0.08) == pytest.approx(full["mean_velocity_eo"], rel=0.01)
    assert point.charge(-0.08) == pytest.approx(full["wall_charge_density"], rel=1e-8)


def test_thin_layer_bias_on_the_surface_charge_plateau() -> None:
    # Stein, Kruithof & Dekker 2004 (Phys. Rev. Lett. 93, 035901; from memory): at low salt the conductance of a
    # nanochannel levels off at the value the wall charge's counter-ions carry, G ~ 2 |sigma| D_+ F / RT per unit
    # width (plus their electro-osmotic drag). On such overlapped data the thin-layer fit (bulk plus Bikerman)
    # counts the excluded co-ions and bulk, so it needs a smaller |sigma|; its bias must have the sign and size
    # the forward model predicts: the weighted projection of the thin-layer error at the true charge on the
    # thin-layer sensitivity (first order in the error).
    sigma = -0.02
    case = edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=_kcl(1.0), wall=edl.Wall(charge_density=sigma))
    c = np.logspace(-2, 2, 12)
    g = np.asarray(edl.sweep(case, {"electrolyte.concentration": c}, progress=False)["conductance_per_length"].values)
    plateau = 2 * abs(sigma) * 1.957e-9 * FARADAY / RT
    assert 1.0 < g[0] / plateau < 1.5  # the plateau: counter-ions of the wall charge (and their EO drag)
    fit = edl.fit(case, {"electrolyte.concentration": c, "conductance_per_length": g}, ["wall.charge_density"])
    assert fit.parameters["wall.charge_density"] == pytest.approx(sigma, rel=1e-6)
    thin = fit.thin_layer.parameters["wall.charge_density"]
    points = [_Point(case_at) for case_at in _cases(case, c)]

    def g_thin(s: float) -> np.ndarray:
        return np.array([p.value("conductance_per_length", p.zeta(s)) for p in points])

    error = g_thin(sigma) - g
    slope = (g_thin(sigma * (1 + 1e-6)) - g_thin(sigma)) / (sigma * 1e-6)
    predicted = -float(np.dot(slope, error) / np.dot(slope, slope))  # uniform weights, as the fit's
    assert thin - sigma > 0 and predicted > 0  # a smaller |sigma|
    assert thin - sigma == pytest.approx(predicted, rel=0.05)
    assert fit.thin_layer.relative_difference["wall.charge_density"] == pytest.approx((thin - sigma) / sigma, rel=1e-5)
    assert "Bikerman" in fit.thin_layer.formula


def _cases(case: edl.Case, c: np.ndarray) -> list[edl.Case]:
    from edl_solver.inputs.casefile import case_to_mapping
    from edl_solver.inputs.paths import Axis, case_at

    axis = Axis("electrolyte.concentration", ("electrolyte.concentration",), (tuple(c),))
    return [case_at(case_to_mapping(case), (axis,), (i,)) for i in range(c.size)]
