"""Profiles in a sweep, on request (``edl.sweep(..., profiles=N)``, ``output_profiles = N``).

Checked against the Debye-Hueckel closed forms of the potential across a slit and a capillary with fixed
wall potential: psi = zeta cosh(kappa (y - h)) / cosh(kappa h) (Burgreen & Nakache 1964) and
psi = zeta I0(kappa r) / I0(kappa a) (Rice & Whitehead 1965), and against the profiles of single solves.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import xarray as xr
from scipy.special import i0e

import edl_solver as edl
from edl_solver.cli import main
from edl_solver.errors import InputError
from tests.helpers import KCL

ZETA = -1e-4  # V: deep in the linear regime (|zeta| << kT/e)


def dh_case(geometry: edl.Slit | edl.Capillary) -> edl.Case:
    return edl.Case(geometry=geometry, electrolyte=KCL, wall=edl.Wall(zeta=ZETA), model="dh", field="1 kV/m",
                    numerics=edl.Numerics(accuracy=1e-9))


def test_slit_potential_profile_is_the_burgreen_nakache_closed_form() -> None:
    heights = [10e-9, 60e-9]
    ds = edl.sweep(dh_case(edl.Slit(height="20 nm")), {"geometry.height": heights}, profiles=41)
    assert ds["profile_potential"].dims == ("geometry.height", "position")
    assert ds["position"].attrs["units"] == "1" and "y/H" in ds["position"].attrs["long_name"]
    t = ds["position"].values
    for i, height in enumerate(heights):
        kappa, h = 1.0 / float(ds["debye_length"][i]), height / 2.0
        y = t * height
        expected = ZETA * np.cosh(kappa * (y - h)) / np.cosh(kappa * h)
        np.testing.assert_allclose(ds["profile_potential"].values[i], expected, rtol=1e-6, atol=1e-6 * abs(ZETA))


def test_capillary_potential_profile_is_the_rice_whitehead_closed_form() -> None:
    radii = [5e-9, 40e-9]
    ds = edl.sweep(dh_case(edl.Capillary(radius="10 nm")), {"geometry.radius": radii}, profiles=33)
    t = ds["position"].values
    assert "r/a" in ds["position"].attrs["long_name"]
    for i, radius in enumerate(radii):
        kappa = 1.0 / float(ds["debye_length"][i])
        r = t * radius
        # I0(x) / I0(X) = i0e(x) exp(x) / (i0e(X) exp(X))
        expected = ZETA * i0e(kappa * r) / i0e(kappa * radius) * np.exp(kappa * (r - radius))
        np.testing.assert_allclose(ds["profile_potential"].values[i], expected, rtol=1e-6, atol=1e-6 * abs(ZETA))


def test_profiles_match_single_solves_and_the_summary_is_unchanged() -> None:
    base = edl.Case(geometry=edl.Slit(height="30 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-60 mV"),
                    field="1 kV/m", pressure_gradient="-1 bar/mm")
    axes = {"wall.zeta": ["-30 mV", "-90 mV"]}
    with_profiles = edl.sweep(base, axes, profiles=True)
    assert with_profiles.sizes["position"] == 101 and list(with_profiles["ion"].values) == ["K+", "Cl-"]
    xr.testing.assert_identical(with_profiles.drop_dims(["position", "ion"]), edl.sweep(base, axes))
    for j, zeta in enumerate(axes["wall.zeta"]):
        profiles = edl.solve(edl.Case(geometry=base.geometry, electrolyte=KCL, wall=edl.Wall(zeta=zeta),
                                      field="1 kV/m", pressure_gradient="-1 bar/mm")).profiles
        at = with_profiles.isel({"wall.zeta": j})
        # the nodes of the solve are reproduced where they coincide with a position: the walls and the centre
        for position, node in ((0, 0), (50, profiles.coordinate.size // 2), (100, -1)):
            assert float(at["profile_potential"][position]) == pytest.approx(profiles.potential[node], rel=1e-12)
            assert float(at["profile_velocity"][position]) == pytest.approx(profiles.velocity[node], rel=1e-12,
                                                                               abs=1e-18)
            np.testing.assert_allclose(at["profile_concentration"].values[:, position],
                                       profiles.concentration[:, node], rtol=1e-12)


def test_bad_profile_requests_are_one_line_input_errors() -> None:
    base = edl.Case(geometry=edl.Slit(height="30 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-60 mV"))
    for bad in (1, 0.5, "many"):
        with pytest.raises(InputError, match=r"profiles: .* expected a whole number of at least 2"):
            edl.sweep(base, {"wall.zeta": ["-30 mV"]}, profiles=bad)


def test_sweep_file_asks_for_profiles_and_the_file_holds_them(tmp_path: Path) -> None:
    sweep_file = tmp_path / "design.toml"
    sweep_file.write_text("""\
[geometry]
kind = "capillary"
radius = "20 nm"

[electrolyte]
ions = { "K+" = "1 mM", "Cl-" = "1 mM" }

[wall]
charge_density = "-5 mC/m^2"

[sweep]
output_profiles = 11

[sweep.axes]
"geometry.radius" = ["10 nm", "30 nm"]
""", encoding="utf-8")
    assert main([str(Path("sweep")), str(sweep_file), "-q"]) == 0
    with xr.open_dataset(tmp_path / "design.h5", engine="h5netcdf") as ds:
        assert ds["profile_concentration"].dims == ("geometry.radius", "ion", "position")
        assert ds["profile_concentration"].attrs["units"] == "mol/m^3"
        assert ds.sizes["position"] == 11
        # the counter-ion is enriched at the wall (r/a = 1) over the axis
        k_plus = ds["profile_concentration"].sel(ion="K+")
        assert (k_plus.isel(position=-1) > k_plus.isel(position=0)).all()
