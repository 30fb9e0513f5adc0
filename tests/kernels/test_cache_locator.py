"""The compiled kernels are cached in the user's cache directory, never inside the package: numba's cache
files left in ``site-packages/edl_solver`` survive ``pip uninstall`` and shadow a later editable install as
an empty namespace package (issue 11). These are rules of this project's set-up: no outside reference."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
from numba.core import caching

from edl_solver.kernels import cache_locator
from tests.helpers import ROOT

PACKAGE = ROOT / "edl_solver"

#: Compiles (or loads) one small kernel, then names the folder numba used for it.
COMPILE_ONE = """
import numpy as np
from edl_solver.kernels import layout, walls
ions = np.zeros((2, layout.ION_SIZE))
ions[:, layout.ION_VALENCE], ions[:, layout.ION_CONCENTRATION] = (1.0, -1.0), 1.0
assert walls.twice_ionic_strength(ions) == 2.0
print(walls.twice_ionic_strength._cache._cache_path)
"""


def _cache_files(folder: Path) -> dict[Path, int]:
    return {path: path.stat().st_mtime_ns for path in folder.rglob("*.nb[ic]")}


def _compile_in_child(env: dict[str, str], cwd: Path) -> str:
    env = {key: value for key, value in {**os.environ, **env}.items()
           if key not in ("EDL_SOLVER_CACHE_DIR", "NUMBA_CACHE_DIR") or key in env}
    env["PYTHONPATH"] = os.pathsep.join(filter(None, (str(ROOT), os.environ.get("PYTHONPATH"))))
    done = subprocess.run([sys.executable, "-c", COMPILE_ONE], env=env, cwd=cwd, capture_output=True, text=True,
                          timeout=300, check=False)
    assert done.returncode == 0, done.stderr
    return done.stdout.strip().splitlines()[-1]


def test_kernels_are_cached_in_the_user_cache_directory_and_not_in_the_package(tmp_path: Path) -> None:
    before = _cache_files(PACKAGE)
    used = Path(_compile_in_child({"XDG_CACHE_HOME": str(tmp_path / "xdg")}, tmp_path))
    written = sorted(p.name for p in (tmp_path / "xdg" / "edl_solver").rglob("*.nb[ic]"))
    assert used.parent == tmp_path / "xdg" / "edl_solver"
    assert used.name.startswith("kernels-")
    assert any(name.startswith("walls.twice_ionic_strength") and name.endswith(".nbi") for name in written)
    assert _cache_files(PACKAGE) == before  # nothing new or rewritten beside the sources


def test_the_cache_folder_can_be_chosen(tmp_path: Path) -> None:
    used = Path(_compile_in_child({"EDL_SOLVER_CACHE_DIR": str(tmp_path / "mine"),
                                   "XDG_CACHE_HOME": str(tmp_path / "xdg")}, tmp_path))
    assert used.parent == tmp_path / "mine"
    assert list(used.glob("walls.twice_ionic_strength*.nbi"))
    assert not (tmp_path / "xdg").exists()


def test_an_edited_kernel_gets_a_fresh_cache(tmp_path: Path) -> None:
    # numba tracks each source file alone, not the kernels it calls in other files; the folder name
    # covers them all, so a stale cache cannot be loaded after an edit
    copy = tmp_path / "edl_solver" / "kernels"
    shutil.copytree(cache_locator.KERNELS, copy, ignore=shutil.ignore_patterns("__pycache__"))
    shutil.copy(cache_locator.CONSTANTS, copy.parent / "constants.py")
    first = cache_locator.source_fingerprint(copy, copy.parent / "constants.py")
    assert first == cache_locator.kernels_fingerprint()
    with (copy / "walls.py").open("a") as handle:
        handle.write("\n# an edit\n")
    edited = cache_locator.source_fingerprint(copy, copy.parent / "constants.py")
    (copy / "walls.py").write_bytes((cache_locator.KERNELS / "walls.py").read_bytes())
    (copy.parent / "constants.py").write_text(cache_locator.CONSTANTS.read_text() + "\n")
    constant_edited = cache_locator.source_fingerprint(copy, copy.parent / "constants.py")
    assert len({first, edited, constant_edited}) == 3


def test_the_locator_serves_kernels_only_and_gives_way_when_it_cannot_write(tmp_path: Path,
                                                                               monkeypatch) -> None:
    impl = getattr(caching, "CacheImpl", None) or caching._CacheImpl
    assert impl._locator_classes[0] is cache_locator.KernelCacheLocator

    def kernel() -> None:
        return None

    kernel_file = str(cache_locator.KERNELS / "walls.py")
    monkeypatch.setenv("EDL_SOLVER_CACHE_DIR", str(tmp_path / "cache"))
    assert cache_locator.KernelCacheLocator.from_function(kernel, kernel_file) is not None
    (tmp_path / "script.py").write_text("")
    assert cache_locator.KernelCacheLocator.from_function(kernel, str(tmp_path / "script.py")) is None
    (tmp_path / "a file").write_text("")
    monkeypatch.setenv("EDL_SOLVER_CACHE_DIR", str(tmp_path / "a file"))  # numba's own locators then decide
    assert cache_locator.KernelCacheLocator.from_function(kernel, kernel_file) is None


@pytest.mark.skipif(sys.platform in ("win32", "darwin"), reason="XDG applies to Linux and other Unix systems")
def test_the_user_cache_directory_follows_xdg(monkeypatch, tmp_path: Path) -> None:
    monkeypatch.delenv("EDL_SOLVER_CACHE_DIR", raising=False)
    monkeypatch.setattr(cache_locator.numba.config, "CACHE_DIR", "")
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path))
    assert cache_locator.cache_root() == tmp_path / "edl_solver"
    monkeypatch.setenv("XDG_CACHE_HOME", "relative/path")  # invalid by the XDG specification: ignored
    monkeypatch.setenv("HOME", str(tmp_path / "home"))
    assert cache_locator.cache_root() == tmp_path / "home" / ".cache" / "edl_solver"
    monkeypatch.setattr(cache_locator.numba.config, "CACHE_DIR", str(tmp_path / "numba"))
    assert cache_locator.cache_root() == tmp_path / "numba" / "edl_solver"
