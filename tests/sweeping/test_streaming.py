"""A sweep streamed to a file: written in a thread of its own while the next tasks are solved, committed about
twice a second, memory flat however large the sweep (figures: benchmarks/bench_sweep_stream.py). Rules of
this project's interface: no physics here."""

from __future__ import annotations

import threading
from pathlib import Path
from typing import Any

import h5py
import numpy as np
import pytest
import xarray as xr

import edl_solver as edl
import edl_solver.sweeping.store as sweep_store
from tests.helpers import KCL

SLIT = edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-40 mV"), field="1 kV/m")
# The middle row fails: a 2 um slit cannot reach 1e-13 within 256 cells per half section (tests/sweeping/test_run.py)
AXES = {"numerics.accuracy": [1e-6, 1e-13, 1e-6], "geometry.height": ["20 nm", "2 um"]}
FAILING = edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-40 mV"),
                   field="1 kV/m", numerics=edl.Numerics(max_intervals=256))


def test_the_chunk_cache_of_a_sweep_file_stays_small(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    # Before: HDF5 2.0's default chunk cache (8 MiB per variable) kept every chunk written: a 10^6-case sweep
    # to a file grew to 735 MiB of RSS (230 MiB after warm-up), now ~350 MiB flat (benchmarks/README.md).
    seen: list[int] = []
    write = sweep_store.SweepStore.write

    def spy(store: Any, part: dict[str, Any], *args: Any, **kwargs: Any) -> None:
        seen.extend(store.h5[key].id.get_access_plist().get_chunk_cache()[1] for key in ("status", "debye_length"))
        write(store, part, *args, **kwargs)

    monkeypatch.setattr(sweep_store.SweepStore, "write", spy)
    edl.sweep(FAILING, AXES, path=tmp_path / "s.h5")
    assert seen and max(seen) <= 2**20


def test_the_file_is_written_off_the_solving_thread_and_equals_the_in_memory_sweep(
        tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    writers: set[str] = set()
    write = sweep_store.SweepStore.write

    def spy(store: Any, part: dict[str, Any], commit: bool = True) -> None:
        writers.add(threading.current_thread().name)
        write(store, part, commit)

    monkeypatch.setattr(sweep_store.SweepStore, "write", spy)
    path = tmp_path / "s.h5"
    streamed = edl.sweep(FAILING, AXES, path=path, rows_per_task=1)
    assert writers == {"edl-sweep-writer"}
    xr.testing.assert_identical(streamed.drop_attrs(), edl.sweep(FAILING, AXES).drop_attrs())
    # messages are written for the failed cases alone; the others read back empty
    with h5py.File(path, "r") as handle:
        messages = handle["message"].asstr()[...]
    assert messages[1, 1] and not messages[0].any() and not messages[2].any()


def test_commits_are_batched_and_the_last_one_marks_every_row_done(tmp_path: Path,
                                                                 monkeypatch: pytest.MonkeyPatch) -> None:
    # Before: two flushes after every task (~6 ms each), a large part of a fast sweep's writing time.
    commits: list[int] = []
    commit = sweep_store.SweepStore.commit

    def spy(store: Any) -> None:
        commits.append(len(store._uncommitted))
        commit(store)

    monkeypatch.setattr(sweep_store.SweepStore, "commit", spy)
    axes = {"geometry.height": [f"{h:.3g} nm" for h in np.geomspace(5, 500, 12)], "wall.zeta": ["-20 mV"]}
    done = edl.sweep(SLIT, axes, path=tmp_path / "s.h5", rows_per_task=1)  # 12 tasks of one row
    assert sum(commits) == 12 and len([c for c in commits if c]) < 12
    assert np.all(done["status"].values == 0)


def test_a_writer_error_stops_the_sweep_and_reaches_the_caller(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    def full_disk(store: Any, part: dict[str, Any], commit: bool = True) -> None:
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(sweep_store.SweepStore, "write", full_disk)
    path = tmp_path / "s.h5"
    with pytest.raises(OSError, match="No space left"):
        edl.sweep(FAILING, AXES, path=path, rows_per_task=1)
    assert not path.exists() and (tmp_path / "s.h5.partial").exists()  # resumable: nothing marked done
    with h5py.File(tmp_path / "s.h5.partial", "r") as handle:
        assert np.all(handle["status"][...] == -1)
