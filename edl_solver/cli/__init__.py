"""The ``edl`` command: ``main(argv)`` parses the command line and runs one command."""

from edl_solver.cli.app import main

__all__ = ["main"]
