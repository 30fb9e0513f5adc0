"""The plain-text report of a transient run (``edl.transient``): what was stepped and driven, the time scales, a
table of the section's values at a handful of times, the conservation of each ion, the final state against the
closed section's equilibrium and the error estimate; a shorter form for a flow start-up.

The run is an xarray Dataset (see ``edl_solver.io.transient_file``); a variable it lacks is left out of the
report, so that a flow start-up (a subset of the variables) and a Poisson-Nernst-Planck run read alike. Values
are shown in the units of ``report.units`` (mV, mC/m², µm/s, one engineering prefix per column); nothing here
computes physics.
"""

from __future__ import annotations

import json
import math
from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.geometry import Geometry
from edl_solver.report.fit_text import parameter_unit
from edl_solver.report.formatting import number, prefixed
from edl_solver.report.units import Shown, show, significant

__all__ = ["pick_times", "transient_report"]

#: Columns of the table at chosen times: (variable, header, quantity of ``report.units`` or None for the
#: variable's own SI unit with a prefix).
_COLUMNS = (
    ("wall_charge_density", "σ", "charge_density"),
    ("wall_potential", "ψ wall", "potential"),
    ("mean_velocity_eo", "U eo", "velocity"),
    ("mean_velocity_pressure", "U p", "velocity"),
    ("flow_rate", "Q", "flow_rate"),
    ("convection_current", "I conv", "current"),
    ("conduction_current", "I cond", "current"),
    ("space_charge", "space charge", None),
    ("salt_stored", "salt stored", None),
)
#: Time scales among the attributes: (attribute, words).
_SCALES = (("debye_time_s", "Debye λ_D²/D"), ("rc_time_s", "RC"), ("diffusion_time_s", "diffusion"),
           ("viscous_time_s", "viscous ρL²/η"))
_PREFIXES = {-18: "a", -15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G"}
#: Rows of the table at most.
TABLE_ROWS = 6
#: Characters of a table line at most: wider tables are cut into blocks of columns, each with the times.
TABLE_WIDTH = 100


def pick_times(times: Any, count: int = TABLE_ROWS) -> np.ndarray:
    """Indices of about ``count`` times spread evenly in log time over ``times`` (> 0, increasing), the first and
    the last among them."""
    t = np.asarray(times, dtype=float)
    if t.size <= count:
        return np.arange(t.size)
    wanted = np.geomspace(t[0], t[-1], count) if t[0] > 0 else np.linspace(t[0], t[-1], count)
    scale = np.log(t) if t[0] > 0 else t
    target = np.log(wanted) if t[0] > 0 else wanted
    return np.unique([int(np.argmin(np.abs(scale - value))) for value in target])


def _geometry(run: Any) -> Geometry | None:
    """The geometry of the case after the step, if ``case_json`` holds a readable case."""
    from edl_solver.inputs.casefile import case_from_mapping

    try:
        return case_from_mapping(json.loads(run.attrs["case_json"])).geometry
    except (KeyError, TypeError, ValueError):  # InputError and JSONDecodeError are ValueErrors
        return None


def _si_shown(values: np.ndarray, unit: str) -> Shown:
    """One prefix for a column of a quantity outside ``report.units``, from its largest value."""
    finite = np.abs(values[np.isfinite(values)])
    largest = float(np.max(finite)) if finite.size else 0.0
    if largest <= 0.0:
        return Shown(1.0, _pretty(unit), largest)
    exponent = min(max(3 * math.floor(math.log10(largest) / 3), -18), 9)
    return Shown(10.0 ** -exponent, f"{_PREFIXES[exponent]}{_pretty(unit)}", largest)


def _pretty(unit: str) -> str:
    """'C/m^2' -> 'C/m²' (as ``report.units`` writes its units)."""
    return unit.replace("^2", "²").replace("^3", "³")


def _columns(run: Any, geometry: Geometry | None) -> list[tuple[str, Shown, np.ndarray]]:
    """(header with unit, how to show, values on time) of each column the run has; per wall when it has walls."""
    columns = []
    for name, header, quantity in _COLUMNS:
        if name not in run.data_vars:
            continue
        variable = run[name]
        values = np.asarray(variable.values, dtype=float)
        shown = show(quantity, geometry, *values.ravel()) if quantity else \
            _si_shown(values, str(variable.attrs.get("units", "")))
        if "wall" in variable.dims:
            walls = variable.transpose("time", "wall")
            for j, wall in enumerate(run["wall"].values):
                columns.append((f"{header} {wall} ({shown.unit})", shown, np.asarray(walls.values[:, j], float)))
        else:
            columns.append((f"{header} ({shown.unit})", shown, values.reshape(-1)))
    return columns


def _table(run: Any, geometry: Geometry | None) -> list[str]:
    """The values at a handful of times, one row per time, one column per quantity the run has (in blocks of
    columns no wider than ``TABLE_WIDTH``, each block with the times)."""
    columns = _columns(run, geometry)
    if not columns:
        return []
    times = np.asarray(run["time"].values, dtype=float)
    picked = pick_times(times)
    cells = [[header, *(shown.value(values[i]) for i in picked)] for header, shown, values in columns]
    time_cells = ["t", *(prefixed(times[i], "s") for i in picked)]
    blocks: list[list[list[str]]] = [[]]
    width = max(len(cell) for cell in time_cells) + 2
    for column in cells:
        needed = max(len(cell) for cell in column) + 2
        if blocks[-1] and width + needed > TABLE_WIDTH:
            blocks.append([])
            width = max(len(cell) for cell in time_cells) + 2
        blocks[-1].append(column)
        width += needed
    lines = []
    for block in blocks:
        block = [time_cells, *block]
        widths = [max(len(cell) for cell in column) for column in block]
        lines += ["  " + "  ".join(column[r].rjust(w) for column, w in zip(block, widths))
                  for r in range(len(time_cells))]
    return lines


def _flat(mapping: Any, prefix: str = "") -> dict[str, Any]:
    """A case mapping as {dotted path: leaf} (lists are leaves)."""
    if not isinstance(mapping, dict):
        return {prefix: mapping}
    flat: dict[str, Any] = {}
    for key, value in mapping.items():
        flat.update(_flat(value, f"{prefix}.{key}" if prefix else str(key)))
    return flat


def _walls_apart(mapping: dict[str, Any], names: tuple[str, ...]) -> dict[str, Any]:
    """A case mapping whose common ``wall`` table is written once per wall of ``names``."""
    wall = mapping.get("wall")
    if not names or not isinstance(wall, dict) or any(name in wall for name in names):
        return mapping
    return {**mapping, "wall": {name: wall for name in names}}


def _leaf_text(path: str, value: Any) -> str:
    if value is None:
        return "none"
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        factor, unit = parameter_unit(path)
        if unit in ("V/m", "Pa/m"):
            return prefixed(value, unit)
        return f"{significant(value * factor)} {unit}".rstrip()
    return json.dumps(value)


def _step_lines(run: Any) -> list[str]:
    """What differs between the case before the step and after it, path by path."""
    try:
        before, after = (json.loads(run.attrs[key]) for key in ("before_json", "case_json"))
    except (KeyError, TypeError, ValueError):
        return []
    pairs = [dict(wall) for wall in (after.get("wall"), before.get("wall")) if isinstance(wall, dict)]
    names = next((tuple(k for k, v in wall.items() if isinstance(v, dict)) for wall in pairs
                  if any(isinstance(v, dict) for v in wall.values())), ())
    old, new = (_flat(_walls_apart(m, names)) for m in (before, after))
    changed = [path for path in dict.fromkeys([*old, *new]) if old.get(path) != new.get(path)]
    if not changed:
        return ["Step: none (before and after are the same case)"]
    return ["Step at t = 0 (before → after):"] + [
        f"  {path}: {_leaf_text(path, old.get(path))} → {_leaf_text(path, new.get(path))}" for path in changed]


def _drive_lines(run: Any) -> list[str]:
    """The time-dependent drives of ``drives_json``, one line each."""
    try:
        drives = json.loads(run.attrs.get("drives_json", "{}"))
    except (TypeError, ValueError):
        return [f"Drives: {run.attrs.get('drives_json')!r} (not readable)"]
    if not isinstance(drives, dict) or not drives:
        return []
    lines = ["Time-dependent drives:"]
    for target, drive in drives.items():
        if not isinstance(drive, dict):
            lines.append(f"  {target}: {drive!r}")
            continue
        words = [str(drive.get("kind", "drive"))]
        for key, value in drive.items():
            if key == "kind":
                continue
            text = f"{len(value)} points" if isinstance(value, list) else str(value)
            words.append(f"{key} {text}")
        lines.append(f"  {target}: " + ", ".join(words))
    return lines


def _scale_line(run: Any) -> str | None:
    scales = [f"{words} {prefixed(run.attrs[key], 's')}" for key, words in _SCALES
              if isinstance(run.attrs.get(key), (int, float, np.floating)) and math.isfinite(run.attrs[key])]
    return "Time scales: " + ", ".join(scales) if scales else None


def _inventory_lines(run: Any) -> list[str]:
    """The largest change of each ion's inventory over the run, relative to its size."""
    if "inventory" not in run.data_vars:
        return []
    inventory = run["inventory"].transpose("time", "ion")
    changes = []
    for j, ion in enumerate(run["ion"].values):
        values = np.asarray(inventory.values[:, j], dtype=float)
        size = float(np.max(np.abs(values)))
        change = float(np.max(np.abs(values - values[0]))) / size if size > 0 else math.nan
        changes.append(f"{ion} {number(change, 2)}")
    return ["Inventory of each ion (conserved in a closed section), largest relative change over the run: "
            + ", ".join(changes)]


def _accuracy_lines(run: Any) -> list[str]:
    lines = []
    difference = run.attrs.get("closed_equilibrium_difference")
    if isinstance(difference, (int, float, np.floating)):
        lines.append("Final state against the equilibrium of the closed section: " + (
            f"relative difference {number(float(difference), 2)}" if math.isfinite(difference) else "not compared"))
    potential, inventory = (run.attrs.get(f"reservoir_{what}_difference") for what in ("potential", "inventory"))
    if isinstance(potential, (int, float, np.floating)) and isinstance(inventory, (int, float, np.floating)):
        lines.append("The closed section's equilibrium against the reservoir's (same walls, ions free to come and "
                     f"go): potential {number(1e3 * float(potential), 3)} mV apart at most, inventory "
                     f"{number(float(inventory), 2)} relative")
    if "error_estimate" in run.data_vars:
        estimate = np.asarray(run["error_estimate"].values, dtype=float)
        lines.append(f"Error estimate: {number(float(np.nanmax(estimate)), 2)} (relative, largest over the run)"
                     if estimate.size else "Error estimate: none")
    return lines


def _check(run: Any) -> None:
    import xarray as xr

    if not isinstance(run, xr.Dataset) or "time" not in run.coords:
        raise InputError(f"run: {type(run).__name__} is not a transient run, expected the xarray.Dataset of "
                         "edl.transient (with a 'time' coordinate)")


def transient_report(run: Any) -> str:
    """The report of a transient run, as text (lines end with a newline).

    Parameters
    ----------
    run : xarray.Dataset
        The return of ``edl.transient`` or ``edl_solver.io.transient_file.read_transient``; variables it lacks
        are left out.

    Returns
    -------
    str

    Raises
    ------
    InputError
        ``run`` is not a Dataset with a ``time`` coordinate.
    """
    _check(run)
    startup = run.attrs.get("kind", "flow start-up" if "concentration" not in run.data_vars else "") == "flow start-up"
    times = np.asarray(run["time"].values, dtype=float)
    title = "Flow start-up after a step of the drives" if startup else "Transient Poisson-Nernst-Planck run"
    lines = [title, f"Case after the step: {run.attrs.get('case', 'not stated')}", *_step_lines(run)]
    if not startup:
        lines += _drive_lines(run)
    scales = _scale_line(run)
    if scales:
        lines.append(scales)
    if times.size:
        lines.append(f"Output: {times.size} times from {prefixed(times[0], 's')} to {prefixed(times[-1], 's')}")
    table = _table(run, _geometry(run))
    if table:
        lines += ["Values at chosen times:", *table]
    if not startup:
        lines += _inventory_lines(run)
    lines += _accuracy_lines(run)
    if run.attrs.get("note"):
        lines.append(f"Note: {run.attrs['note']}")
    return "\n".join(lines) + "\n"

