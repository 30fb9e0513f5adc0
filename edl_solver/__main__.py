"""``python -m edl_solver``: the ``edl`` command without the installed console script."""

from __future__ import annotations

import sys

from edl_solver.cli import main

if __name__ == "__main__":
    sys.exit(main())
