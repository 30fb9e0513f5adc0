"""``edl.sweep``: values equal single solves, the Dataset's layout, the file, kill and resume, workers, Dask.

The sweeps are kept small (a few dozen cases) so that the whole file runs in a few seconds once the
kernels are compiled; one sweep (``slit_sweep``) is shared by the layout, file and parallel checks.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from dataclasses import replace
from pathlib import Path
from typing import Any

import numpy as np
import pytest
import xarray as xr

import edl_solver as edl
from edl_solver.errors import ConvergenceError, InputError
from edl_solver.results.schema import SUMMARY_UNITS, summary_unit
from edl_solver.sweeping.run import PATH_UNITS
from tests.helpers import KCL, ROOT

SLIT = edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-40 mV"),
                field="1 kV/m", pressure_gradient="-1 bar/mm")
# Two walls: the bottom keeps the base value, the top is swept (zipped with the temperature).
SLIT_AXES: dict[str, list[Any]] = {
    "geometry.height": ["10 nm", "40 nm"],
    "electrolyte.concentration": ["0.5 mM", "2 mM"],
    "wall.top.zeta": ["-20 mV", "-60 mV", "-90 mV"],
    "solvent.temperature": ["15 degC", "25 degC", "35 degC"],
}
SLIT_ZIP = [["wall.top.zeta", "solvent.temperature"]]
SLIT_DIMS = ("geometry.height", "electrolyte.concentration", "wall.top.zeta")

#: Summary values that are round-off-level residuals of the checks: compared absolutely.
RESIDUAL_KEYS = ("charge_balance", "reciprocity_residual", "error_estimate")


@pytest.fixture(scope="module")
def slit_sweep() -> xr.Dataset:
    return edl.sweep(SLIT, SLIT_AXES, zipped=SLIT_ZIP)


def slit_case(height: str, concentration: str, top: str, temperature: str) -> edl.Case:
    """The case of one point of SLIT_AXES, built directly (not through the sweep's path setter)."""
    return replace(SLIT, geometry=edl.Slit(height=height),
                   electrolyte=edl.Electrolyte.from_ions({"K+": concentration, "Cl-": concentration}),
                   wall=(SLIT.wall, edl.Wall(zeta=top)), solvent=edl.Water(temperature=temperature))


def assert_point_equals_solve(ds: xr.Dataset, point: dict[str, int], case: edl.Case) -> None:
    """Every summary value of one sweep point equals a single solve of ``case`` (1e-10 relative)."""
    result = edl.solve(case)
    at = ds.isel(point)
    assert int(at["status"]) == 0 and str(at["message"].values) == ""
    for key in SUMMARY_UNITS:
        got = np.atleast_1d(at[key].values)
        if key not in result.summary:  # a value this case does not define (e.g. no Stern layer)
            assert np.isnan(got).all(), f"{key} at {point}"
            continue
        expected = np.atleast_1d(np.asarray(result.summary[key], dtype=float))
        if key in RESIDUAL_KEYS:
            np.testing.assert_allclose(got, expected, rtol=0, atol=1e-12, err_msg=f"{key} at {point}")
        else:
            np.testing.assert_allclose(got, np.broadcast_to(expected, got.shape), rtol=1e-10, atol=0,
                                       equal_nan=True, err_msg=f"{key} at {point}")


# -- values ------------------------------------------------------------------------------------------


def test_slit_sweep_with_two_walls_and_zipped_axes_equals_single_solves(slit_sweep: xr.Dataset) -> None:
    ds = slit_sweep
    assert ds["status"].shape == (2, 2, 3)
    for i, height in enumerate(SLIT_AXES["geometry.height"]):
        for j, concentration in enumerate(SLIT_AXES["electrolyte.concentration"]):
            for k, (top, temperature) in enumerate(zip(SLIT_AXES["wall.top.zeta"],
                                                       SLIT_AXES["solvent.temperature"])):
                case = slit_case(height, concentration, top, temperature)
                assert_point_equals_solve(ds, dict(zip(SLIT_DIMS, (i, j, k))), case)
    # The pair values are really (bottom, top): the bottom stays at the base, the top follows the axis.
    np.testing.assert_allclose(ds["zeta"].sel(wall="bottom"), -0.040, rtol=1e-6)
    np.testing.assert_allclose(ds["zeta"].sel(wall="top").isel({"geometry.height": 0, "electrolyte.concentration": 0}),
                               [-0.020, -0.060, -0.090], rtol=1e-6)


def test_capillary_sweep_of_charged_walls_equals_single_solves() -> None:
    base = edl.Case(geometry=edl.Capillary(radius="10 nm"), electrolyte=KCL,
                    wall=edl.Wall(charge_density="-2 mC/m^2"), field="2 kV/m")
    radii, charges, fields = ["5 nm", "30 nm"], ["-1 mC/m^2", "-8 mC/m^2"], ["1 kV/m", "3 kV/m"]
    ds = edl.sweep(base, {"wall.charge_density": charges, "geometry.radius": radii, "field": fields},
                   zipped=[["geometry.radius", "field"]])
    assert ds["status"].dims == ("wall.charge_density", "geometry.radius")
    assert "wall" not in ds.dims  # one wall: no (bottom, top) pairs
    for i, charge in enumerate(charges):
        for j, (radius, field) in enumerate(zip(radii, fields)):
            case = replace(base, geometry=edl.Capillary(radius=radius), wall=edl.Wall(charge_density=charge),
                           field=field)
            assert_point_equals_solve(ds, {"wall.charge_density": i, "geometry.radius": j}, case)
    assert ds["flow_rate_eo"].attrs["units"] == "m^3/s" and ds["current"].attrs["units"] == "A"


def test_a_case_that_fails_is_kept_with_status_1_and_its_message() -> None:
    # A 2 um slit (kappa h ~ 100) cannot reach 1e-13 within 256 cells per half section: the grid
    # refinement gives up on that axis value, while 1e-6 is met.
    base = edl.Case(geometry=edl.Slit(height="2 um"), electrolyte=KCL, wall=edl.Wall(zeta="-40 mV"),
                    field="1 kV/m", numerics=edl.Numerics(max_intervals=256))
    accuracies, zetas = [1e-6, 1e-13], ["-10 mV", "-100 mV"]
    ds = edl.sweep(base, {"numerics.accuracy": accuracies, "wall.zeta": zetas})
    assert ds["status"].shape == (2, 2)  # nothing dropped
    outcomes = set()
    for i, accuracy in enumerate(accuracies):
        for j, zeta in enumerate(zetas):
            case = replace(base, wall=edl.Wall(zeta=zeta), numerics=replace(base.numerics, accuracy=accuracy))
            point = {"numerics.accuracy": i, "wall.zeta": j}
            try:
                edl.solve(case)
            except ConvergenceError as error:
                outcomes.add("failed")
                at = ds.isel(point)
                assert int(at["status"]) == 1, point
                assert str(at["message"].values) == str(error), point
                assert all(np.isnan(at[key].values).all() for key in SUMMARY_UNITS), point
                continue
            outcomes.add("converged")
            assert_point_equals_solve(ds, point, case)
    assert outcomes == {"failed", "converged"}, "the sweep should mix failed and converged cases"


# -- the Dataset ---------------------------------------------------------------------------------------


def test_dataset_has_one_dimension_per_axis_in_order_and_units_everywhere(slit_sweep: xr.Dataset) -> None:
    ds = slit_sweep
    assert ds["status"].dims == SLIT_DIMS  # the zipped pair is one dimension, named after its first axis
    assert dict(ds.sizes) == {"geometry.height": 2, "electrolyte.concentration": 2, "wall.top.zeta": 3, "wall": 2}
    for path in SLIT_AXES:  # every swept input is a coordinate with its SI unit, in SI values
        assert path in ds.coords and ds[path].attrs["units"] == PATH_UNITS[path]
    np.testing.assert_allclose(ds["geometry.height"], [10e-9, 40e-9], rtol=1e-15)
    np.testing.assert_allclose(ds["solvent.temperature"], [288.15, 298.15, 308.15], rtol=1e-15)
    assert ds["solvent.temperature"].dims == ("wall.top.zeta",)
    for key in SUMMARY_UNITS:
        assert ds[key].attrs["units"] == summary_unit(key, edl.Slit(height=1e-8)), key
        assert ds[key].attrs["long_name"], key
    assert np.issubdtype(ds["status"].dtype, np.integer)
    # The order of the axes is the order of the dimensions.
    swapped = edl.sweep(SLIT, {"wall.zeta": ["-20 mV"], "geometry.height": ["10 nm", "30 nm"]})
    assert swapped["status"].dims == ("wall.zeta", "geometry.height")


def test_file_opens_with_xarray_and_equals_the_in_memory_result(slit_sweep: xr.Dataset, tmp_path: Path) -> None:
    path = tmp_path / "sweep.h5"
    returned = edl.sweep(SLIT, SLIT_AXES, zipped=SLIT_ZIP, path=path)
    assert path.exists() and not (tmp_path / "sweep.h5.partial").exists()
    with xr.open_dataset(path, engine="h5netcdf") as opened:
        xr.testing.assert_equal(opened.load(), slit_sweep)
        assert np.issubdtype(opened["status"].dtype, np.integer)
        for key in (*SUMMARY_UNITS, *SLIT_AXES):
            assert opened[key].attrs["units"] == slit_sweep[key].attrs["units"], key
        assert opened.attrs["schema_version"] and opened.attrs["edl_solver_version"] == edl.__version__
    xr.testing.assert_equal(returned, slit_sweep)
    # what edl.sweep returns is the file as xarray reads it, attributes included
    xr.testing.assert_identical(returned, xr.load_dataset(path, engine="h5netcdf"))


# -- parallel: local processes and Dask ------------------------------------------------------------------


def test_two_local_workers_equal_one(slit_sweep: xr.Dataset) -> None:
    parallel = edl.sweep(SLIT, SLIT_AXES, zipped=SLIT_ZIP, workers=2, rows_per_task=1)
    xr.testing.assert_identical(parallel, slit_sweep)


def test_dask_cluster_equals_the_local_run(slit_sweep: xr.Dataset) -> None:
    from distributed import Client, LocalCluster

    # Loopback only, no dashboard: nothing is exposed beyond this machine.
    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                      dashboard_address=None) as cluster, Client(cluster) as client:
        on_dask = edl.sweep(SLIT, SLIT_AXES, zipped=SLIT_ZIP, dask=client, rows_per_task=1)
    xr.testing.assert_identical(on_dask, slit_sweep)


# -- kill and resume -------------------------------------------------------------------------------------

#: A sweep of 80 rows of 4 cases (~2.5 s, slowed down); a subprocess runs it one row per task, so that
#: finished rows reach the file (committed about twice a second).
KILL_ROWS = 80
KILL_AXES = {"geometry.height": [f"{h:.4g} nm" for h in np.geomspace(5.0, 500.0, KILL_ROWS)],
             "wall.zeta": ["-15 mV", "-45 mV", "-90 mV", "-140 mV"]}

_KILL_SCRIPT = """
import sys, time
import edl_solver as edl
import edl_solver.sweeping.run as sweep_run
solve_rows = sweep_run.solve_rows

def slowly(*args, **kwargs):  # 30 ms a row: the sweep (~2.5 s) is still running when the test kills it
    time.sleep(0.03)
    return solve_rows(*args, **kwargs)

sweep_run.solve_rows = slowly
electrolyte = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})
base = edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=electrolyte, wall=edl.Wall(zeta="-40 mV"),
                field="1 kV/m", pressure_gradient="-1 bar/mm")
edl.sweep(base, %r, path=sys.argv[1], rows_per_task=1, progress=False)
"""


def rows_status(partial: Path) -> np.ndarray | None:
    """The status array of a .partial file another process is writing (None while it cannot be read)."""
    import h5py

    try:
        with h5py.File(partial, "r", locking=False) as f:
            return f["status"][...]
    except (OSError, KeyError, RuntimeError, ValueError):  # not created yet, or caught between two writes
        return None


def test_killed_sweep_resumes_to_the_uninterrupted_result(tmp_path: Path) -> None:
    killed, partial = tmp_path / "killed.h5", tmp_path / "killed.h5.partial"
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(filter(None, [str(ROOT), os.environ.get("PYTHONPATH")]))}
    started = time.perf_counter()
    with subprocess.Popen([sys.executable, "-c", _KILL_SCRIPT % (KILL_AXES,), str(killed)], env=env,
                          stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True) as process:
        try:
            deadline = time.monotonic() + 60.0
            while time.monotonic() < deadline and process.poll() is None:
                status = rows_status(partial)
                if status is not None and np.all(status[:3] == 0):  # some rows finished
                    break
                time.sleep(0.02)
            assert process.poll() is None, f"the sweep ended before it was killed: {process.communicate()}"
            process.send_signal(signal.SIGKILL)
            process.communicate(timeout=30)
        finally:
            if process.poll() is None:
                process.kill()
    status = rows_status(partial)
    assert status is not None and not killed.exists()
    done = np.all(status == 0, axis=1)
    assert done.sum() >= 3 and np.any(status == -1), f"rows done at the kill: {int(done.sum())} of {KILL_ROWS}"

    # A different sweep is refused and leaves the partial file's work as it was.
    other = {**KILL_AXES, "wall.zeta": ["-15 mV", "-45 mV", "-90 mV", "-141 mV"]}
    with pytest.raises(InputError, match="different sweep"):
        edl.sweep(SLIT, other, path=killed, resume=True)
    np.testing.assert_array_equal(rows_status(partial), status)

    # Finished rows are kept, not solved again: a mark put in one survives the resume.
    import h5py

    row = int(np.nonzero(done)[0][0])
    with h5py.File(partial, "a") as f:
        mark = f["debye_length"][row, 0] * 3.0
        f["debye_length"][row, 0] = mark
    resumed = edl.sweep(SLIT, KILL_AXES, path=killed, resume=True)
    assert killed.exists() and not partial.exists()
    assert float(resumed["debye_length"][row, 0]) == mark

    whole = edl.sweep(SLIT, KILL_AXES)  # in memory, which equals the file (see the test above)
    resumed["debye_length"][row, 0] = whole["debye_length"][row, 0]
    xr.testing.assert_equal(resumed, whole)
    assert int((resumed["status"] == 0).sum()) == KILL_ROWS * 4
    print(f"kill and resume: {time.perf_counter() - started:.1f} s, {int(done.sum())} of {KILL_ROWS} rows kept")


def test_bad_sweep_arguments_name_the_argument() -> None:
    with pytest.raises(InputError, match="workers"):
        edl.sweep(SLIT, {"wall.zeta": ["-20 mV"]}, workers=0)
    with pytest.raises(InputError, match=r"wall\.zet'.*did you mean 'wall\.zeta'"):
        edl.sweep(SLIT, {"wall.zet": ["-20 mV"]})
    with pytest.raises(InputError, match="equal lengths"):
        edl.sweep(SLIT, {"wall.zeta": ["-20 mV"], "field": [1.0, 2.0]}, zipped=[["wall.zeta", "field"]])


def test_a_large_sweep_to_a_file_is_returned_lazily(slit_sweep: xr.Dataset, tmp_path: Path,
                                                    monkeypatch: pytest.MonkeyPatch) -> None:
    # Beyond the load limit the values stay in the file and are read on access (memory stays flat).
    import edl_solver.sweeping.store as sweep_store

    monkeypatch.setattr(sweep_store, "LOAD_LIMIT_BYTES", 0)
    path = tmp_path / "sweep.h5"
    with edl.sweep(SLIT, SLIT_AXES, zipped=SLIT_ZIP, path=path) as returned:
        assert Path(returned.encoding["source"]) == path
        assert not returned["flow_rate_eo"].variable._in_memory
        xr.testing.assert_equal(returned.load(), slit_sweep)


def test_file_chunks_hold_whole_lines_of_about_a_thousand_cases(tmp_path: Path) -> None:
    # HDF5 handles a variable chunk by chunk: chunks of a few cases (one short line each) made files three
    # times larger and writing four times slower; common practice is chunks of 10 kB to 1 MB.
    import h5py

    from edl_solver.sweeping.store import _chunks

    assert _chunks((200, 100, 3), 1024) == (3, 100, 3)
    assert _chunks((10, 5000), 1024) == (1, 5000)
    assert _chunks((7,), 1024) == (7,)
    path = tmp_path / "sweep.h5"
    edl.sweep(SLIT, {"geometry.height": ["10 nm", "20 nm", "30 nm"], "wall.zeta": ["-20 mV", "-40 mV"]}, path=path)
    with h5py.File(path, "r") as handle:
        assert handle["flow_rate_eo"].chunks == (3, 2)


def test_valence_axis_gives_z_z_salts_that_follow_grahame() -> None:
    # Symmetric z:z electrolyte at a wide wall: sigma = sqrt(8 eps kT N_A c) sinh(z e zeta / 2 kT) (Grahame 1947,
    # Chem. Rev. 41, 441) and lambda_D proportional to 1/z; constants from scipy.constants (CODATA).
    from scipy import constants as sc

    base = edl.Case(geometry=edl.Slit(height="2 um"), electrolyte=KCL, wall=edl.Wall(zeta="-50 mV"),
                    solvent=edl.Solvent(temperature=298.15, relative_permittivity=78.4, viscosity=0.89e-3))
    with pytest.raises(edl.InputError, match="whole number"):  # refused before any case is solved
        edl.sweep(base, {"electrolyte.valence": [1, 2, 3, 1.5]})
    ds = edl.sweep(base, {"electrolyte.valence": [1, 2, 3]})
    np.testing.assert_array_equal(ds["status"].values, [0, 0, 0])
    kt = sc.k * 298.15
    eps = 78.4 * 8.8541878188e-12  # the vacuum permittivity of CODATA 2022, as edl_solver uses it
    for i, z in enumerate([1, 2, 3]):
        expected = np.sqrt(8 * eps * kt * sc.N_A * 1.0) * np.sinh(z * sc.e * -0.050 / (2 * kt))
        assert float(ds["wall_charge_density"][i]) == pytest.approx(expected, rel=1e-6)
        assert float(ds["debye_length"][i]) == pytest.approx(float(ds["debye_length"][0]) / z, rel=1e-13)
