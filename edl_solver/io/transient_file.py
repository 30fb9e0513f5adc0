"""A transient run on disk: the run's xarray Dataset (``edl.transient``) as one netCDF-4 (HDF5) file, written
atomically; ``xarray.open_dataset(path, engine="h5netcdf")`` opens it as it is.

Layout: the Dataset in the root group, unchanged (dimensions ``time``, and ``wall``, ``ion``, ``x`` where the
run has them, as netCDF dimension scales; every variable with its ``units``), its attributes (``case_json``,
``before_json``, ``drives_json``: the case after the step, the case before it and the time-dependent drives, as
JSON text), and two attributes of the file's own: ``file_kind`` = "edl_solver transient run" (what
:func:`read_transient` checks) and ``transient_schema_version``. Numeric arrays of two or more dimensions (the
profiles) are gzip-compressed with the shuffle filter. :func:`read_transient` gives back the Dataset that was
written, the two markers removed.

This module is given the run: it knows nothing of how a run is computed.
"""

from __future__ import annotations

import os
from numbers import Number
from pathlib import Path
from typing import Any

from edl_solver.errors import InputError
from edl_solver.io.files import atomic_output, checked_input_path

__all__ = ["FILE_KIND", "TRANSIENT_SCHEMA_VERSION", "read_transient", "write_transient"]

#: The value of the ``file_kind`` attribute of a transient run file.
FILE_KIND = "edl_solver transient run"
#: Version of the layout; bump it when a reader of the old layout would misread the new one.
TRANSIENT_SCHEMA_VERSION = "1"
_MARKERS = ("file_kind", "transient_schema_version")
_EXPECTED = "a transient run file written by 'edl transient -o' or edl_solver.io.transient_file.write_transient"


def _checked_run(run: Any) -> Any:
    """``run`` checked to be a Dataset on ``time`` whose attributes netCDF can hold; a copy without encodings."""
    import numpy as np
    import xarray as xr

    if not isinstance(run, xr.Dataset):
        raise InputError(f"run: {type(run).__name__} is not an xarray.Dataset, expected the return of edl.transient")
    if "time" not in run.coords:
        raise InputError("run: has no 'time' coordinate, expected the return of edl.transient")
    for name, value in run.attrs.items():
        plain = isinstance(value, (str, Number, np.number)) and not isinstance(value, (bool, np.bool_))
        if not plain and not (isinstance(value, np.ndarray) and value.dtype.kind in "iuf"):
            raise InputError(f"run.attrs[{name!r}]: {value!r} cannot be stored, expected text or numbers")
    for name in _MARKERS:
        if name in run.attrs:
            raise InputError(f"run.attrs[{name!r}]: is reserved for the file's own marker, expected another name")
    copy = run.copy(deep=False)
    for variable in copy.variables.values():
        variable.encoding = {}  # encodings carried from a file read earlier could clash
    return copy


def write_transient(run: Any, path: str | os.PathLike[str]) -> Path:
    """Write a transient run as netCDF-4 (h5netcdf), atomically: the file is complete or not there at all.

    Parameters
    ----------
    run : xarray.Dataset
        The return of ``edl.transient`` (any subset of its variables).
    path : str or PathLike
        File to create or replace whole; its directory must exist. An existing file is replaced only by a
        complete one.

    Returns
    -------
    Path

    Raises
    ------
    InputError
        ``run`` is not a Dataset on ``time``, has an attribute netCDF cannot hold, or ``path`` cannot be written.
    """
    data = _checked_run(run)
    data.attrs = {**data.attrs, "file_kind": FILE_KIND, "transient_schema_version": TRANSIENT_SCHEMA_VERSION}
    encoding = {name: {"zlib": True, "complevel": 4, "shuffle": True} for name, variable in data.data_vars.items()
                if variable.dtype.kind == "f" and variable.ndim >= 2}
    with atomic_output(path) as temporary:
        data.to_netcdf(temporary, engine="h5netcdf", encoding=encoding)
    return Path(os.fspath(path)).expanduser()


def read_transient(path: str | os.PathLike[str]) -> Any:
    """The run Dataset of a file written by :func:`write_transient`, loaded into memory (the file is closed).

    Raises
    ------
    InputError
        ``path`` does not exist, is not an HDF5 file, or is not a transient run file (another edl_solver file,
        or a newer layout).
    """
    import xarray as xr

    source = checked_input_path(path, _EXPECTED)
    try:
        with xr.open_dataset(source, engine="h5netcdf", decode_timedelta=False) as opened:
            data = opened.load()
    except (OSError, ValueError) as exc:
        raise InputError(f"path: {str(path)!r} cannot be read ({' '.join(str(exc).split())}), "
                         f"expected {_EXPECTED}") from None
    kind, version = data.attrs.get("file_kind"), data.attrs.get("transient_schema_version")
    if kind != FILE_KIND:
        raise InputError(f"path: {str(path)!r} is not a transient run file (file_kind {kind!r}), expected {_EXPECTED}")
    if version != TRANSIENT_SCHEMA_VERSION:
        raise InputError(f"path: {str(path)!r} has transient layout version {version!r}, expected version "
                         f"{TRANSIENT_SCHEMA_VERSION} (written by another edl_solver version)")
    data.attrs = {key: value for key, value in data.attrs.items() if key not in _MARKERS}
    for variable in data.variables.values():
        variable.encoding = {}
    return data
