"""The transient run file: an exact round trip, a file xarray opens as it is, atomic writing and one-line refusals.

File-format checks of this project's design, not physics: they need no outside reference.
"""

from __future__ import annotations

import json
from pathlib import Path

import h5py
import numpy as np
import pytest
import xarray as xr

from edl_solver.errors import InputError
from edl_solver.io.transient_file import FILE_KIND, read_transient, write_transient
from tests.io.transient_runs import full_run, startup_run


@pytest.mark.parametrize("make", [full_run, startup_run])
def test_round_trip_is_exact(tmp_path: Path, make: object) -> None:
    run = make()
    path = write_transient(run, tmp_path / "run.h5")
    back = read_transient(path)
    xr.testing.assert_identical(back, run)
    for name, variable in run.variables.items():
        assert back[name].dtype.kind == variable.dtype.kind or variable.dtype.kind == "U", name
        if variable.dtype.kind == "f":
            assert np.array_equal(back[name].values, variable.values), name  # bit for bit


def test_xarray_opens_the_file_with_its_dimensions_and_the_drives(tmp_path: Path) -> None:
    run = full_run()
    write_transient(run, tmp_path / "run.h5")
    with xr.open_dataset(tmp_path / "run.h5", engine="h5netcdf") as opened:
        assert dict(opened.sizes) == {"time": 12, "wall": 2, "ion": 2, "x": 41}
        assert opened["concentration"].dims == ("time", "ion", "x")
        assert opened["wall_potential"].attrs["units"] == "V"
        assert opened.attrs["file_kind"] == FILE_KIND
        assert json.loads(opened.attrs["drives_json"])["field"]["kind"] == "sine"
        assert json.loads(opened.attrs["before_json"]) != json.loads(opened.attrs["case_json"])
    with h5py.File(tmp_path / "run.h5", "r") as f:  # the profiles compressed, the series not
        assert f["concentration"].compression == "gzip"
        assert f["flow_rate"].compression is None


def test_a_failed_write_leaves_the_old_file_and_no_temporary(tmp_path: Path) -> None:
    path = tmp_path / "run.h5"
    path.write_bytes(b"old")
    run = full_run()
    run.attrs["bad"] = {"not": "storable"}
    with pytest.raises(InputError, match=r"^run\.attrs\['bad'\]: .* expected text or numbers$"):
        write_transient(run, path)
    run = full_run()
    run["flow_rate"].attrs["units"] = object()  # refused by the netCDF writer itself, mid-write
    with pytest.raises((TypeError, ValueError)):
        write_transient(run, path)
    assert path.read_bytes() == b"old"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["run.h5"]


@pytest.mark.parametrize(("what", "message"), [
    ("not a dataset", r"^run: str is not an xarray.Dataset"),
    ("no time", r"^run: has no 'time' coordinate"),
    ("reserved", r"^run.attrs\['file_kind'\]: is reserved"),
])
def test_write_refuses_what_is_not_a_run(tmp_path: Path, what: str, message: str) -> None:
    run = {"not a dataset": "run", "no time": xr.Dataset({"a": ("t", [1.0])}),
           "reserved": full_run().assign_attrs(file_kind="x")}[what]
    with pytest.raises(InputError, match=message):
        write_transient(run, tmp_path / "run.h5")
    assert not list(tmp_path.iterdir())


def test_read_refuses_other_files_in_one_line(tmp_path: Path) -> None:
    with pytest.raises(InputError, match=r"^path: .* does not exist, expected a transient run file"):
        read_transient(tmp_path / "missing.h5")
    (tmp_path / "text.h5").write_text("not hdf5")
    with pytest.raises(InputError, match=r"^path: .* cannot be read \(.*\), expected a transient run file"):
        read_transient(tmp_path / "text.h5")
    xr.Dataset({"a": ("t", [1.0])}).to_netcdf(tmp_path / "other.h5", engine="h5netcdf")
    with pytest.raises(InputError, match=r"^path: .* is not a transient run file \(file_kind None\)"):
        read_transient(tmp_path / "other.h5")
    write_transient(full_run(), tmp_path / "run.h5")
    with h5py.File(tmp_path / "run.h5", "a") as f:
        f.attrs["transient_schema_version"] = "99"
    with pytest.raises(InputError, match=r"^path: .* has transient layout version '99', expected version 1"):
        read_transient(tmp_path / "run.h5")
