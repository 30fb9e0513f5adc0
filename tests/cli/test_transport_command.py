"""The ``edl transport`` command: the result with its groups, the figures, the printed membrane potential and
one-line errors.

Conventions of ``edl_solver.channel.model``: x from the left reservoir (0) to the right one (L); Delta V = V(L) - V(0);
currents positive along +x; slit values per unit width.
"""

from __future__ import annotations

import math
import re
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import edl_solver as edl
from edl_solver.channel.conductance import conductance_curve
from edl_solver.constants import FARADAY
from tests.helpers import RT, assert_png, run

# -- the edl transport command ------------------------------------------------------------------------

SLIT = ["--slit", "20nm", "--ion", "K+=1mM", "--ion", "Cl-=1mM", "--charge-density", "-2mC/m^2", "--field", "10kV/m"]


@pytest.fixture(scope="module")
def full_run(tmp_path_factory: pytest.TempPathFactory) -> tuple[Path, int, str, str]:
    folder = tmp_path_factory.mktemp("transport")
    argv = ["transport", *SLIT, "--length", "5um", "--left", "0.1mM", "--right", "1mM", "--iv", "-100mV:100mV:11",
            "--iv-figure", str(folder / "iv.png"), "--conductance", "0.01mM:100mM:6", "--conductance-figure",
            str(folder / "conductance.png"), "--pump-figure", str(folder / "pump.png"), "-o", str(folder / "out.h5")]
    return (folder, *run(argv))


def test_transport_writes_the_result_with_its_groups_and_the_figures(full_run: tuple[Path, int, str, str]) -> None:
    folder, code, out, err = full_run
    assert (code, err) == (0, "")
    assert sorted(p.name for p in folder.iterdir()) == ["conductance.png", "iv.png", "out.h5", "pump.png"]
    for name in ("conductance.png", "iv.png", "pump.png"):
        assert_png(folder / name)
    path = folder / "out.h5"
    result = edl.load(path)
    assert result.summary["wall_charge_density"] == pytest.approx(-2e-3, rel=1e-9)
    with xr.open_dataset(path, engine="h5netcdf", group="conductance") as curve:
        assert curve.sizes["concentration"] == 6 and np.all(curve["status"].values == 0)
        assert curve["conductance"].attrs["units"] == "S/m"  # of the 5 um channel, per unit width
        expected = conductance_curve(result.case, np.geomspace(0.01, 100.0, 6), length="5 um")
        np.testing.assert_allclose(curve["conductance"].values, expected["conductance"].values, rtol=1e-12)
    with xr.open_dataset(path, engine="h5netcdf", group="channel") as channel:
        assert channel.sizes["voltage"] == 11 and np.all(channel["status"].values == 0)
        assert channel["current"].attrs["units"] == "A/m"
        shown = re.search(r"membrane potential V\(right\) - V\(left\) at I = 0\s+([+-]\d+(?:\.\d+)?) mV", out)
        assert shown is not None, out
        # printed to three significant figures (report.units)
        assert float(shown.group(1)) * 1e-3 == pytest.approx(float(channel["membrane_potential"]), rel=1e-3)
    with xr.open_dataset(path, engine="h5netcdf", group="transport") as transport:
        assert transport["response_matrix"].shape == (3, 3)
    for text in ("Transport and energy conversion", "Conductance against salt concentration", "Finite channel",
                 "short-circuit current", "maximum osmotic power", "efficiency at maximum power", "µA/m", "nW/m"):
        assert text in out, text


def test_henderson_membrane_potential_of_an_uncharged_channel_is_printed(tmp_path: Path) -> None:
    """Uncharged channel, NaCl, left 1 mM (x = 0) | right 10 mM (x = L), no flow: electroneutrality and zero current
    make J+ = J-, with J_i = -D_i (c' + z_i c F V'/RT), so V' = -(RT/F) (D+ - D-)/(D+ + D-) (ln c)' and
    V(L) - V(0) = -(kT/e) (D+ - D-)/(D+ + D-) ln(c_R/c_L) (Henderson 1907; Planck 1890). Na+ is slower than Cl-,
    so the right (concentrated) side ends up positive: about +12.3 mV."""
    code, out, err = run(["transport", "--slit", "50nm", "--ion", "Na+=1mM", "--ion", "Cl-=1mM", "--zeta", "0mV",
                          "--temperature", "25degC", "--length", "5um", "--left", "1mM", "--right", "10mM"])
    assert (code, err) == (0, "")
    na, cl = (ion.diffusivity for ion in edl.Electrolyte.from_ions({"Na+": 1, "Cl-": 1}).ions)
    henderson = -RT / FARADAY * (na - cl) / (na + cl) * math.log(10.0)
    shown = re.search(r"membrane potential V\(right\) - V\(left\) at I = 0\s+([+-]\d+(?:\.\d+)?) mV", out)
    assert shown is not None, out
    assert henderson > 0.0
    assert float(shown.group(1)) * 1e-3 == pytest.approx(henderson, rel=5e-3)  # printed to 3 significant figures
    assert list(tmp_path.iterdir()) == []  # nothing asked, nothing written


BAD = {
    "iv of one point": (["--length", "5um", "--iv", "-0.1V:0.1V:1"], ["--iv", "'1'", "from 2"]),
    "iv not a range": (["--length", "5um", "--iv", "-0.1V:0.1V"], ["--iv", "FROM:TO:N"]),
    "iv in metres": (["--length", "5um", "--iv", "1nm:2nm:3"], ["--iv FROM", "'1nm'", "electric potential"]),
    "iv without length": (["--iv", "-0.1V:0.1V:5"], ["--iv", "--length"]),
    "left without right": (["--length", "5um", "--left", "1mM"], ["--left", "without --right"]),
    "right without left": (["--length", "5um", "--right", "1mM"], ["--right", "without --left"]),
    "reservoirs without length": (["--left", "1mM", "--right", "2mM"], ["--left", "--length"]),
    "negative length": (["--length", "-5um"], ["--length", "'-5um'", "not positive"]),
    "length in volts": (["--length", "5V"], ["--length", "'5V'", "length"]),
    "negative reservoir": (["--length", "5um", "--left", "-1mM", "--right", "1mM"], ["--left", "not positive"]),
    "millimetre reservoir": (["--length", "5um", "--left", "1mm", "--right", "1mM"], ["--left", "'1mm'", "metre"]),
    "iv figure without iv": (["--length", "5um", "--iv-figure", "iv.png"], ["--iv-figure", "needs --iv"]),
    "conductance figure alone": (["--conductance-figure", "c.png"], ["--conductance-figure", "needs --conductance"]),
    "zero concentration": (["--conductance", "0mM:1mM:5"], ["--conductance", "not positive"]),
    "equal ends": (["--conductance", "1mM:1mM:5"], ["--conductance", "two different values"]),
    "same file twice": (["-o", "same.h5", "--pump-figure", "same.h5"], ["--pump-figure", "'same.h5'", "-o"]),
    "unknown flag": (["--lenght", "5um"], ["--lenght"]),
}


@pytest.mark.parametrize("name", BAD)
def test_bad_transport_inputs_exit_2_with_one_line_and_no_files(tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
                                                               name: str) -> None:
    monkeypatch.chdir(tmp_path)
    flags, parts = BAD[name]
    code, out, err = run(["transport", *SLIT, *flags, "-o" if "-o" not in flags else "--figure", "result.h5"])
    assert code == 2, err
    assert err.startswith("edl: error: ") and err.count("\n") == 1 and "Traceback" not in err, err
    for part in parts:
        assert part in err, f"{part!r} not in {err!r}"
    assert out == ""
    assert list(tmp_path.iterdir()) == []


def test_pump_figure_needs_a_field(tmp_path: Path) -> None:
    code, out, err = run(["transport", *SLIT[:-2], "--pump-figure", str(tmp_path / "pump.png")])
    assert code == 2 and "--pump-figure" in err and "--field" in err and out == ""
    assert list(tmp_path.iterdir()) == []


def test_a_failed_group_write_leaves_no_file(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    """The groups go into the same temporary file as the Result: a failure there leaves neither the final file
    nor a temporary one, and exits 1 after the report."""
    def full_disk(self: xr.Dataset, *args: object, **kwargs: object) -> None:
        raise OSError(28, "No space left on device", str(args[0]))

    monkeypatch.setattr(xr.Dataset, "to_netcdf", full_disk)
    code, out, err = run(["transport", *SLIT, "--length", "2um", "-o", str(tmp_path / "out.h5")])
    assert code == 1 and "No space left on device" in err and "Finite channel" in out
    assert f"cannot write {tmp_path / 'out.h5'}:" in err  # the file asked for, not the temporary one
    assert list(tmp_path.iterdir()) == []


def test_transport_help_has_examples_and_says_why_it_is_a_command() -> None:
    code, out, err = run(["transport", "--help"])
    assert (code, err) == (0, "")
    assert out.startswith("usage: edl transport") and "examples:" in out and "why a command of its own" in out
    code, out, _ = run(["--help"])
    assert code == 0 and "transport" in out
