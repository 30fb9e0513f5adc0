"""Tests of the file layer below the Result: io.files (atomic writes, checked paths), io.hdf5.read_result_fields
(the keyword arguments of Result), report.formatting and inputs.ion_size.

The file tests are rules of this project's design (no half files, one-line errors); the close-packing value
is checked against scipy's Avogadro constant.
"""

from __future__ import annotations

import inspect
import math
import os
from pathlib import Path

import numpy as np
import pytest
import scipy.constants

import edl_solver as edl
from edl_solver.errors import InputError
from edl_solver.inputs.ion_size import close_packing
from edl_solver.io.files import atomic_output, checked_input_path, checked_output_path
from edl_solver.io.hdf5 import read_result_fields
from edl_solver.report.formatting import number, percent, scaled


@pytest.fixture(scope="module")
def capillary_file(tmp_path_factory: pytest.TempPathFactory) -> tuple[edl.Result, Path]:
    case = edl.Case(geometry=edl.Capillary(radius="15 nm"), electrolyte=edl.Electrolyte.from_ions(
        {"K+": "2 mM", "Cl-": "2 mM"}), wall=edl.Wall(zeta="-40 mV"), field="5 kV/m")
    result = edl.solve(case)
    return result, result.to_hdf5(tmp_path_factory.mktemp("files") / "capillary.h5")


def test_read_result_fields_are_exactly_the_arguments_of_result(capillary_file: tuple[edl.Result, Path]) -> None:
    result, path = capillary_file
    fields = read_result_fields(path)
    assert set(fields) == set(inspect.signature(edl.Result).parameters)
    assert fields["case"] == result.case
    assert fields["summary"] == pytest.approx(result.summary, nan_ok=True)
    np.testing.assert_array_equal(fields["response_matrix"], result.response_matrix)
    np.testing.assert_array_equal(fields["profiles"].potential, result.profiles.potential)
    loaded = edl.load(path)
    assert type(loaded) is edl.Result
    assert loaded.report() == result.report()


def test_read_result_fields_without_transport_gives_no_matrices(capillary_file: tuple[edl.Result, Path],
                                                                tmp_path: Path) -> None:
    import h5py

    _, path = capillary_file
    copy = tmp_path / "no_transport.h5"
    copy.write_bytes(path.read_bytes())
    with h5py.File(copy, "a") as f:
        del f["transport"]
    fields = read_result_fields(copy)
    assert fields["response_matrix"] is None and fields["ion_response_matrix"] is None


def test_atomic_output_writes_whole_or_keeps_the_old_file(tmp_path: Path) -> None:
    path = tmp_path / "out.txt"
    with atomic_output(path) as temporary:
        assert temporary.parent == tmp_path and temporary.exists() and not path.exists()
        temporary.write_text("new")
    assert path.read_text() == "new"
    with pytest.raises(RuntimeError, match="half way"), atomic_output(path) as temporary:
        temporary.write_text("half")
        raise RuntimeError("half way")
    assert path.read_text() == "new"
    assert os.listdir(tmp_path) == ["out.txt"]


def test_checked_paths_give_one_line_input_errors(tmp_path: Path) -> None:
    assert checked_output_path(tmp_path / "new.h5") == tmp_path / "new.h5"
    for bad, words in ((3, "not a file path"), (tmp_path, "is a directory"),
                       (tmp_path / "missing" / "x.h5", "does not exist")):
        with pytest.raises(InputError, match=words) as info:
            checked_output_path(bad)
        assert "\n" not in str(info.value)
    with pytest.raises(InputError, match="does not exist, expected a map") as info:
        checked_input_path(tmp_path / "nothing.h5", "a map")
    with pytest.raises(InputError, match="is a directory"):
        checked_input_path(tmp_path, "a map")


def test_close_packing_is_one_ion_per_cube_of_its_diameter() -> None:
    # c_max = 1 / (N_A d^3) (Kilic, Bazant & Ajdari 2007); N_A from scipy.constants (SI 2019, exact)
    assert close_packing(1e-9) == pytest.approx(1.0 / (scipy.constants.Avogadro * 1e-27), rel=1e-15)
    assert close_packing(0.5e-9) == pytest.approx(8.0 * close_packing(1e-9), rel=1e-14)


@pytest.mark.parametrize(("value", "expected"), [(2340.0, "2340"), (0.012345, "0.0123"), (1.5e7, "1.5e+07"),
                                                 (math.inf, "undefined")])
def test_number_avoids_exponents_for_ordinary_sizes(value: float, expected: str) -> None:
    assert number(value) == expected  # common practice: 3 significant digits


def test_scaled_and_percent() -> None:
    assert scaled((-0.05, -0.02), 1e3, "mV") == "bottom -50 mV, top -20 mV"
    assert scaled(math.nan, 1e3, "mV") == "undefined"
    assert percent(0.0236, signed=True) == "+2.36 %"
    assert percent(-0.5) == "-50 %"
