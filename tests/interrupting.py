"""Run an ``edl`` command in a child process and press Ctrl-C once it has written its first results."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _default_sigint() -> None:
    signal.signal(signal.SIGINT, signal.SIG_DFL)


def interrupt_after_first_write(arguments: list[str], partial: Path, timeout: float = 60.0) -> tuple[int, str, str]:
    """Run ``python -m edl_solver ARGUMENTS``; send SIGINT once ``partial`` exists and has changed since it
    was laid out (its first block of results is written), i.e. while the command is solving. Returns the
    exit code, stdout and stderr."""
    env = {**os.environ, "PYTHONPATH": os.pathsep.join(filter(None, [str(ROOT), os.environ.get("PYTHONPATH")]))}
    # The child gets Ctrl-C as from a terminal even when this process ignores it (a test run started in the
    # background by a non-interactive shell inherits SIGINT ignored, and Python then installs no handler).
    with subprocess.Popen([sys.executable, "-m", "edl_solver", *arguments], env=env,
                          stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                          preexec_fn=_default_sigint) as process:
        try:
            deadline = time.monotonic() + timeout
            # The partial file appears by a rename once it is laid out, and changes when the first block of
            # rows is written (reading the file while the command holds it open can fail, so its size and
            # time stamp are the signal).
            while time.monotonic() < deadline and process.poll() is None and not partial.exists():
                time.sleep(0.005)
            laid_out = partial.stat() if partial.exists() else None
            while time.monotonic() < deadline and process.poll() is None and laid_out is not None:
                now = partial.stat()
                if (now.st_size, now.st_mtime_ns) != (laid_out.st_size, laid_out.st_mtime_ns):
                    break
                time.sleep(0.005)
            assert process.poll() is None, f"the command ended before it was interrupted: {process.communicate()}"
            process.send_signal(signal.SIGINT)
            out, err = process.communicate(timeout=timeout)
        finally:
            if process.poll() is None:
                process.kill()
    return process.returncode, out, err
