"""Ion current rectification against the salt concentration: |I(+V) / I(-V)| of a channel between two reservoirs
both at c, for each c of a list, with kappa a_tip (a_tip the smallest size of the channel's shape).

Signs as in ``edl_solver.channel.rectification``: Delta V = V(L) - V(0), I positive along +x; a ratio above 1
means the larger current flows when the right reservoir (x = L) is the positive one.

Cost: the cross-section relations are tabulated ONCE for the whole curve, over (ln c, ln size) from the lowest
concentration / ``Channel.concentration_span`` to the highest times it (``taper_table``), with as many concentration
nodes per unit of ln c as the channel's own table (``channel.points`` over 2 ln of the span), at most 400;
each concentration is then solved along x on that table (``taper_path.TaperPath`` with the reservoirs at c). A
curve of one concentration uses exactly the table of ``Channel(..., c, c)``; with more, a point differs from that
of its own channel by the interpolation error of the two tables (the same equations on different nodes).
"""

from __future__ import annotations

import dataclasses
import json
import math
from typing import Any

import numpy as np

from edl_solver.channel.model import Channel, ChannelTable, tabulate
from edl_solver.channel.point import CONVENTIONS, STATUS_TEXT
from edl_solver.channel.taper_table import _end_access
from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.geometry import extent_unit
from edl_solver.inputs.units import to_si

__all__ = ["rectification_curve"]

#: Most concentration nodes of the shared table (``Channel.points``' own bound).
_MOST_NODES = 400


def _concentrations(values: Any) -> np.ndarray:
    out = []
    for value in np.ravel(np.asarray(values, dtype=object)):
        c = to_si(value, "mol/m^3", "concentrations")
        if not (math.isfinite(c) and c > 0.0):
            raise InputError(f"concentrations: {value!r} is not allowed, expected positive salt concentrations "
                             "in mol/m^3 (or '1 mM')")
        out.append(c)
    if not out:
        raise InputError("concentrations: empty, expected at least one salt concentration")
    return np.array(out, dtype=float)


def _voltage(value: Any) -> float:
    voltage = to_si(value, "V", "voltage")
    if not (math.isfinite(voltage) and voltage > 0.0):
        raise InputError(f"voltage: {value!r} is not allowed, expected a positive voltage magnitude in V (or "
                         "'200 mV')")
    return voltage


def _tapered(channel: Any) -> Channel:
    """The channel with a ``size`` (a uniform one gets its case's size at both ends: the same equations)."""
    if not isinstance(channel, Channel):
        raise InputError(f"channel: {type(channel).__name__} is not a Channel, expected edl_solver.channel.Channel")
    if channel.size is not None:
        return channel
    size = channel.case.geometry.size
    return dataclasses.replace(channel, size=(size, size))


def _shared_table(channel: Channel, concentrations: np.ndarray) -> ChannelTable:
    """One table spanning all the concentrations (widened as ``taper_table`` widens a channel's reservoirs)."""
    low, high = float(concentrations.min()), float(concentrations.max())
    own = 2.0 * math.log(channel.concentration_span)
    nodes = min(_MOST_NODES, math.ceil((channel.points - 1) * (own + math.log(high / low)) / own) + 1)
    return tabulate(dataclasses.replace(channel, left_concentration=low, right_concentration=high, points=nodes))


class _Window:
    """A shared table's spline seen over [c / span, c span] only, about the range of the channel's own table
    (``taper_table`` anchors its nodes at c, so its ends fall within a node of these): the path
    clips its Newton iterates to it and refuses a solution that leaves it, as it does on its own table (on the
    whole shared range an iterate can wander to concentrations far from c, and a direct solve fall back to slow
    continuation)."""

    def __init__(self, spline: Any, c: float, span: float):
        span = math.log(span)
        low, high = spline.u_range
        self._spline = spline
        self.u_range = (max(low, math.log(c) - span), min(high, math.log(c) + span))

    def __call__(self, u: np.ndarray, s: np.ndarray) -> np.ndarray:
        return self._spline(u, s)


def _table_at(shared: ChannelTable, channel: Channel, c: float) -> ChannelTable:
    """The shared table's relations for the channel between two reservoirs at c (its path, its access)."""
    from edl_solver.channel.taper_path import TaperPath

    at = dataclasses.replace(channel, left_concentration=c, right_concentration=c)
    ends = _end_access(at)
    windows = [_Window(spline, c, channel.concentration_span) for spline in shared._path.splines]
    path = TaperPath(at, windows, shared._path.basis, ends)
    return dataclasses.replace(shared, channel=at, access_resistance=sum(ends), _path=path)


def _bulk_resistance(channel: Channel, c: float) -> float:
    """The channel's resistance filled with bulk at c: int dx / (K A(x)) plus the access resistances, ohm (ohm m
    per unit width of a slit); A = pi a^2 (capillary) or H (slit), linear pieces integrated exactly."""
    from edl_solver.model.bulk import bulk_conductivity

    case = channel.case
    conductivity = bulk_conductivity(case) / case.electrolyte.ions[0].concentration * c
    x, s = np.array(channel.size.positions), np.array(channel.size.sizes)
    dx, a, b = np.diff(x), s[:-1], s[1:]
    if case.geometry.kind == "capillary":  # int dx / (pi r^2), r linear: dx / (pi a b)
        per_piece = dx / (math.pi * a * b)
    else:  # int dx / h, h linear: dx ln(b/a) / (b - a), dx / a when b = a
        same = np.isclose(a, b, rtol=1e-12)
        per_piece = np.where(same, dx / a, dx * np.log(b / a) / np.where(same, 1.0, b - a))
    return float(per_piece.sum()) / conductivity + sum(_end_access(dataclasses.replace(
        channel, left_concentration=c, right_concentration=c)))


def _point(table: ChannelTable, voltage: float) -> tuple[float, float, str]:
    """(I(+V), I(-V), "" or why the point failed), solved as ``rectification_ratio`` solves it."""
    from edl_solver.channel.operating import current_voltage

    curve = current_voltage(table, [-voltage, voltage])
    status, messages = curve["status"].values, curve["message"].values
    if np.any(status != 0):
        bad = [f"at {v:+.4g} V: {m}" for v, m, s in zip((-voltage, voltage), messages, status) if s != 0]
        return math.nan, math.nan, "; ".join(bad)
    current = curve["current"].values
    return float(current[1]), float(current[0]), ""


def rectification_curve(channel: Channel, concentrations: Any, voltage: float | str) -> Any:
    """|I(+V) / I(-V)| at each salt concentration c, both reservoirs at c (see the module notes).

    Parameters
    ----------
    channel : Channel
        The channel; its reservoirs' concentrations are replaced by each c (all ions scaled with the first, as
        the sweep path "electrolyte.concentration" does). One without a ``size`` is taken as uniform.
    concentrations : sequence of float or str
        Salt concentrations (of the first ion), mol/m^3 (or "1 mM").
    voltage : float or str
        The voltage magnitude V > 0, V (or "200 mV").

    Returns
    -------
    xarray.Dataset
        Dimension ``concentration``: ``rectification`` |I(+V)/I(-V)|, ``current_positive`` and
        ``current_negative`` (I at Delta V = +V and -V), ``conductance_ratio`` (the chord conductance
        |I(+V) - I(-V)| / 2V over that of the channel filled with bulk at c), ``kappa_a_tip``,
        ``debye_length``, ``status`` (0 converged, 1 failed: NaN values) and ``message``; the voltage, the
        table's nodes, solves, seconds and interpolation errors as attributes. A point fails when its solve along
        x does not converge or leaves the table, or when its table fails or is refused (the shared table is then
        replaced by one per point, each covering c / 50 to 50 c).

    Raises
    ------
    InputError
        For a concentration or voltage that is not positive, a channel that is not a Channel, or a table refused
        at every concentration (a table refused at some only fails those points, saying why).
    """
    values, volts = _concentrations(concentrations), _voltage(voltage)
    channel = _tapered(channel)
    try:
        shared: ChannelTable | None = _shared_table(channel, values)
    except (ConvergenceError, InputError):  # a cross-section failed or was refused: one table per point then
        shared = None
    rows, refused = [], []
    for c in values:
        try:
            table = _table_at(shared, channel, c) if shared is not None else tabulate(dataclasses.replace(
                channel, left_concentration=float(c), right_concentration=float(c)))
        except (ConvergenceError, InputError) as error:
            rows.append((math.nan, math.nan, f"the table failed: {error}"))
            refused.append(error)
            continue
        rows.append(_point(table, volts))
    if len(refused) == len(values) and isinstance(refused[0], InputError):
        raise refused[0]  # refused at every concentration: an input error, not a failed point
    return _dataset(channel, values, volts, rows, shared)


def _dataset(channel: Channel, values: np.ndarray, voltage: float, rows: list[tuple[float, float, str]],
             shared: ChannelTable | None) -> Any:
    import xarray as xr

    from edl_solver.inputs.casefile import case_to_mapping

    case = channel.case
    geometry = case.geometry
    positive, negative = (np.array([row[k] for row in rows]) for k in (0, 1))
    failed = np.array([bool(row[2]) for row in rows])
    bulk = np.array([_bulk_resistance(channel, c) for c in values])
    debye = case.debye_length * np.sqrt(case.electrolyte.ions[0].concentration / values)
    tip = min(channel.size.sizes)
    current = extent_unit(("A/m", "A"), geometry)
    data = {
        "rectification": (("concentration",), np.abs(positive / negative),
                          {"units": "1", "long_name": f"rectification |I(+V)/I(-V)| at V = {voltage:.4g} V (above 1: "
                           "more current with the right reservoir, x = L, positive)"}),
        "current_positive": (("concentration",), positive, {"units": current, "long_name": "current along +x at "
                                                                                          "V(L) - V(0) = +V"}),
        "current_negative": (("concentration",), negative, {"units": current, "long_name": "current along +x at "
                                                                                          "V(L) - V(0) = -V"}),
        "conductance_ratio": (("concentration",), np.abs(positive - negative) / (2.0 * voltage) * bulk,
                              {"units": "1", "long_name": "chord conductance |I(+V) - I(-V)| / 2V over that of "
                               "the channel filled with the bulk salt"}),
        "kappa_a_tip": (("concentration",), tip / debye, {"units": "1", "long_name": f"kappa a_tip: the smallest "
                                                          f"{geometry.size_name} over the bulk Debye length"}),
        "debye_length": (("concentration",), debye, {"units": "m", "long_name": "Debye length of the bulk"}),
        "status": (("concentration",), failed.astype(np.int8), {"units": "1", "long_name": STATUS_TEXT}),
        "message": (("concentration",), np.array([row[2] for row in rows], dtype=object),
                    {"long_name": "why a point failed (empty when it converged)"}),
    }
    coords = {"concentration": ("concentration", values, {"units": "mol/m^3", "long_name": "salt concentration of "
                                                          f"both reservoirs (of the first ion, "
                                                          f"{case.electrolyte.ions[0].name})"})}
    attrs: dict[str, Any] = {
        "title": "edl_solver rectification against salt concentration",
        "voltage": voltage, "length": channel.length, "size_name": geometry.size_name, "a_tip": tip,
        "size_positions": np.array(channel.size.positions), "size_sizes": np.array(channel.size.sizes),
        "table": "shared" if shared is not None else "one per concentration",
        "conventions": CONVENTIONS, "case": case.describe(), "geometry": geometry.kind,
        "case_json": json.dumps(case_to_mapping(case)),
    }
    if shared is not None:
        attrs.update(table_concentrations=len(shared.concentrations), table_sizes=len(shared.sizes),
                     table_solves=shared.solves, table_seconds=shared.seconds,
                     interpolation_error=shared.interpolation_error,
                     potential_interpolation_error=shared.potential_interpolation_error)
    return xr.Dataset(data, coords=coords, attrs=attrs)
