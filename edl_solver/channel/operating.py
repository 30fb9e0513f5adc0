"""The operating functions of a finite channel: one steady state, the I-V curve, the membrane potential,
the salt flux and the osmotic (reverse-electrodialysis) power.

Signs as in ``edl_solver.channel.model``: x from the left reservoir (0) to the right one (L),
Delta V = V(L) - V(0), flows positive along +x, P = I Delta V the power delivered to a load; slit values
per unit width. A Channel is tabulated on first use (and cached); pass ``tabulate(channel)`` to control when.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

from edl_solver.channel.model import Channel, ChannelTable, table_of
from edl_solver.channel.path import Path, Uniform
from edl_solver.channel.point import CONVENTIONS, CONVERGED_WORD, FAILED_WORD, STATUS_TEXT, OperatingPoint
from edl_solver.channel.relations import SaltRatios
from edl_solver.channel.taper_outputs import shape_notes
from edl_solver.constants import GAS_CONSTANT
from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.geometry import extent_unit
from edl_solver.inputs.units import to_si
from edl_solver.results.schema import CONVERGED, FAILED

__all__ = [
    "OperatingPoint",
    "OsmoticPower",
    "current_voltage",
    "membrane_potential",
    "operating_point",
    "osmotic_power",
    "salt_flux",
]


def _guess(point: OperatingPoint | None) -> np.ndarray | None:
    if point is None or point.status != CONVERGED_WORD:
        return None
    return np.array([point.volume_flow, point.current, point.voltage, point.unknown_t])


def operating_point(channel: Channel | ChannelTable, voltage: float | str | None = None,
                    current: float | str | None = None, pressure_difference: float | str = 0.0,
                    guess: OperatingPoint | None = None) -> OperatingPoint:
    """The steady state at an applied voltage or an imposed current (exactly one of them).

    Parameters
    ----------
    channel : Channel or ChannelTable
        A Channel is tabulated on first use (and cached); pass ``tabulate(channel)`` to control when.
    voltage : float or str, optional
        Delta V = V(L) - V(0), V.
    current : float or str, optional
        I along +x, A (A/m for a slit).
    pressure_difference : float or str
        Delta p = p(L) - p(0), Pa.
    guess : OperatingPoint, optional
        A nearby solution to start Newton's method from.

    Returns
    -------
    OperatingPoint
        Its ``status`` is "failed" (not raised) when Newton's method does not converge.
    """
    table = table_of(channel)
    if (voltage is None) == (current is None):
        raise InputError(f"operating_point: voltage={voltage!r} and current={current!r}, expected exactly one")
    dp = to_si(pressure_difference, "Pa", "pressure_difference")
    if voltage is not None:
        voltage = to_si(voltage, "V", "voltage")
    else:
        current = to_si(current, "A", "current")
    start = _guess(guess)

    def solve(on: ChannelTable, kept: dict[int, OperatingPoint]) -> list[OperatingPoint]:
        return [on._path.solve(dp, voltage, current, start if on is table else None)]

    return _widened(table, solve)[1][0]


#: Widest concentration span a table is widened to when an I-V point's salt leaves it.
WIDEST_SPAN = 1e4


def _left_table(points: list[OperatingPoint]) -> bool:
    from edl_solver.channel.taper_path import LEAVES_TABLE

    return any(p.status != CONVERGED_WORD and LEAVES_TABLE in p.message for p in points)


def _widened(table: ChannelTable, solve: Callable[[ChannelTable, dict[int, OperatingPoint]], list[OperatingPoint]]
             ) -> tuple[ChannelTable, list[OperatingPoint]]:
    """``solve(table, kept)``, solved again on ever wider tables (``_wider``) while a point's salt leaves the
    table; the table used and its points, those still outside it told why the table was not widened further.
    ``kept``: the points that failed for another reason (``solve`` takes them as they are: a wider table does not
    help them, and failing again is the dearest solve there is)."""
    from edl_solver.channel.taper_path import LEAVES_TABLE

    points = solve(table, {})
    while _left_table(points):
        wider, why = _wider(table)
        if wider is None:
            note = f" (the table was not widened further: {why})"
            return table, [dataclasses.replace(p, message=p.message + note)
                           if p.status != CONVERGED_WORD and LEAVES_TABLE in p.message else p for p in points]
        kept = {k: p for k, p in enumerate(points) if p.status != CONVERGED_WORD and LEAVES_TABLE not in p.message}
        table, points = wider, solve(wider, kept)
    return table, points


def _wider(table: ChannelTable) -> tuple[ChannelTable | None, str]:
    """The table of the channel with a ten times wider ``concentration_span``, at most ``WIDEST_SPAN`` (as many
    concentrations per unit of ln c, at most 400; cached as ``table_of`` caches), or None and why not: a uniform
    channel, ``WIDEST_SPAN`` reached, or a wider table refused (outside the cross-section solver's domain) or
    failed."""
    channel = table.channel
    if channel.size is None:
        return None, "a uniform channel's table is not widened"
    if channel.concentration_span >= WIDEST_SPAN:
        return None, f"its span is the widest, {WIDEST_SPAN:g} times the reservoirs each way"
    now, span = channel.concentration_span, min(10.0 * channel.concentration_span, WIDEST_SPAN)
    width = abs(math.log(channel.left_concentration / channel.right_concentration))
    points = (channel.points - 1) * (width + 2.0 * math.log(span)) / (width + 2.0 * math.log(now))
    wider = dataclasses.replace(channel, concentration_span=span, points=min(400, math.ceil(points) + 1))
    try:
        return table_of(wider), ""
    except (InputError, ConvergenceError) as error:
        return None, f"at a span of {span:g} times the reservoirs each way, {error}"


def membrane_potential(channel: Channel | ChannelTable, pressure_difference: float | str = 0.0) -> float:
    """The zero-current (open-circuit) voltage Delta V = V(L) - V(0), V.

    An ideally cation-selective channel gives the Nernst value -(kT/ze) ln(c_R/c_L); an uncharged one the
    free-solution diffusion potential (Henderson 1907; Planck 1890), for a 1:1 salt
    -(kT/e) (D+ - D-)/(D+ + D-) ln(c_R/c_L).

    Raises
    ------
    ConvergenceError
        If the operating point does not converge.
    """
    point = operating_point(channel, current=0.0, pressure_difference=pressure_difference)
    _raise_failed(point, "membrane_potential")
    return point.voltage


def salt_flux(channel: Channel | ChannelTable, voltage: float | str | None = None,
              pressure_difference: float | str = 0.0) -> float:
    """Salt flux J_s along +x (mol/s of formula units; mol/(m s) for a slit) at the applied voltage, or at
    zero current (open circuit) when ``voltage`` is None.

    Raises
    ------
    ConvergenceError
        If the operating point does not converge.
    """
    point = operating_point(channel, voltage=voltage, current=0.0 if voltage is None else None,
                            pressure_difference=pressure_difference)
    _raise_failed(point, "salt_flux")
    return point.salt_flux


def _raise_failed(point: OperatingPoint, what: str) -> None:
    if point.status != CONVERGED_WORD:
        raise ConvergenceError(f"{what}: {point.message}")


def current_voltage(channel: Channel | ChannelTable, voltages: Any, pressure_difference: float | str = 0.0) -> Any:
    """The I-V curve: the steady state at each applied voltage.

    Parameters
    ----------
    channel : Channel or ChannelTable
    voltages : sequence of float
        Delta V = V(L) - V(0), V.
    pressure_difference : float or str
        Delta p = p(L) - p(0), Pa.

    Returns
    -------
    xarray.Dataset
        Dimension ``voltage``; ``current``, ``volume_flow``, ``salt_flux``, ``power`` (I Delta V, delivered to
        the external circuit), ``channel_voltage``, ``status`` (0 converged, 1 failed), ``message``,
        ``iterations`` and ``quadrature_error`` per voltage, each with ``units`` and ``long_name``; the
        channel and the table's interpolation error as attributes. Points are solved in order of voltage,
        each Newton solve starting from the previous solution. A channel varying along x (``Channel.size``) also
        has the profiles ``concentration_profile``, ``potential_profile`` and ``pressure_profile`` on
        (``voltage``, ``position``) and its table's ``concentration_span``: when the salt of a point leaves the
        table, the whole curve is solved again on a table ten times wider (``_wider``), up to ``WIDEST_SPAN``.

    Raises
    ------
    InputError
        If ``voltages`` is empty or a voltage is not a finite potential.
    """
    table = table_of(channel)
    values = np.atleast_1d(np.asarray([to_si(v, "V", "voltages") for v in np.ravel(np.asarray(voltages, dtype=object))],
                                      dtype=float))
    if values.size == 0:
        raise InputError("voltages: empty, expected at least one voltage, e.g. [-0.5, 0.5] (V)")
    dp = to_si(pressure_difference, "Pa", "pressure_difference")
    table, points = _widened(table, lambda on, kept: _solve_curve(on._path, values, dp, kept))  # one table
    return _curve_dataset(table, values, dp, points)


def _solve_curve(path: Path | Uniform, values: np.ndarray, dp: float,
                 kept: dict[int, OperatingPoint] | None = None) -> list[OperatingPoint]:
    """The points of an I-V curve in the order of ``values``, solved outward from the smallest voltage; those of
    ``kept`` (by index) are taken as they are, not solved."""
    kept = kept or {}
    points: list[OperatingPoint] = [None] * values.size  # type: ignore[list-item]
    order = np.argsort(values, kind="stable")
    centre = int(np.argmin(np.abs(values[order])))

    def solved(k: int, anchors: list) -> OperatingPoint:
        if k in kept:
            return kept[k]
        v = float(values[k])
        return path.continue_to("voltage", anchors, v, dp) if anchors else path.solve(dp, v, None, None)

    first = solved(int(order[centre]), [])
    points[order[centre]] = first
    for direction in (1, -1):  # outward from the smallest voltage, each point continued from the last two
        anchors = [] if first.status != CONVERGED_WORD else [(first.voltage, dp, path.unknowns(first))]
        k = centre + direction
        while 0 <= k < values.size:
            point = solved(int(order[k]), anchors)
            points[order[k]] = point
            if point.status == CONVERGED_WORD:
                anchors = [*anchors, (float(values[order[k]]), dp, path.unknowns(point))][-2:]
            k += direction
    return points


def _curve_dataset(table: ChannelTable, values: np.ndarray, dp: float, points: list[OperatingPoint]) -> Any:
    """The I-V curve as an ``xarray.Dataset`` (see ``current_voltage``)."""
    import xarray as xr

    geometry = table.channel.case.geometry

    def column(name: str, units: str | tuple[str, str], text: str,
               dtype: Any = float) -> tuple[tuple[str], np.ndarray, dict[str, str]]:
        data = np.array([getattr(p, name) for p in points], dtype=dtype)
        return ("voltage",), data, {"units": extent_unit(units, geometry), "long_name": text}

    status = np.array([CONVERGED if p.status == CONVERGED_WORD else FAILED for p in points], dtype=np.int8)
    data = {
        "current": column("current", ("A/m", "A"), "electric current along +x (left to right)"),
        "volume_flow": column("volume_flow", ("m^2/s", "m^3/s"), "volume flow along +x"),
        "salt_flux": column("salt_flux", ("mol/(m*s)", "mol/s"), "salt flux (formula units) along +x"),
        "power": column("power", ("W/m", "W"), "electrical power delivered to the external circuit, I dV"),
        "channel_voltage": column("channel_voltage", "V", "voltage across the channel proper, dV + R_access I"),
        "iterations": column("iterations", "1", "Newton iterations", int),
        "quadrature_error": column("quadrature_error", "1", "estimated relative error of the quadrature along x"),
        "status": (("voltage",), status, {"units": "1", "long_name": STATUS_TEXT}),
        "message": (("voltage",), np.array([p.message for p in points], dtype=object),
                    {"long_name": "solver message"}),
    }
    ch = table.channel
    attrs = {
        "length": ch.length, "left_concentration": ch.left_concentration,
        "right_concentration": ch.right_concentration, "pressure_difference": dp,
        "access_resistance": table.access_resistance,
        "interpolation_error": table.interpolation_error,
        "potential_interpolation_error": table.potential_interpolation_error,
        "conventions": CONVENTIONS,
        "case": ch.case.describe(),
    }
    coords = {"voltage": ("voltage", values, {"units": "V", "long_name": "applied voltage V(L) - V(0)"})}
    if ch.size is not None:  # a channel that varies along x: its table's span, its profiles (the polarisation)
        attrs["concentration_span"] = ch.concentration_span
        notes = shape_notes(ch)
        if notes:
            attrs["notes"] = "; ".join(notes)
        x, profiles = _profiles(ch.length, points)
        data.update(profiles)
        coords["position"] = ("position", x, {"units": "m", "long_name": "x along the channel, left reservoir at 0"})
    return xr.Dataset(data, coords=coords, attrs=attrs)


#: Equal intervals of [0, L] on which the profiles of a channel that varies along x are given.
PROFILE_INTERVALS = 400


def _profiles(length: float, points: list[OperatingPoint]) -> tuple[np.ndarray, dict[str, Any]]:
    """The salt concentration, potential and pressure along x of each point,
    on ``PROFILE_INTERVALS`` equal intervals (NaN for a failed point): monotone cubic (PCHIP) between the solver's
    nodes, which follows the curvature near a narrow tip without overshooting a polarisation layer. They are good to
    the collocation's tolerance (``taper_path.BVP_TOLERANCE``, 1e-4 relative), the fluxes to far better."""
    from scipy.interpolate import PchipInterpolator

    x = np.linspace(0.0, length, PROFILE_INTERVALS + 1)
    rows = {name: np.full((len(points), x.size), np.nan) for name in ("concentration", "potential", "pressure")}
    for k, point in enumerate(points):
        if point.status == CONVERGED_WORD and point.position.size:
            for name, row in rows.items():
                row[k] = PchipInterpolator(point.position, getattr(point, name))(x)
    texts = {"concentration": ("mol/m^3", "salt concentration c(x) of the local equilibrium"),
             "potential": ("V", "potential V(x) of the local equilibrium, against the left reservoir"),
             "pressure": ("Pa", "hydrostatic pressure p(x) - p(0) of the local equilibrium")}
    return x, {f"{name}_profile": (("voltage", "position"), rows[name], {"units": texts[name][0],
                                                                          "long_name": texts[name][1]})
               for name in rows}


@dataclass(frozen=True)
class OsmoticPower:
    """Reverse-electrodialysis power of a channel between reservoirs of different salt concentration.

    Attributes
    ----------
    max_power : float
        Largest electrical power P = I Delta V delivered to a load, over the load, W (W/m for a slit).
    voltage_at_max_power, current_at_max_power : float
        The operating point there, V and A (A/m).
    open_circuit_voltage, short_circuit_current : float
        The membrane potential (V) and the current at Delta V = 0 (A, A/m).
    linear_estimate : float
        I_sc V_oc / 4, the maximum power of a linear source (common practice), W (W/m).
    efficiency : float
        P / (J_s Delta mu_s) at maximum power: electrical power out over the Gibbs energy released by the salt
        flux, Delta mu_s = mu_s(left) - mu_s(right) = RT sum(nu) ln(c_L/c_R) per formula unit.
    efficiency_total : float
        P over the whole free-energy input J_s Delta mu_s + Q (Delta pi - Delta p), Delta pi = RT sum_i
        (c_iR - c_iL) (van 't Hoff), which the second law bounds by 1.
    salt_flux, volume_flow : float
        J_s and Q at maximum power.
    status : str
        "converged", or "failed" when a point did not converge.
    message : str
    """

    max_power: float
    voltage_at_max_power: float
    current_at_max_power: float
    open_circuit_voltage: float
    short_circuit_current: float
    linear_estimate: float
    efficiency: float
    efficiency_total: float
    salt_flux: float
    volume_flow: float
    status: str
    message: str


def osmotic_power(channel: Channel | ChannelTable, pressure_difference: float | str = 0.0) -> OsmoticPower:
    """Maximum electrical power over the load between short circuit and open circuit, and its efficiency.

    P(Delta V) = I(Delta V) Delta V is maximised over Delta V between 0 and the open-circuit voltage
    (bounded Brent search, each point a full channel solve). For a linear I-V curve the maximum is
    I_sc V_oc / 4 at V_oc / 2 (common practice for a linear source).
    """
    from scipy.optimize import minimize_scalar

    table = table_of(channel)
    dp = to_si(pressure_difference, "Pa", "pressure_difference")
    ch = table.channel
    open_circuit = operating_point(table, current=0.0, pressure_difference=dp)
    short = operating_point(table, voltage=0.0, pressure_difference=dp, guess=open_circuit)
    salt = SaltRatios(ch.case)
    rt = GAS_CONSTANT * ch.case.solvent.temperature
    released = rt * salt.total_nu * math.log(ch.left_concentration / ch.right_concentration)
    osmotic = rt * salt.total_concentration * (ch.right_concentration - ch.left_concentration)
    failed = [p for p in (open_circuit, short) if p.status != CONVERGED_WORD]
    if failed:
        return OsmoticPower(*(math.nan,) * 10, status=FAILED_WORD, message=failed[0].message)
    v_oc, i_sc = open_circuit.voltage, short.current
    best = short
    if v_oc != 0.0:
        state = {"last": short}

        def negative_power(v: float) -> float:
            point = operating_point(table, voltage=v, pressure_difference=dp, guess=state["last"])
            if point.status != CONVERGED_WORD:
                raise ConvergenceError(point.message)
            state["last"] = point
            return -point.current * v

        try:
            found = minimize_scalar(negative_power, bounds=sorted((0.0, v_oc)), method="bounded",
                                    options={"xatol": 1e-9 * abs(v_oc)})
            best = operating_point(table, voltage=float(found.x), pressure_difference=dp, guess=state["last"])
        except ConvergenceError as error:
            return OsmoticPower(*(math.nan,) * 10, status=FAILED_WORD, message=str(error))
    power = best.current * best.voltage
    gibbs = best.salt_flux * released
    total = gibbs + best.volume_flow * (osmotic - dp)
    return OsmoticPower(max_power=power, voltage_at_max_power=best.voltage, current_at_max_power=best.current,
                        open_circuit_voltage=v_oc, short_circuit_current=i_sc, linear_estimate=i_sc * v_oc / 4.0,
                        efficiency=power / gibbs if gibbs != 0.0 else math.nan,
                        efficiency_total=power / total if total != 0.0 else math.nan,
                        salt_flux=best.salt_flux, volume_flow=best.volume_flow, status=best.status,
                        message=best.message)
