"""Exceptions of edl_solver, rooted in the builtins so callers can catch them generically."""

from __future__ import annotations


class InputError(ValueError):
    """A user input is invalid: the message names the field, the value and what was expected."""


class ConvergenceError(RuntimeError):
    """A nonlinear solve did not converge; the message names the case and the last residual."""
