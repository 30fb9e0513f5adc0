"""``edl sweep`` and ``edl map`` do not replace a finished output without --overwrite, and say so; single
solves keep replacing theirs (a run holding the path: tests/sweeping/test_one_writer.py)."""

from __future__ import annotations

import os
from pathlib import Path

import pytest
import xarray as xr

import edl_solver as edl
from edl_solver.analysis.validity_map import validity_map
from edl_solver.errors import InputError
from tests.helpers import SWEEP_TOML, run, write, write_sweep

CASE_TOML = """\
[geometry]
kind = "slit"
height = "100 nm"

[electrolyte]
ions = { "K+" = "1 mM", "Cl-" = "1 mM" }

[wall]
zeta = "-40 mV"
"""
MAP_AXES = ["--x", "kappa_h:1:100:3", "--y", "zeta_kT:-4:-1:2:lin"]


def test_edl_sweep_keeps_a_finished_sweep_unless_overwrite(tmp_path: Path) -> None:
    # Before: `edl sweep -o existing.h5` replaced it without a word.
    sweep_file = write_sweep(tmp_path, SWEEP_TOML)
    output = tmp_path / "design.h5"
    assert run(["sweep", str(sweep_file), "-q"])[0] == 0
    kept = output.read_bytes()
    for extra in ([], ["--resume"]):
        code, out, err = run(["sweep", str(sweep_file), *extra])
        assert code == 2 and out == "" and err.count("\n") == 1, err
        assert "already exists" in err and "--overwrite" in err and "Traceback" not in err, err
    assert output.read_bytes() == kept
    code, out, err = run(["sweep", str(sweep_file), "--overwrite", "-q"])
    assert (code, out, err) == (0, "", "")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["design.h5", "design.toml"]


def test_edl_sweep_refuses_a_file_that_is_not_hdf5_and_replaces_it_on_request(tmp_path: Path) -> None:
    sweep_file = write_sweep(tmp_path, SWEEP_TOML)
    output = tmp_path / "notes.txt"
    output.write_text("not a sweep")
    code, _, err = run(["sweep", str(sweep_file), "-o", str(output)])
    assert code == 2 and "already exists" in err and "--overwrite" in err, err
    assert output.read_text() == "not a sweep" and not (tmp_path / "notes.txt.partial").exists()
    assert run(["sweep", str(sweep_file), "-o", str(output), "--overwrite", "-q"])[0] == 0
    with xr.open_dataset(output, engine="h5netcdf") as opened:
        assert int((opened["status"] == 0).sum()) == 12


def test_edl_map_keeps_a_finished_map_unless_overwrite(tmp_path: Path) -> None:
    case = str(write(tmp_path, CASE_TOML))
    output = tmp_path / "map.h5"
    output.write_text("an older map")
    code, out, err = run(["map", case, *MAP_AXES, "-o", str(output)])
    assert code == 2 and out == "" and err.count("\n") == 1, err
    assert "already exists" in err and "--overwrite" in err, err
    assert output.read_text() == "an older map"
    code, out, err = run(["map", case, *MAP_AXES, "-o", str(output), "--overwrite", "-q"])
    assert (code, out, err) == (0, "", ""), err
    with xr.open_dataset(output, engine="h5netcdf") as opened:
        assert opened["status"].shape == (2, 3)
    assert sorted(os.listdir(tmp_path)) == ["case.toml", "map.h5"]


def test_validity_map_keeps_a_finished_map_unless_overwrite(tmp_path: Path) -> None:
    base = edl.Case(geometry=edl.Slit(height="100 nm"), electrolyte=edl.Electrolyte.from_ions(
        {"K+": "1 mM", "Cl-": "1 mM"}), wall=edl.Wall(zeta="-40 mV"))
    output = tmp_path / "map.h5"
    output.write_text("an older map")
    axes = (("kappa_h", [1.0, 10.0]), ("zeta_kT", [-4.0, -1.0]))
    with pytest.raises(InputError, match=r"already exists.*overwrite=True"):
        validity_map(base, *axes, path=output)
    assert output.read_text() == "an older map"
    validity_map(base, *axes, path=output, overwrite=True)
    with xr.open_dataset(output, engine="h5netcdf") as opened:
        assert opened["status"].shape == (2, 2)


def test_edl_solve_keeps_replacing_its_output(tmp_path: Path) -> None:
    # As documented: single solves replace their outputs (atomically).
    output = tmp_path / "out.h5"
    output.write_text("old")
    code, _, err = run(["solve", "--slit", "20nm", "--ion", "K+=1mM", "--ion", "Cl-=1mM", "--zeta", "-40mV",
                        "-o", str(output), "-q"])
    assert (code, err) == (0, "")
    assert edl.load(output).case.geometry.height == pytest.approx(20e-9)
    assert sorted(os.listdir(tmp_path)) == ["out.h5"]
