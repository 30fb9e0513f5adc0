"""The fit file (edl_solver.io.fit_file): the fit's Dataset in the HDF5 group "fit", read back by xarray, written
whole or not at all."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import edl_solver as edl
from edl_solver.analysis.fit_record import fit_dataset
from edl_solver.io.fit_file import read_fit, write_fit
from tests.helpers import KCL


@pytest.fixture(scope="module")
def fitted() -> tuple[edl.Case, edl.Fit]:
    """Two data sets made by the model itself (no noise, 1 % uncertainties), fitted."""
    case = edl.Case(geometry=edl.Slit(height="50 nm"), wall=edl.Wall(charge_density="-5 mC/m^2"), electrolyte=KCL)
    c = np.geomspace(0.1, 10.0, 5)
    g = edl.sweep(case, {"electrolyte.concentration": c})["conductance_per_length"].values
    data = [{"electrolyte.concentration": c, "conductance_per_length": g, "uncertainty": 0.01 * g},
            {"electrolyte.concentration": c[:3], "conductance_per_length": g[:3]}]
    return case, edl.fit(case, data, ["wall.charge_density"])


def test_the_record_reads_back_with_xarray(tmp_path: Path, fitted: tuple[edl.Case, edl.Fit]) -> None:
    case, fit = fitted
    path = write_fit(fit_dataset(case, fit, ["a.csv", "b.csv"]), tmp_path / "fit.h5")
    with xr.open_dataset(path, engine="h5netcdf", group="fit") as data:
        assert data.attrs["datasets"] == 2 and data.attrs["dof"] == fit.dof
        assert float(data["value"].values[0]) == fit.parameters["wall.charge_density"]
        assert float(data["standard_error"].values[0]) == fit.standard_errors["wall.charge_density"]
        np.testing.assert_array_equal(data["covariance"].values, fit.covariance)
        np.testing.assert_array_equal(data["data1.model"].values, fit.datasets[1].model)
        assert "data0.uncertainty" in data.variables and "data1.uncertainty" not in data.variables
        assert data["data0.curve.electrolyte.concentration"].attrs["units"] == "mol/m^3"
        # the curve is the model: at the data's ends it meets the model values there
        np.testing.assert_allclose(data["data0.curve.model"].values[[0, -1]], fit.datasets[0].model[[0, -1]],
                                   rtol=1e-8)
    assert read_fit(path)["thin_layer_value"].size == 1


def test_a_failed_write_leaves_the_old_file(tmp_path: Path, fitted: tuple[edl.Case, edl.Fit]) -> None:
    path = tmp_path / "fit.h5"
    path.write_bytes(b"old")
    bad = fit_dataset(*fitted)
    bad.attrs["not storable"] = object()
    with pytest.raises(Exception):  # noqa: B017 - whatever netCDF raises, the old file stays
        write_fit(bad, path)
    assert path.read_bytes() == b"old"
