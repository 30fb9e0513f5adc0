"""Exit codes of the ``edl`` command and the one-line error it prints.

0 success, 1 an output could not be written after the solve, 2 bad input of any kind (one line
``edl: error: ...`` on stderr, nothing written), 3 the solve did not converge, 130 interrupted.
"""

from __future__ import annotations

import sys

__all__ = ["EXIT_CONVERGENCE", "EXIT_INPUT", "EXIT_INTERRUPTED", "EXIT_OK", "EXIT_WRITE_FAILED", "fail"]

EXIT_OK = 0
EXIT_WRITE_FAILED = 1
EXIT_INPUT = 2
EXIT_CONVERGENCE = 3
EXIT_INTERRUPTED = 130


def fail(message: str, code: int) -> int:
    """Report an error as the one line ``edl: error: <message>`` on stderr; return ``code``."""
    print(f"edl: error: {' '.join(message.split())}", file=sys.stderr)
    return code
