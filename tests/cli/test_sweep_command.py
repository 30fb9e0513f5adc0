"""The ``edl sweep`` command and its sweep files: output, errors, Ctrl-C and resume (the file format itself:
tests/sweeping/test_file.py)."""

from __future__ import annotations

import importlib.machinery
import sys
import types
from pathlib import Path

import pytest
import xarray as xr

import edl_solver as edl
from edl_solver.errors import InputError
from edl_solver.sweeping.file import load_sweep
from tests.helpers import SWEEP_BASE_TOML as BASE_TOML
from tests.helpers import SWEEP_TOML, run
from tests.helpers import write_sweep as write
from tests.interrupting import interrupt_after_first_write


def test_edl_sweep_writes_the_sweep_next_to_the_file_and_says_how_to_open_it(tmp_path: Path) -> None:
    sweep_file = write(tmp_path, SWEEP_TOML)
    code, out, err = run(["sweep", str(sweep_file)])
    assert (code, err) == (0, "")
    output = tmp_path / "design.h5"
    assert output.exists() and not (tmp_path / "design.h5.partial").exists()
    assert "swept 12 cases (geometry.height 3 x wall.zeta 4): 12 converged, 0 failed" in out
    assert str(output.resolve()) in out and 'engine="h5netcdf"' in out
    case, axes, zipped = load_sweep(sweep_file)
    expected = edl.sweep(case, axes, zipped=zipped)
    with xr.open_dataset(output, engine="h5netcdf") as opened:
        xr.testing.assert_equal(opened.load(), expected)
    # -o elsewhere, --quiet prints nothing
    code, out, err = run(["sweep", str(sweep_file), "-o", str(tmp_path / "other.h5"), "--quiet"])
    assert (code, out, err) == (0, "", "") and (tmp_path / "other.h5").exists()


def test_help_shows_examples() -> None:
    code, out, _ = run(["sweep", "--help"])
    assert code == 0 and "examples:" in out and "--resume" in out and "[sweep.axes]" in out
    code, out, _ = run(["--help"])
    assert code == 0 and "edl sweep" in out


def test_help_says_what_workers_cost() -> None:
    # Before: "solve in N local processes", whatever the sweep, and nothing on what they cost.
    _, out, _ = run(["sweep", "--help"])
    text = " ".join(out.split())
    assert "N threads of this process" in text and "N worker processes" in text
    assert "1-2 s to start" in text and "MB of memory" in text


# -- bad sweep files: exit 2, one line naming the file and the key, nothing written ------------------

AXES = '[sweep.axes]\n"wall.zeta" = ["-20 mV", "-40 mV"]\n'
BAD_SWEEPS = {
    "unknown axis": ('[sweep.axes]\n"wall.zet" = ["-20 mV"]\n', ["'wall.zet'", "did you mean 'wall.zeta'"]),
    "case input that cannot be swept": ('[sweep.axes]\n"numerics.max_iterations" = [5, 10]\n',
                                        ["'numerics.max_iterations'", "not a sweepable one"]),
    "empty list": ('[sweep.axes]\n"wall.zeta" = []\n', ['sweep.axes."wall.zeta"', "empty"]),
    "zero points": ('[sweep.axes]\n"wall.zeta" = { linear = ["-1 mV", "-9 mV"], points = 0 }\n',
                    ['sweep.axes."wall.zeta".points', "0"]),
    "fractional points": ('[sweep.axes]\n"wall.zeta" = { linear = ["-1 mV", "-9 mV"], points = 2.5 }\n',
                          ['sweep.axes."wall.zeta".points', "2.5", "not an integer"]),
    "points as text": ('[sweep.axes]\n"wall.zeta" = { linear = ["-1 mV", "-9 mV"], points = "5" }\n',
                       ['sweep.axes."wall.zeta".points', "'5'"]),
    "missing points": ('[sweep.axes]\n"wall.zeta" = { linear = ["-1 mV", "-9 mV"] }\n',
                       ['sweep.axes."wall.zeta".points', "missing"]),
    "negative log bound": ('[sweep.axes]\n"wall.zeta" = { log = ["-150 mV", "-10 mV"], points = 3 }\n',
                           ['sweep.axes."wall.zeta".log', "'-150 mV'", "not positive"]),
    "zero log bound": ('[sweep.axes]\n"geometry.height" = { log = ["0 nm", "20 nm"], points = 3 }\n',
                       ['sweep.axes."geometry.height".log', "'0 nm'", "not positive"]),
    "unknown range key": ('[sweep.axes]\n"wall.zeta" = { lin = ["-1 mV", "-9 mV"], points = 3 }\n',
                          ['sweep.axes."wall.zeta".lin', "did you mean 'linear'"]),
    "one bound": ('[sweep.axes]\n"wall.zeta" = { linear = ["-1 mV"], points = 3 }\n',
                  ['sweep.axes."wall.zeta".linear', "two bounds"]),
    "mixed units": ('[sweep.axes]\n"electrolyte.concentration" = ["1 mM", 2.0]\n',
                    ['sweep.axes."electrolyte.concentration"[1]', "2.0", "no unit"]),
    "wrong dimension": ('[sweep.axes]\n"electrolyte.concentration" = ["1 mM", "2 mm"]\n',
                        ['sweep.axes."electrolyte.concentration"[1]', "'2 mm'", "concentration"]),
    "wrong dimension in a range": ('[sweep.axes]\n"wall.zeta" = { linear = ["-150 mV", "10 nm"], points = 3 }\n',
                                   ['sweep.axes."wall.zeta".linear[1]', "'10 nm'", "electric potential"]),
    "zipped lengths differ": ('[sweep]\nzip = [["wall.zeta", "field"]]\n' + AXES + 'field = ["1 kV/m"]\n',
                              ["sweep.zip[0]", '"wall.zeta" has 2', '"field" has 1']),
    "zip of an unknown axis": ('[sweep]\nzip = [["wall.zeta", "feild"]]\n' + AXES,
                               ["sweep.zip[0]", "'feild'", "the axes are wall.zeta"]),
    "unknown key in [sweep]": ('[sweep]\nzipped = [["wall.zeta", "field"]]\n' + AXES,
                               ["'sweep.zipped'", "did you mean 'sweep.zip'"]),
    "one profile position": ("[sweep]\noutput_profiles = 1\n" + AXES, ["sweep.output_profiles", "at least 2"]),
    "no [sweep]": ("", ["missing section [sweep]"]),
    "misspelt [sweep]": ('[sweeps.axes]\n"wall.zeta" = ["-20 mV"]\n', ["'sweeps'", "did you mean 'sweep'"]),
    "no axes": ("[sweep]\noutput_profiles = false\n", ["sweep.axes", "missing"]),
    "conflicting axes": (AXES + '"wall.top.zeta" = ["-20 mV", "-40 mV"]\n',
                         ['"wall.zeta" and "wall.top.zeta"', "wall.bottom.zeta"]),
    "value the case rejects": ('[sweep.axes]\n"geometry.height" = ["10 nm", "-5 nm"]\n',
                               ['sweep.axes."geometry.height"', "'-5 nm'", "not positive"]),
    "top wall of a capillary": (AXES.replace("wall.zeta", "wall.top.zeta"),
                                ['sweep.axes."wall.top.zeta"', "capillary"]),
    "bad base case": ('[sweep.axes]\n"wall.zeta" = ["-20 mV"]\n', ["geometry.hieght", "did you mean"]),
    "TOML syntax": ("[sweep.axes\n", ["invalid TOML", "line"]),
}


@pytest.mark.parametrize("name", BAD_SWEEPS)
def test_bad_sweep_files_exit_2_with_one_line_naming_file_and_key(tmp_path: Path, name: str) -> None:
    body, parts = BAD_SWEEPS[name]
    base = BASE_TOML
    if name == "top wall of a capillary":
        base = base.replace('kind = "slit"\nheight = "20 nm"', 'kind = "capillary"\nradius = "10 nm"')
    if name == "bad base case":
        base = base.replace("height =", "hieght =")
    sweep_file = write(tmp_path, base + "\n" + body)
    code, out, err = run(["sweep", str(sweep_file), "-o", str(tmp_path / "out.h5")])
    assert code == 2 and out == ""
    assert err.startswith(f"edl: error: {sweep_file}: ") and err.count("\n") == 1, err
    assert "Traceback" not in err
    for part in parts:
        assert part in err, f"{part!r} not in {err!r}"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["design.toml"]  # no output, not even a .partial
    with pytest.raises(InputError):  # the Python reader says the same
        load_sweep(sweep_file)


def test_bad_command_lines_exit_2_and_write_nothing(tmp_path: Path) -> None:
    sweep_file = write(tmp_path, SWEEP_TOML)
    cases = {
        "missing file": (["sweep", str(tmp_path / "nope.toml")], "sweep file not found"),
        "zero workers": (["sweep", str(sweep_file), "--workers", "0"], "--workers: 0"),
        "workers and dask": (["sweep", str(sweep_file), "--workers", "2", "--dask", "tcp://127.0.0.1:1"],
                             "not allowed with argument"),
        "output in a missing folder": (["sweep", str(sweep_file), "-o", str(tmp_path / "no" / "x.h5")],
                                       "does not exist"),
        "output is the sweep file": (["sweep", str(sweep_file), "-o", str(sweep_file)], "the sweep file itself"),
    }
    for name, (argv, part) in cases.items():
        code, out, err = run(argv)
        assert code == 2 and out == "" and err.count("\n") == 1 and part in err, (name, err)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["design.toml"]
    # A .partial of an earlier run is never overwritten without --resume.
    partial = tmp_path / "design.h5.partial"
    partial.write_bytes(b"earlier work")
    code, _, err = run(["sweep", str(sweep_file)])
    assert code == 2 and "--resume" in err and partial.read_bytes() == b"earlier work"
    # ... and one that is not a laid-out sweep (a run killed while creating it) is said to be unusable.
    code, _, err = run(["sweep", str(sweep_file), "--resume"])
    assert code == 2 and err.count("\n") == 1 and "cannot be resumed" in err and "delete it" in err, err
    assert partial.read_bytes() == b"earlier work" and not (tmp_path / "design.h5").exists()


# -- Ctrl-C and --resume ----------------------------------------------------------------------------


def test_ctrl_c_exits_130_keeps_the_partial_file_and_resume_finishes(tmp_path: Path) -> None:

    # 40,000 cases (~2 s in compiled batches of 4,000): long enough to be interrupted after the first batch is
    # written, short enough to be finished here.
    text = BASE_TOML + """
[sweep.axes]
"geometry.height" = { log = ["5 nm", "500 nm"], points = 1000 }
"wall.zeta" = { linear = ["-140 mV", "-15 mV"], points = 40 }
"""
    sweep_file = write(tmp_path, text)
    output, partial = tmp_path / "design.h5", tmp_path / "design.h5.partial"
    code, out, err = interrupt_after_first_write(["sweep", str(sweep_file)], partial)
    assert code == 130, (out, err)
    assert err.startswith("edl: error: interrupted") and err.count("\n") == 1, err
    assert f"kept in {partial}" in err and f"edl sweep {sweep_file} --resume" in err
    assert partial.exists() and not output.exists()

    code, out, err = run(["sweep", str(sweep_file), "--resume"])
    assert code == 0 and err == "" and "40000 converged, 0 failed" in out
    assert output.exists() and not partial.exists()
    case, axes, zipped = load_sweep(sweep_file)
    with xr.open_dataset(output, engine="h5netcdf") as resumed:
        xr.testing.assert_equal(resumed.load(), edl.sweep(case, axes, zipped=zipped))


# -- the hook for commands in modules of their own ---------------------------------------------------


def test_a_plugged_command_module_is_registered_and_dispatched(monkeypatch: pytest.MonkeyPatch) -> None:
    seen = {}

    def add_map_command(subparsers: object) -> None:
        parser = subparsers.add_parser("map", help="a stand-in for the map command")
        parser.add_argument("--level", metavar="V")

    def run_map_command(args: object) -> int:
        seen["level"] = args.level
        return 7

    module = types.ModuleType("edl_solver.cli.map_command")
    module.__spec__ = importlib.machinery.ModuleSpec("edl_solver.cli.map_command", loader=None)
    module.add_map_command, module.run_map_command = add_map_command, run_map_command
    module.VALUE_FLAGS = ("--level",)
    monkeypatch.setitem(sys.modules, "edl_solver.cli.map_command", module)
    code, _, err = run(["map", "--level", "-3mV"])  # a value starting with '-' is taken as the value
    assert (code, err, seen) == (7, "", {"level": "-3mV"})
    code, out, _ = run(["--help"])
    assert code == 0 and "map" in out and "a stand-in for the map command" in out
