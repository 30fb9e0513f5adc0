"""Design-space sweeps: many cases from a base case and axes over its inputs, into one xarray Dataset.

An axis is a dotted path of a case input (the keys of a TOML case file, ``casefile.CASE_KEYS``: e.g.
"geometry.height", "wall.zeta", "wall.top.charge_density", "solvent.temperature", "field") plus the
special path "electrolyte.concentration", which scales every ion's bulk concentration so that the first
ion's equals the value (the salt concentration for a single salt listed cation first). The cases are the
cartesian product of the axes in the given order; axes can also be zipped (varied together along one
dimension, named after the first of them).

Each case is solved exactly as ``edl_solver.solve`` solves it, so a sweep's values equal single solves.
A case that does not converge is marked (``status`` 1 and its ``message``) and the sweep carries on.
With a ``path`` the results stream to disk row by row (a row is one line along the last axis): the file
is built under ``<path>.partial`` and renamed when complete, so a killed sweep keeps what it finished and
``resume=True`` finishes it, with a result identical to an uninterrupted run.
"""

from __future__ import annotations

import difflib
import json
import os
import signal
import threading
from collections.abc import Iterable, Iterator, Mapping, Sequence
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver import sweep_profiles
from edl_solver.case import Capillary, Case
from edl_solver.errors import ConvergenceError, InputError
from edl_solver.result import SUMMARY_UNITS, summary_unit
from edl_solver.sweep_plan import SweepPlan, make_plan

#: Status codes stored per case.
PENDING, CONVERGED, FAILED = -1, 0, 1
STATUS_MEANING = "0 converged, 1 failed (see message), -1 not computed yet"

#: Paths that are not keys of a case file but are understood by sweeps.
SPECIAL_PATHS = ("electrolyte.concentration",)

_WALL_UNITS = {"zeta": "V", "charge_density": "C/m^2", "slip_length": "m", "stern_capacitance": "F/m^2",
               "gate_voltage": "V", "gate_capacitance": "F/m^2"}
_SITE_UNITS = {"pK": "dimensionless", "density": "1/m^2"}

#: SI unit of each sweepable path (for parsing values with units and for the file's attributes). Walls:
#: "wall.<key>" sets every wall, "wall.bottom.<key>" / "wall.top.<key>" one slit wall; sites as
#: "wall.site[0].pK" (first kind of site; "wall.top.site[0].density" and so on).
PATH_UNITS = {
    "geometry.height": "m", "geometry.radius": "m",
    "electrolyte.concentration": "mol/m^3", "electrolyte.pH": "dimensionless",
    **{f"wall.{key}": unit for key, unit in _WALL_UNITS.items()},
    **{f"wall.{side}.{key}": unit for side in ("bottom", "top") for key, unit in _WALL_UNITS.items()},
    **{f"wall.site[{j}].{key}": unit for j in range(4) for key, unit in _SITE_UNITS.items()},
    **{f"wall.{side}.site[{j}].{key}": unit for side in ("bottom", "top") for j in range(4)
       for key, unit in _SITE_UNITS.items()},
    "solvent.temperature": "K", "solvent.relative_permittivity": "dimensionless", "solvent.viscosity": "Pa*s",
    "solvent.viscoelectric_coefficient": "m^2/V^2",
    "field": "V/m", "pressure_gradient": "Pa/m", "tolerance": "dimensionless",
    "numerics.accuracy": "dimensionless",
}
#: Paths whose values are words, not numbers.
WORD_PATHS = ("model",)
#: Keys of a wall table that set its electrical condition (a fixed zeta excludes the others).
_CHARGE_KEYS = ("charge_density", "site", "stern_capacitance", "gate_voltage", "gate_capacitance")


@dataclass(frozen=True)
class Axis:
    """One dimension of a sweep: its name (the first path) and the paths varied along it."""

    name: str
    paths: tuple[str, ...]
    values: tuple[tuple[Any, ...], ...]  # per path, its values (same length for zipped paths)

    @property
    def size(self) -> int:
        return len(self.values[0])


def _check_path(path: str) -> str:
    known = tuple(PATH_UNITS) + WORD_PATHS
    if path not in known:
        close = difflib.get_close_matches(path, known, n=1, cutoff=0.6)
        hint = f" (did you mean {close[0]!r}?)" if close else f" (sweepable inputs: {', '.join(known)})"
        raise InputError(f"axes: {path!r} is not a sweepable input{hint}")
    return path


def _axis_values(path: str, values: Any) -> tuple[Any, ...]:
    """The values of one axis as SI floats (or words), checked."""
    from edl_solver.units import to_si

    if isinstance(values, (str, bytes)) or not isinstance(values, Iterable):
        raise InputError(f"axes.{path}: {values!r} is not a list of values, expected a sequence")
    items = list(values)
    if not items:
        raise InputError(f"axes.{path}: the list of values is empty, expected at least one value")
    if path in WORD_PATHS:
        return tuple(str(v) for v in items)
    return tuple(to_si(v, PATH_UNITS[path], f"axes.{path}") for v in items)


def check_conflicts(axes: Iterable[str], where: str = "axes") -> None:
    """Reject two axes of which the later would overwrite the other's input (the sweep applies the axes
    in order, so one of them would silently have no effect)."""
    paths = list(axes)
    for i, first in enumerate(paths):
        for second in paths[i + 1:]:
            if {first, second} == {"geometry.height", "geometry.radius"}:
                raise InputError(f'{where}: "{first}" and "{second}" are two geometries, expected one of them')
            if first.startswith("wall.") and second.startswith("wall.") and _walls_clash(first, second):
                raise InputError(f'{where}: "{first}" and "{second}" both set the same input, expected one '
                                 f"of them{_other_wall_hint(first, second)}")


def _wall_scope(path: str) -> tuple[str, str]:
    """("bottom" | "top" | "every", the key within the wall) of a "wall..." path."""
    rest = path[len("wall."):]
    side, _, key = rest.partition(".")
    return (side, key) if side in ("bottom", "top") else ("every", rest)


def _walls_clash(first: str, second: str) -> bool:
    (scope1, key1), (scope2, key2) = _wall_scope(first), _wall_scope(second)
    if scope1 != scope2 and "every" not in (scope1, scope2):
        return False  # the two walls of a slit are independent
    kinds = {key.split("[")[0].split(".")[0] for key in (key1, key2)}
    return key1 == key2 or ("zeta" in kinds and bool(kinds & set(_CHARGE_KEYS)))


def _other_wall_hint(first: str, second: str) -> str:
    """For every wall against one wall: how to vary the other wall instead."""
    scopes = {_wall_scope(first)[0]: first, _wall_scope(second)[0]: second}
    if "every" not in scopes or len(scopes) != 2:
        return ""
    side = next(scope for scope in scopes if scope != "every")
    other = "bottom" if side == "top" else "top"
    return f" (vary the {other} wall with 'wall.{other}.{_wall_scope(scopes['every'])[1]}')"


def make_axes(axes: Mapping[str, Any], zipped: Sequence[Sequence[str]] = ()) -> tuple[Axis, ...]:
    """Axes in the given order; paths named together in ``zipped`` share one dimension.

    Raises
    ------
    InputError
        Unknown path, empty or non-list values, zipped paths of different lengths or not in ``axes``.
    """
    if not isinstance(axes, Mapping) or not axes:
        raise InputError(f"axes: {axes!r} is not a mapping of input paths to values, expected e.g. "
                         "{'geometry.height': [...]}")
    values = {_check_path(path): _axis_values(path, v) for path, v in axes.items()}
    check_conflicts(values)
    group_of: dict[str, tuple[str, ...]] = {}
    for group in zipped:
        group = tuple(group)
        for path in group:
            if path not in values:
                raise InputError(f"zip: {path!r} is not one of the axes, expected one of {', '.join(values)}")
            if path in group_of:
                raise InputError(f"zip: {path!r} is zipped twice, expected each axis in at most one group")
            group_of[path] = group
        lengths = {len(values[p]) for p in group}
        if len(lengths) > 1:
            shown = ", ".join(f"{p} has {len(values[p])}" for p in group)
            raise InputError(f"zip: zipped axes must have equal lengths, but {shown}")
    result, seen = [], set()
    for path in values:
        if path in seen:
            continue
        group = group_of.get(path, (path,))
        seen.update(group)
        result.append(Axis(name=group[0], paths=group, values=tuple(values[p] for p in group)))
    return tuple(result)


def _set_wall(wall: dict[str, Any], key: str, value: Any) -> None:
    """Set one key of a wall table; a fixed zeta and the charge keys exclude each other."""
    if key == "zeta":
        for other in _CHARGE_KEYS:
            wall.pop(other, None)
    elif key in ("charge_density", "stern_capacitance", "gate_voltage", "gate_capacitance"):
        wall.pop("zeta", None)
    if key.startswith("site["):
        index, leaf = int(key[5:key.index("]")]), key.split(".")[-1]
        sites = wall.get("site", [])
        if index >= len(sites):
            raise InputError(f"axes: wall.{key} names site {index}, but the wall has {len(sites)} kind(s) of site")
        sites[index][leaf] = value
        return
    wall[key] = value


def _set_path(table: dict[str, Any], path: str, value: Any) -> None:
    """Set one input in the plain-dict form of a case (``io.case_to_dict``)."""
    electrolyte = table["electrolyte"]
    if path in ("electrolyte.concentration", "electrolyte.pH") and any(
            ion["name"] in ("H+", "OH-") for ion in electrolyte["ions"]):
        raise InputError(f"axes: {path!r} cannot be swept when H+ or OH- are among the ions, expected the pH given "
                         "on its own (Electrolyte(..., pH=...) without water_ions)")
    if path == "electrolyte.concentration":
        ions = electrolyte["ions"]
        factor = value / ions[0]["concentration"]
        for ion in ions:
            ion["concentration"] *= factor
        return
    if path.startswith("wall."):
        rest = path[len("wall."):]
        wall = table["wall"]
        paired = "bottom" in wall
        side = rest.split(".")[0]
        if side in ("bottom", "top"):
            if not paired:  # one condition for both walls becomes a pair
                table["wall"] = wall = {"bottom": wall, "top": json.loads(json.dumps(wall))}
            _set_wall(wall[side], rest[len(side) + 1:], value)
        else:
            for one in ([wall["bottom"], wall["top"]] if paired else [wall]):
                _set_wall(one, rest, value)
        return
    if path == "solvent.temperature" and table["solvent"].get("name") == "water":
        # water's permittivity and viscosity follow the temperature (its correlations)
        coefficient = table["solvent"].get("viscoelectric_coefficient")
        table["solvent"] = {"temperature": value, "name": "water"}
        if coefficient:
            table["solvent"]["viscoelectric_coefficient"] = coefficient
        return
    node = table
    *parents, leaf = path.split(".")
    for key in parents:
        node = node[key]
    node[leaf] = value


def case_at(base_table: Mapping[str, Any], axes: Sequence[Axis], index: Sequence[int]) -> Case:
    """The case at one multi-index of the sweep."""
    from edl_solver.casefile import case_from_mapping

    table = json.loads(json.dumps(base_table))  # a deep copy of plain data
    for axis, i in zip(axes, index):
        for path, values in zip(axis.paths, axis.values):
            _set_path(table, path, values[i])
    return case_from_mapping(table)


def _summary_layout(capillary: bool) -> dict[str, tuple[str, str]]:
    """Units and long names of every summary key for this geometry."""
    return {key: (summary_unit(key, capillary), text) for key, (_, text) in SUMMARY_UNITS.items()}


def solve_rows(base_table: Mapping[str, Any], axes: Sequence[Axis], rows: Sequence[int],
               plan: SweepPlan | None = None, profile_points: int = 0) -> dict[str, Any]:
    """Solve the cases of some rows (lines along the last axis); a module-level function so that worker
    processes and Dask workers can run it.

    With a ``plan`` the cases are packed from it and solved in one compiled batch (``_batch.solve_cases``,
    the same compiled steps as ``edl_solver.solve``); cases the batch cannot finish (no convergence from the
    start guess, an invalid combination of inputs) and every case without a plan go through
    ``edl_solver.solve`` one by one, which also words the reason of a failure. With ``profile_points``
    every case goes through ``edl_solver.solve`` and its profiles are sampled at that many positions
    (``sweep_profiles``).

    Returns
    -------
    dict
        ``rows`` and, per summary key, an array (rows, last axis[, 2]); ``status`` and ``message``; with
        profiles, per profile variable an array (rows, last axis[, ion], position).
    """
    shape = tuple(axis.size for axis in axes)
    last = shape[-1]
    out: dict[str, Any] = {"rows": list(rows), "status": np.full((len(rows), last), FAILED, dtype=np.int8),
                           "message": [["" for _ in range(last)] for _ in rows]}
    values = {key: np.full((len(rows), last, 2), np.nan) for key in SUMMARY_UNITS}
    if profile_points:
        n_ions = len(base_table["electrolyte"]["ions"])
        values.update(sweep_profiles.empty((len(rows), last), n_ions, profile_points))
    points = (np.asarray(rows, dtype=np.int64)[:, None] * last + np.arange(last)).ravel()
    one_by_one = np.ones(points.size, dtype=bool)
    if plan is not None and not profile_points:
        _stop_if_asked()
        one_by_one = _solve_batch(plan, points, values, out["status"])
    for flat in np.nonzero(one_by_one)[0].tolist():
        _stop_if_asked()
        r, j = divmod(flat, last)
        _solve_one(base_table, axes, np.unravel_index(int(points[flat]), shape), values, out, r, j, profile_points)
    out.update(values)
    return out


def _solve_batch(plan: SweepPlan, points: np.ndarray, values: dict[str, np.ndarray], status: np.ndarray
                 ) -> np.ndarray:
    """Solve the valid points in one compiled batch, filling ``values`` and ``status`` (rows, last axis);
    returns which points are left to the case-by-case path."""
    from edl_solver import _batch, _summary

    vectors, valid = plan.vectors(points)
    chosen = np.nonzero(valid)[0]
    summaries = np.full((chosen.size, _summary.SUMMARY_SIZE), np.nan)
    codes = np.empty(chosen.size, dtype=np.int64)
    iterations = np.empty(chosen.size, dtype=np.int64)
    _batch.solve_cases(np.ascontiguousarray(vectors[chosen]), summaries, codes, iterations)
    done = chosen[codes == _batch.CONVERGED]
    finished = summaries[codes == _batch.CONVERGED]
    last = status.shape[1]
    r, j = np.divmod(done, last)
    status[r, j] = CONVERGED
    for key, at in _summary.SLOTS.items():
        pair = key in _summary.PAIR_KEYS
        values[key][r, j, 0] = finished[:, at]
        values[key][r, j, 1] = finished[:, at + 1] if pair else finished[:, at]
    left = np.ones(points.size, dtype=bool)
    left[done] = False
    return left


def _solve_one(base_table: Mapping[str, Any], axes: Sequence[Axis], index: tuple[int, ...],
               values: dict[str, np.ndarray], out: dict[str, Any], r: int, j: int, profile_points: int = 0) -> None:
    """Solve one point with ``edl_solver.solve`` (and sample its profiles); a failure is recorded with its
    reason."""
    from edl_solver.solver import solve

    try:
        result = solve(case_at(base_table, axes, index))
    except (ConvergenceError, InputError) as error:
        out["message"][r][j] = str(error)
        return
    except Exception as error:  # one broken case must not stop a long sweep: record it and go on
        out["message"][r][j] = f"unexpected {type(error).__name__}: {error}"
        return
    out["status"][r, j] = CONVERGED
    for key, value in result.summary.items():
        if key in values:  # a key some cases lack (stern_potential without a Stern layer) stays NaN
            values[key][r, j] = value if isinstance(value, tuple) else (value, value)
    if profile_points:
        for name, sampled in sweep_profiles.sample(result.profiles, profile_points).items():
            values[name][r, j] = sampled


def _check_resumable(partial: Path, spec_json: str) -> None:
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


def _rows_todo(status: np.ndarray) -> list[int]:
    flat = status.reshape(-1, status.shape[-1])
    return [int(i) for i in np.nonzero(np.any(flat == PENDING, axis=1))[0]]


class _Store:
    """The sweep's results: in memory, or streamed row by row to a netCDF-4 file (h5netcdf)."""

    def __init__(self, spec: dict[str, Any], axes: Sequence[Axis], capillary: bool, pair: bool,
                 path: Path | None, resume: bool, ions: Sequence[str] = (), profile_points: int = 0):
        self.axes, self.spec, self.capillary, self.pair = axes, spec, capillary, pair
        self.shape = tuple(axis.size for axis in axes)
        self.layout = _summary_layout(capillary)
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
            _check_resumable(partial, json.dumps(spec, sort_keys=True))
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
        self.h5 = h5py.File(partial, mode, track_order=True)
        self.file = h5netcdf.File(self.h5, mode)
        self._datasets: dict[str, Any] = {}  # h5py handles by name: looking one up costs ~50 us

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
            f.create_variable("wall", ("wall",), text, data=np.array(["bottom", "top"], dtype=object))
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
        position.attrs["long_name"] = sweep_profiles.position_name(self.capillary)
        f.create_variable(sweep_profiles.ION, (sweep_profiles.ION,), h5py.string_dtype(),
                          data=np.array(self.ions, dtype=object))
        for field in sweep_profiles.PROFILE_FIELDS:
            per_ion = field in sweep_profiles.PER_ION
            extra = (sweep_profiles.ION, sweep_profiles.POSITION) if per_ion else (sweep_profiles.POSITION,)
            sizes = (len(self.ions), points) if per_ion else (points,)
            var = f.create_variable(sweep_profiles.variable_name(field), (*dims, *extra), float, fillvalue=np.nan,
                                    chunks=(*chunks, *sizes))
            var.attrs["units"] = sweep_profiles.unit(field)
            var.attrs["long_name"] = sweep_profiles.long_name(field, self.capillary)

    def write(self, part: dict[str, Any]) -> None:
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
        blocks, start = [], 0
        while start < len(rows):
            stop = start + 1
            while (stop < len(rows) and rows[stop] == rows[stop - 1] + 1
                   and (len(self.shape) < 2 or rows[stop] % self.shape[-2] != 0)):
                stop += 1
            blocks.append(self._block(part, start, stop))
            start = stop
        # Commit in two steps: the values reach the disk before the status that marks their rows done, since
        # HDF5 may write its cached chunks in any order and a killed sweep must never keep a row marked done
        # whose values were lost.
        for where, pick in blocks:
            self._write_values(part, where, pick)
        self.h5.flush()
        for where, pick in blocks:
            self._dataset("status")[where] = part["status"][pick]
            self.status[where] = part["status"][pick]
        self.h5.flush()

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
        self._dataset("message")[where] = np.array(part["message"][pick], dtype=object)

    def finish(self) -> Any:
        """The sweep as an xarray Dataset; a file is completed (renamed from .partial) and read back."""
        import xarray as xr

        if self.file is not None:
            if _summary_bytes(self.shape, self.pair) > LOAD_LIMIT_BYTES:
                self.abandon()
                os.replace(self.partial, self.path)
                return xr.open_dataset(self.path, engine="h5netcdf")  # lazily: memory stays flat
            status, message, values, attrs = self._read_back()
            self.abandon()  # closes the file
            os.replace(self.partial, self.path)
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
            coords["wall"] = (("wall",), np.array(["bottom", "top"]))
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
                            {"units": "1", "long_name": sweep_profiles.position_name(self.capillary)})
        coords[ion] = ((ion,), np.array(self.ions))
        for field in sweep_profiles.PROFILE_FIELDS:
            name = sweep_profiles.variable_name(field)
            extra = (ion, position) if field in sweep_profiles.PER_ION else (position,)
            data[name] = ((*dims, *extra), values[name], {"units": sweep_profiles.unit(field),
                                                          "long_name": sweep_profiles.long_name(field, self.capillary)})

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


def _summary_bytes(shape: tuple[int, ...], pair: bool) -> int:
    """Bytes of a sweep's summary values in memory."""
    columns = sum(2 if key in PAIR_KEYS and pair else 1 for key in SUMMARY_UNITS)
    return int(np.prod(shape)) * columns * 8


#: Summary keys that are (bottom, top) pairs for a slit with two different walls.
PAIR_KEYS = ("zeta", "wall_charge_density", "hs_velocity", "thin_layer_zeta", "stern_potential")


def sweep(base: Case, axes: Mapping[str, Any], *, zipped: Sequence[Sequence[str]] = (),
          path: str | os.PathLike[str] | None = None, resume: bool = False, workers: int = 1,
          dask: Any = None, rows_per_task: int | None = None, progress: bool | None = None,
          profiles: bool | int | None = None) -> Any:
    """Solve every case of a design space and return the summaries as an ``xarray.Dataset``.

    Parameters
    ----------
    base : Case
        The case every point starts from.
    axes : mapping of str to sequence
        Dotted input path -> values (SI numbers or strings with units), e.g.
        ``{"geometry.height": [...], "wall.zeta": [...]}``; one dimension per axis, in this order.
    zipped : sequence of sequences of str
        Groups of axis paths varied together along one dimension (named after the group's first path).
    path : str or Path, optional
        HDF5 (netCDF-4) file to stream the results to; opened by ``xarray.open_dataset(path,
        engine="h5netcdf")``. Built as ``<path>.partial`` and renamed when complete.
    resume : bool
        Finish the sweep of an interrupted ``<path>.partial`` instead of starting afresh.
    workers : int
        Local worker processes (1: in this process).
    dask : str or distributed.Client, optional
        A Dask distributed scheduler address or client; rows are sent to it in tasks and the results
        gathered and written here.
    rows_per_task : int, optional
        Rows (lines along the last axis) per task; by default about 4,000 cases per task in this process
        and 1,000 per task for workers or Dask (so that they share the work), 500 when the cases are
        solved one by one (no compiled batch).
    progress : bool, optional
        Show a progress bar (tqdm); by default only when attached to a terminal.
    profiles : bool or int, optional
        Also store every case's profiles across the section, at this many positions evenly spaced in y/H
        (slit) or r/a (capillary), ``True`` for 101 (``sweep_profiles``). They are large, and the cases are
        then solved one by one through ``edl_solver.solve`` (about 3 times slower than the compiled batch).

    Returns
    -------
    xarray.Dataset
        One dimension per axis; every ``result.summary`` key as a variable with ``units`` and
        ``long_name`` (pair values on an extra ``wall`` dimension when the walls differ); ``status``
        (0 converged, 1 failed) and ``message`` per case. With a ``path``, the file as xarray reads it:
        loaded into memory when its values take up to ``LOAD_LIMIT_BYTES`` (256 MiB, about 500,000
        cases), else opened lazily (values read from the file on access; close it when done). With
        profiles, ``profile_<field>`` variables on an extra ``position`` dimension (and ``ion`` for the
        concentrations).
    """
    from edl_solver.io import case_to_dict

    if not isinstance(base, Case):
        raise InputError(f"base: {type(base).__name__} is not a Case, expected edl_solver.Case(...)")
    if isinstance(workers, bool) or not isinstance(workers, int) or workers < 1:
        raise InputError(f"workers: {workers!r} is not allowed, expected a positive integer")
    sweep_axes = make_axes(axes, zipped)
    base_table = case_to_dict(base)
    pair = isinstance(base.wall, tuple) or any(p.startswith(("wall.bottom", "wall.top"))
                                               for axis in sweep_axes for p in axis.paths)
    profile_points = sweep_profiles.check_points(profiles)
    spec = {"base": base_table, "axes": [[a.name, list(a.paths), [list(v) for v in a.values]] for a in sweep_axes]}
    if profile_points:
        spec["profile_points"] = profile_points
    out_path = Path(path) if path is not None else None
    store = _Store(spec, sweep_axes, isinstance(base.geometry, Capillary), pair, out_path, resume,
                   ions=[ion.name for ion in base.electrolyte.ions], profile_points=profile_points)
    try:
        plan = make_plan(base_table, sweep_axes)
        todo = _rows_todo(store.status)
        last = sweep_axes[-1].size
        per_task = rows_per_task or max(1, _cases_per_task(None if profile_points else plan, workers, dask) // last)
        tasks = [todo[i:i + per_task] for i in range(0, len(todo), per_task)]
        total = len(todo) * last
        with _progress_bar(total, progress) as bar, _interruptible():
            for part in _run(tasks, (base_table, sweep_axes, plan, profile_points), workers, dask):
                store.write(part)
                bar.update(len(part["rows"]) * last)
                _stop_if_asked()
    except BaseException:
        store.abandon()
        raise
    return store.finish()


def _cases_per_task(plan: SweepPlan | None, workers: int, dask: Any) -> int:
    """Default task size: each task is committed to the file with two flushes (~6 ms each), so compiled
    batches go in large tasks; workers and Dask get smaller ones to share them out."""
    if plan is None:
        return 500
    return 4000 if workers == 1 and dask is None else 1000


#: Set by Ctrl-C during a sweep; checked between cases (see ``_interruptible``).
_STOP = threading.Event()


@contextmanager
def _interruptible() -> Iterator[None]:
    """Turn Ctrl-C into a flag that the sweep checks between cases.

    Python raises KeyboardInterrupt wherever the main thread happens to be, and when that is inside a weakref
    or garbage-collection callback (frequent in a long sweep) the interrupt is printed and ignored, so the
    sweep would run on. A second Ctrl-C interrupts at once, as usual.
    """
    if threading.current_thread() is not threading.main_thread() \
            or signal.getsignal(signal.SIGINT) is not signal.default_int_handler:
        yield
        return

    def ask_to_stop(signum: int, frame: Any) -> None:
        _STOP.set()
        signal.signal(signal.SIGINT, signal.default_int_handler)

    _STOP.clear()
    signal.signal(signal.SIGINT, ask_to_stop)
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, signal.default_int_handler)
        _STOP.clear()


def _stop_if_asked() -> None:
    if _STOP.is_set():
        raise KeyboardInterrupt


def _run(tasks: list[list[int]], job: tuple[Any, ...], workers: int, dask: Any) -> Iterable[dict[str, Any]]:
    """Yield each task's results as it completes (in this process, local processes, or Dask); ``job`` holds
    the arguments of ``solve_rows`` other than the rows: base table, axes, plan, profile points."""
    base_table, axes, plan, profile_points = job
    if dask is not None:
        yield from _run_dask(tasks, job, dask)
    elif workers == 1:
        for rows in tasks:
            yield solve_rows(base_table, axes, rows, plan, profile_points)
    else:
        import concurrent.futures as cf
        import multiprocessing

        context = multiprocessing.get_context("spawn")
        with cf.ProcessPoolExecutor(workers, mp_context=context, initializer=_one_thread) as pool:
            futures = [pool.submit(solve_rows, base_table, axes, rows, plan, profile_points) for rows in tasks]
            try:
                for future in cf.as_completed(futures):
                    yield future.result()
            except BaseException:
                for future in futures:
                    future.cancel()
                raise


def _one_thread() -> None:
    # Each worker is one process on one core: keep numba from spawning threads of its own. The variable
    # only counts before numba starts its threads, so set the live value as well.
    os.environ["NUMBA_NUM_THREADS"] = "1"
    import numba

    numba.set_num_threads(1)


def _run_dask(tasks: list[list[int]], job: tuple[Any, ...], dask: Any) -> Iterable[dict[str, Any]]:
    from distributed import Client, as_completed

    client = dask if isinstance(dask, Client) else Client(dask)
    try:
        base_table, axes, plan, profile_points = job
        futures = [client.submit(solve_rows, base_table, axes, rows, plan, profile_points, pure=False)
                   for rows in tasks]
        for future in as_completed(futures):
            yield future.result()
    finally:
        if client is not dask:
            client.close()


class _NoBar:
    def __enter__(self) -> _NoBar:
        return self

    def __exit__(self, *exc: object) -> None:
        return None

    def update(self, n: int) -> None:
        return None


def _progress_bar(total: int, progress: bool | None) -> Any:
    try:
        from tqdm import tqdm
    except ImportError:  # tqdm is optional
        return _NoBar()
    # disable=None: tqdm turns itself off when not attached to a terminal (CI, pipes)
    return tqdm(total=total, unit="case", disable=None if progress is None else not progress,
                desc="sweep", smoothing=0.1)


__all__ = ["PATH_UNITS", "Axis", "case_at", "make_axes", "solve_rows", "sweep"]
