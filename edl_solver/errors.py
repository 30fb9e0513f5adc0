"""Exceptions of edl_solver, rooted in the builtins so callers can catch them generically."""

from __future__ import annotations

import re

#: A line break with the indentation around it: what a multi-line repr (a 2-D numpy array) puts in a message.
_BREAK = re.compile(r"\s*\n\s*")


class InputError(ValueError):
    """A user input is invalid: the message names the field, the value and what was expected.

    The message is one line whatever the value's repr: its line breaks are joined by single spaces.
    """

    def __init__(self, *args: object):
        if args and isinstance(args[0], str):
            args = (_BREAK.sub(" ", args[0]), *args[1:])
        super().__init__(*args)


class ConvergenceError(RuntimeError):
    """A nonlinear solve did not converge; the message names the case and the last residual."""
