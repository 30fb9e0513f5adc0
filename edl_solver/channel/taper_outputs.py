"""What the outputs of ``edl transport`` show of a tapered channel: its shape, kept in the channel dataset's
attributes (the dataset alone then draws and describes it), and the rectification |I(+V)/I(-V)| read from an
I-V curve that has both signs of a voltage (``rectification.rectification_ratio`` solves such pairs anew)."""

from __future__ import annotations

from typing import Any

import numpy as np

__all__ = ["curve_rectification", "shape_attrs", "shape_notes", "shape_words", "wall_words"]

#: The long-channel model asks for a channel this many times longer than its widest section, at least.
LONG_CHANNEL = 10.0
#: And for walls this gently sloped, at most (|d(radius or half-height)/dx|; about 6 degrees).
GENTLE_SLOPE = 0.1


def shape_notes(channel: Any) -> tuple[str, ...]:
    """Where a channel strains the model's assumptions: each section in local equilibrium with fluxes along x
    only, which asks for a channel much longer than its section and walls that slope gently (the lubrication, or
    long-wave, approximation: common practice). Notes, not refusals (no semicolons: they are joined by "; "); ()
    for a uniform channel or one within them.
    """
    shape = channel.size
    if shape is None:
        return ()
    notes = []
    widest = max(shape.sizes) * (2.0 if channel.case.geometry.kind == "capillary" else 1.0)  # a diameter, a height
    if channel.length < LONG_CHANNEL * widest:
        notes.append(f"the channel is only {channel.length / widest:.2g} times as long as its widest section, while "
                     f"the model (fluxes along x only, each section in local equilibrium) asks for {LONG_CHANNEL:g} "
                     "times or more")
    wall = np.abs(np.diff(shape.sizes) / np.diff(shape.positions))
    wall *= 0.5 if channel.case.geometry.kind == "slit" else 1.0  # a slit's walls at +-H/2
    if wall.size and wall.max() > GENTLE_SLOPE:
        notes.append(f"the wall slopes steeply (up to {np.degrees(np.arctan(wall.max())):.3g} degrees), while the "
                     "model assumes a slowly varying section (slopes under about "
                     f"{np.degrees(np.arctan(GENTLE_SLOPE)):.2g} degrees)")
    return tuple(notes)


def shape_attrs(channel: Any) -> dict[str, Any]:
    """The attributes of a channel dataset that describe the ``Channel``'s ``size``: {} for a uniform channel.

    ``size_positions`` and ``size_sizes`` (m, the ``shape.Shape`` rows), ``size_name`` ("radius" or
    "height") and ``size_kind`` ("linear" for a pair, "table" for a table or a sampled callable); for a channel with
    a ``wall_profile``, also ``wall_profile_position`` (m) and ``wall_profile_value`` (the ``WallProfile`` rows),
    ``wall_profile_quantity`` ("zeta", "charge_density" or "site_density") and ``wall_profile_unit`` (SI).
    """
    shape = channel.size
    if shape is None:
        return {}
    attrs = {"size_positions": np.asarray(shape.positions, dtype=float), "size_sizes": np.asarray(shape.sizes,
                                                                                                   dtype=float),
             "size_name": channel.case.geometry.size_name, "size_kind": "linear" if len(shape.sizes) == 2 else "table"}
    notes = shape_notes(channel)
    if notes:
        attrs["notes"] = "; ".join(notes)
    profile = channel.wall_profile
    if profile is not None:
        attrs.update({"wall_profile_position": np.asarray(profile.positions, dtype=float),
                      "wall_profile_value": np.asarray(profile.values, dtype=float),
                      "wall_profile_quantity": profile.quantity, "wall_profile_unit": profile.unit})
    return attrs


def shape_words(attrs: Any) -> str | None:
    """The shape in words from ``shape_attrs`` attributes ("radius 5 nm at x = 0 to 40 nm at x = L, linear"), and
    the wall profile's when there is one (``wall_words``), or None for a uniform channel."""
    from edl_solver.report.formatting import prefixed

    if "size_sizes" not in attrs:
        return None
    sizes = np.atleast_1d(np.asarray(attrs["size_sizes"], dtype=float))
    name = str(attrs.get("size_name", "size"))
    wall = wall_words(attrs)
    wall = "" if wall is None else f"; {wall}"
    if sizes.min() == sizes.max():  # a straight channel whose wall varies along x
        return f"{name} {prefixed(sizes[0], 'm')} all along (straight){wall}"
    if str(attrs.get("size_kind")) == "linear":
        return (f"{name} {prefixed(sizes[0], 'm')} at x = 0 to {prefixed(sizes[-1], 'm')} at x = L, linear (a taper)"
                f"{wall}")
    return (f"{name} from a table of {sizes.size} rows (a table or a sampled callable): {prefixed(sizes[0], 'm')} "
            f"at x = 0, {prefixed(sizes[-1], 'm')} at x = L, from {prefixed(sizes.min(), 'm')} to "
            f"{prefixed(sizes.max(), 'm')}{wall}")


def wall_words(attrs: Any) -> str | None:
    """The wall profile in words from ``shape_attrs`` attributes, short enough for a figure's title ("wall charge
    density -20 mC/m^2 to 18 mC/m^2", x = 0 to L; a table of more rows adds their count and range), or None without
    one."""
    from edl_solver.report.formatting import prefixed

    if "wall_profile_value" not in attrs:
        return None
    values = np.atleast_1d(np.asarray(attrs["wall_profile_value"], dtype=float))
    unit = str(attrs.get("wall_profile_unit", ""))

    def value(v: float) -> str:
        return f"{v * 1e-18:.4g} nm^-2" if unit == "1/m^2" else prefixed(v, unit)

    quantity = str(attrs.get("wall_profile_quantity", "value")).replace("_", " ")
    rows = f" ({values.size} rows, {value(values.min())} to {value(values.max())})" if values.size > 2 else ""
    return f"wall {quantity} {value(values[0])} to {value(values[-1])}{rows}"


def curve_rectification(data: Any) -> tuple[np.ndarray, np.ndarray] | None:
    """(|V|, |I(+V)/I(-V)|) of a channel dataset: its ``rectification`` variable when it has one, else the pairs
    +V, -V of its I-V curve (both converged, matched to 1e-9 of the largest |V|); None when there is none."""
    if "rectification" in data.variables:
        return (np.asarray(data["voltage_magnitude"].values, dtype=float),
                np.asarray(data["rectification"].values, dtype=float))
    if "voltage" not in data.dims or "current" not in data.variables:
        return None
    v = np.asarray(data["voltage"].values, dtype=float)
    current = np.asarray(data["current"].values, dtype=float)
    ok = np.asarray(data["status"].values) == 0 if "status" in data.variables else np.isfinite(current)
    tolerance = 1e-9 * float(np.max(np.abs(v))) if v.size else 0.0
    magnitudes, ratios = [], []
    for k in np.flatnonzero((v > 0.0) & ok):
        match = np.flatnonzero(ok & (np.abs(v + v[k]) <= tolerance))
        if match.size and current[match[0]] != 0.0:
            magnitudes.append(v[k])
            ratios.append(abs(current[k] / current[match[0]]))
    if not magnitudes:
        return None
    order = np.argsort(magnitudes)
    return np.asarray(magnitudes)[order], np.asarray(ratios)[order]
