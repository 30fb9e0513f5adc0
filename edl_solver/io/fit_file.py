"""A fit on disk: its xarray Dataset (``edl_solver.analysis.fit_record``) as the HDF5 group "fit" of a netCDF-4
file, written atomically; ``xarray.open_dataset(path, engine="h5netcdf", group="fit")`` reads it back.

This module is given the data: it knows nothing of how a fit is made.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

from edl_solver.io.files import atomic_output

__all__ = ["FIT_GROUP", "read_fit", "write_fit"]

#: The HDF5 group of the fit.
FIT_GROUP = "fit"


def write_fit(data: Any, path: str | os.PathLike[str]) -> Path:
    """Write a fit Dataset into the group "fit" of a new netCDF-4 file (h5netcdf), atomically.

    Parameters
    ----------
    data : xarray.Dataset
        The fit (``edl_solver.analysis.fit_record.fit_dataset``).
    path : str or PathLike
        File to create or replace whole; its directory must exist.

    Returns
    -------
    Path
    """
    for variable in data.variables.values():
        variable.encoding = {}  # encodings carried from a file read earlier could clash
    with atomic_output(path) as temporary:
        data.to_netcdf(temporary, engine="h5netcdf", group=FIT_GROUP)
    return Path(os.fspath(path)).expanduser()


def read_fit(path: str | os.PathLike[str]) -> Any:
    """The fit Dataset of a file written by :func:`write_fit`, loaded into memory (the file is closed)."""
    import xarray as xr

    from edl_solver.io.files import checked_input_path

    source = checked_input_path(path, "a fit file written by 'edl fit -o'")
    with xr.open_dataset(source, engine="h5netcdf", group=FIT_GROUP) as data:
        return data.load()
