"""Validity maps of the thin-layer model (edl_solver.analysis: validity_map, boundary, map_axes,
thin_layer_errors; the figure of edl_solver.plot.validity): root-found boundaries against published closed
forms, the map's dataset and file, the figure, and bad input. The ``edl map`` command is checked in
tests/cli/test_map_command.py."""

from __future__ import annotations

import math
import os
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
import xarray as xr
from scipy import constants
from scipy.optimize import brentq
from scipy.special import i0e, i1e

import edl_solver as edl
from edl_solver.analysis.boundary import boundary, boundary_curve
from edl_solver.analysis.map_axes import check_axes
from edl_solver.analysis.thin_layer_errors import thin_layer_current_per_field
from edl_solver.analysis.validity_map import validity_map
from edl_solver.errors import InputError
from edl_solver.plot.validity import map_figure
from tests.helpers import KCL, PNG_SIGNATURE
from tests.reference_solutions import gouy_chapman_boundary

TOLERANCES = (0.01, 0.05, 0.10)
#: The boundary is asked to 1e-6 relative (brentq to 1e-10 on ln kappa h, solves at 1e-7 x tolerance).
BOUNDARY_RTOL = 1e-6


def dh_case(geometry: edl.Slit | edl.Capillary, **kw: object) -> edl.Case:
    return edl.Case(**{"geometry": geometry, "electrolyte": KCL, "wall": edl.Wall(zeta="-10 mV"), "model": "dh",
                       **kw})


def root(function, low: float = 1e-3, high: float = 1e5) -> float:
    return brentq(function, low, high, xtol=1e-14, rtol=1e-15)


# -- boundaries against closed forms -------------------------------------------------------------


@pytest.mark.parametrize("tau", TOLERANCES)
def test_dh_slit_boundary_is_the_burgreen_nakache_root(tau: float) -> None:
    # Burgreen & Nakache 1964, J. Phys. Chem. 68, 1084: mean EO velocity / HS = 1 - tanh(kh)/(kh) for the
    # Debye-Hueckel slit, so (thin - full)/full = 1/(1 - tanh(kh)/kh) - 1 = tau where tanh(kh)/kh = tau/(1+tau).
    expected = root(lambda x: math.tanh(x) / x - tau / (1.0 + tau))
    found = boundary(dh_case(edl.Slit(height="50 nm")), "kappa_h", tau)
    assert found == pytest.approx(expected, rel=BOUNDARY_RTOL), f"relative miss {found / expected - 1:.2g}"


@pytest.mark.parametrize("tau", TOLERANCES)
def test_dh_capillary_boundary_is_the_rice_whitehead_root(tau: float) -> None:
    # Rice & Whitehead 1965, J. Phys. Chem. 69, 4017: mean EO velocity / HS = 1 - 2 I1(ka)/(ka I0(ka)),
    # so the error equals tau where 2 I1(ka)/(ka I0(ka)) = tau/(1+tau). Scaled Bessel functions: no overflow.
    expected = root(lambda x: 2.0 * i1e(x) / (x * i0e(x)) - tau / (1.0 + tau))
    found = boundary(dh_case(edl.Capillary(radius="25 nm")), "kappa_h", tau)
    assert found == pytest.approx(expected, rel=BOUNDARY_RTOL), f"relative miss {found / expected - 1:.2g}"


def test_boundary_along_height_and_concentration_follows_the_debye_length() -> None:
    # The same Burgreen & Nakache root, reached along real inputs: H* = 2 kh* lambda_D at fixed salt, and at
    # fixed height c* = c0 (kh*/kh0)^2 since lambda_D goes as c^-1/2 (Debye length, e.g. Israelachvili).
    tau = 0.05
    kappa_h = root(lambda x: math.tanh(x) / x - tau / (1.0 + tau))
    case = dh_case(edl.Slit(height="50 nm"))
    height = boundary(case, "geometry.height", tau)
    assert height == pytest.approx(2.0 * kappa_h * case.debye_length, rel=BOUNDARY_RTOL)
    kappa_h0 = case.geometry.half_size / case.debye_length
    concentration = boundary(case, "electrolyte.concentration", tau)
    assert concentration == pytest.approx(1.0 * (kappa_h / kappa_h0) ** 2, rel=BOUNDARY_RTOL)


@pytest.mark.parametrize("tau", (0.01, 0.02))
def test_pb_boundary_curve_over_zeta_is_the_gouy_chapman_root(tau: float) -> None:
    # kh* = 4 chi_2(tanh(zeta/4)) (1 + tau) / (tau zeta), Gouy-Chapman (see gouy_chapman_boundary); kh* >= 29
    # here, so the overlap terms (~exp(-29)) are far below the 1e-6 asked.
    base = edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-25 mV"))
    zetas = [-1.0, -4.0, -8.0]
    curve = boundary_curve(base, "kappa_h", "zeta_kT", zetas, tau)
    expected = [gouy_chapman_boundary(z, tau) for z in zetas]
    np.testing.assert_allclose(curve.values, expected, rtol=BOUNDARY_RTOL)
    assert curve.dims == ("zeta_kT",) and curve.attrs["units"] == "1" and curve.attrs["valid_side"] == "above"
    # the zeta each point was solved at: zeta_kT times kT/e of the base solvent
    np.testing.assert_allclose(curve["wall.zeta"].values, np.array(zetas) * base.solvent.thermal_voltage, rtol=1e-15)


def dh_slit_current(case: edl.Case) -> tuple[float, float]:
    """(thin-layer, full) current per field of a Debye-Hueckel slit in a 1:1 salt, S per unit width.

    Derived here from the Debye-Hueckel potential psi = zeta cosh(ky)/cosh(kh) (Burgreen & Nakache 1964),
    the linearised concentrations c_i = c0 (1 - z_i e psi/kT), Nernst-Einstein conduction F^2/(RT) z^2 D c
    and the EO velocity -(eps E/eta)(zeta - psi) with rho_e = -eps k^2 psi:
      full = F^2/(RT) c0 [(D+ + D-) H - (D+ - D-) e zeta/kT int cosh/cosh] + (eps^2 k^2/eta) zeta^2
             [int cosh/cosh - int cosh^2/cosh^2],
      int cosh/cosh = 2 tanh(kh)/k, int cosh^2/cosh^2 = (h + sinh(2kh)/(2k)) / cosh^2(kh);
    thin = F^2/(RT) c0 (D+ + D-) H (bulk conduction, the thin-layer model of validity_map).
    Constants: CODATA 2018 (scipy.constants).
    """
    temperature, eps, eta = case.solvent.temperature, case.solvent.permittivity, case.solvent.viscosity
    plus, minus = case.electrolyte.ions
    c0 = plus.concentration
    kt_e = constants.k * temperature / constants.e
    kappa = math.sqrt(2.0 * constants.e * constants.N_A * c0 / (eps * kt_e))
    h = 0.5 * case.geometry.height
    zeta = case.wall.zeta
    one = 2.0 * math.tanh(kappa * h) / kappa
    sech = 2.0 * math.exp(-kappa * h) / (1.0 + math.exp(-2.0 * kappa * h))  # 1/cosh(kh) without overflow
    two = h * sech**2 + math.tanh(kappa * h) / kappa  # = (h + sinh(2kh)/(2k)) / cosh^2(kh)
    conduction = constants.physical_constants["Faraday constant"][0] ** 2 / (constants.R * temperature) * c0
    thin = conduction * (plus.diffusivity + minus.diffusivity) * 2.0 * h
    full = thin - conduction * (plus.diffusivity - minus.diffusivity) * zeta / kt_e * one \
        + eps**2 * kappa**2 / eta * zeta**2 * (one - two)
    return thin, full


def test_map_current_error_matches_the_debye_hueckel_closed_form() -> None:
    base = dh_case(edl.Slit(height="50 nm"), numerics=edl.Numerics(accuracy=1e-10))
    kappa_h, zeta_kt = [0.5, 2.0, 8.0, 30.0], [-1.0, -0.3]
    ds = validity_map(base, ("kappa_h", kappa_h), ("zeta_kT", zeta_kt))
    assert ds["thin_layer_current_error"].dims == ("zeta_kT", "kappa_h")
    for i, zk in enumerate(zeta_kt):
        for j, kh in enumerate(kappa_h):
            case = replace(base, geometry=edl.Slit(height=2.0 * kh * base.debye_length),
                           wall=edl.Wall(zeta=zk * base.solvent.thermal_voltage))
            thin, full = dh_slit_current(case)
            assert ds["thin_layer_current_per_field"].values[i, j] == pytest.approx(thin, rel=1e-12)
            assert thin_layer_current_per_field(case) == pytest.approx(thin, rel=1e-12)
            assert ds["thin_layer_current_error"].values[i, j] == pytest.approx((thin - full) / full, rel=1e-6,
                                                                                 abs=1e-10)
            # and the flow-rate error of the same map is Burgreen & Nakache's
            ratio = 1.0 - math.tanh(kh) / kh
            assert ds["thin_layer_flow_rate_error"].values[i, j] == pytest.approx(1.0 / ratio - 1.0, rel=1e-8)


def test_current_boundary_is_the_root_of_the_closed_form() -> None:
    # |(thin - full)/full| of the current rises and falls with kh (surface conduction at small kh is still
    # weak in the DH limit), so the bracket picks the crossing on the thin-layer side.
    base = dh_case(edl.Slit(height="50 nm"), wall=edl.Wall(zeta=-constants.k * 298.15 / constants.e))
    tau = 0.01

    def excess(kh: float) -> float:
        thin, full = dh_slit_current(replace(base, geometry=edl.Slit(height=2.0 * kh * base.debye_length)))
        return abs((thin - full) / full) - tau

    expected = root(excess, 3.0, 1000.0)
    found = boundary(base, "kappa_h", tau, quantity="current", bracket=(3.0, 1000.0))
    assert found == pytest.approx(expected, rel=BOUNDARY_RTOL), f"relative miss {found / expected - 1:.2g}"


# -- the map's dataset, file and figure --------------------------------------------------------------


@pytest.fixture(scope="module")
def glass_map(tmp_path_factory: pytest.TempPathFactory) -> tuple[xr.Dataset, Path]:
    """A small map of a charged slit (Grahame zeta for the thin-layer model) over salt and height."""
    folder = tmp_path_factory.mktemp("map")
    base = edl.Case(geometry=edl.Slit(height="100 nm"), electrolyte=KCL, wall=edl.Wall(charge_density="-10 mC/m^2"))
    ds = validity_map(base, ("electrolyte.concentration", ["0.1 mM", "1 mM", "10 mM", "100 mM"]),
                      ("geometry.height", np.geomspace(5e-9, 2e-6, 5)), path=folder / "map.h5",
                      boundary_tolerance="5 %")
    return ds, folder


def test_map_dataset_has_the_axes_units_and_errors(glass_map: tuple[xr.Dataset, Path]) -> None:
    ds, folder = glass_map
    assert dict(ds.sizes) == {"geometry.height": 5, "electrolyte.concentration": 4}
    assert ds["thin_layer_flow_rate_error"].dims == ("geometry.height", "electrolyte.concentration")
    assert ds["geometry.height"].attrs["units"] == "m"
    assert ds["electrolyte.concentration"].attrs["units"] == "mol/m^3"
    assert ds["thin_layer_flow_rate_error"].attrs["units"] == "1"
    assert ds["thin_layer_current_error"].attrs["units"] == "1"
    assert ds["thin_layer_current_per_field"].attrs["units"] == "S"  # per unit width of a slit
    assert (ds["status"].values == 0).all()
    assert ds.attrs["x_axis"] == "electrolyte.concentration" and ds.attrs["y_axis"] == "geometry.height"
    # The flow error falls as the layers thin (common practice: the slip model is a thin-layer limit).
    flow = np.abs(ds["thin_layer_flow_rate_error"].values)
    assert (np.diff(flow, axis=0) < 0).all() and (np.diff(flow, axis=1) < 0).all()
    # Surface conduction makes the full current larger than bulk conduction: negative current errors.
    assert (ds["thin_layer_current_error"].values < 0).all()
    # The file holds the same map, and the sweep's working file is gone.
    assert sorted(os.listdir(folder)) == ["map.h5"]
    with xr.open_dataset(folder / "map.h5", engine="h5netcdf") as stored:
        assert stored["thin_layer_current_error"].attrs["units"] == "1"
        np.testing.assert_array_equal(stored["thin_layer_flow_rate_error"].values,
                                      ds["thin_layer_flow_rate_error"].values)
        assert stored["boundary"].dims == ("electrolyte.concentration",)


def test_map_boundary_is_the_root_along_height(glass_map: tuple[xr.Dataset, Path]) -> None:
    ds, _ = glass_map
    curve = ds["boundary"]
    assert curve.attrs["axis"] == "geometry.height" and curve.attrs["units"] == "m"
    assert curve.attrs["valid_side"] == "above"
    base = edl.Case(geometry=edl.Slit(height="100 nm"), electrolyte=edl.Electrolyte.from_ions(
        {"K+": "10 mM", "Cl-": "10 mM"}), wall=edl.Wall(charge_density="-10 mC/m^2"))
    height = float(curve.sel({"electrolyte.concentration": 10.0}))
    tight = replace(base, geometry=edl.Slit(height=height), numerics=edl.Numerics(accuracy=1e-9))
    assert abs(edl.solve(tight).summary["thin_layer_flow_rate_error"]) == pytest.approx(0.05, rel=1e-6)
    # The root lies between the grid heights where the map's error crosses 5 %.
    column = np.abs(ds["thin_layer_flow_rate_error"].sel({"electrolyte.concentration": 10.0}).values)
    heights = ds["geometry.height"].values
    below = heights[column > 0.05].max()
    assert below < height < heights[heights > below].min()


def test_map_figure_is_a_png_and_leaves_pyplot_alone(glass_map: tuple[xr.Dataset, Path], tmp_path: Path) -> None:
    import matplotlib
    import matplotlib.pyplot as plt

    ds, _ = glass_map
    backend, figures = matplotlib.get_backend(), plt.get_fignums()
    path = map_figure(ds, tmp_path / "map.png")
    assert path.read_bytes()[:8] == PNG_SIGNATURE
    assert path.stat().st_size > 30_000  # two panels of filled contours, not an empty canvas
    assert os.listdir(tmp_path) == ["map.png"]
    assert plt.get_fignums() == figures and matplotlib.get_backend() == backend
    with pytest.raises(InputError, match="not a validity map"):
        map_figure(xr.Dataset(), tmp_path / "other.png")
    with pytest.raises(InputError, match="boundary"):
        map_figure(ds, tmp_path / "other.png", boundary=ds["kappa_h"])
    assert os.listdir(tmp_path) == ["map.png"]


# -- bad input ---------------------------------------------------------------------------------------

BASE = edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-50 mV"))


@pytest.mark.parametrize(("x_axis", "y_axis", "message"), [
    (("geometry.heigth", [1e-8, 1e-7]), ("wall.zeta", [-0.05, -0.01]), "did you mean 'geometry.height'"),
    (("kappa_h", [1, 10]), ("geometry.height", [1e-8, 1e-7]), "same input"),
    (("kappa_h", [1, 10]), ("electrolyte.concentration", [1, 10]), "changes the Debye length"),
    (("zeta_kT", [-2, -1]), ("wall.charge_density", [-0.01, -0.001]), "same input"),
    (("zeta_kT", [-2, -1]), ("solvent.temperature", [290, 300]), "changes kT/e"),
    (("kappa_h", [0, 10]), ("zeta_kT", [-2, -1]), "kappa_h: .* <= 0"),
    (("kappa_h", [1]), ("zeta_kT", [-2, -1]), "at least two"),
    (("kappa_h", [1, 10, 5]), ("zeta_kT", [-2, -1]), "monotonic"),
    (("geometry.height", ["5 mV", "50 nm"]), ("zeta_kT", [-2, -1]), "geometry.height"),
    (("model", ["pb", "dh"]), ("zeta_kT", [-2, -1]), "words"),
    ("geometry.height", ("zeta_kT", [-2, -1]), "x_axis: .* not an axis"),
], ids=["typo", "same-input", "kappa-h-with-salt", "two-wall-conditions", "zeta-kT-with-temperature",
        "kappa-h-zero", "one-value", "not-monotonic", "wrong-unit", "word-axis", "not-a-pair"])
def test_bad_axes_raise_one_line_input_errors(x_axis: object, y_axis: object, message: str, tmp_path: Path) -> None:
    with pytest.raises(InputError, match=message) as raised:
        check_axes(BASE, x_axis, y_axis)  # type: ignore[arg-type]
    assert "\n" not in str(raised.value)
    with pytest.raises(InputError, match=message):
        validity_map(BASE, x_axis, y_axis, path=tmp_path / "map.h5")  # type: ignore[arg-type]
    assert os.listdir(tmp_path) == []  # nothing solved, nothing written


def test_bad_boundary_requests_raise_input_errors() -> None:
    case = dh_case(edl.Slit(height="50 nm"))
    with pytest.raises(InputError, match=r"bracket: .* both above the tolerance 0.05") as raised:
        boundary(case, "kappa_h", 0.05, bracket=(1.0, 10.0))  # the root is kh = 21
    assert "\n" not in str(raised.value)
    with pytest.raises(InputError, match="both below"):
        boundary(case, "kappa_h", 0.05, bracket=(30.0, 100.0))
    with pytest.raises(InputError, match=r"bracket: none given for 'wall\.zeta'"):
        boundary(case, "wall.zeta", 0.05)
    with pytest.raises(InputError, match="tolerance"):
        boundary(case, "kappa_h", 1.5)
    with pytest.raises(InputError, match="quantity"):
        boundary(case, "kappa_h", 0.05, quantity="velocity")  # type: ignore[arg-type]
    with pytest.raises(InputError, match="same input"):
        boundary_curve(case, "kappa_h", "geometry.height", [1e-8, 1e-7])
    # A curve carries on past values with no boundary in the bracket (NaN), like a sweep past failures.
    curve = boundary_curve(case, "kappa_h", "zeta_kT", [-1.0], 0.05, bracket=(1.0, 10.0))
    assert np.isnan(curve.values).all() and curve.attrs["missing"] == 1
