"""Compiled (numba) arithmetic: nothing here imports anything of the package above ``constants``.

The kernels are cached in the user's cache directory, not beside these sources (``cache_locator``): the
locator is registered here, before any kernel module is imported and compiled.
"""

from edl_solver.kernels import cache_locator

cache_locator.register()
