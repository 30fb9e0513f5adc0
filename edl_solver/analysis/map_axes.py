"""The axes of a validity map: sweepable inputs, and the dimensionless pseudo-axes translated against a base
case into the inputs they set.

Besides the sweepable inputs (dotted paths such as "geometry.height", "geometry.width",
"electrolyte.concentration", "wall.zeta") three dimensionless pseudo-axes are understood and translated,
against the *base* case, into real inputs before anything is solved:

- ``"kappa_h"``: κh, the half-size (half-height of a slit or a rectangle, radius of a capillary) over the Debye
  length of the base electrolyte: the geometry's size is ``κh λ_D · size / half_size`` (``geometry.height =
  2 κh λ_D`` or ``geometry.radius = κh λ_D``). A rectangle keeps its width (unless the other axis is
  ``aspect_ratio``); its κh, half the smaller side over λ_D, is the axis value where W >= H;
- ``"zeta_kT"``: ζ in units of the thermal voltage of the base solvent: ``wall.zeta = value · kT/e``
  (every wall);
- ``"aspect_ratio"``: W/H of a rectangle, its width the value times its height at the point
  (``geometry.aspect_ratio`` of ``inputs.paths``): at the base height, or at the height that ``kappa_h`` or
  ``geometry.height`` on the other axis sets.

A rectangle's points are solved one by one through ``edl_solver.solve`` (its sweep has no compiled batch).

Also the checks of the tolerances, which are fractions between 0 and 1.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import GEOMETRIES

__all__ = ["PSEUDO_AXES", "SIZE_PATHS", "MapAxis", "axis_units", "check_axes", "check_base", "check_pair",
           "checked_tolerance", "checked_tolerances", "map_axes", "path_units", "resolve_axis"]

#: Dimensionless axes translated into case inputs against the base case (see the module docstring).
PSEUDO_AXES: dict[str, str] = {
    "kappa_h": "half-height (slit, rectangle) or radius (capillary) over the Debye length of the base electrolyte",
    "zeta_kT": "wall potential zeta over the thermal voltage kT/e of the base solvent",
    "aspect_ratio": "width over height W/H of a rectangle",
}
#: The size input of every geometry ("geometry.height", "geometry.radius").
SIZE_PATHS: tuple[str, ...] = tuple(geometry.size_path for geometry in GEOMETRIES.values())
#: Inputs that change the Debye length (so they cannot share a map with "kappa_h", which is set
#: against the base case's Debye length).
_DEBYE_PATHS = ("electrolyte.concentration", "solvent.temperature", "solvent.relative_permittivity")


@dataclass(frozen=True)
class MapAxis:
    """One axis as given (``name``, ``values``) and the case input it sets (``path``, ``inputs``, SI)."""

    name: str
    path: str
    values: np.ndarray
    inputs: np.ndarray

    @property
    def pseudo(self) -> bool:
        return self.name in PSEUDO_AXES


def check_base(base: object, field: str = "base") -> Case:
    """``base`` if it is a Case, else a one-line InputError."""
    if not isinstance(base, Case):
        raise InputError(f"{field}: {type(base).__name__} is not a Case, expected edl_solver.Case(...)")
    return base


def _axis_spec(axis: object, field: str) -> tuple[str, Any]:
    """``(path, values)`` from an axis given as a pair."""
    if isinstance(axis, (str, bytes)) or not isinstance(axis, Sequence) or len(axis) != 2 \
            or not isinstance(axis[0], str):
        raise InputError(f"{field}: {axis!r} is not an axis, expected (path, values), e.g. "
                         "('geometry.height', ['5 nm', '50 nm', '500 nm'])")
    return axis[0], axis[1]


def _pseudo_axis(base: Case, name: str, values: Any, field: str) -> MapAxis:
    """A pseudo-axis and the input it sets against the base case."""
    from edl_solver.inputs.units import to_si

    if isinstance(values, (str, bytes)) or not isinstance(values, (Sequence, np.ndarray)) or len(values) == 0:
        raise InputError(f"{field}.{name}: {values!r} is not a list of values, expected a non-empty sequence")
    numbers = np.array([to_si(v, "dimensionless", f"{field}.{name}") for v in values])
    if name == "aspect_ratio":
        if base.geometry.kind != "rectangle":
            raise InputError(f"{field}.aspect_ratio: the base case is a {base.geometry.kind}, expected a rectangle "
                             "(edl_solver.Rectangle, or --rectangle W×H)")
        if not np.all(numbers > 0.0):
            raise InputError(f"{field}.aspect_ratio: {values!r} has a value <= 0, expected positive ratios W/H")
        return MapAxis(name, "geometry.aspect_ratio", numbers, numbers)
    if name == "kappa_h":
        if not np.all(numbers > 0.0):
            raise InputError(f"{field}.kappa_h: {values!r} has a value <= 0, expected positive kappa h")
        geometry = base.geometry
        # size / half_size is exactly 2 (slit) or 1 (capillary): the size is kappa h Debye lengths per half-size
        scale = base.debye_length * (geometry.size / geometry.half_size)
        return MapAxis(name, geometry.size_path, numbers, numbers * scale)
    return MapAxis(name, "wall.zeta", numbers, numbers * base.solvent.thermal_voltage)


def resolve_axis(base: Case, name: object, values: Any, field: str) -> MapAxis:
    """Check an axis and translate a pseudo-axis into the case input it sets."""
    from edl_solver.inputs.paths import WORD_PATHS, make_axes

    if not isinstance(name, str):
        raise InputError(f"{field}: {name!r} is not an axis name, expected an input path such as "
                         f"'geometry.height' or one of {', '.join(PSEUDO_AXES)}")
    if name in PSEUDO_AXES:
        return _pseudo_axis(base, name, values, field)
    if name in WORD_PATHS:
        raise InputError(f"{field}: {name!r} takes words, expected a numeric input for a map axis")
    try:
        axis = make_axes({name: values})[0]
    except InputError as exc:
        pseudo = ", ".join(repr(p) for p in PSEUDO_AXES)
        raise InputError(f"{field}: {exc} (or the dimensionless axes {pseudo})") from None
    numbers = np.array(axis.values[0], dtype=float)
    return MapAxis(name, name, numbers, numbers)


def check_pair(first: MapAxis, second: MapAxis, fields: tuple[str, str]) -> None:
    """Two axes must set different inputs, and a pseudo-axis must not be undone by the other axis."""
    a, b = first, second
    # Wall paths clash when they set the same wall: "wall.zeta" and "wall.charge_density" set every wall,
    # "wall.top.zeta" and "wall.top.charge_density" the same one (a wall has one condition).
    walls = a.path.startswith("wall.") and b.path.startswith("wall.")
    same_wall = walls and bool({a.path, b.path} & {"wall.zeta", "wall.charge_density"}
                               or a.path.rsplit(".", 1)[0] == b.path.rsplit(".", 1)[0])
    same_width = {a.path, b.path} == {"geometry.width", "geometry.aspect_ratio"}  # both set the width
    if a.path == b.path or same_wall or same_width:
        raise InputError(f"{fields[1]}: {b.name!r} sets the same input as {fields[0]} {a.name!r} "
                         f"({b.path}), expected two different inputs")
    for one, other, field in ((a, b, fields[1]), (b, a, fields[0])):
        if one.name == "kappa_h" and other.path in _DEBYE_PATHS:
            raise InputError(f"{field}: {other.name!r} changes the Debye length, which 'kappa_h' is measured "
                             f"against, expected {one.path!r} with {other.name!r} instead of kappa_h")
        if one.name == "zeta_kT" and other.path == "solvent.temperature":
            raise InputError(f"{field}: {other.name!r} changes kT/e, which 'zeta_kT' is measured against, "
                             "expected 'wall.zeta' with a temperature axis")


def check_axes(base: Case, x_axis: tuple[str, Any], y_axis: tuple[str, Any]) -> None:
    """Check the two axes of a map against the base case without solving anything.

    Raises
    ------
    InputError
        An unknown path, bad values (fewer than two, not monotonic, wrong units), two axes setting the
        same input, or a pseudo-axis combined with an axis that changes its reference scale.
    """
    map_axes(check_base(base), x_axis, y_axis)


def map_axes(base: Case, x_axis: Any, y_axis: Any) -> tuple[MapAxis, MapAxis]:
    """The two axes of a map, resolved against the base case and checked (see :func:`check_axes`)."""
    axes = []
    for field, given in (("x_axis", x_axis), ("y_axis", y_axis)):
        name, values = _axis_spec(given, field)
        axis = resolve_axis(base, name, values, field)
        steps = np.diff(axis.values)
        if axis.values.size < 2 or not (np.all(steps > 0) or np.all(steps < 0)):
            raise InputError(f"{field}.{name}: {len(axis.values)} values that are not strictly monotonic, "
                             "expected at least two increasing (or decreasing) values")
        axes.append(axis)
    check_pair(axes[0], axes[1], ("x_axis", "y_axis"))
    return axes[0], axes[1]


def path_units(path: str) -> str:
    """The SI unit of an input path ("1" when it has none)."""
    from edl_solver.inputs.paths import PATH_UNITS

    return PATH_UNITS.get(path, "1")


def axis_units(axis: MapAxis) -> str:
    """The unit of an axis' values: "1" for a pseudo-axis, else its input's SI unit."""
    return "1" if axis.pseudo else path_units(axis.path)


def checked_tolerance(value: object, field: str = "tolerance") -> float:
    """A tolerance as a fraction in (0, 1), from 0.05 or "5 %"."""
    from edl_solver.inputs.units import to_si

    number = to_si(value, "dimensionless", field)
    if not 0.0 < number < 1.0:
        raise InputError(f"{field}: {value!r} is out of range, expected a fraction between 0 and 1 (e.g. "
                         "0.05 or '5 %')")
    return number


def checked_tolerances(values: object) -> tuple[float, ...]:
    """Several tolerances, sorted, each once."""
    if isinstance(values, (str, bytes)) or not isinstance(values, (Sequence, np.ndarray)) or len(values) == 0:
        raise InputError(f"tolerances: {values!r} is not a list of fractions, expected e.g. (0.01, 0.05, 0.10)")
    return tuple(sorted({checked_tolerance(v, "tolerances") for v in values}))
