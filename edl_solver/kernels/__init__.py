"""Compiled (numba) arithmetic: nothing here imports anything of the package above ``constants``."""
