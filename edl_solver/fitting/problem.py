"""What a fit is asked: the data sets (independent variables, the measured summary quantity, its uncertainty)
and the parameters, read and checked into SI arrays.

A data set is a mapping: keys that are sweepable case inputs (``inputs.paths.PATH_UNITS``) are the independent
variables; the one key that is a summary quantity (``results.schema.SUMMARY_KEYS``) is the measured value;
``"uncertainty"`` (optional) is one absolute standard deviation per point in the SI unit of the measured value.
Values are numbers (SI) or strings with units. Every bad entry is a one-line ``InputError`` naming the field.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.paths import PATH_UNITS, WORD_PATHS, check_conflicts
from edl_solver.results.schema import SUMMARY_KEYS, SUMMARY_UNITS

UNCERTAINTY = "uncertainty"
#: Inputs a fit cannot vary continuously (words and whole numbers) or that are not physics.
_NOT_CONTINUOUS = ("electrolyte.valence", "numerics.accuracy", "tolerance", *WORD_PATHS)
#: Independent variables and parameters that must be positive.
POSITIVE = ("geometry.height", "geometry.radius", "electrolyte.concentration", "solvent.temperature",
            "solvent.relative_permittivity", "solvent.viscosity", "stern_capacitance", "gate_capacitance",
            "density")


@dataclass(frozen=True)
class Dataset:
    """One data set of a fit, SI.

    Attributes
    ----------
    inputs : dict of str to ndarray
        Independent variable path -> its value at each point.
    quantity : str
        The measured summary key.
    values : ndarray
        The measured values.
    uncertainty : ndarray or None
        One absolute standard deviation per point, or None when not given.
    """

    inputs: dict[str, np.ndarray]
    quantity: str
    values: np.ndarray
    uncertainty: np.ndarray | None

    @property
    def size(self) -> int:
        return int(self.values.size)


def is_positive_path(path: str) -> bool:
    """Whether the input at ``path`` is a positive quantity (fitted in log, refused at or below 0)."""
    leaf = path.rsplit(".", 1)[-1]
    return path in POSITIVE or leaf in POSITIVE


def _unit_of(quantity: str) -> str:
    unit = SUMMARY_UNITS[quantity][0]
    return unit if isinstance(unit, str) else unit[0]  # a pair: either extent; numbers are SI as given


def _column(field: str, values: Any, unit: str) -> np.ndarray:
    """One column of a data set as SI floats."""
    from edl_solver.inputs.units import to_si

    if isinstance(values, (str, bytes)) or not isinstance(values, Iterable):
        values = [values]
    out = []
    for i, value in enumerate(values):
        if isinstance(value, bool):
            raise InputError(f"data[{field!r}][{i}]: {value!r} is not a number, expected a value in {unit}")
        if isinstance(value, str):
            converted = to_si(value, unit, f"data[{field!r}][{i}]")
        else:
            try:
                converted = float(value)
            except (TypeError, ValueError):
                raise InputError(f"data[{field!r}][{i}]: {value!r} is not a number, expected a value in "
                                 f"{unit}") from None
        if not math.isfinite(converted):
            raise InputError(f"data[{field!r}][{i}]: {value!r} is not finite, expected a value in {unit}")
        out.append(converted)
    return np.array(out, dtype=float)


def _unknown_key(key: Any) -> InputError:
    import difflib

    known = [*PATH_UNITS, *SUMMARY_KEYS, UNCERTAINTY]
    close = difflib.get_close_matches(str(key), known, n=1, cutoff=0.6)
    hint = f" (did you mean {close[0]!r}?)" if close else ""
    return InputError(f"data: {key!r} is neither a case input nor a summary quantity, expected a sweepable input "
                      f"path (e.g. 'electrolyte.concentration'), one summary key (e.g. 'conductance_per_length') "
                      f"and optionally 'uncertainty'{hint}")


def parse_dataset(data: Any, label: str = "data") -> Dataset:
    """One data mapping -> a checked ``Dataset``."""
    if not isinstance(data, Mapping) or not data:
        raise InputError(f"{label}: {data!r} is not a mapping of columns, expected e.g. "
                         "{'electrolyte.concentration': [...], 'conductance_per_length': [...]}")
    inputs: dict[str, np.ndarray] = {}
    measured = [key for key in data if key in SUMMARY_KEYS]
    for key in data:
        if key in _NOT_CONTINUOUS:
            raise InputError(f"{label}: {key!r} cannot be an independent variable of a fit, expected a "
                             "continuous case input")
        if key not in PATH_UNITS and key not in SUMMARY_KEYS and key != UNCERTAINTY:
            raise _unknown_key(key)
    if len(measured) != 1:
        raise InputError(f"{label}: {len(measured)} summary quantities ({', '.join(measured) or 'none'}), expected "
                         "exactly one measured quantity such as 'conductance_per_length'")
    quantity = measured[0]
    values = _column(quantity, data[quantity], _unit_of(quantity))
    for key in data:
        if key in PATH_UNITS:
            inputs[key] = _column(key, data[key], PATH_UNITS[key])
    check_conflicts(inputs, where=label)
    uncertainty = None
    if UNCERTAINTY in data:
        uncertainty = _column(UNCERTAINTY, data[UNCERTAINTY], _unit_of(quantity))
        bad = np.nonzero(uncertainty <= 0)[0]
        if bad.size:
            value = float(uncertainty[bad[0]])
            raise InputError(f"{label}['uncertainty'][{bad[0]}]: {value!r} is not positive, expected one standard "
                             f"deviation > 0 in {_unit_of(quantity)}")
    for key, column in [*inputs.items(), *([(UNCERTAINTY, uncertainty)] if uncertainty is not None else [])]:
        if column.size != values.size:
            raise InputError(f"{label}[{key!r}]: {column.size} values, expected one per measured point "
                             f"({values.size} values of {quantity!r})")
    for key, column in inputs.items():
        bad = np.nonzero(column <= 0)[0] if is_positive_path(key) else np.array([], dtype=int)
        if bad.size:
            value = float(column[bad[0]])
            raise InputError(f"{label}[{key!r}][{bad[0]}]: {value!r} is not positive, expected a value > 0 in "
                             f"{PATH_UNITS[key]}")
    return Dataset(inputs=inputs, quantity=quantity, values=values, uncertainty=uncertainty)


def parse_data(data: Any) -> list[Dataset]:
    """A data mapping, or a list of them (fitted together with shared parameters) -> the data sets."""
    if isinstance(data, Mapping):
        return [parse_dataset(data)]
    if isinstance(data, (str, bytes)) or not isinstance(data, Sequence) or not data:
        raise InputError(f"data: {data!r} is not a mapping or a list of mappings, expected "
                         "{'electrolyte.concentration': [...], 'conductance_per_length': [...]} or a list of such")
    return [parse_dataset(one, f"data[{i}]") for i, one in enumerate(data)]


def parse_parameters(parameters: Any, datasets: Sequence[Dataset]) -> tuple[list[str], dict[str, float]]:
    """The parameter paths (a list, or a mapping path -> start value) and the start values given.

    Raises
    ------
    InputError
        A path that is not a sweepable continuous input, one also measured as an independent variable, two that
        set the same input, no parameters, or fewer data points than parameters.
    """
    from edl_solver.inputs.units import to_si

    if isinstance(parameters, str) or not isinstance(parameters, Iterable):
        raise InputError(f"parameters: {parameters!r} is not a list of input paths, expected e.g. "
                         "['wall.charge_density']")
    paths = list(parameters)
    if not paths:
        raise InputError("parameters: the list is empty, expected at least one input path to fit")
    starts: dict[str, float] = {}
    for path in paths:
        if not isinstance(path, str) or path not in PATH_UNITS or path in _NOT_CONTINUOUS:
            import difflib

            known = [p for p in PATH_UNITS if p not in _NOT_CONTINUOUS]
            close = difflib.get_close_matches(str(path), known, n=1, cutoff=0.6)
            hint = f" (did you mean {close[0]!r}?)" if close else ""
            raise InputError(f"parameters: {path!r} is not a sweepable input, expected a continuous case input path "
                             f"such as 'wall.charge_density'{hint}")
        if any(path in one.inputs for one in datasets):
            raise InputError(f"parameters: {path!r} is also an independent variable of the data, expected it in "
                             "only one of them")
        if isinstance(parameters, Mapping) and parameters[path] is not None:
            starts[path] = to_si(parameters[path], PATH_UNITS[path], f"parameters[{path!r}]")
            if is_positive_path(path) and not starts[path] > 0:
                raise InputError(f"parameters[{path!r}]: start value {starts[path]!r} is not positive, expected a "
                                 f"value > 0 in {PATH_UNITS[path]}")
    if len(set(paths)) != len(paths):
        raise InputError(f"parameters: {paths!r} names a path twice, expected each parameter once")
    check_conflicts(paths, where="parameters")
    for one in datasets:  # a parameter must not set what an independent variable sets (e.g. zeta and charge)
        check_conflicts([*one.inputs, *paths], where="parameters")
    points = sum(one.size for one in datasets)
    if points < len(paths):
        raise InputError(f"data: {points} point(s) for {len(paths)} parameters, expected at least as many points as "
                         "parameters")
    return paths, starts
