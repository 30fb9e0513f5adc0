"""Where a sweep's results go: memory, or a netCDF-4 file written row block by row block and resumable.

A file is laid out under ``<path>.partial.new`` and renamed ``<path>.partial`` (a kill while it is laid
out never leaves a partial file that cannot be resumed); every task's values reach the disk before the
status that marks their rows done; the finished file is renamed ``<path>`` and read back.
"""

from __future__ import annotations

import json
import os
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.geometry import Geometry
from edl_solver.inputs.paths import PATH_UNITS, WORD_PATHS, Axis
from edl_solver.results.schema import CONVERGED, FAILED, PAIR_KEYS, PENDING, SUMMARY_UNITS, status_word, summary_unit
from edl_solver.sweeping import profiles as sweep_profiles

#: Long name of the ``status`` variable: the codes of ``results.schema.STATUS`` with their words
#: ("0 converged, 1 failed (see message), -1 not computed yet", as files have always said).
STATUS_MEANING = (f"{CONVERGED} {status_word(CONVERGED)}, {FAILED} {status_word(FAILED)} (see message), "
                  f"{PENDING} not computed yet")


def _summary_layout(geometry: Geometry) -> dict[str, tuple[str, str]]:
    """Units and long names of every summary key for this geometry."""
    return {key: (summary_unit(key, geometry), text) for key, (_, text) in SUMMARY_UNITS.items()}


def check_resumable(partial: Path, spec_json: str) -> None:
    """Refuse a .partial file of another sweep or one that cannot be read, opening it read-only."""
    import h5py

    try:
        with h5py.File(partial, "r") as handle:
            found = handle.attrs.get("sweep_json")
            status = handle.get("status")
            ok = status is not None
    except OSError:
        raise InputError(f"resume: {partial} cannot be read (damaged), expected a partial sweep file; delete it "
                         "to start afresh") from None
    if isinstance(found, bytes):
        found = found.decode()
    if found != spec_json or not ok:
        raise InputError(f"resume: {partial} belongs to a different sweep, expected the same base case and axes "
                         "(delete it to start afresh)")


def rows_todo(status: np.ndarray) -> list[int]:
    """Rows (lines along the last axis) with a case still PENDING, in order."""
    flat = status.reshape(-1, status.shape[-1])
    return [int(i) for i in np.nonzero(np.any(flat == PENDING, axis=1))[0]]


class SweepStore:
    """The sweep's results: in memory, or streamed row by row to a netCDF-4 file (h5netcdf)."""

    def __init__(self, spec: dict[str, Any], axes: Sequence[Axis], geometry: Geometry, pair: bool,
                 path: Path | None, resume: bool, ions: Sequence[str] = (), profile_points: int = 0):
        self.axes, self.spec, self.geometry, self.pair = axes, spec, geometry, pair
        self.shape = tuple(axis.size for axis in axes)
        self.layout = _summary_layout(geometry)
        self.ions, self.profile_points = tuple(ions), profile_points
        self.profile_names = [sweep_profiles.variable_name(f) for f in sweep_profiles.PROFILE_FIELDS] \
            if profile_points else []
        self.path = path
        self.file = None
        if path is None:
            self.status = np.full(self.shape, PENDING, dtype=np.int8)
            self.message = np.full(self.shape, "", dtype=object)
            self.values = {key: np.full((*self.shape, 2), np.nan) for key in self.layout}
            if profile_points:
                self.values.update(sweep_profiles.empty(self.shape, len(self.ions), profile_points))
            return
        partial = path.with_name(path.name + ".partial")
        if resume and partial.exists():
            check_resumable(partial, json.dumps(spec, sort_keys=True))
            self._open(partial, "a")
        else:
            if not path.parent.is_dir():
                raise InputError(f"output: {str(path)!r} is in a folder that does not exist")
            # Lay the file out under a third name and rename it: a kill while the layout is written never
            # leaves a .partial that cannot be resumed.
            fresh = path.with_name(path.name + ".partial.new")
            self._open(fresh, "w")
            self._create()
            self.abandon()
            os.replace(fresh, partial)
            self._open(partial, "a")
        self.partial = partial
        self.status = self.file.variables["status"][...]

    def _open(self, partial: Path, mode: str) -> None:
        import h5netcdf
        import h5py

        # h5netcdf's flush() does not flush the HDF5 file; its h5py handle is kept to flush every row to
        # disk, so that a killed sweep leaves a readable file (track_order as h5netcdf sets it).
        # A chunk cache of 1 MiB per variable (~128 chunks): HDF5 2.0's default kept every chunk a sweep wrote
        # in memory (RSS grew by the file's size); a sweep writes each chunk once, in order.
        self.h5 = h5py.File(partial, mode, track_order=True, rdcc_nbytes=CHUNK_CACHE_BYTES)
        self.file = h5netcdf.File(self.h5, mode)
        self._datasets: dict[str, Any] = {}  # h5py handles by name: looking one up costs ~50 us
        self._uncommitted: list[tuple[Any, np.ndarray]] = []  # (where, status) of rows written, not yet marked

    def _dataset(self, name: str) -> Any:
        if name not in self._datasets:
            self._datasets[name] = self.h5[name]
        return self._datasets[name]

    def _create(self) -> None:
        import h5py

        from edl_solver import __version__

        f = self.file
        text = h5py.string_dtype()
        dims = tuple(axis.name for axis in self.axes)
        f.dimensions = {axis.name: axis.size for axis in self.axes}
        if self.pair:  # as in memory: a wall dimension only when some values are (bottom, top) pairs
            f.dimensions["wall"] = 2
        for axis in self.axes:
            for path, values in zip(axis.paths, axis.values):
                data = np.array(values, dtype=object if path in WORD_PATHS else float)
                var = f.create_variable(path, (axis.name,), text if path in WORD_PATHS else float, data=data)
                var.attrs["units"] = PATH_UNITS.get(path, "1")
                var.attrs["long_name"] = f"swept input {path}"
        if self.pair:
            f.create_variable("wall", ("wall",), text, data=np.array(self.geometry.wall_names, dtype=object))
        # Zipped paths other than the first are coordinates too (CF "coordinates"), not data variables.
        extra = [path for axis in self.axes for path in axis.paths[1:]]
        if extra:
            f.attrs["coordinates"] = " ".join(extra)
        chunks = _chunks(self.shape, 1024 if self.profile_points else CHUNK_CASES)
        # No _FillValue: xarray would mask -1 and open status as float; every entry is written below.
        status = f.create_variable("status", dims, np.int8, chunks=chunks)
        status[...] = np.full(self.shape, PENDING, dtype=np.int8)
        status.attrs["long_name"] = STATUS_MEANING
        status.attrs["units"] = "1"
        msg = f.create_variable("message", dims, text, chunks=chunks)
        msg.attrs["long_name"] = "why a case failed (empty when it converged)"
        for key, (unit, text) in self.layout.items():
            var_dims = (*dims, "wall") if key in PAIR_KEYS and self.pair else dims
            # uncompressed: gzip shrank these floats by only ~30 % and cost ~40 % of the sweep's writing time
            var = f.create_variable(key, var_dims, float, fillvalue=np.nan,
                                    chunks=(*chunks, 2) if len(var_dims) > len(dims) else chunks)
            var.attrs["units"] = unit
            var.attrs["long_name"] = text
        if self.profile_points:
            self._create_profiles(dims, chunks)
        f.attrs["sweep_json"] = json.dumps(self.spec, sort_keys=True)
        f.attrs["schema_version"] = "1"
        f.attrs["edl_solver_version"] = __version__
        f.attrs["title"] = "edl_solver sweep"
        f.flush()
        self.h5.flush()

    def _create_profiles(self, dims: tuple[str, ...], chunks: tuple[int, ...]) -> None:
        """The profile variables and their position and ion coordinates."""
        import h5py

        f, points = self.file, self.profile_points
        f.dimensions[sweep_profiles.POSITION] = points
        f.dimensions[sweep_profiles.ION] = len(self.ions)
        position = f.create_variable(sweep_profiles.POSITION, (sweep_profiles.POSITION,), float,
                                     data=sweep_profiles.positions(points))
        position.attrs["units"] = "1"
        position.attrs["long_name"] = self.geometry.coordinate_text
        f.create_variable(sweep_profiles.ION, (sweep_profiles.ION,), h5py.string_dtype(),
                          data=np.array(self.ions, dtype=object))
        for field in sweep_profiles.PROFILE_FIELDS:
            per_ion = field in sweep_profiles.PER_ION
            extra = (sweep_profiles.ION, sweep_profiles.POSITION) if per_ion else (sweep_profiles.POSITION,)
            sizes = (len(self.ions), points) if per_ion else (points,)
            var = f.create_variable(sweep_profiles.variable_name(field), (*dims, *extra), float, fillvalue=np.nan,
                                    chunks=(*chunks, *sizes))
            var.attrs["units"] = sweep_profiles.unit(field)
            var.attrs["long_name"] = sweep_profiles.long_name(field)

    def write(self, part: dict[str, Any], commit: bool = True) -> None:
        """Store one task's results; to a file, its values are written now and its rows marked done at the
        next ``commit`` (at once with ``commit=True``)."""
        rows = part["rows"]
        if self.file is None:
            for r, row in enumerate(rows):
                lead = self._lead(row)
                self.status[lead] = part["status"][r]
                self.message[lead] = part["message"][r]
                for key in (*self.layout, *self.profile_names):
                    self.values[key][lead] = part[key][r]
            return
        # Rows that follow each other along the last leading axis form one block: one write per variable
        # and block through h5py (row-by-row writes through h5netcdf cost ~25 ms a row).
        start = 0
        while start < len(rows):
            stop = start + 1
            while (stop < len(rows) and rows[stop] == rows[stop - 1] + 1
                   and (len(self.shape) < 2 or rows[stop] % self.shape[-2] != 0)):
                stop += 1
            where, pick = self._block(part, start, stop)
            self._write_values(part, where, pick)
            self._uncommitted.append((where, part["status"][pick]))
            start = stop
        if commit:
            self.commit()

    def commit(self) -> None:
        """Mark the rows written since the last commit done, in two steps: their values reach the disk before
        the status that marks them done, since HDF5 may write its cached chunks in any order and a killed
        sweep must never keep a row marked done whose values were lost. Two flushes (~6 ms each) per commit:
        a sweep commits about twice a second rather than after every task."""
        if self.file is None or not self._uncommitted:
            return
        self.h5.flush()
        for where, status in self._uncommitted:
            self._dataset("status")[where] = status
            self.status[where] = status
        self.h5.flush()
        self._uncommitted = []

    def _lead(self, row: int) -> tuple[int, ...]:
        return tuple(int(i) for i in np.unravel_index(row, self.shape[:-1])) if len(self.shape) > 1 else ()

    def _block(self, part: dict[str, Any], start: int, stop: int) -> tuple[tuple[Any, ...], Any]:
        """Where in the file rows part["rows"][start:stop] (consecutive along the last leading axis) go, and
        which of the part's rows they are."""
        first = self._lead(part["rows"][start])
        where = (*first[:-1], slice(first[-1], first[-1] + stop - start)) if first else ()
        return where, (slice(start, stop) if first else start)

    def _write_values(self, part: dict[str, Any], where: tuple[Any, ...], pick: Any) -> None:
        for key in self.layout:
            dataset = self._dataset(key)
            block = part[key][pick]
            dataset[where] = block if dataset.ndim > len(self.shape) else block[..., 0]
        for key in self.profile_names:
            self._dataset(key)[where] = part[key][pick]
        messages = np.array(part["message"][pick], dtype=object)
        if any(messages.ravel()):  # an unwritten entry reads as "": only failed cases carry a message
            self._dataset("message")[where] = messages

    def finish(self) -> Any:
        """The sweep as an xarray Dataset; a file is completed (renamed from .partial) and read back."""
        import xarray as xr

        if self.file is not None:
            self.commit()
            lazy = self._value_bytes() > LOAD_LIMIT_BYTES
            if not lazy:
                status, message, values, attrs = self._read_back()
            self.abandon()  # closes the file
            os.replace(self.partial, self.path)
            if lazy:
                return xr.open_dataset(self.path, engine="h5netcdf")  # values read on access: memory stays flat
        else:
            status, message, attrs = self.status, self.message.astype(str), {"title": "edl_solver sweep"}
            values = {key: value if (key in PAIR_KEYS and self.pair) or key in self.profile_names else value[..., 0]
                      for key, value in self.values.items()}
        dims = tuple(axis.name for axis in self.axes)
        coords: dict[str, Any] = {}
        for axis in self.axes:
            for path, axis_values in zip(axis.paths, axis.values):
                coords[path] = ((axis.name,), np.array(axis_values), {"units": PATH_UNITS.get(path, "1"),
                                                                       "long_name": f"swept input {path}"})
        data: dict[str, Any] = {
            "status": (dims, status, {"units": "1", "long_name": STATUS_MEANING}),
            "message": (dims, message, {"long_name": "why a case failed (empty when it converged)"}),
        }
        if self.pair:
            coords["wall"] = (("wall",), np.array(self.geometry.wall_names))
        for key, (unit, text) in self.layout.items():
            key_dims = (*dims, "wall") if key in PAIR_KEYS and self.pair else dims
            data[key] = (key_dims, values[key], {"units": unit, "long_name": text})
        if self.profile_points:
            self._profile_data(dims, values, coords, data)
        return xr.Dataset(data, coords=coords, attrs=attrs)

    def _profile_data(self, dims: tuple[str, ...], values: dict[str, np.ndarray], coords: dict[str, Any],
                      data: dict[str, Any]) -> None:
        """The profile variables and their coordinates, as the file holds them."""
        position, ion = sweep_profiles.POSITION, sweep_profiles.ION
        coords[position] = ((position,), sweep_profiles.positions(self.profile_points),
                            {"units": "1", "long_name": self.geometry.coordinate_text})
        coords[ion] = ((ion,), np.array(self.ions))
        for field in sweep_profiles.PROFILE_FIELDS:
            name = sweep_profiles.variable_name(field)
            extra = (ion, position) if field in sweep_profiles.PER_ION else (position,)
            data[name] = ((*dims, *extra), values[name], {"units": sweep_profiles.unit(field),
                                                          "long_name": sweep_profiles.long_name(field)})

    def _value_bytes(self) -> int:
        """Bytes of the sweep's values (summary and profiles) in memory."""
        columns = sum(2 if key in PAIR_KEYS and self.pair else 1 for key in SUMMARY_UNITS)
        if self.profile_points:
            per_position = len(sweep_profiles.PROFILE_FIELDS) - len(sweep_profiles.PER_ION) \
                + len(sweep_profiles.PER_ION) * len(self.ions)
            columns += per_position * self.profile_points
        return int(np.prod(self.shape)) * columns * 8

    def _read_back(self) -> tuple[np.ndarray, np.ndarray, dict[str, np.ndarray], dict[str, Any]]:
        """Status, messages, values and global attributes from the file, through h5py (reading it through
        xarray costs ~5 ms per variable in metadata alone)."""
        h5 = self.h5
        values = {key: h5[key][...] for key in (*self.layout, *self.profile_names)}
        message = h5["message"].asstr()[...].astype(str)
        attrs = {name: h5.attrs[name] for name in ("title", "sweep_json", "schema_version", "edl_solver_version")}
        return h5["status"][...], message, values, attrs

    def abandon(self) -> None:
        if self.file is not None:
            self.file.close()
            self.h5.close()


#: HDF5 chunk cache of each variable of a sweep file being written.
CHUNK_CACHE_BYTES = 2**20

#: Cases per chunk of a variable in a sweep file (HDF5 stores variables chunk by chunk: ~8 kB chunks of
#: floats; common practice is 10 kB-1 MB), in whole rows.
CHUNK_CASES = 1024


def _chunks(shape: tuple[int, ...], cases: int) -> tuple[int, ...]:
    """Chunk shape: whole rows (lines along the last axis, the unit of work), as many as make about
    ``cases`` cases."""
    chunks = [shape[-1]]
    room = max(1, cases // shape[-1])
    for size in reversed(shape[:-1]):
        take = max(1, min(size, room))
        chunks.append(take)
        room = max(1, room // take)
    return tuple(reversed(chunks))


#: A sweep streamed to a file returns its Dataset loaded into memory up to this size of its values, and
#: opened lazily from the file beyond it (values read on access), so that memory stays flat.
LOAD_LIMIT_BYTES = 256 * 2**20
