"""Files written whole or not at all: a checked output path and an atomic write (temporary file, then rename).

Every writer of the package (result files, sweeps' companions, maps, figures) goes through ``atomic_output``,
so a reader never finds a half-written file under the final name and a failed write leaves an existing file
as it was.
"""

from __future__ import annotations

import os
import secrets
from collections.abc import Iterator
from contextlib import contextmanager, suppress
from pathlib import Path

from edl_solver.errors import InputError

__all__ = ["atomic_output", "checked_input_path", "checked_output_path"]


def checked_output_path(path: object) -> Path:
    """Check that ``path`` names a file that can be created; return it as a Path."""
    if not isinstance(path, (str, os.PathLike)) or not os.fspath(path):
        raise InputError(f"path: {path!r} is not a file path, expected a str or pathlib.Path")
    target = Path(os.fspath(path)).expanduser()
    if target.is_dir():
        raise InputError(f"path: {str(path)!r} is a directory, expected a file name")
    if not target.parent.is_dir():
        raise InputError(f"path: {str(path)!r} is in a directory that does not exist ({str(target.parent)!r})")
    return target


def checked_input_path(path: object, expected: str) -> Path:
    """Check that ``path`` names an existing file; return it as a Path.

    Parameters
    ----------
    path : object
        What the caller was given.
    expected : str
        What the file should be, for the message (e.g. "an edl_solver result file").

    Raises
    ------
    InputError
        If ``path`` is not a path, does not exist or is a directory.
    """
    if not isinstance(path, (str, os.PathLike)) or not os.fspath(path):
        raise InputError(f"path: {path!r} is not a file path, expected a str or pathlib.Path")
    source = Path(os.fspath(path)).expanduser()
    if not source.is_file():
        what = "is a directory" if source.is_dir() else "does not exist"
        raise InputError(f"path: {str(path)!r} {what}, expected {expected}")
    return source


@contextmanager
def atomic_output(path: str | os.PathLike[str]) -> Iterator[Path]:
    """Give a temporary file beside ``path``; move it onto ``path`` only if the block succeeds.

    The temporary file lives in the target's directory, so ``os.replace`` is an atomic rename and a
    reader never sees a half-written file under the final name. On any exception (including
    KeyboardInterrupt) the temporary file is removed and an existing file at ``path`` is untouched.

    Parameters
    ----------
    path : str or PathLike
        Final file name; its directory must exist.

    Yields
    ------
    Path
        The temporary file (already created, empty) to write to.

    Raises
    ------
    InputError
        If ``path`` is not a path, is a directory, or its directory does not exist or is not writable.
    """
    target = checked_output_path(path)
    temporary = target.with_name(f".{target.name}.{secrets.token_hex(6)}.tmp")
    try:
        # os.open with 0o666 lets the umask decide the final permissions (mkstemp would force 0o600).
        os.close(os.open(temporary, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o666))
    except OSError as exc:
        raise InputError(f"path: {str(path)!r} cannot be written ({exc.strerror})") from None
    try:
        yield temporary
        descriptor = os.open(temporary, os.O_RDONLY)
        try:
            os.fsync(descriptor)  # data on disk before the rename makes it visible
        finally:
            os.close(descriptor)
        os.replace(temporary, target)
    except BaseException:
        with suppress(OSError):
            temporary.unlink()
        raise
