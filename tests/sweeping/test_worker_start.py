"""Local sweep workers are spawned processes that import the calling script again: a script without the
``if __name__ == "__main__":`` guard gets a one-line InputError saying so, and no file, instead of
BrokenProcessPool and a ``.partial`` (issue 11). Rules of this project's interface: no outside reference."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

from tests.helpers import ROOT

SCRIPT = """
import edl_solver as edl

case = edl.Case(geometry=edl.Slit(height="50 nm"), wall=edl.Wall(zeta="-50 mV"),
                electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}))
edl.sweep(case, {"wall.zeta": ["-20 mV", "-40 mV"]}, path="out.h5", workers=2%s)
print("swept")
"""

#: A worker's set-up after numba was imported (the kernels' cache locator imports it), then a compilation.
ONE_THREAD = """
import numba
from edl_solver.sweeping.run import _one_thread
_one_thread()
numba.njit(lambda x: x + 1)(1)
print(numba.config.NUMBA_NUM_THREADS)
"""


def _run(arguments: list[str], cwd: Path, **env: str) -> subprocess.CompletedProcess[str]:
    """Python with ``arguments`` in a child process that imports this checkout."""
    env = {**os.environ, **env,
           "PYTHONPATH": os.pathsep.join(filter(None, (str(ROOT), os.environ.get("PYTHONPATH"))))}
    return subprocess.run([sys.executable, *arguments], cwd=cwd, env=env, capture_output=True, text=True,
                          timeout=300, check=False)


def test_a_script_without_the_main_guard_is_told_and_leaves_no_file(tmp_path: Path) -> None:
    # profiles are solved case by case, so workers=2 means two processes
    (tmp_path / "script.py").write_text(SCRIPT % ", profiles=5")  # a file: workers import it again (not so with -c)
    done = _run(["script.py"], tmp_path)
    last = done.stderr.strip().splitlines()[-1]
    assert done.returncode == 1 and "swept" not in done.stdout
    assert last.startswith("edl_solver.errors.InputError: workers: ") and 'if __name__ == "__main__":' in last
    assert sorted(p.name for p in tmp_path.iterdir()) == ["script.py"]  # no out.h5, .partial or lock


def test_workers_of_a_compiled_sweep_are_threads_which_need_no_main_guard(tmp_path: Path) -> None:
    (tmp_path / "script.py").write_text(SCRIPT % "")
    done = _run(["script.py"], tmp_path)
    assert done.returncode == 0 and done.stdout.split() == ["swept"], done.stderr
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.h5", "script.py"]


def test_a_worker_keeps_one_thread_when_numba_was_imported_first(tmp_path: Path) -> None:
    # numba reads NUMBA_NUM_THREADS when imported and again at each compilation: a change under live threads
    # fails the worker's first compilation (a sweep with a cold cache)
    done = _run(["-c", ONE_THREAD], tmp_path, NUMBA_NUM_THREADS="2")
    assert done.returncode == 0, done.stderr
    assert done.stdout.split() == ["1"]
