"""One writer per output: a sweep holds its output's lock, so that a second sweep, map or solve on the same path
is refused at once; a finished output is replaced only on request; the path is checked before any case is
solved (the command-line flags: tests/cli/test_one_writer_cli.py)."""

from __future__ import annotations

import os
import subprocess
import sys
import threading
import time
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

import pytest
import xarray as xr

import edl_solver as edl
from edl_solver.errors import InputError
from tests.helpers import KCL, ROOT, SWEEP_TOML, run, write_sweep

SLIT = edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-40 mV"), field="1 kV/m")
AXES = {"geometry.height": ["10 nm", "20 nm", "40 nm"], "wall.zeta": ["-20 mV", "-60 mV"]}
OTHER_AXES = {"wall.zeta": ["-30 mV", "-50 mV"]}

#: A sweep in a child process that takes its output's lock, lays out its .partial file and then waits for
#: the gate file before solving anything: a run that holds the output for as long as the test needs.
_GATED_SWEEP = """
import os, sys, time
import edl_solver as edl
import edl_solver.sweeping.run as sweep_run
path, gate = sys.argv[1], sys.argv[2]
solve_rows = sweep_run.solve_rows

def gated(*args, **kwargs):
    open(gate + ".waiting", "w").close()  # the .partial is laid out: tell the test, then wait
    while not os.path.exists(gate):
        time.sleep(0.01)
    return solve_rows(*args, **kwargs)

sweep_run.solve_rows = gated
electrolyte = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})
base = edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=electrolyte, wall=edl.Wall(zeta="-40 mV"),
                field="1 kV/m")
edl.sweep(base, %r, path=path, progress=False)
"""


@contextmanager
def running_sweep(path: Path) -> Iterator[subprocess.Popen[str]]:
    """A sweep of AXES to ``path`` in a child process, held before its first case until the block ends; then
    it is let go and must finish."""
    gate = path.with_name("gate")
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(filter(None, [str(ROOT), os.environ.get("PYTHONPATH")]))}
    partial = path.with_name(path.name + ".partial")
    with subprocess.Popen([sys.executable, "-c", _GATED_SWEEP % (AXES,), str(path), str(gate)], env=env,
                          stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True) as process:
        try:
            deadline = time.monotonic() + 120.0
            # wait for the child at its gate, not for the .partial to appear: the file exists before its layout
            # is written, and a stat taken in between saw it change later (a flaky comparison)
            waiting = gate.with_name(gate.name + ".waiting")
            while time.monotonic() < deadline and process.poll() is None and not waiting.exists():
                time.sleep(0.01)
            assert waiting.exists() and partial.exists(), f"the sweep did not start: {process.communicate()}"
            yield process
            gate.touch()
            _, err = process.communicate(timeout=120)
            assert process.returncode == 0, err
        finally:
            if process.poll() is None:
                process.kill()


def test_a_second_sweep_on_a_path_being_written_is_refused_at_once_and_the_first_finishes(tmp_path: Path) -> None:
    # Before: the second sweep laid out a fresh .partial over the running one's (two writers of one file: an
    # HDF5 "unable to lock file" or checksum error, both sweeps lost); the command said "an interrupted
    # sweep is kept there" about a sweep that was running.
    output, partial = tmp_path / "design.h5", tmp_path / "design.h5.partial"
    sweep_file = write_sweep(tmp_path, SWEEP_TOML)
    with running_sweep(output):
        before = partial.stat()
        for resume in (False, True):
            with pytest.raises(InputError, match="is being written by another run") as info:
                edl.sweep(SLIT, OTHER_AXES, path=output, resume=resume)
            assert "\n" not in str(info.value) and "design.h5" in str(info.value)
        for extra in ([], ["--resume"], ["--overwrite"]):
            code, out, err = run(["sweep", str(sweep_file), "-o", str(output), *extra])
            assert code == 2 and out == "" and err.count("\n") == 1, (extra, err)
            assert "another run" in err and "interrupted" not in err and "delete" not in err, err
        # single solves and maps are refused on that path too, before they solve anything
        code, _, err = run(["solve", "--slit", "20nm", "--ion", "K+=1mM", "--ion", "Cl-=1mM", "--zeta", "-40mV",
                            "-o", str(output), "-q"])
        assert code == 2 and "another run" in err, err
        with pytest.raises(InputError, match="another run"):
            edl.solve(SLIT).to_hdf5(output)
        after = partial.stat()
        assert (after.st_size, after.st_mtime_ns, after.st_ino) == (before.st_size, before.st_mtime_ns,
                                                                   before.st_ino)
        assert not output.exists()
    # the running sweep was not disturbed: it finished, its file whole
    assert output.exists() and not partial.exists() and not (tmp_path / "design.h5.lock").exists()
    with xr.open_dataset(output, engine="h5netcdf") as written:
        xr.testing.assert_equal(written.load(), edl.sweep(SLIT, AXES))


def test_a_finished_sweep_is_replaced_only_with_overwrite(tmp_path: Path) -> None:
    # Before: a second sweep to the same path replaced the first without a word.
    path = tmp_path / "out.h5"
    first = edl.sweep(SLIT, AXES, path=path)
    kept = path.read_bytes()
    with pytest.raises(InputError, match=r"already exists.*overwrite=True") as info:
        edl.sweep(SLIT, OTHER_AXES, path=path)
    assert "\n" not in str(info.value)
    with pytest.raises(InputError, match="overwrite=True"):  # a resume with nothing to resume starts afresh
        edl.sweep(SLIT, OTHER_AXES, path=path, resume=True)
    assert path.read_bytes() == kept and sorted(os.listdir(tmp_path)) == ["out.h5"]
    with xr.open_dataset(path, engine="h5netcdf") as opened:
        xr.testing.assert_equal(opened.load(), first)
    second = edl.sweep(SLIT, OTHER_AXES, path=path, overwrite=True)
    with xr.open_dataset(path, engine="h5netcdf") as opened:
        xr.testing.assert_equal(opened.load(), second)
    assert sorted(os.listdir(tmp_path)) == ["out.h5"]


def test_a_file_that_is_not_a_sweep_is_refused_the_same_way(tmp_path: Path) -> None:
    path = tmp_path / "notes.h5"
    path.write_text("my notes, not HDF5")
    with pytest.raises(InputError, match="already exists"):
        edl.sweep(SLIT, AXES, path=path)
    assert path.read_text() == "my notes, not HDF5"
    with pytest.raises(InputError, match="overwrite"):
        edl.sweep(SLIT, AXES, path=path, overwrite="yes")  # a flag, not a truthy value
    edl.sweep(SLIT, AXES, path=path, overwrite=True)
    with xr.open_dataset(path, engine="h5netcdf") as opened:
        assert opened["status"].shape == (3, 2)


def test_bad_paths_are_refused_before_any_case_is_solved(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    # Before: path=<a directory> ran the whole sweep, then failed at the rename and left <dir>.partial;
    # path=5 raised a TypeError.
    import edl_solver.sweeping.run as sweep_run

    def no_solving(*args: object, **kwargs: object) -> None:
        raise AssertionError("a case was solved before the path was checked")

    monkeypatch.setattr(sweep_run, "solve_rows", no_solving)
    folder = tmp_path / "results"
    folder.mkdir()
    for path, words in ((folder, "is a directory"), (5, "is not a file path"),
                        (tmp_path / "missing" / "x.h5", "does not exist")):
        with pytest.raises(InputError, match=words) as info:
            edl.sweep(SLIT, AXES, path=path)
        assert str(info.value).startswith("path: ") and "\n" not in str(info.value)
    assert sorted(os.listdir(tmp_path)) == ["results"] and os.listdir(folder) == []


def test_zipped_none_means_no_zipped_axes() -> None:
    # Before: zipped=None raised "TypeError: 'NoneType' object is not iterable".
    xr.testing.assert_identical(edl.sweep(SLIT, AXES, zipped=None), edl.sweep(SLIT, AXES))
    with pytest.raises(InputError, match="zipped"):
        edl.sweep(SLIT, AXES, zipped=5)


def test_the_output_lock_is_one_writer_across_threads_and_after_a_killed_run(tmp_path: Path) -> None:
    from edl_solver.io.files import lock_path, output_lock

    path = tmp_path / "out.h5"
    lock_path(path).write_text("12345\n")  # left by a killed run: the kernel dropped its lock with it
    held, release = threading.Event(), threading.Event()

    def hold() -> None:
        with output_lock(path):
            held.set()
            release.wait(30)

    holder = threading.Thread(target=hold)
    holder.start()
    try:
        assert held.wait(30)
        with pytest.raises(InputError, match="being written by another run"):
            edl.sweep(SLIT, AXES, path=path)
    finally:
        release.set()
        holder.join()
    assert not lock_path(path).exists()  # removed on release
    with output_lock(path), output_lock(path, "-o"):  # the thread that holds it may take it again
        edl.sweep(SLIT, AXES, path=path)
    assert sorted(os.listdir(tmp_path)) == ["out.h5"]
