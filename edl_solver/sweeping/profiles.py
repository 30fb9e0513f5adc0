"""Profiles across the section in a sweep, on request: every case's fields on one common set of positions.

Each case is solved on its own wall-clustered grid; a sweep stores its profiles at ``points`` positions
evenly spaced across the section, y/H from 0 (bottom wall) to 1 (top wall) for a slit and r/a from 0 (axis)
to 1 (wall) for a capillary, so that they share one dimension. The values are interpolated from the case's
finest-grid profiles (``Result.profiles``) by a cubic spline through its nodes, which are densest where the
fields vary fastest; structure finer than the spacing of the common positions (a double layer much thinner
than H / points) is sampled, not resolved: ``edl solve`` gives one case's profiles on its own grid.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.results.profiles import Profiles
from edl_solver.results.schema import PROFILE_UNITS

#: Default number of positions across the section.
DEFAULT_POINTS = 101

#: Profile fields of a sweep (variable ``profile_<field>``) and their long names (units: ``PROFILE_UNITS``).
#: The concentrations carry an extra ``ion`` dimension.
PROFILE_FIELDS = {
    "potential": "electric potential relative to the reservoir",
    "concentration": "ion concentration",
    "charge_density": "space-charge density",
    "velocity_eo": "electroosmotic velocity",
    "velocity_pressure": "pressure-driven velocity",
    "velocity": "total velocity (EO plus pressure-driven)",
    "velocity_thin_layer": "velocity of the thin-layer (slip) model",
}
PER_ION = ("concentration",)
POSITION = "position"
ION = "ion"


def check_points(points: Any, where: str = "profiles") -> int:
    """The number of profile positions (0: no profiles), checked."""
    if points is None or points is False or (type(points) is int and points == 0):
        return 0
    if points is True:
        return DEFAULT_POINTS
    if isinstance(points, bool) or not isinstance(points, (int, np.integer)) or points < 2:
        raise InputError(f"{where}: {points!r} is not a number of positions, expected a whole number of at least 2 "
                         f"(or true for {DEFAULT_POINTS})")
    return int(points)


def check_geometry(geometry: Any, points: int, where: str = "profiles") -> int:
    """``points``, unless they are profiles of a rectangle: its fields are 2-D (y, z), which the sweep's profile
    variables (one coordinate across the section) cannot hold; a rectangle's profiles come from
    ``edl_solver.solve``."""
    if points and geometry.kind == "rectangle":
        raise InputError(f"{where}: {points!r} profile positions for a rectangle, whose profiles are 2-D, expected "
                         "no profiles in a sweep of a rectangle (edl_solver.solve gives its RectangleProfiles)")
    return points


def positions(points: int) -> np.ndarray:
    """The common positions across the section, y/H or r/a."""
    return np.linspace(0.0, 1.0, points)


def variable_name(field: str) -> str:
    return f"profile_{field}"




def long_name(field: str) -> str:
    return PROFILE_FIELDS[field]


def unit(field: str) -> str:
    return PROFILE_UNITS[field]


def empty(lead: tuple[int, ...], n_ions: int, points: int) -> dict[str, np.ndarray]:
    """NaN-filled profile arrays for cases of shape ``lead``."""
    return {variable_name(field): np.full((*lead, n_ions, points) if field in PER_ION else (*lead, points), np.nan)
            for field in PROFILE_FIELDS}


def sample(profiles: Profiles, points: int) -> dict[str, np.ndarray]:
    """One case's profiles at the common positions: a cubic spline through its finest-grid nodes."""
    from scipy.interpolate import CubicSpline

    coordinate = np.asarray(profiles.coordinate, dtype=float)
    t = coordinate / coordinate[-1]
    columns = [np.asarray(getattr(profiles, field), dtype=float) for field in PROFILE_FIELDS]
    stacked = np.vstack([c.reshape(-1, t.size) for c in columns])  # (fields + ions - 1, nodes)
    sampled = CubicSpline(t, stacked, axis=1)(positions(points))
    out, row = {}, 0
    for field, column in zip(PROFILE_FIELDS, columns):
        rows = column.shape[0] if column.ndim == 2 else 1
        block = sampled[row:row + rows]
        out[variable_name(field)] = block if field in PER_ION else block[0]
        row += rows
    return out
