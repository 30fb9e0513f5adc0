"""``edl map`` with the case flags of ``edl solve`` (--slit, --ion, --zeta, --silica, --pH, ...), and its
figure for a wall whose charge regulates (it once failed with a KeyError in the figure's case summary)."""

from __future__ import annotations

import json
import os
from pathlib import Path

import pytest
import xarray as xr

from edl_solver.inputs.casefile import load_case
from tests.helpers import CHARGED_SLIT_TOML, PNG_SIGNATURE, run, write

CASE_TOML = CHARGED_SLIT_TOML
SILICA_TOML = """\
[geometry]
kind = "slit"
height = "100 nm"

[electrolyte]
ions = { "K+" = "1 mM", "Cl-" = "1 mM" }
pH = 7

[wall]
preset = "silica"
"""
AXES = ["--x", "geometry.height:10nm:1um:3", "--y", "solvent.temperature:15degC:35degC:2:lin"]


def map_case(path: Path) -> dict:
    """The base case of a map file, as a case-file mapping."""
    with xr.open_dataset(path, engine="h5netcdf") as ds:
        return json.loads(ds.attrs["case_json"])


def test_map_figure_of_a_charge_regulated_wall(tmp_path: Path) -> None:
    case = write(tmp_path, SILICA_TOML)
    code, out, err = run(["map", str(case), "--x", "geometry.height:5nm:2um:3",
                          "--y", "electrolyte.concentration:1mM:100mM:3", "--figure", str(tmp_path / "map.png")])
    assert (code, err) == (0, ""), err
    assert (tmp_path / "map.png").read_bytes()[:8] == PNG_SIGNATURE
    assert "boundary where |EO flow-rate error| = 5 %" in out and "boundary where |current error| = 5 %" in out


def test_case_flags_change_the_base_case_of_the_map(tmp_path: Path) -> None:
    case = str(write(tmp_path, CASE_TOML))
    code, _, err = run(["map", case, *AXES, "-o", str(tmp_path / "file.h5"), "-q"])
    assert (code, err) == (0, ""), err
    flags = ["--charge-density", "-2mC/m^2", "--ion", "K+=10mM", "--ion", "Cl-=10mM", "--tolerance", "10%"]
    code, _, err = run(["map", case, *AXES, *flags, "-o", str(tmp_path / "flags.h5"), "-q"])
    assert (code, err) == (0, ""), err
    plain, flagged = map_case(tmp_path / "file.h5"), map_case(tmp_path / "flags.h5")
    assert plain["wall"]["charge_density"] == pytest.approx(-10e-3)
    assert flagged["wall"]["charge_density"] == pytest.approx(-2e-3)
    assert [ion["concentration"] for ion in flagged["electrolyte"]["ions"]] == pytest.approx([10.0, 10.0])
    assert flagged["tolerance"] == pytest.approx(0.10)
    with xr.open_dataset(tmp_path / "flags.h5", engine="h5netcdf") as ds:  # --tolerance: the boundary's too
        assert ds["boundary"].attrs["tolerance"] == pytest.approx(0.10)
        assert ds["boundary_current"].attrs["tolerance"] == pytest.approx(0.10)
    # the same flags give edl solve the same case
    code, _, err = run(["solve", case, *flags, "-q", "-o", str(tmp_path / "solve.h5")])
    assert (code, err) == (0, ""), err
    with xr.open_dataset(tmp_path / "solve.h5", engine="h5netcdf") as ds:
        solved = json.loads(ds.attrs["case_json"])
    assert solved["wall"] == flagged["wall"] and solved["electrolyte"] == flagged["electrolyte"]


def test_map_of_flags_alone(tmp_path: Path) -> None:
    code, out, err = run(["map", "--slit", "50nm", "--ion", "K+=1mM", "--ion", "Cl-=1mM", "--zeta", "-40mV",
                          *AXES, "-o", str(tmp_path / "map.h5")])
    assert (code, err) == (0, ""), err
    assert "6 cases, 6 converged" in out
    assert map_case(tmp_path / "map.h5")["wall"] == {"zeta": pytest.approx(-0.04)}


@pytest.mark.parametrize(("flags", "message"), [
    (["--slit", "50parsec"], "--slit: '50parsec' (1.543e+18 m) is above the solver's domain"),
    (["--ion", "K+=lots"], "--ion K+: 'lots' is not a quantity with units"),
    (["--zeta", "-40mV", "--charge-density", "-2mC/m^2"], "--charge-density: not allowed with argument --zeta"),
    (["--model", "quantum"], "--model: invalid choice: 'quantum'"),
    (["--silica"], "electrolyte.pH: missing, expected a pH"),
], ids=["size-unit", "concentration", "zeta-and-charge", "model", "silica-without-pH"])
def test_a_bad_case_flag_exits_2_with_one_line_and_no_file(tmp_path: Path, flags: list[str], message: str) -> None:
    case = str(write(tmp_path, CASE_TOML))
    code, out, err = run(["map", case, *AXES, *flags, "-o", str(tmp_path / "map.h5"),
                          "--figure", str(tmp_path / "map.png")])
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and err.startswith("edl: error: ") and message in err, err
    assert "Traceback" not in err
    assert sorted(os.listdir(tmp_path)) == ["case.toml"]


def test_help_lists_the_case_flags() -> None:
    code, out, _ = run(["map", "--help"])
    assert code == 0
    for flag in ("--slit", "--capillary", "--ion", "--zeta", "--charge-density", "--silica", "--pH", "--model",
                 "--tolerance", "--x", "--y", "--figure"):
        assert flag in out, flag
    assert out.count("\n  --tolerance TOL") == 1  # the case's tolerance, also the boundary's: one flag


def test_case_file_without_flags_is_the_file_case(tmp_path: Path) -> None:
    case = write(tmp_path, CASE_TOML)
    code, _, err = run(["map", str(case), *AXES, "-o", str(tmp_path / "map.h5"), "-q"])
    assert (code, err) == (0, ""), err
    from edl_solver.inputs.casefile import case_to_mapping

    expected = json.loads(json.dumps(case_to_mapping(load_case(case))))
    assert map_case(tmp_path / "map.h5") == expected
