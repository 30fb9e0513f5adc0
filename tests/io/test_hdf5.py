"""Tests of edl_solver.io.hdf5 and io.files: result files (round trip, xarray layout, atomic writes, bad input)
and the plain-dict form of a Case."""

from __future__ import annotations

import dataclasses
import json
import math
import os
from pathlib import Path

import h5py
import numpy as np
import pytest

import edl_solver as edl
from edl_solver.errors import InputError
from edl_solver.inputs.casefile import case_from_mapping, case_to_mapping
from edl_solver.inputs.wall import Site
from edl_solver.io import hdf5 as io
from edl_solver.results.schema import PROFILE_UNITS, SUMMARY_UNITS, summary_unit

PROFILE_NAMES = ("potential", "charge_density", "velocity_eo", "velocity_pressure", "velocity",
                 "velocity_thin_layer", "eo_per_field")

CASES = {
    "slit": edl.Case(geometry=edl.Slit(height="50 nm"),
                     electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}),
                     wall=edl.Wall(zeta="-50 mV"), field="10 kV/m", pressure_gradient=-1e5),
    "asymmetric slit": edl.Case(geometry=edl.Slit(height="40 nm"),
                                electrolyte=edl.Electrolyte.from_ions({"Na+": "2 mM", "Cl-": "2 mM"}),
                                wall=(edl.Wall(zeta="-60 mV"), edl.Wall(charge_density="-3 mC/m^2")),
                                field="5 kV/m", numerics=edl.Numerics(intervals=64)),
    "capillary": edl.Case(geometry=edl.Capillary(radius="20 nm"),
                          electrolyte=edl.Electrolyte.from_ions({"Mg2+": "1 mM", "Cl-": "2 mM"}),
                          wall=edl.Wall(charge_density="-5 mC/m^2"), solvent=edl.Water("37 degC"),
                          field="1 kV/m", pressure_gradient="-1 bar/mm", model="dh", tolerance=0.1),
    # Every new input at once: a silica wall with slip below, an amphoteric wall with fixed charge and a
    # gate (no Stern layer) above, H+ and OH- added at pH 5.
    "regulated slit": edl.Case(
        geometry=edl.Slit(height="40 nm"),
        electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}, pH=5, water_ions=True),
        wall=(edl.Wall.silica(slip_length="1 nm"),
              edl.Wall(charge_density="-1 mC/m^2", gate_voltage="1 V", gate_capacitance="10 mF/m^2",
                       sites=(Site(density="2 nm^-2", pK=(4.0, 9.0), charges=(1, 0, -1), name="amphoteric"),))),
        field="1 kV/m"),
    "steric capillary": edl.Case(
        geometry=edl.Capillary(radius="20 nm"),
        electrolyte=edl.Electrolyte((edl.Ion("K+", concentration="10 mM", diameter="0.7 nm"),
                                     edl.Ion("Cl-", concentration="10 mM", diameter="0.7 nm"))),
        wall=edl.Wall(zeta="-100 mV", slip_length="5 nm"), field="10 kV/m", model="steric"),
    "viscoelectric slit": edl.Case(
        geometry=edl.Slit(height="30 nm"), electrolyte=edl.Electrolyte.from_ions({"Na+": 5, "Cl-": 5}, pH=7.5),
        wall=edl.Wall(zeta="-80 mV"), solvent=edl.Water(viscoelectric=True), field="10 kV/m"),
}
CAPILLARIES = ("capillary", "steric capillary")


def as_stored(case: edl.Case) -> edl.Case:
    """The case a file gives back: H+ and OH- added by water_ions=True are kept as plain ions, with
    water_ions=False (reading the flag again would add them a second time)."""
    e = case.electrolyte
    return dataclasses.replace(case, electrolyte=edl.Electrolyte(e.ions, pH=e.pH))


@pytest.fixture(scope="module")
def results() -> dict[str, edl.Result]:
    return {name: edl.solve(case) for name, case in CASES.items()}


def same(a: object, b: object) -> bool:
    """Equality of summary values that treats NaN as equal to NaN."""
    return bool(np.array_equal(np.asarray(a, dtype=float), np.asarray(b, dtype=float), equal_nan=True))


@pytest.mark.parametrize("name", CASES)
def test_round_trip_restores_everything(results: dict[str, edl.Result], name: str, tmp_path: Path) -> None:
    result = results[name]
    path = result.to_hdf5(tmp_path / "result.h5")
    assert path == tmp_path / "result.h5"
    loaded = edl.load(path)

    assert loaded.case == as_stored(result.case)
    assert list(loaded.summary) == list(result.summary)
    for key, value in result.summary.items():
        got = loaded.summary[key]
        assert same(got, value), key
        if isinstance(value, tuple):
            assert isinstance(got, tuple) and all(type(v) is float for v in got), key
        else:
            assert type(got) is float, key
    p, q = result.profiles, loaded.profiles
    assert q.coordinate_name == p.coordinate_name == ("r" if name in CAPILLARIES else "y")
    assert q.ion_names == p.ion_names
    for field in ("coordinate", "concentration", *PROFILE_NAMES):
        np.testing.assert_array_equal(getattr(q, field), getattr(p, field), err_msg=field)
    for field in ("verdict", "status", "message", "iterations", "residual", "warnings"):
        assert getattr(loaded, field) == getattr(result, field), field
    assert os.listdir(tmp_path) == ["result.h5"]


def test_asymmetric_slit_keeps_pairs(results: dict[str, edl.Result], tmp_path: Path) -> None:
    result = results["asymmetric slit"]
    assert isinstance(result.summary["zeta"], tuple)  # the case this test is about
    loaded = edl.load(io.write_result(result, tmp_path / "pair.h5"))
    for key in ("zeta", "wall_charge_density", "hs_velocity", "thin_layer_zeta"):
        assert loaded.summary[key] == tuple(float(v) for v in result.summary[key])


def test_warnings_nan_and_multiline_text_round_trip(results: dict[str, edl.Result], tmp_path: Path) -> None:
    result = dataclasses.replace(
        results["slit"], warnings=("first note", "second note,\nover two lines"), message="",
        summary={**results["slit"].summary, "eo_ratio": math.nan})
    loaded = edl.load(result.to_hdf5(tmp_path / "w.h5"))
    assert loaded.warnings == result.warnings
    assert loaded.message == ""
    assert math.isnan(loaded.summary["eo_ratio"])


@pytest.mark.parametrize("name", CASES)
def test_xarray_sees_coordinates_and_units(results: dict[str, edl.Result], name: str, tmp_path: Path) -> None:
    import xarray as xr

    result = results[name]
    capillary = name in CAPILLARIES
    coordinate = "r" if capillary else "y"
    path = result.to_hdf5(tmp_path / "x.h5")
    with xr.open_dataset(path, engine="h5netcdf") as ds:
        assert not [dim for dim in ds.dims if str(dim).startswith("phony_dim")]
        assert coordinate in ds.coords and "ion" in ds.coords
        np.testing.assert_array_equal(ds[coordinate].values, result.profiles.coordinate)
        assert list(ds["ion"].values) == list(result.profiles.ion_names)
        assert ds[coordinate].attrs["units"] == "m"
        assert ds["concentration"].dims == ("ion", coordinate)
        np.testing.assert_array_equal(ds["concentration"].values, result.profiles.concentration)
        for variable in (*PROFILE_NAMES, "concentration"):
            assert ds[variable].attrs["units"] == PROFILE_UNITS[variable], variable
            assert ds[variable].attrs["long_name"], variable
            assert ds[variable].dims[-1] == coordinate
        for key, value in result.summary.items():
            assert ds[key].attrs["units"] == summary_unit(key, result.case.geometry), key
            assert ds[key].attrs["long_name"] == SUMMARY_UNITS[key][1], key
            if isinstance(value, tuple):
                assert ds[key].dims == ("wall",)
                assert list(ds["wall"].values) == ["bottom", "top"]
            else:
                assert ds[key].dims == ()
            assert same(ds[key].values, value), key
        ions = result.case.electrolyte.ions
        assert list(ds["valence"].values) == [ion.valence for ion in ions]
        assert ds["bulk_concentration"].attrs["units"] == "mol/m^3"
        assert ds["diffusivity"].attrs["units"] == "m^2/s"
        assert ds.attrs["schema_version"] == io.SCHEMA_VERSION
        assert ds.attrs["edl_solver_version"] == edl.__version__
        assert ds.attrs["geometry"] == ("capillary" if capillary else "slit")
        assert ds.attrs["verdict"] == result.verdict
        assert ds.attrs["field_V_per_m"] == result.case.field
        assert ("radius_m" if capillary else "height_m") in ds.attrs
        assert case_from_mapping(json.loads(ds.attrs["case_json"])) == as_stored(result.case)


def test_arrays_compressed_and_netcdf_safe(results: dict[str, edl.Result], tmp_path: Path) -> None:
    path = results["asymmetric slit"].to_hdf5(tmp_path / "c.h5")
    with h5py.File(path, "r") as f:
        assert f["potential"].compression == "gzip" and f["potential"].shuffle
        assert f["concentration"].compression == "gzip" and f["concentration"].shuffle
        kinds = {f[name].dtype.kind for name in f if isinstance(f[name], h5py.Dataset)}
        assert not kinds & {"b", "c"}  # bool and complex break netCDF readers
        assert not any(isinstance(v, (bool, np.bool_)) for v in f.attrs.values())


# ---------------------------------------------------------------------------------------- atomicity


def test_failure_mid_write_keeps_old_file_and_leaves_no_temp(
        results: dict[str, edl.Result], tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    path = tmp_path / "result.h5"
    path.write_bytes(b"the previous result")
    real = io._add_array
    calls = []

    def failing(*args: object, **kwargs: object) -> None:
        calls.append(args[1])
        if len(calls) == 5:  # some variables are already in the temporary file
            raise OSError("disk full")
        real(*args, **kwargs)

    monkeypatch.setattr(io, "_add_array", failing)
    with pytest.raises(OSError, match="disk full"):
        io.write_result(results["slit"], path)
    assert len(calls) == 5
    assert path.read_bytes() == b"the previous result"
    assert os.listdir(tmp_path) == ["result.h5"]


def test_interrupt_mid_write_leaves_nothing(results: dict[str, edl.Result], tmp_path: Path,
                                           monkeypatch: pytest.MonkeyPatch) -> None:
    def interrupted(*args: object, **kwargs: object) -> None:
        raise KeyboardInterrupt

    monkeypatch.setattr(io, "_add_strings", interrupted)
    with pytest.raises(KeyboardInterrupt):
        io.write_result(results["capillary"], tmp_path / "new.h5")
    assert os.listdir(tmp_path) == []


def test_failed_rename_keeps_old_file(results: dict[str, edl.Result], tmp_path: Path,
                                      monkeypatch: pytest.MonkeyPatch) -> None:
    path = tmp_path / "result.h5"
    path.write_bytes(b"old")

    def no_replace(src: object, dst: object) -> None:
        raise PermissionError("replace refused")

    monkeypatch.setattr(io.os, "replace", no_replace)
    with pytest.raises(PermissionError):
        io.write_result(results["slit"], path)
    assert path.read_bytes() == b"old"
    assert os.listdir(tmp_path) == ["result.h5"]


def test_overwrite_replaces_existing_file(results: dict[str, edl.Result], tmp_path: Path) -> None:
    path = tmp_path / "result.h5"
    io.write_result(results["slit"], path)
    io.write_result(results["capillary"], path)
    assert edl.load(path).case == CASES["capillary"]
    assert os.listdir(tmp_path) == ["result.h5"]


# ---------------------------------------------------------------------------------------- bad input


def test_missing_directory_is_input_error(results: dict[str, edl.Result], tmp_path: Path) -> None:
    path = tmp_path / "no such folder" / "result.h5"
    with pytest.raises(InputError, match="does not exist") as info:
        results["slit"].to_hdf5(path)
    assert str(path) in str(info.value) and "\n" not in str(info.value)
    assert not (tmp_path / "no such folder").exists()


@pytest.mark.parametrize("bad", [3, None, ""])
def test_non_path_is_input_error(results: dict[str, edl.Result], bad: object) -> None:
    with pytest.raises(InputError, match="path"):
        io.write_result(results["slit"], bad)  # type: ignore[arg-type]


def test_directory_as_path_is_input_error(results: dict[str, edl.Result], tmp_path: Path) -> None:
    with pytest.raises(InputError, match="is a directory"):
        io.write_result(results["slit"], tmp_path)
    with pytest.raises(InputError, match="is a directory"):
        edl.load(tmp_path)


def test_non_result_is_input_error(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="result"):
        io.write_result({"summary": {}}, tmp_path / "x.h5")  # type: ignore[arg-type]


def test_missing_file_is_input_error(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="does not exist"):
        edl.load(tmp_path / "missing.h5")


def test_text_file_is_not_a_result(tmp_path: Path) -> None:
    path = tmp_path / "notes.h5"
    path.write_text("not HDF5 at all\n")
    with pytest.raises(InputError, match="not an edl_solver result") as info:
        edl.load(path)
    assert "\n" not in str(info.value)


def test_foreign_hdf5_file_is_not_a_result(tmp_path: Path) -> None:
    path = tmp_path / "other.h5"
    with h5py.File(path, "w") as f:
        f["data"] = np.arange(3.0)
    with pytest.raises(InputError, match="not an edl_solver result"):
        edl.load(path)


def test_newer_schema_is_refused(results: dict[str, edl.Result], tmp_path: Path) -> None:
    path = results["slit"].to_hdf5(tmp_path / "future.h5")
    with h5py.File(path, "a") as f:
        f.attrs["schema_version"] = str(int(io.SCHEMA_VERSION) + 1)
    with pytest.raises(InputError, match="newer") as info:
        edl.load(path)
    assert "upgrade" in str(info.value)


def test_incomplete_file_is_input_error(results: dict[str, edl.Result], tmp_path: Path) -> None:
    path = results["slit"].to_hdf5(tmp_path / "cut.h5")
    with h5py.File(path, "a") as f:
        del f["velocity"]
    with pytest.raises(InputError, match="velocity"):
        edl.load(path)


# ------------------------------------------------------------------------------------ case <-> dict


@pytest.mark.parametrize("name", CASES)
def test_case_dict_round_trip_through_json(name: str) -> None:
    case = CASES[name]
    table = case_to_mapping(case)
    assert case_from_mapping(json.loads(json.dumps(table))) == as_stored(case)
    assert None not in _leaves(table)  # TOML has no null


def _leaves(table: object) -> list[object]:
    if isinstance(table, dict):
        return [leaf for value in table.values() for leaf in _leaves(value)]
    if isinstance(table, list):
        return [leaf for value in table for leaf in _leaves(value)]
    return [table]


def test_case_from_dict_accepts_units_and_defaults() -> None:
    # The TOML case files share this shape: strings with units and optional sections.
    case = case_from_mapping({
        "geometry": {"kind": "slit", "height": "50 nm"},
        "electrolyte": {"ions": [{"name": "K+", "concentration": "1 mM"}, {"name": "Cl-", "concentration": 1.0}]},
        "wall": {"bottom": {"zeta": "-50 mV"}, "top": {"charge_density": "-2 mC/m^2"}},
        "solvent": {"temperature": "25 degC"},
        "field": "10 kV/m",
    })
    assert case == edl.Case(geometry=edl.Slit(height=50e-9),
                            electrolyte=edl.Electrolyte.from_ions({"K+": 1.0, "Cl-": 1.0}),
                            wall=(edl.Wall(zeta=-0.05), edl.Wall(charge_density=-2e-3)), field=1e4)


@pytest.mark.parametrize(("change", "named"), [
    ({"geometry": {"kind": "slit", "heigth": "50 nm"}}, "heigth"),
    ({"wal": {"zeta": -0.05}}, "wal"),
    ({"wall": {"zeta": -0.05, "charge": 1.0}}, "charge"),
    ({"numerics": {"intervals": 7}}, "intervals"),
])
def test_case_from_dict_bad_input(change: dict[str, object], named: str) -> None:
    table = {**case_to_mapping(CASES["slit"]), **change}
    with pytest.raises(InputError, match=named) as info:
        case_from_mapping(table)
    assert "\n" not in str(info.value)


def test_unreadable_case_json_is_input_error(results: dict[str, edl.Result], tmp_path: Path) -> None:
    path = results["slit"].to_hdf5(tmp_path / "bad.h5")
    with h5py.File(path, "a") as f:
        f.attrs["case_json"] = '{"geometry": {"kind": "slit"'
    with pytest.raises(InputError, match="case_json"):
        edl.load(path)


# ------------------------------------------------------------------------- regulated walls, steric, slip


def test_new_inputs_are_readable_attributes(results: dict[str, edl.Result], tmp_path: Path) -> None:
    import xarray as xr

    with xr.open_dataset(results["regulated slit"].to_hdf5(tmp_path / "r.h5"), engine="h5netcdf") as ds:
        a = ds.attrs
        assert a["pH"] == 5.0
        assert a["wall_bottom_kind"] == a["wall_top_kind"] == "regulated"
        assert a["wall_bottom_site1_name"] == "silanol"
        assert a["wall_bottom_site1_density_per_m2"] == 8e18
        assert float(a["wall_bottom_site1_pK"]) == 7.5
        assert list(a["wall_bottom_site1_charges"]) == [0, -1]
        assert a["wall_bottom_stern_capacitance_F_per_m2"] == 2.9
        assert a["wall_bottom_slip_length_m"] == 1e-9
        assert "wall_bottom_gate_voltage_V" not in a
        assert list(a["wall_top_site1_pK"]) == [4.0, 9.0]
        assert list(a["wall_top_site1_charges"]) == [1, 0, -1]
        assert (a["wall_top_gate_voltage_V"], a["wall_top_gate_capacitance_F_per_m2"]) == (1.0, 0.01)
        assert a["wall_top_charge_density_C_per_m2"] == -1e-3
        assert "wall_top_stern_capacitance_F_per_m2" not in a
        assert a["viscoelectric_coefficient_m2_per_V2"] == 0.0
        assert "diameter" not in ds  # no ion has one
        # The charge plane of the wall without Stern layer is NaN in the pair.
        assert ds["stern_potential"].dims == ("wall",) and ds["stern_potential"].attrs["units"] == "V"
        bottom, top = ds["stern_potential"].values
        assert np.isfinite(bottom) and np.isnan(top)
    with xr.open_dataset(results["steric capillary"].to_hdf5(tmp_path / "s.h5"), engine="h5netcdf") as ds:
        assert ds.attrs["model"] == "steric" and ds.attrs["wall_slip_length_m"] == 5e-9
        assert ds.attrs["wall_kind"] == "potential"
        assert ds["diameter"].dims == ("ion",) and ds["diameter"].attrs["units"] == "m"
        np.testing.assert_array_equal(ds["diameter"].values, [0.7e-9, 0.7e-9])
    with xr.open_dataset(results["viscoelectric slit"].to_hdf5(tmp_path / "v.h5"), engine="h5netcdf") as ds:
        assert ds.attrs["viscoelectric_coefficient_m2_per_V2"] == 1e-15
        assert ds.attrs["pH"] == 7.5


def test_stern_potential_pair_round_trips_with_nan(results: dict[str, edl.Result], tmp_path: Path) -> None:
    result = results["regulated slit"]
    bottom, top = result.summary["stern_potential"]
    assert math.isfinite(bottom) and math.isnan(top)  # the case this test is about
    loaded = edl.load(result.to_hdf5(tmp_path / "stern.h5"))
    assert loaded.summary["stern_potential"][0] == bottom
    assert math.isnan(loaded.summary["stern_potential"][1])


def test_water_ions_are_stored_once(results: dict[str, edl.Result], tmp_path: Path) -> None:
    case = CASES["regulated slit"]
    assert [ion.name for ion in case.electrolyte.ions] == ["K+", "Cl-", "H+", "OH-"]
    table = case_to_mapping(case)
    assert [ion["name"] for ion in table["electrolyte"]["ions"]] == ["K+", "Cl-", "H+", "OH-"]
    assert table["electrolyte"]["pH"] == 5.0 and "water_ions" not in table["electrolyte"]
    # The stored case is the same physical case: solving it gives the very same numbers.
    loaded = edl.load(results["regulated slit"].to_hdf5(tmp_path / "w.h5"))
    assert loaded.case.electrolyte.ions == case.electrolyte.ions
    again = edl.solve(loaded.case)
    for key, value in results["regulated slit"].summary.items():
        assert same(again.summary[key], value), key


def test_version_1_shape_is_unchanged_for_inputs_it_had() -> None:
    # Files of schema version 1 written before regulated walls, slip, the steric model and viscoelectric
    # solvents must still read the same: a case without them has the very dict the first writer wrote.
    # Table ions now carry "temperature_dependence": True (their diffusivity is the 25 degC value and follows the
    # temperature); a file without the key gives its diffusivities, used as given: the numbers it was written with.
    assert io.SCHEMA_VERSION == "1"
    assert case_to_mapping(CASES["slit"]) == {
        "geometry": {"kind": "slit", "height": 5e-08},
        "electrolyte": {"ions": [{"name": "K+", "valence": 1, "concentration": 1.0, "diffusivity": 1.957e-09,
                                  "temperature_dependence": True},
                                 {"name": "Cl-", "valence": -1, "concentration": 1.0, "diffusivity": 2.032e-09,
                                  "temperature_dependence": True}]},
        "wall": {"zeta": -0.05},
        "solvent": {"temperature": 298.15, "relative_permittivity": 78.30334375,
                    "viscosity": 0.0008897608881015455, "name": "water"},
        "field": 10000.0, "pressure_gradient": -100000.0, "model": "pb", "tolerance": 0.05,
        "numerics": {"accuracy": 1e-06, "max_iterations": 200, "max_intervals": 4096},
    }


def test_regulated_case_dict_lists_sites_in_full() -> None:
    table = case_to_mapping(CASES["regulated slit"])
    # A preset is written out in full, so a file keeps its meaning if the preset's values change.
    assert table["wall"]["bottom"] == {"stern_capacitance": 2.9, "slip_length": 1e-9, "site": [
        {"name": "silanol", "density": 8e18, "pK": 7.5, "charges": [0, -1]}]}
    assert table["wall"]["top"] == {"charge_density": -1e-3, "gate_voltage": 1.0, "gate_capacitance": 0.01,
                                    "site": [{"name": "amphoteric", "density": 2e18, "pK": [4.0, 9.0],
                                              "charges": [1, 0, -1]}]}
    steric = case_to_mapping(CASES["steric capillary"])
    assert [ion["diameter"] for ion in steric["electrolyte"]["ions"]] == [0.7e-9, 0.7e-9]
    assert case_to_mapping(CASES["viscoelectric slit"])["solvent"]["viscoelectric_coefficient"] == 1e-15


def test_transport_group_round_trips_the_response_matrices(tmp_path: Path) -> None:
    """The response matrices are stored in the "transport" group (xarray opens it with group=) and read back."""
    import xarray as xr

    case = edl.Case(geometry=edl.Capillary(radius="10 nm"), electrolyte=edl.Electrolyte.from_ions(
        {"Ca2+": "1 mM", "Cl-": "2 mM"}), wall=edl.Wall(charge_density="-5 mC/m^2"))
    result = edl.solve(case)
    path = result.to_hdf5(tmp_path / "t.h5")
    back = edl.load(path)
    assert np.array_equal(back.response_matrix, result.response_matrix)
    assert np.array_equal(back.ion_response_matrix, result.ion_response_matrix)
    with xr.open_dataset(path, engine="h5netcdf", group="transport") as ds:
        assert list(ds["ion_flux"].values) == ["volume_flow", "Ca2+", "Cl-"]
        assert ds["response_matrix"].dims == ("flux", "force")
        assert "current [A]" in ds["response_matrix"].attrs["units_by_entry"]
