"""The compiled summary (``kernels.summary`` and its parts) fed with solved Debye-Hueckel sections, checked
against the closed forms of Burgreen & Nakache 1964 (slit) and Rice & Whitehead 1965 (capillary), and the
thin-layer values against Smoluchowski's and Nernst-Einstein's."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants as sc
from scipy import special

import edl_solver as edl
from edl_solver.kernels import layout as lay
from edl_solver.kernels import summary
from edl_solver.model import equilibrium, scaling

T = 298.15
ETA = 0.89e-3
WATER = edl.Solvent(temperature=T, relative_permittivity=78.4, viscosity=ETA)
EPS = 78.4 * sc.epsilon_0
VT = sc.k * T / sc.e
KCL = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})
FIELD = 1e4
ZETA = -1.5 * VT


def summarized(geometry) -> tuple[np.ndarray, float]:
    """Summary vector of a Debye-Hueckel case solved tightly, and its kappa times the half-size."""
    case = edl.Case(geometry=geometry, electrolyte=KCL, wall=edl.Wall(zeta=ZETA), solvent=WATER, model="dh",
                    field=FIELD, numerics=edl.Numerics(accuracy=1e-10))
    prepared = scaling.prepare(case)
    section = equilibrium.solve_section(prepared.problem, 1e-10)
    out = np.full(lay.SUMMARY_SIZE, np.nan)
    summary.summarize_solution(prepared.vector, prepared.inputs, section.solved, out)
    assert summary.identities_hold(out)
    return out, geometry.half_size / out[lay.SLOTS["debye_length"]]


def slot(out: np.ndarray, key: str) -> float:
    at = lay.SLOTS[key]
    return out[at + 1] if key in lay.PAIR_KEYS else out[at]


@pytest.mark.parametrize("kappa_h", [0.3, 1.0, 5.0])
def test_debye_hueckel_slit_against_burgreen_and_nakache(kappa_h: float) -> None:
    # psi = zeta cosh(kappa y) / cosh(kappa h) from the mid-plane: centre zeta / cosh(kh), mean zeta tanh(kh)/kh,
    # wall charge eps kappa zeta tanh(kh), mean EO velocity over HS 1 - tanh(kh)/kh (Burgreen & Nakache 1964,
    # J. Phys. Chem. 68, 1084)
    lam = math.sqrt(EPS * sc.k * T / (2 * sc.e**2 * sc.N_A * 1.0))
    h = kappa_h * lam
    out, kh = summarized(edl.Slit(height=2 * h))
    assert kh == pytest.approx(kappa_h, rel=1e-12)
    assert slot(out, "zeta") == pytest.approx(ZETA, rel=1e-12)
    assert slot(out, "centre_potential") == pytest.approx(ZETA / math.cosh(kh), rel=1e-8)
    assert slot(out, "mean_potential") == pytest.approx(ZETA * math.tanh(kh) / kh, rel=1e-8)
    assert slot(out, "wall_charge_density") == pytest.approx(EPS * ZETA / lam * math.tanh(kh), rel=1e-8)
    ratio = 1 - math.tanh(kh) / kh
    assert slot(out, "eo_ratio") == pytest.approx(ratio, rel=1e-8)
    hs = -EPS * ZETA * FIELD / ETA  # Helmholtz-Smoluchowski (Smoluchowski 1903)
    assert slot(out, "hs_velocity") == pytest.approx(hs, rel=1e-12)
    assert slot(out, "flow_rate_eo") == pytest.approx(hs * 2 * h * ratio, rel=1e-8)
    assert slot(out, "mean_velocity_eo") == pytest.approx(hs * ratio, rel=1e-8)


@pytest.mark.parametrize("kappa_a", [0.3, 1.0, 5.0])
def test_debye_hueckel_capillary_against_rice_and_whitehead(kappa_a: float) -> None:
    # psi = zeta I0(kappa r) / I0(kappa a): centre zeta / I0(ka), mean 2 zeta I1 / (ka I0), wall charge
    # eps kappa zeta I1/I0, mean EO velocity over HS 1 - 2 I1 / (ka I0) (Rice & Whitehead 1965,
    # J. Phys. Chem. 69, 4017)
    lam = math.sqrt(EPS * sc.k * T / (2 * sc.e**2 * sc.N_A * 1.0))
    a = kappa_a * lam
    out, ka = summarized(edl.Capillary(radius=a))
    i0, i1 = special.iv(0, ka), special.iv(1, ka)
    assert slot(out, "centre_potential") == pytest.approx(ZETA / i0, rel=1e-8)
    assert slot(out, "mean_potential") == pytest.approx(2 * ZETA * i1 / (ka * i0), rel=1e-8)
    assert slot(out, "wall_charge_density") == pytest.approx(EPS * ZETA / lam * i1 / i0, rel=1e-8)
    ratio = 1 - 2 * i1 / (ka * i0)
    assert slot(out, "eo_ratio") == pytest.approx(ratio, rel=1e-8)
    assert slot(out, "flow_rate_eo") == pytest.approx(-EPS * ZETA * FIELD / ETA * math.pi * a**2 * ratio, rel=1e-8)


def test_thin_layer_values_follow_smoluchowski_and_nernst_einstein() -> None:
    # thin layers: streaming potential dV/dp = eps zeta / (eta K) (Smoluchowski), K = (F^2/RT) sum z^2 D c
    # (Nernst-Einstein); the bulk's cation transference t+ = D+ / (D+ + D-) for a 1:1 salt (Hittorf; common
    # practice); the full model approaches them in a wide channel
    out, _ = summarized(edl.Slit(height="2 um"))
    k_plus, cl = KCL.ions
    conductivity = sc.physical_constants["Faraday constant"][0] ** 2 / (sc.R * T) * (
        k_plus.diffusivity * k_plus.concentration + cl.diffusivity * cl.concentration)
    smoluchowski = EPS * ZETA / (ETA * conductivity)
    assert slot(out, "thin_layer_streaming_potential_coefficient") == pytest.approx(smoluchowski, rel=1e-12)
    assert slot(out, "streaming_potential_coefficient") == pytest.approx(smoluchowski, rel=0.03)
    assert slot(out, "thin_layer_cation_transference") == pytest.approx(
        k_plus.diffusivity / (k_plus.diffusivity + cl.diffusivity), rel=1e-12)
    assert slot(out, "thin_layer_conductance_per_length") == pytest.approx(conductivity * 2e-6, rel=1e-12)


def test_summary_vector_is_filled_in_every_slot() -> None:
    # project design: every slot written (NaN only where a value is undefined: no Stern layer here)
    out, _ = summarized(edl.Capillary(radius="30 nm"))
    empty = [key for key, at in lay.SLOTS.items() if np.isnan(out[at])]
    assert empty == ["stern_potential"]
