"""Files written whole or not at all, by one writer at a time: a checked output path, an atomic write
(temporary file, then rename) and the advisory lock of an output.

Every writer of the package (result files, sweeps' companions, maps, figures) goes through ``atomic_output``,
so a reader never finds a half-written file under the final name and a failed write leaves an existing file
as it was. A run that writes an output over a long time (a sweep, a map) holds its lock (``output_lock``,
``<output>.lock`` beside it) from its first check to its last write, so that a second run on the same path
is refused at once rather than corrupting the first one's files; ``atomic_output`` takes it as well.
"""

from __future__ import annotations

import os
import secrets
import threading
from collections.abc import Iterator
from contextlib import contextmanager, suppress
from pathlib import Path

from edl_solver.errors import InputError

try:
    import fcntl
except ImportError:  # not POSIX (Windows): outputs are not locked
    fcntl = None  # type: ignore[assignment]

__all__ = ["atomic_output", "check_unlocked", "checked_input_path", "checked_output_path", "lock_path",
           "output_lock"]


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
    KeyboardInterrupt) the temporary file is removed and an existing file at ``path`` is untouched. The
    output's lock (``output_lock``) is held meanwhile.

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
        If ``path`` is not a path, is a directory, or its directory does not exist or is not writable, or
        another run is writing it.
    """
    target = checked_output_path(path)
    with output_lock(target), _written_atomically(target, path) as temporary:
        yield temporary


@contextmanager
def _written_atomically(target: Path, path: str | os.PathLike[str]) -> Iterator[Path]:
    """The body of ``atomic_output``, once ``target`` is checked and locked."""
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


# -- one writer per output ----------------------------------------------------------------------------

#: Locks this process holds: lock file -> (thread holding it, depth). The thread that holds a lock may take
#: it again (a sweep command holds it and calls ``sweep``, which takes it too); any other thread is refused,
#: as another process is.
_HELD: dict[str, tuple[int, int]] = {}
_HELD_GUARD = threading.Lock()


def lock_path(path: str | os.PathLike[str]) -> Path:
    """The lock file of output ``path``: ``<path>.lock`` beside it."""
    target = Path(os.fspath(path)).expanduser()
    return target.with_name(target.name + ".lock")


@contextmanager
def output_lock(path: str | os.PathLike[str], field: str = "path") -> Iterator[Path]:
    """Hold the advisory lock of output ``path`` for the block; refuse at once if another run holds it.

    The lock is ``fcntl.flock`` on ``<path>.lock``, taken without waiting. The kernel drops it when the
    process ends, however it ends, so a lock file left by a killed run blocks nothing; the file is removed
    on release. On systems without ``fcntl`` nothing is locked.

    Parameters
    ----------
    path : str or PathLike
        The output (its directory must exist).
    field : str
        What the caller calls the path ("path", "-o"), for the message.

    Yields
    ------
    Path
        The lock file.

    Raises
    ------
    InputError
        If another run (another process, or another thread of this one) holds the lock, or the lock file
        cannot be created.
    """
    lock = lock_path(path)
    key = os.path.join(os.path.realpath(lock.parent), lock.name)
    me = threading.get_ident()
    with _HELD_GUARD:
        holder, depth = _HELD.get(key, (None, 0))
        if holder == me:
            _HELD[key] = (me, depth + 1)
    if holder == me:  # taken again by the thread that holds it: released by the outer block
        try:
            yield lock
        finally:
            with _HELD_GUARD:
                _HELD[key] = (me, _HELD[key][1] - 1)
        return
    if holder is not None:
        raise InputError(_held_message(field, path, lock))
    if fcntl is None:
        yield lock
        return
    descriptor = _acquire(lock, field, path)
    with _HELD_GUARD:
        _HELD[key] = (me, 1)
    try:
        yield lock
    finally:
        with _HELD_GUARD:
            del _HELD[key]
        with suppress(OSError):
            lock.unlink()  # while still locked: a run that opened this file finds it gone and tries again
        os.close(descriptor)


def check_unlocked(path: str | os.PathLike[str], field: str = "path") -> None:
    """Refuse ``path`` at once if another run holds its lock (for commands that write only at the end)."""
    with output_lock(path, field):
        pass


def _acquire(lock: Path, field: str, path: str | os.PathLike[str]) -> int:
    """Open and flock ``lock`` (non-blocking); the descriptor. Writes this process's id into it."""
    while True:
        try:
            descriptor = os.open(lock, os.O_RDWR | os.O_CREAT, 0o666)
        except OSError as exc:
            raise InputError(f"{field}: {str(path)!r} cannot be written, its lock file {str(lock)!r} cannot be "
                             f"created ({exc.strerror})") from None
        try:
            fcntl.flock(descriptor, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except OSError:
            os.close(descriptor)
            raise InputError(_held_message(field, path, lock)) from None
        try:
            same = os.path.samestat(os.fstat(descriptor), os.stat(lock))
        except FileNotFoundError:
            same = False
        if same:
            break
        os.close(descriptor)  # the holder removed this file as it let go: lock the file now under the name
    os.ftruncate(descriptor, 0)
    os.write(descriptor, f"{os.getpid()}\n".encode())
    return descriptor


def _held_message(field: str, path: str | os.PathLike[str], lock: Path) -> str:
    """Another run holds ``lock``: who, if its file says, and what to do."""
    try:
        pid = lock.read_text().strip()
    except OSError:
        pid = ""
    who = f"another run (process {pid})" if pid.isdigit() and int(pid) != os.getpid() else "another run"
    return (f"{field}: {str(path)!r} is being written by {who}, which holds {lock.name}; expected a file no "
            "other run is writing (wait for that run to end, or choose another file name)")
