"""The parts of a validity map on their own: the pseudo-axis kappa_h against the geometry's Debye-length
scale (edl_solver.analysis.map_axes), the default bracket of a boundary (edl_solver.analysis.boundary), and
the map file (edl_solver.io.map_file)."""

from __future__ import annotations

import math
import os
from pathlib import Path

import h5py
import numpy as np
import pytest
import xarray as xr
from scipy import constants

import edl_solver as edl
from edl_solver.analysis.boundary import boundary
from edl_solver.analysis.map_axes import SIZE_PATHS, resolve_axis
from edl_solver.errors import InputError
from edl_solver.io.map_file import write_map

KCL = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})


def debye_length(case: edl.Case) -> float:
    """lambda_D = sqrt(eps kT / (2 e^2 N_A c)) of a 1:1 salt of concentration c (mol/m^3) (Debye & Hueckel 1923;
    e.g. Israelachvili, Intermolecular and Surface Forces, from memory). Constants: CODATA 2018 (scipy)."""
    c = case.electrolyte.ions[0].concentration
    kt = constants.k * case.solvent.temperature
    return math.sqrt(case.solvent.permittivity * kt / (2.0 * constants.e**2 * constants.N_A * c))


@pytest.mark.parametrize(("geometry", "half_size_per_size"), [(edl.Slit(height="50 nm"), 0.5),
                                                              (edl.Capillary(radius="25 nm"), 1.0)])
def test_kappa_h_sets_the_half_size_in_debye_lengths(geometry: edl.Slit | edl.Capillary,
                                                     half_size_per_size: float) -> None:
    # kappa h is the half-height of a slit (H = 2 kappa h lambda_D) or the radius of a capillary (a = kappa a
    # lambda_D) over the Debye length (README conventions)
    case = edl.Case(geometry=geometry, electrolyte=KCL, wall=edl.Wall(zeta="-25 mV"))
    kappa_h = np.array([0.5, 3.0, 40.0])
    axis = resolve_axis(case, "kappa_h", kappa_h, "x_axis")
    assert axis.path == geometry.size_path and axis.path in SIZE_PATHS
    np.testing.assert_allclose(axis.inputs * half_size_per_size, kappa_h * debye_length(case), rtol=1e-9)


def test_a_size_path_of_another_geometry_is_refused_in_one_line() -> None:
    case = edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-25 mV"), model="dh")
    with pytest.raises(InputError, match=r"axis: 'geometry\.radius' is not the size of a slit, expected "
                                         r"'geometry\.height'") as raised:
        boundary(case, "geometry.radius", 0.05)
    assert "\n" not in str(raised.value)


def small_map() -> xr.Dataset:
    height = np.array([1e-8, 1e-7, 1e-6])
    concentration = np.array([0.1, 1.0])
    error = np.outer(1.0 / height, 1.0 / concentration) * 1e-9
    return xr.Dataset(
        {"thin_layer_flow_rate_error": (("geometry.height", "electrolyte.concentration"), error, {"units": "1"}),
         "status": (("geometry.height", "electrolyte.concentration"), np.zeros(error.shape, dtype=np.int8))},
        coords={"geometry.height": ("geometry.height", height, {"units": "m"}),
                "electrolyte.concentration": ("electrolyte.concentration", concentration, {"units": "mol/m^3"})},
        attrs={"x_axis": "electrolyte.concentration", "y_axis": "geometry.height", "tolerances": [0.01, 0.05]})


def test_the_map_file_reads_back_the_same_with_its_planes_compressed(tmp_path: Path) -> None:
    # What is written reads back identical (common practice for a file format); the 2-D float planes are
    # gzip-compressed with the shuffle filter, the 1-D coordinates and integer status are not.
    data = small_map()
    path = write_map(data, tmp_path / "map.h5")
    assert path == tmp_path / "map.h5" and os.listdir(tmp_path) == ["map.h5"]
    with xr.open_dataset(path, engine="h5netcdf") as stored:
        xr.testing.assert_identical(stored.load(), data)
    with h5py.File(path, "r") as file:
        plane = file["thin_layer_flow_rate_error"]
        assert (plane.compression, plane.shuffle) == ("gzip", True)
        assert file["status"].compression is None and file["geometry.height"].compression is None


def test_a_map_file_that_cannot_be_written_leaves_nothing(tmp_path: Path) -> None:
    with pytest.raises(InputError, match=r"path: .* does not exist"):
        write_map(small_map(), tmp_path / "missing" / "map.h5")
    (tmp_path / "map.h5").write_bytes(b"old")
    unwritable = small_map().assign(note=("x", np.array([{"a": 1}], dtype=object)))  # no netCDF type
    with pytest.raises(ValueError, match="cannot serialize"):  # the old file stays, no temporary is left
        write_map(unwritable, tmp_path / "map.h5")
    assert os.listdir(tmp_path) == ["map.h5"] and (tmp_path / "map.h5").read_bytes() == b"old"
