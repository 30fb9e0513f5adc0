"""Where numba caches the compiled kernels: the user's cache directory, never the installed package.

numba's default puts ``*.nbi``/``*.nbc`` files in ``kernels/__pycache__``. ``pip uninstall`` does not know
them, so they survive and the left-over ``site-packages/edl_solver/__pycache__`` turns into an empty
namespace package that shadows a later editable install. This locator (numba's ``_CacheLocator``
mechanism, ``numba/core/caching.py``) puts them under ``<user cache>/edl_solver/kernels-<hash>/``, where
the hash covers every kernel source, ``constants.py`` (its values are frozen into the compiled code) and
the numba version: editing any kernel starts a fresh cache, so a stale one cannot be loaded (numba alone
tracks each file, not the kernels it calls in other files).

The cache root is ``$EDL_SOLVER_CACHE_DIR`` if set, else ``$NUMBA_CACHE_DIR/edl_solver`` if numba was told
where to cache, else the platform's user cache directory (``$XDG_CACHE_HOME`` or ``~/.cache`` on Linux).
When that directory cannot be written, numba's own locators decide (beside the sources if writable), as
before this module existed.
Deleting the directory at any time is safe: the kernels are compiled again on next use.
"""

from __future__ import annotations

import functools
import hashlib
import os
import sys
from pathlib import Path

import numba
from numba.core import caching

#: The folder whose kernels this locator serves (this module's own).
KERNELS = Path(__file__).resolve().parent
#: Sources whose text is compiled into the kernels.
CONSTANTS = KERNELS.parent / "constants.py"
#: numba's private locator machinery; should a numba release rename it, numba's default locators stay.
_IMPL = getattr(caching, "CacheImpl", None) or getattr(caching, "_CacheImpl", None)  # the latter in older numba
_BASES = (getattr(caching, "_SourceFileBackedLocatorMixin", None), getattr(caching, "_CacheLocator", None))
SUPPORTED = _IMPL is not None and None not in _BASES


def user_cache_root() -> Path:
    """The platform's per-user cache directory for edl_solver (not created here).

    Returns
    -------
    Path
        ``%LOCALAPPDATA%\\edl_solver\\Cache`` on Windows, ``~/Library/Caches/edl_solver`` on macOS,
        ``$XDG_CACHE_HOME/edl_solver`` (default ``~/.cache/edl_solver``) elsewhere.
    """
    if sys.platform == "win32":
        base = os.environ.get("LOCALAPPDATA") or os.path.expanduser(r"~\AppData\Local")
        return Path(base) / "edl_solver" / "Cache"
    if sys.platform == "darwin":
        return Path(os.path.expanduser("~/Library/Caches")) / "edl_solver"
    base = os.environ.get("XDG_CACHE_HOME", "")
    # the XDG specification: a relative path is invalid and ignored
    return Path(base if os.path.isabs(base) else os.path.expanduser("~/.cache")) / "edl_solver"


def cache_root() -> Path:
    """The directory that holds every edl_solver kernel cache, overrides first (read at each call)."""
    override = os.environ.get("EDL_SOLVER_CACHE_DIR")
    if override:
        return Path(override).expanduser().absolute()
    if numba.config.CACHE_DIR:
        return Path(numba.config.CACHE_DIR).expanduser().absolute() / "edl_solver"
    return user_cache_root()


def source_fingerprint(kernels: Path, constants: Path) -> str:
    """A short hash of the kernel sources, ``constants.py`` and the numba version.

    Parameters
    ----------
    kernels : Path
        The kernels folder (every ``*.py`` below it counts, by relative name and content).
    constants : Path
        The constants module, whose values are frozen into the compiled code.

    Returns
    -------
    str
        16 hexadecimal digits; they change whenever any of these sources changes.
    """
    digest = hashlib.sha256(numba.__version__.encode())
    for path in [*sorted(kernels.rglob("*.py")), constants]:
        digest.update(path.relative_to(kernels.parent).as_posix().encode())
        digest.update(path.read_bytes())
    return digest.hexdigest()[:16]


@functools.lru_cache(maxsize=1)
def kernels_fingerprint() -> str:
    """``source_fingerprint`` of this package's kernels, computed once per process."""
    return source_fingerprint(KERNELS, CONSTANTS)


class KernelCacheLocator(*(_BASES if SUPPORTED else (object,))):
    """numba cache locator for functions defined under ``edl_solver/kernels``; declines all others."""

    def __init__(self, py_func, py_file: str) -> None:
        self._py_file = py_file
        self._lineno = py_func.__code__.co_firstlineno
        subfolder = Path(py_file).resolve().parent.relative_to(KERNELS)
        self._cache_path = str(cache_root() / f"kernels-{kernels_fingerprint()}" / subfolder)

    def get_cache_path(self) -> str:
        """The folder of this function's index and data files."""
        return self._cache_path

    @classmethod
    def from_function(cls, py_func, py_file: str) -> KernelCacheLocator | None:
        """A locator for a kernel function, or None (numba tries its next locator) for any other
        function or when the cache folder cannot be created and written."""
        if not os.path.isfile(py_file):  # inside a zip archive: numba's own zip locator serves it
            return None
        try:
            Path(py_file).resolve().relative_to(KERNELS)
        except (OSError, ValueError):
            return None
        locator = cls(py_func, py_file)
        try:
            locator.ensure_cache_path()
        except OSError:
            return None
        return locator


def register() -> None:
    """Put the locator first in numba's list (once); called before any kernel is compiled. No environment
    variable is written: numba's ``NUMBA_CACHE_LOCATOR_CLASSES``, when set, still takes precedence."""
    if SUPPORTED and KernelCacheLocator not in _IMPL._locator_classes:
        _IMPL._locator_classes.insert(0, KernelCacheLocator)
