"""Results on disk: one netCDF-4 (HDF5) file per solve, written atomically, readable by xarray.

This module knows the layout; the atomic write is ``edl_solver.io.files.atomic_output``. It works on the
Result passed in and builds none: reading gives the keyword arguments of ``Result`` (``read_result_fields``),
and ``edl_solver.load`` makes the Result of them, so that io stays below results.result.

Layout of schema version 1 (all in the root group, so ``xarray.open_dataset(path, engine="h5netcdf")``
shows everything at once)::

    dimensions   y (slit, 0 at the bottom wall .. H) or r (capillary, 0 on the axis .. a), or y and z
                 (rectangle: y across the width 0 .. W, z across the height 0 .. H); ion;
                 wall = the geometry's ``wall_names``, ["bottom", "top"] of a slit or ["top_bottom", "sides"]
                 of a rectangle (only when a summary value differs between the two walls)
    coordinates  y or r, or y and z (m), ion (names), wall
    profiles     potential, charge_density, velocity_eo, velocity_pressure, velocity,
                 velocity_thin_layer, eo_per_field on (y|r), or on (y, z) for a rectangle; concentration on
                 (ion, y|r) or (ion, y, z)
    inputs       valence, bulk_concentration, diffusivity on (ion); diameter on (ion) when an ion
                 has one (NaN for those without)
    summary      one variable per summary key, named as the key: 0-d, or on (wall) for a
                 (bottom, top) pair (rectangle: (top_bottom, sides)) (NaN where a wall has no such value,
                 e.g. the stern_potential of a wall without Stern layer); the attribute ``summary_keys``
                 lists them in order
    group transport   response_matrix (flux x force: volume flow, current, salt flux against solvent force,
                 field, salt force) and ion_response_matrix (ion_flux x ion_force), per unit length
    group slit_comparison   a rectangle only: the slit of its height beside it (``Result.slit_comparison``),
                 its values (SI, extensive ones for the rectangle's width) as attributes
    attributes   every variable has ``units`` and ``long_name``; global attributes hold the case as
                 JSON (``case_json``, the source of truth on reading) and as readable scalars with
                 the unit in the name (``height_m``, or ``width_m`` and ``height_m`` of a rectangle,
                 ``field_V_per_m``, ``pH``, ``viscoelectric_coefficient_m2_per_V2``; per wall, prefixed
                 ``wall_`` or ``wall_bottom_``/``wall_top_`` (rectangle: ``wall_top_bottom_``/``wall_sides_``):
                 ``kind``, ``zeta_V`` or ``charge_density_C_per_m2``,
                 ``stern_capacitance_F_per_m2``, ``gate_voltage_V``, ``gate_capacitance_F_per_m2``,
                 ``slip_length_m`` and, per site n = 1, 2, ..., ``siten_name``, ``siten_density_per_m2``,
                 ``siten_pK`` and ``siten_charges`` (arrays)), the verdict, status, message,
                 iterations, residual, warnings (``warning_count``, ``warning_1``, ...),
                 ``schema_version`` and ``edl_solver_version``

The regulated walls, slip, steric model and viscoelectric solvent added keys to ``case_json`` and new
variables and attributes, but changed none of version 1's, so files written before them read as before
and the version stays 1 (a reader that predates those keys refuses such a file's ``case_json`` with an
error naming the unknown key, rather than misreading it).

Arrays are gzip-compressed with the shuffle filter (readable everywhere, unlike lzf); there are no
bool, complex or enum types, which would break netCDF readers.

``case_to_mapping`` writes the plain-dict form of a Case that the JSON attribute and the TOML case files
share; ``case_from_mapping`` reads it back through the case-file parser (``edl_solver.inputs.casefile``).
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Sequence
from numbers import Integral, Real
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.casefile import case_from_mapping, case_to_mapping
from edl_solver.inputs.geometry import Rectangle, extent_unit
from edl_solver.inputs.wall import Wall
from edl_solver.io.files import atomic_output, checked_input_path
from edl_solver.results.profiles import Profiles, RectangleProfiles
from edl_solver.results.schema import PROFILE_UNITS, SUMMARY_UNITS, summary_unit

if TYPE_CHECKING:
    from edl_solver.results.result import Result

__all__ = ["SCHEMA_VERSION", "read_result_fields", "write_result"]

#: Version of the file layout; bump it when a reader of the old layout would misread the new one.
SCHEMA_VERSION = "1"

_COMPRESSION = {"compression": "gzip", "compression_opts": 4, "shuffle": True}

#: Long names of the coordinate across the section, by its name (a geometry without an entry here gets its
#: ``coordinate_text``).
_COORDINATE_LONG_NAMES = {
    "y": "distance across the slit from the bottom wall",
    "r": "radial distance from the capillary axis",
}
#: The same for the two coordinates of a rectangle.
_RECTANGLE_LONG_NAMES = {
    "y": "distance across the width from the side wall at y = 0",
    "z": "distance across the height from the bottom wall at z = 0",
}
#: Long names of the wall labels, by geometry kind (a capillary has one wall: never pairs).
_WALL_LONG_NAMES = {"slit": "wall of the slit", "rectangle": "wall pair of the rectangle (top and bottom: z = 0 "
                    "and H; sides: y = 0 and W)"}

#: Profile variables on the cross-section coordinate alone, with their long names.
_PROFILE_LONG_NAMES = {
    "potential": "electric potential relative to the reservoir",
    "charge_density": "space charge density of the liquid",
    "velocity_eo": "electroosmotic axial velocity",
    "velocity_pressure": "pressure-driven axial velocity",
    "velocity": "total axial velocity",
    "velocity_thin_layer": "electroosmotic axial velocity of the thin-layer slip model",
    "eo_per_field": "electroosmotic axial velocity per unit field",
}

#: Rows (fluxes) and columns (forces) of the 3 x 3 response matrix, with their units (per unit width, per
#: channel).
_FLUXES = (("volume_flow", ("m^2/s", "m^3/s")), ("current", ("A/m", "A")), ("salt_flux", ("mol/(m*s)", "mol/s")))
_FORCES = (("solvent_force", "Pa/m"), ("field", "V/m"), ("salt_force", "J/(mol*m)"))


# ----------------------------------------------------------------------------------------------
# Writing


def _add_array(file: Any, name: str, dims: tuple[str, ...], data: Any, units: str, long_name: str) -> None:
    data = np.asarray(data)
    options = _COMPRESSION if data.ndim else {}  # HDF5 cannot chunk (so cannot filter) a scalar
    variable = file.create_variable(name, dims, data.dtype, data=data, **options)
    variable.attrs["units"] = units
    variable.attrs["long_name"] = long_name


def _add_strings(file: Any, name: str, values: Sequence[str], long_name: str) -> None:
    """A coordinate of words on its own dimension ``name`` (which must exist)."""
    import h5py

    variable = file.create_variable(name, (name,), h5py.string_dtype(), data=np.array(values, dtype=object))
    variable.attrs["long_name"] = long_name


def _summary_array(key: str, value: Any) -> np.ndarray:
    """A summary value as float64 (int64 for counts), rejecting what a netCDF reader cannot take."""
    items = value if isinstance(value, tuple) else (value,)
    if isinstance(value, tuple) and len(value) != 2:
        raise ValueError(f"summary[{key!r}]: {value!r} is not a pair of the two walls")
    if any(isinstance(v, (bool, np.bool_)) or not isinstance(v, Real) for v in items):
        raise ValueError(f"summary[{key!r}]: {value!r} is not a real number (bool and complex break netCDF)")
    integral = all(isinstance(v, Integral) for v in items)
    data = np.array(items, dtype=np.int64 if integral else np.float64)
    return data if isinstance(value, tuple) else data.reshape(())


def _wall_attributes(prefix: str, wall: Wall) -> dict[str, Any]:
    """A wall's inputs as attributes named ``<prefix>_<field>_<unit>``; sites numbered from 1."""
    attrs: dict[str, Any] = {f"{prefix}_kind": wall.kind}
    for name, unit in (("zeta", "V"), ("charge_density", "C_per_m2"), ("stern_capacitance", "F_per_m2"),
                       ("gate_voltage", "V"), ("gate_capacitance", "F_per_m2")):
        if getattr(wall, name) is not None:
            attrs[f"{prefix}_{name}_{unit}"] = getattr(wall, name)
    attrs[f"{prefix}_slip_length_m"] = wall.slip_length
    for number, site in enumerate(wall.sites, start=1):
        attrs[f"{prefix}_site{number}_name"] = site.name
        attrs[f"{prefix}_site{number}_density_per_m2"] = site.density
        attrs[f"{prefix}_site{number}_pK"] = np.array(site.pks, dtype=np.float64)
        attrs[f"{prefix}_site{number}_charges"] = np.array(site.charges, dtype=np.int32)
    return attrs


def _case_attributes(case: Case) -> dict[str, Any]:
    """Readable scalar inputs; the unit is in the name because attributes carry no attributes."""
    g, s = case.geometry, case.solvent
    # height_m, radius_m, or width_m and height_m
    attrs: dict[str, Any] = {"geometry": g.kind, **{f"{key}_m": getattr(g, key) for key in g.size_keys}}
    walls = (("wall", case.wall),) if isinstance(case.wall, Wall) else \
        tuple((f"wall_{name}", wall) for name, wall in zip(g.wall_names, case.wall))
    for prefix, wall in walls:
        attrs.update(_wall_attributes(prefix, wall))
    if case.electrolyte.pH is not None:
        attrs["pH"] = case.electrolyte.pH
    attrs.update({
        "model": case.model,
        "solvent": s.name,
        "temperature_K": s.temperature,
        "relative_permittivity": s.relative_permittivity,
        "viscosity_Pa_s": s.viscosity,
        "viscoelectric_coefficient_m2_per_V2": s.viscoelectric_coefficient,
        **({} if s.density is None else {"density_kg_per_m3": s.density}),
        "field_V_per_m": case.field,
        "pressure_gradient_Pa_per_m": case.pressure_gradient,
        "tolerance": case.tolerance,
        "numerics_accuracy": case.numerics.accuracy,
        "numerics_max_iterations": case.numerics.max_iterations,
        "numerics_max_intervals": case.numerics.max_intervals,
    })
    if case.numerics.intervals is not None:
        attrs["numerics_intervals"] = case.numerics.intervals
    return attrs


def _write_coordinates(file: Any, geometry: Any, p: Profiles | RectangleProfiles) -> tuple[str, ...]:
    """The section's dimensions and coordinate variables: (y|r) of a slit or capillary, (y, z) of a rectangle;
    returns their names."""
    if isinstance(geometry, Rectangle):
        if not isinstance(p, RectangleProfiles):
            raise ValueError(f"profiles: {type(p).__name__} does not fit a rectangle, expected RectangleProfiles")
        for name in p.coordinate_names:
            file.dimensions[name] = getattr(p, name).size
            _add_array(file, name, (name,), getattr(p, name), PROFILE_UNITS["coordinate"], _RECTANGLE_LONG_NAMES[name])
        return p.coordinate_names
    if not isinstance(p, Profiles) or p.coordinate_name != geometry.coordinate_name:
        raise ValueError(f"profiles.coordinate_name: {getattr(p, 'coordinate_name', None)!r} does not fit a "
                         f"{geometry.kind}")
    coordinate = p.coordinate_name
    file.dimensions[coordinate] = p.coordinate.size
    _add_array(file, coordinate, (coordinate,), p.coordinate, PROFILE_UNITS["coordinate"],
               _COORDINATE_LONG_NAMES.get(coordinate, geometry.coordinate_text))
    return (coordinate,)


def _write_profiles(file: Any, result: Result) -> None:
    """Dimensions and coordinates (section coordinates, ion, wall when values come in pairs) and the profiles."""
    geometry, p = result.case.geometry, result.profiles
    section = _write_coordinates(file, geometry, p)
    file.dimensions["ion"] = len(p.ion_names)
    if any(isinstance(value, tuple) for value in result.summary.values()):
        file.dimensions["wall"] = 2
        _add_strings(file, "wall", geometry.wall_names, _WALL_LONG_NAMES.get(geometry.kind, "wall"))
    _add_strings(file, "ion", p.ion_names, "ion species")
    for name, long_name in _PROFILE_LONG_NAMES.items():
        _add_array(file, name, section, getattr(p, name), PROFILE_UNITS[name], long_name)
    _add_array(file, "concentration", ("ion", *section), p.concentration, PROFILE_UNITS["concentration"],
               "ion concentration")


def _write_ions(file: Any, case: Case) -> None:
    """The ions' inputs on the ion dimension; diameters only when an ion has one."""
    ions = case.electrolyte.ions
    _add_array(file, "valence", ("ion",), np.array([ion.valence for ion in ions], dtype=np.int32), "1",
               "charge number of the ion")
    _add_array(file, "bulk_concentration", ("ion",), [ion.concentration for ion in ions], "mol/m^3",
               "ion concentration in the reservoir (bulk)")
    _add_array(file, "diffusivity", ("ion",), list(case.electrolyte.diffusivities(case.solvent.temperature)),
               "m^2/s", "ion diffusion coefficient at the case temperature (the one used)")
    if any(ion.diameter is not None for ion in ions):
        _add_array(file, "diameter", ("ion",), [math.nan if ion.diameter is None else ion.diameter for ion in ions],
                   "m", "ion diameter (steric model; NaN where not given)")


def _write_summary(file: Any, result: Result) -> None:
    """One variable per summary key: 0-d, or on (wall) for a (bottom, top) pair."""
    for key, value in result.summary.items():
        if key not in SUMMARY_UNITS:
            raise ValueError(f"summary[{key!r}]: no unit in edl_solver.results.schema.SUMMARY_UNITS; add it there")
        if key in file.variables:
            raise ValueError(f"summary[{key!r}]: clashes with the variable of the same name in the file")
        data = _summary_array(key, value)
        _add_array(file, key, ("wall",) if data.ndim else (), data, summary_unit(key, result.case.geometry),
                   SUMMARY_UNITS[key][1])


def _write_transport(group: Any, result: Result) -> None:
    """Group "transport": the response matrices, per unit length (slit: per unit width)."""
    ions = result.profiles.ion_names
    group.dimensions = {"flux": 3, "force": 3, "ion_flux": len(ions) + 1, "ion_force": len(ions) + 1}
    _add_strings(group, "flux", [f for f, _ in _FLUXES], "conjugate flux (row)")
    _add_strings(group, "force", [f for f, _ in _FORCES], "driving force (column)")
    _add_strings(group, "ion_flux", ["volume_flow", *ions], "flux: volume flow, then each ion")
    _add_strings(group, "ion_force", ["solvent_force", *ions], "force: solvent, then each ion")
    geometry = result.case.geometry
    units = ", ".join(f"{f} [{extent_unit(u, geometry)}]" for f, u in _FLUXES) + " per " + ", ".join(
        f"{f} [{u}]" for f, u in _FORCES)
    _add_array(group, "response_matrix", ("flux", "force"), result.response_matrix, "mixed (see units_by_entry)",
               "linear-response matrix of the section per unit length (space-charge model)")
    group.variables["response_matrix"].attrs["units_by_entry"] = units
    _add_array(group, "ion_response_matrix", ("ion_flux", "ion_force"), result.ion_response_matrix,
               "mixed (volume flow m^3/s or m^2/s, ion flux mol/s or mol/(m s); forces Pa/m and J/(mol m))",
               "linear-response matrix resolved per ion (solvent force, then the ions' electrochemical forces)")


def _global_attributes(result: Result) -> dict[str, Any]:
    """The case (as JSON and readable scalars), the solver's outcome and the versions."""
    from edl_solver import __version__

    case = result.case
    return {
        "title": f"edl_solver result: {case.describe()}",
        "schema_version": SCHEMA_VERSION,
        "edl_solver_version": __version__,
        "case_json": json.dumps(case_to_mapping(case)),
        **_case_attributes(case),
        "verdict": result.verdict,
        "status": result.status,
        "message": result.message,
        "iterations": int(result.iterations),
        "residual": float(result.residual),
        "summary_keys": " ".join(result.summary),
        # One attribute per warning: an empty list attribute would come back as a float array.
        "warning_count": len(result.warnings),
        **{f"warning_{n}": text for n, text in enumerate(result.warnings, start=1)},
    }


def _write(file: Any, result: Result) -> None:
    _write_profiles(file, result)
    _write_ions(file, result.case)
    _write_summary(file, result)
    if result.response_matrix is not None:
        _write_transport(file.create_group("transport"), result)
    if result.slit_comparison:  # a rectangle: the slit of its height, as attributes of a group
        file.create_group("slit_comparison").attrs.update({k: float(v) for k, v in result.slit_comparison.items()})
    for name, value in _global_attributes(result).items():
        file.attrs[name] = value


def write_result(result: Result, path: str | os.PathLike[str]) -> Path:
    """Write ``result`` to a netCDF-4 (HDF5) file, atomically (layout in the module docstring).

    Parameters
    ----------
    result : Result
    path : str or PathLike
        File to create or replace; its directory must exist.

    Returns
    -------
    Path
        ``path`` as a Path.

    Raises
    ------
    InputError
        If ``result`` is not a Result or ``path`` cannot be written. On any failure an existing
        file at ``path`` is left as it was and no temporary file remains.
    """
    # A Result is known by what it holds (a Case and its Profiles): results.result is a layer above io.
    if not (isinstance(getattr(result, "case", None), Case)
            and isinstance(getattr(result, "profiles", None), (Profiles, RectangleProfiles))):
        raise InputError(f"result: {type(result).__name__} is not a Result, expected the return of solve()")
    import h5netcdf

    with atomic_output(path) as temporary, h5netcdf.File(temporary, "w") as file:
        _write(file, result)
    return Path(os.fspath(path)).expanduser()


# ----------------------------------------------------------------------------------------------
# Reading


def _text(value: Any) -> str:
    return value.decode() if isinstance(value, bytes) else str(value)


def _number(value: Any) -> float | int:
    return int(value) if isinstance(value, (Integral, np.integer)) else float(value)


def _read_case(attrs: dict[str, Any], shown: str) -> Case:
    """The case of a result file, after checking that it is one this version reads."""
    if "schema_version" not in attrs or "case_json" not in attrs:
        raise InputError(f"path: {shown} is not an edl_solver result (no schema_version or case_json attribute)")
    version = _text(attrs["schema_version"])
    if not version.isdigit():
        raise InputError(f"path: {shown} is not an edl_solver result (schema_version {version!r})")
    if int(version) > int(SCHEMA_VERSION):
        from edl_solver import __version__

        raise InputError(f"path: {shown} has schema_version {version}, newer than edl_solver {__version__} "
                         f"reads (up to {SCHEMA_VERSION}); upgrade edl_solver")
    try:
        return case_from_mapping(json.loads(_text(attrs["case_json"])))
    except (ValueError, TypeError) as exc:  # InputError and JSONDecodeError are ValueErrors
        raise InputError(f"path: {shown} has an unreadable case_json ({exc})") from None


def _read_profiles(variables: Any, geometry: Any, shown: str) -> Profiles | RectangleProfiles:
    """The profiles on the section's coordinates: (y|r), or (y, z) of a rectangle."""
    section = RectangleProfiles.coordinate_names if isinstance(geometry, Rectangle) else (geometry.coordinate_name,)
    missing = [name for name in (*section, "ion", "concentration", *_PROFILE_LONG_NAMES) if name not in variables]
    if missing:
        raise InputError(f"path: {shown} is not a complete edl_solver result (no variable {missing[0]!r})")
    if isinstance(geometry, Rectangle):
        return RectangleProfiles(
            **{name: np.asarray(variables[name][...], dtype=float) for name in section},
            ion_names=tuple(_text(name) for name in variables["ion"][...]),
            concentration=np.asarray(variables["concentration"][...], dtype=float),
            **{name: np.asarray(variables[name][...], dtype=float) for name in _PROFILE_LONG_NAMES},
        )
    coordinate = section[0]
    return Profiles(
        coordinate=np.asarray(variables[coordinate][...], dtype=float),
        coordinate_name=coordinate,
        ion_names=tuple(_text(name) for name in variables["ion"][...]),
        concentration=np.asarray(variables["concentration"][...], dtype=float),
        **{name: np.asarray(variables[name][...], dtype=float) for name in _PROFILE_LONG_NAMES},
    )


def _read_summary(variables: Any, keys: str, shown: str) -> dict[str, Any]:
    """Summary values in the order of ``keys``: python numbers, or (bottom, top) tuples of them."""
    summary: dict[str, Any] = {}
    for key in keys.split():
        if key not in variables:
            raise InputError(f"path: {shown} is not a complete edl_solver result (no summary value {key!r})")
        data = variables[key][...]
        summary[key] = tuple(_number(v) for v in data) if np.ndim(data) else _number(data[()])
    return summary


def _read(file: Any, shown: str) -> dict[str, Any]:
    attrs = dict(file.attrs)
    case = _read_case(attrs, shown)
    variables = file.variables
    profiles = _read_profiles(variables, case.geometry, shown)
    summary = _read_summary(variables, _text(attrs.get("summary_keys", "")), shown)
    warnings = tuple(_text(attrs[f"warning_{n}"]) for n in range(1, int(attrs.get("warning_count", 0)) + 1))
    matrices: dict[str, Any] = {"response_matrix": None, "ion_response_matrix": None}
    if "transport" in file.groups:
        transport = file.groups["transport"].variables
        matrices.update({name: np.asarray(transport[name][...], dtype=float)
                         for name in matrices if name in transport})
    return {
        "case": case,
        "profiles": profiles,
        "summary": summary,
        "verdict": _text(attrs.get("verdict", "")),
        "status": _text(attrs.get("status", "")),
        "message": _text(attrs.get("message", "")),
        "iterations": int(attrs.get("iterations", 0)),
        "residual": float(attrs.get("residual", math.nan)),
        "warnings": warnings,
        **matrices,
        "slit_comparison": ({key: float(value) for key, value in file.groups["slit_comparison"].attrs.items()}
                            if "slit_comparison" in file.groups else None),
    }


def read_result_fields(path: str | os.PathLike[str]) -> dict[str, Any]:
    """Read a result written by ``write_result``, as the keyword arguments of ``Result``.

    ``edl_solver.load`` builds the Result: ``Result(**read_result_fields(path))``.

    Parameters
    ----------
    path : str or PathLike

    Returns
    -------
    dict
        ``case`` (rebuilt from the ``case_json`` attribute, equal to the written one), ``profiles`` (float
        arrays), ``summary`` (python floats or (bottom, top) tuples), ``verdict``, ``status``, ``message``,
        ``iterations``, ``residual``, ``warnings``, ``response_matrix`` and ``ion_response_matrix`` (None
        when the file has no transport group).

    Raises
    ------
    InputError
        If the file does not exist, is not an edl_solver result, or has a newer schema version.
    """
    source = checked_input_path(path, "an edl_solver result file")
    shown = repr(str(path))
    import h5netcdf

    try:
        file = h5netcdf.File(os.fspath(source), "r")
    except OSError:  # h5py's message is several lines about the HDF5 signature; one line is enough
        raise InputError(f"path: {shown} is not an edl_solver result (not an HDF5 file)") from None
    with file:
        return _read(file, shown)
