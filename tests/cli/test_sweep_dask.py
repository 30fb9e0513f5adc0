"""``edl sweep --dask ADDRESS`` against a real Dask scheduler and workers started from the command line
(``dask scheduler``, ``dask worker``), on loopback: the file equals the in-process sweep's bit for bit.
Rules of this project's interface: no physics here."""

from __future__ import annotations

import os
import shutil
import socket
import subprocess
import sys
from collections.abc import Iterator
from pathlib import Path

import pytest
import xarray as xr

import edl_solver as edl
from edl_solver.sweeping.file import load_sweep
from tests.helpers import ROOT, SWEEP_TOML, run, write_sweep


def _dask_command() -> list[str]:
    """The `dask` command line of this environment (dask[distributed] is a test dependency): its script, or the
    module through this interpreter when no script is on hand."""
    beside = Path(sys.executable).with_name("dask")  # the environment's own, when PATH does not name it
    found = str(beside) if beside.exists() else shutil.which("dask")
    return [found] if found else [sys.executable, "-m", "dask"]


def _free_port() -> int:
    with socket.socket() as probe:
        probe.bind(("127.0.0.1", 0))
        return int(probe.getsockname()[1])


@pytest.fixture
def scheduler(tmp_path: Path) -> Iterator[str]:
    """A scheduler and 2 worker processes of 1 thread, started from the command line on 127.0.0.1 (no
    dashboards); their address. Torn down after the test."""
    dask = _dask_command()
    from distributed import Client

    address = f"tcp://127.0.0.1:{_free_port()}"
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(filter(None, [str(ROOT), os.environ.get("PYTHONPATH")]))}
    quiet = {"env": env, "cwd": tmp_path, "stdout": subprocess.DEVNULL, "stderr": subprocess.DEVNULL}
    started = [subprocess.Popen([*dask, "scheduler", "--host", "127.0.0.1", "--port", address.rsplit(":", 1)[1],
                                 "--no-dashboard"], **quiet)]
    try:
        started.append(subprocess.Popen([*dask, "worker", address, "--nworkers", "2", "--nthreads", "1", "--host",
                                         "127.0.0.1", "--no-dashboard", "--local-directory", str(tmp_path)], **quiet))
        with Client(address, timeout="20s") as client:
            client.wait_for_workers(2, timeout=30)
        yield address
    finally:
        for process in reversed(started):
            process.terminate()
            try:
                process.wait(timeout=10)
            except subprocess.TimeoutExpired:
                process.kill()
                process.wait()


def test_edl_sweep_on_a_command_line_cluster_equals_the_in_process_sweep(scheduler: str, tmp_path: Path) -> None:
    sweep_file = write_sweep(tmp_path, SWEEP_TOML)
    output = tmp_path / "design.h5"
    code, out, err = run(["sweep", str(sweep_file), "--dask", scheduler, "-o", str(output), "--quiet"])
    assert (code, out, err) == (0, "", "")
    case, axes, zipped = load_sweep(sweep_file)
    expected = edl.sweep(case, axes, zipped=zipped, path=tmp_path / "here.h5")
    with xr.open_dataset(output, engine="h5netcdf") as opened:
        xr.testing.assert_identical(opened.load(), expected)
    # the command closed its own client, not the cluster
    from distributed import Client

    with Client(scheduler, timeout="10s") as client:
        assert len(client.scheduler_info()["workers"]) == 2
