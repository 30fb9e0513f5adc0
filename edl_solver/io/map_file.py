"""A validity map on disk: the map's xarray Dataset as one netCDF-4 (HDF5) file, written atomically.

The file holds the Dataset as it is (``xarray.open_dataset(path, engine="h5netcdf")`` reads it back):
dimensions (y, x) named after the map's axes, every summary variable of the sweep, the thin-layer current
and its error, ``status`` per case and, when asked, the ``boundary`` curves (of the EO flow rate and, as
``boundary_current``, of the current); the attributes carry the axes, tolerances and the base case as JSON
(``edl_solver.analysis.validity_map`` builds it). Numeric arrays of two or more dimensions are gzip-compressed
with the shuffle filter (readable everywhere, unlike lzf).

This module is given the data: it knows nothing of how a map is computed.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

from edl_solver.io.files import atomic_output

__all__ = ["write_map"]


def write_map(data: Any, path: str | os.PathLike[str]) -> Path:
    """Write a map Dataset as netCDF-4 (h5netcdf), atomically; gzip + shuffle on the numeric arrays.

    Parameters
    ----------
    data : xarray.Dataset
        The map. The encodings its variables carry from a file they were read from are cleared (they
        could clash with the compression asked here).
    path : str or PathLike
        File to create or replace; its directory must exist.

    Returns
    -------
    Path
    """
    encoding = {}
    for name, variable in data.variables.items():
        variable.encoding = {}
        if variable.dtype.kind == "f" and variable.ndim >= 2:
            encoding[name] = {"zlib": True, "complevel": 4, "shuffle": True}
    with atomic_output(path) as temporary:
        data.to_netcdf(temporary, engine="h5netcdf", encoding=encoding)
    return Path(os.fspath(path)).expanduser()
