"""Figures of the transport coefficients: the electroosmotic pump curve, the conductance against salt
concentration, and the I-V curve of a finite channel.

matplotlib is imported only when a figure is asked for; each figure is a ``matplotlib.figure.Figure`` on its
own Agg canvas (no pyplot state, the process-wide backend untouched) and is written atomically.
Axes are in the units of the text report (``report.units``: mV, one prefix per quantity, µm²/s or fL/s);
slit values are per metre of width, said so on the axis.
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.channel.conductance import checked_length, crossover_concentration
from edl_solver.channel.taper_outputs import shape_words
from edl_solver.errors import InputError
from edl_solver.inputs.geometry import GEOMETRIES
from edl_solver.plot.shared import case_of, new_figure, number, prefix, require_dataset, save_png, section_text
from edl_solver.plot.taper import draw_taper_panels, is_tapered, taper_axes
from edl_solver.report.units import REFERENCE_LENGTH, show, unit_of
from edl_solver.results.result import Result

__all__ = ["conductance_figure", "iv_figure", "pump_curve_figure"]

_FULL, _THIN, _BULK, _PLATEAU, _MARK = "C0", "C3", "0.45", "C2", "C1"
#: A geometry per unit width, for ``report.units`` where a dataset says only that its values are per width.
_SLIT = GEOMETRIES["slit"]


# ----------------------------------------------------------------------------------------------
# The EO pump curve


def _pick(largest: float, candidates: tuple[tuple[str, float], ...]) -> tuple[str, float]:
    """The first (unit, scale) that puts ``largest`` in [1, 1000), else in [0.01, 1e5), else the first."""
    for low, high in ((1.0, 1e3), (1e-2, 1e5)):
        for unit, scale in candidates:
            if low <= largest * scale < high:
                return unit, scale
    return candidates[0]


def _flow_display(per_channel: bool, largest: float) -> tuple[float, str, str]:
    """Scale, unit and axis label of a flow rate, in the report's unit (``report.units``): per channel (a
    capillary), litres with a prefix (1 fL = 1 µm³); per unit width (a slit), µm²/s (µm³/s per µm of width)."""
    shown = show("flow_rate", None if per_channel else _SLIT, largest)
    if per_channel:
        return shown.scale, shown.unit, f"flow rate Q ({shown.unit}; 1 fL = 1 µm³)"
    return shown.scale, shown.unit, f"flow rate per unit width Q/W ({shown.unit},\ni.e. µm³/s per µm of width)"


def _pressure_display(largest: float, length: float | None) -> tuple[float, str, str]:
    """Scale, unit and axis label of the back pressure over a channel of ``length``, or (no length) of the
    back-pressure gradient per µm of channel."""
    if length is not None:
        scale, unit = prefix(largest, "Pa")
        return scale, unit, f"back pressure Δp against the flow ({unit})"
    scale, unit = prefix(largest * 1e-6, "Pa")  # per µm of channel
    unit += "/µm"
    return scale * 1e-6, unit, f"back-pressure gradient Δp/L against the flow ({unit})"


#: One line of the pump curve: name, (free flow, stall pressure), colour, line style.
_PumpLine = tuple[str, tuple[float, float], str, str]


def _pump_lines(result: Result, length: float | None) -> tuple[list[_PumpLine], float]:
    """The full model's line and, where it is defined, the thin-layer model's, counted along the full model's
    flow; and that direction (+1 along the field, -1 against it)."""
    s, field = result.summary, result.case.field
    over = length if length is not None else 1.0
    full = (s["eo_pump_flow_per_field"] * field, s["eo_pump_pressure_per_voltage"] * field * over)
    thin = (s["thin_layer_flow_rate_eo"], s["thin_layer_eo_pump_pressure_per_voltage"] * field * over)
    # counted along the full model's flow, so that the curve sits in the first quadrant
    direction = math.copysign(1.0, full[0]) if full[0] != 0.0 else math.copysign(1.0, thin[0] or 1.0)
    full = (direction * full[0], direction * full[1])
    thin = (direction * thin[0], direction * thin[1])
    lines: list[_PumpLine] = [("full model", full, _FULL, "-")]
    if all(math.isfinite(v) for v in thin):
        lines.append(("thin-layer slip model", thin, _THIN, "--"))
    return lines, direction


def _draw_pump_lines(axes: Any, lines: list[_PumpLine], flow: tuple[float, str], pressure: tuple[float, str]) -> None:
    """Each line from its free flow to its stall pressure, both in the legend; the thin-layer errors; a note
    when there is no flow at all."""
    (flow_scale, flow_unit), (pressure_scale, unit) = flow, pressure
    for name, (free, stall), colour, style in lines:
        x = np.array([0.0, stall]) * pressure_scale
        y = np.array([free, 0.0]) * flow_scale
        text = f"{name}: free flow {number(y[0])} {flow_unit}, stall {number(x[1])} {unit}"
        axes.plot(x, y, color=colour, ls=style, lw=2.0, marker="o", ms=6, label=text)
    full = lines[0][1]
    thin = lines[1][1] if len(lines) == 2 else None
    if thin is not None and full[0] != 0.0 and full[1] != 0.0:
        axes.plot([], [], " ", label=f"thin-layer error: free flow {100 * (thin[0] / full[0] - 1):+.3g} %, "
                                     f"stall {100 * (thin[1] / full[1] - 1):+.3g} %")
    if full[0] == 0.0 and (thin is None or thin[0] == 0.0):
        axes.text(0.5, 0.5, "no electroosmotic flow: the walls are uncharged", transform=axes.transAxes,
                  ha="center")


def pump_curve_figure(result: Result, path: str | os.PathLike[str], length: float | str | None = None) -> Path:
    """Write a PNG of the linear electroosmotic pump curve at the case's field: flow against back pressure.

    The section's response matrix gives, per unit length, Q = M_QE E - M_QP dp/dx (``_summary.lab_quantities``):
    with a back pressure Delta p rising along the flow over a channel of length L, the flow falls linearly
    from the free flow Q_0 = M_QE E (``eo_pump_flow_per_field`` times E) to zero at the stall pressure
    Delta p_0 = (M_QE / M_QP) E L (``eo_pump_pressure_per_voltage`` times the voltage E L). The thin-layer
    model's line joins its plug flow at the Helmholtz-Smoluchowski slip (``thin_layer_flow_rate_eo``) and its
    stall pressure (``thin_layer_eo_pump_pressure_per_voltage`` times E L). Without a length the abscissa is the
    back-pressure gradient Delta p / L. The legend gives both ends of each line and the thin-layer errors.

    Parameters
    ----------
    result : Result
        A solve of a case with a field.
    path : str or PathLike
        PNG file to create or replace (atomically); its directory must exist.
    length : float or str, optional
        Channel length L, m (or "10 um").

    Returns
    -------
    Path

    Raises
    ------
    InputError
        If ``result`` is not a Result, its case has no field, ``length`` is not a positive length, or ``path``
        cannot be written.
    """
    if not isinstance(result, Result):
        raise InputError(f"result: {type(result).__name__} is not a Result, expected the return of solve()")
    case = result.case
    if case.field == 0.0:
        raise InputError("result: its case has no field (E = 0), expected a case with a field for the pump curve, "
                         "e.g. field = '10 kV/m'")
    channel_length = checked_length(length)
    field = case.field
    lines, direction = _pump_lines(result, channel_length)
    flow_scale, flow_unit, flow_label = _flow_display(case.geometry.extent == "per_channel",
                                                      max(abs(v[0]) for _, v, _, _ in lines))
    pressure_scale, unit, pressure_label = _pressure_display(max(abs(v[1]) for _, v, _, _ in lines),
                                                             channel_length)

    figure = new_figure(7.4, 5.4)
    axes = figure.subplots()
    _draw_pump_lines(axes, lines, (flow_scale, flow_unit), (pressure_scale, unit))
    axes.axhline(0.0, color="0.6", lw=0.8)
    axes.axvline(0.0, color="0.6", lw=0.8)
    axes.set_xlabel(pressure_label)
    along = "the field's direction, +x" if direction * field > 0 else "against the field, -x"
    axes.set_ylabel(f"{flow_label}\nalong the pump's flow ({along})")
    axes.grid(True, lw=0.4, alpha=0.5)
    axes.legend(fontsize="small", loc="upper right")
    drive = f"E = {number(field / 1e3)} kV/m" if abs(field) >= 1e3 else f"E = {number(field)} V/m"
    if channel_length is not None:
        drive += (f" over L = {show('length', None, channel_length)(channel_length)} "
                  f"(ΔV = {show('potential', None)(abs(field) * channel_length)})")
    figure.suptitle(f"Electroosmotic pump curve at {drive}\n{section_text(case)}", fontsize="medium")
    return save_png(figure, path)


# ----------------------------------------------------------------------------------------------
# Conductance against concentration


def _conductance_display(per_channel: bool, per_length: bool, largest: float) -> tuple[float, str]:
    """Scale and axis label of a conductance in its dataset unit (S*m, S or S/m; see
    ``conductance.conductance_units``), in the report's unit (``report.units``): a conductance per unit length
    as the conductance of a channel 1 µm long; per metre of width for a slit."""
    shown = show("conductance_length" if per_length else "conductance", None if per_channel else _SLIT, largest)
    width = "" if per_channel else " per unit width"
    if per_length:
        return shown.scale, (f"conductance{width} of a {number(REFERENCE_LENGTH * 1e6)} µm long channel, "
                             f"G·L / 1 µm ({shown.unit})")
    return shown.scale, f"conductance{width} G{'' if per_channel else '/W'} ({shown.unit})"


#: The counter-ion conduction of a wall of uniform charge, perimeter x mu |sigma|, in the symbols of each
#: geometry (per unit width of a slit: its two walls); a geometry not listed gets the general form.
_PLATEAU_FORMULAS = {"slit": "2μ|σ|", "capillary": "2πaμ|σ|"}


def _plateau_formula(kind: object, two_walls: bool) -> str:
    if two_walls:  # a (bottom, top) pair of walls
        return "μ|σ_bottom + σ_top|"
    return _PLATEAU_FORMULAS.get(str(kind), "Pμ|σ| (P the wetted perimeter)")


def _curve_values(data: Any) -> dict[str, np.ndarray]:
    """The values of a conductance curve (sorted by concentration): failed solves (status != 0) are NaN; ``ok``
    marks the others."""
    c = data["concentration"].values.astype(float)
    status = data["status"].values if "status" in data.variables else np.zeros(c.size, dtype=int)
    ok = status == 0
    values = {"concentration": c, "ok": ok, "bulk": data["bulk_conductance"].values.astype(float)}
    for key, name in (("full", "conductance"), ("conduction", "plateau_conduction"), ("estimate", "plateau_estimate")):
        values[key] = np.where(ok, data[name].values.astype(float), np.nan)
    return values


def _draw_conductance(axes: Any, data: Any, curve: dict[str, np.ndarray], scale: float, formula: str) -> None:
    """The full model, the bulk line, the counter-ion estimates (``formula``: the conduction's), and the
    crossover of bulk line and plateau."""
    c = curve["concentration"]

    def positive(values: np.ndarray) -> np.ndarray:
        return np.where(np.isfinite(values) & (values > 0), values * scale, np.nan)

    axes.plot(c, positive(curve["full"]), color=_FULL, ls="-", lw=2.0, marker="o", ms=4, label="full model")
    axes.plot(c, positive(curve["bulk"]), color=_BULK, ls="--", lw=1.6, label="bulk line K(c)·A (thin-layer model)")
    # the estimates are drawn over the full model, so that where they agree both stay visible
    if np.isfinite(positive(curve["estimate"])).any():
        axes.plot(c, positive(curve["estimate"]), color=_PLATEAU, ls="-.", lw=1.6, zorder=3,
                  label="counter-ions only: conduction + their EO convection")
    axes.plot(c, positive(curve["conduction"]), color=_PLATEAU, ls=":", lw=1.6, zorder=3,
              label=f"counter-ions only: conduction {formula}, μ = |z|eD/kT")
    crossing = crossover_concentration(data)
    if math.isfinite(crossing):
        axes.axvline(crossing, color=_MARK, lw=1.0, ls=(0, (2, 2)))
        axes.annotate(f"bulk line = counter-ion estimate\nat c ≈ {number(crossing)} mM", (crossing, 0.04),
                      xycoords=("data", "axes fraction"), xytext=(6, 0), textcoords="offset points",
                      fontsize="small", color=_MARK)


def conductance_figure(dataset: Any, path: str | os.PathLike[str]) -> Path:
    """Write a PNG of the conductance against salt concentration, log-log, with its two limits.

    The full model (points and line), the bulk line K(c) A and the counter-ion plateau of
    ``conductance.conductance_curve``: conduction by the counter-ions alone, mu |q| (dotted), and with
    their electroosmotic convection (dash-dot) where the closed form exists. Where the bulk line crosses the
    plateau a vertical line marks the concentration at which the counter-ions of the double layers carry as
    much current as the bulk does. Failed solves are left out (and counted on the figure).

    Parameters
    ----------
    dataset : xarray.Dataset
        The return of ``conductance.conductance_curve`` (or its group of an ``edl transport`` file).
    path : str or PathLike
        PNG file to create or replace (atomically).

    Returns
    -------
    Path

    Raises
    ------
    InputError
        If ``dataset`` lacks the curve's variables or ``path`` cannot be written.
    """
    names = ("concentration", "conductance", "bulk_conductance", "plateau_conduction", "plateau_estimate")
    require_dataset(dataset, names, "a conductance curve", "the return of conductance_curve()")
    data = dataset.sortby("concentration")
    curve = _curve_values(data)
    geometry = GEOMETRIES.get(str(dataset.attrs.get("geometry")))
    per_channel = geometry is not None and geometry.extent == "per_channel"
    per_length = "length_m" not in dataset.attrs
    drawn = (curve["full"], curve["bulk"], curve["conduction"], curve["estimate"])
    shown = np.concatenate([v[np.isfinite(v) & (v > 0)] for v in drawn])
    scale, label = _conductance_display(per_channel, per_length, float(shown.max()) if shown.size else math.nan)

    figure = new_figure(7.4, 5.6)
    axes = figure.subplots()
    axes.set_xscale("log")
    axes.set_yscale("log")
    formula = _plateau_formula(dataset.attrs.get("geometry"), np.ndim(dataset["wall_charge_density"]) != 1)
    _draw_conductance(axes, data, curve, scale, formula)
    notes = []
    case = case_of(dataset)
    if case is not None and any(wall.kind == "potential" for wall in case.walls):
        notes.append("a wall of fixed ζ: its charge σ falls with c, so there is no plateau")
    failed = int(np.count_nonzero(~curve["ok"]))
    if failed:
        notes.append(f"{failed} solve(s) failed, not shown")
    first = dataset.attrs.get("first_ion", "first ion")
    axes.set_xlabel(f"salt concentration c (mM, of {first})")
    axes.set_ylabel(label)
    axes.grid(True, which="major", lw=0.4, alpha=0.5)
    axes.grid(True, which="minor", lw=0.3, alpha=0.2)
    axes.legend(fontsize="small", loc="upper left")
    title = "Conductance against salt concentration"
    if not per_length:
        length = float(dataset.attrs["length_m"])
        title += f", channel length L = {show('length', None, length)(length)}"
    if case is not None:
        title += f"\n{section_text(case, concentrations=False)}"
    figure.suptitle("\n".join([title, *(f"({note})" for note in notes)]), fontsize="medium")
    return save_png(figure, path)


# ----------------------------------------------------------------------------------------------
# The I-V curve of a finite channel


def _zero_crossing(v: np.ndarray, i: np.ndarray) -> float:
    """The voltage where the current changes sign, linearly interpolated; NaN if it does not."""
    for k in range(len(v) - 1):
        if i[k] == 0.0:
            return float(v[k])
        if i[k] * i[k + 1] < 0.0:
            return float(v[k] - i[k] * (v[k + 1] - v[k]) / (i[k + 1] - i[k]))
    return math.nan


def _current_display(per_channel: bool, largest: float) -> tuple[float, str, str]:
    """Scale, unit and axis label of a current, in the report's unit (``report.units``): per channel in A,
    per metre of width in A/m, with one prefix."""
    shown = show("current", None if per_channel else _SLIT, largest)
    if per_channel:
        return shown.scale, shown.unit, f"current I, positive from left to right ({shown.unit})"
    return (shown.scale, shown.unit,
            f"current per unit width I/W, positive from left to right\n({shown.unit}, per metre of width)")


@dataclass(frozen=True)
class _IV:
    """An I-V curve as drawn: voltages (V) and currents (NaN where a point failed; ``ok`` marks the others),
    the scales and units of both axes, whether the current is per channel and the reservoirs are equal."""

    data: Any
    v: np.ndarray
    current: np.ndarray
    ok: np.ndarray
    v_scale: float
    v_unit: str
    i_scale: float
    i_unit: str
    i_label: str
    per_channel: bool
    equal: bool


def _open_circuit(axes: Any, iv: _IV) -> float:
    """Mark the zero-current point (the membrane potential; interpolated when the dataset lacks it); its
    voltage, V (NaN if the current does not change sign)."""
    if "membrane_potential" in iv.data.variables:
        v_oc, how = float(iv.data["membrane_potential"]), ""
    else:
        v_oc, how = _zero_crossing(iv.v[iv.ok], iv.current[iv.ok]), " (interpolated)"
    if math.isfinite(v_oc):
        text = "zero current at ΔV = 0 (equal reservoirs)" if iv.equal else \
            f"zero current: membrane potential {show('potential', None)(v_oc, signed=True)}{how}"
        axes.plot([v_oc * iv.v_scale], [0.0], ls="none", marker="D", ms=8, color=_THIN, zorder=5, label=text)
    return v_oc


def _power_points(axes: Any, iv: _IV, v_oc: float) -> None:
    """Between unequal reservoirs: the short-circuit current, the range where the channel delivers power
    (shaded), and the maximum-power point."""
    data = iv.data
    if "short_circuit_current" in data.variables:
        i_sc, how = float(data["short_circuit_current"]), ""
    else:
        i_sc, how = float(np.interp(0.0, iv.v[iv.ok], iv.current[iv.ok])), " (interpolated)"
    if math.isfinite(i_sc):
        axes.plot([0.0], [i_sc * iv.i_scale], ls="none", marker="s", ms=8, color=_MARK, zorder=5,
                  label=f"short circuit (ΔV = 0): I = {_signed(i_sc * iv.i_scale)} {iv.i_unit}{how}")
    if math.isfinite(v_oc) and v_oc != 0.0:
        axes.axvspan(0.0, v_oc * iv.v_scale, color=_MARK, alpha=0.08, lw=0,
                     label="the channel delivers power to a load here (I·ΔV > 0)")
    if "max_power" in data.variables and math.isfinite(float(data["max_power"])):
        v_max = float(data["voltage_at_max_power"])
        power = float(data["max_power"])
        watts = show("power", None if iv.per_channel else _SLIT, power)
        axes.plot([v_max * iv.v_scale], [power / v_max * iv.i_scale if v_max else 0.0], ls="none", marker="*",
                  ms=12, color=_PLATEAU, zorder=5,
                  label=f"maximum power {watts(power)} at ΔV = {show('potential', None)(v_max, signed=True)}")


def _signed(value: float) -> str:
    """A number to 3 significant figures with its sign: '+1.5', '-60.3'."""
    text = number(value)
    return text if text.startswith("-") or text == "0" else f"+{text}"


def _read_iv(dataset: Any) -> _IV:
    """The I-V curve of a dataset, sorted by voltage, with its display scales."""
    data = dataset.sortby("voltage")
    v = data["voltage"].values.astype(float)
    ok = data["status"].values == 0 if "status" in data.variables else np.ones(v.size, dtype=bool)
    current = np.where(ok, data["current"].values.astype(float), np.nan)
    per_channel = str(data["current"].attrs.get("units", "A")) == "A"  # else A/m, per unit width
    equal = math.isclose(float(dataset.attrs.get("left_concentration", 1.0)),
                         float(dataset.attrs.get("right_concentration", 1.0)), rel_tol=1e-12)
    finite = np.abs(current[np.isfinite(current)])
    largest = float(finite.max()) if finite.size and finite.max() > 0 else 1.0
    i_scale, i_unit, i_label = _current_display(per_channel, largest)
    millivolts = unit_of("potential")  # voltages in mV, as in the report
    v_scale, v_unit = millivolts.factor, millivolts.symbol
    return _IV(data, v, current, ok, v_scale, v_unit, i_scale, i_unit, i_label, per_channel, equal)


def iv_figure(dataset: Any, path: str | os.PathLike[str]) -> Path:
    """Write a PNG of the I-V curve of a finite channel, with its zero-current and short-circuit points.

    The current I (positive from the left reservoir to the right one) against the applied voltage
    Delta V = V(right) - V(left) (``channel.current_voltage``). Marked: the membrane potential (zero current;
    the dataset's ``membrane_potential``, else interpolated between the points) and, when the reservoirs
    differ, the short-circuit current (Delta V = 0) and the maximum-power point; between them the channel
    delivers power to a load (I Delta V > 0, shaded). The uncharged channel's curve (``bulk_current``,
    free-solution electrodiffusion) is dashed when the dataset has it. Failed points are left out.

    Parameters
    ----------
    dataset : xarray.Dataset
        The return of ``conductance.channel_characteristics`` (or of ``channel.current_voltage``).
    path : str or PathLike
        PNG file to create or replace (atomically).

    Returns
    -------
    Path

    Raises
    ------
    InputError
        If ``dataset`` has no I-V curve or ``path`` cannot be written.
    """
    require_dataset(dataset, ("voltage", "current"), "an I-V curve", "the return of channel_characteristics() with "
             "voltages, or of channel.current_voltage()")
    iv = _read_iv(dataset)
    data, v = iv.data, iv.v

    tapered = is_tapered(dataset)
    figure = new_figure(11.4 if tapered else 7.6, 5.6)
    axes, panels = taper_axes(figure) if tapered else (figure.subplots(), [])
    axes.axhline(0.0, color="0.6", lw=0.8)
    axes.axvline(0.0, color="0.6", lw=0.8)
    if "bulk_current" in data.variables:
        access = " without access resistance" if float(dataset.attrs.get("access_resistance", 0.0)) > 0 else ""
        axes.plot(v * iv.v_scale, data["bulk_current"].values * iv.i_scale, color=_BULK, ls="--", lw=1.6,
                  label=f"uncharged channel (free-solution electrodiffusion){access}")
    axes.plot(v * iv.v_scale, iv.current * iv.i_scale, color=_FULL, lw=2.0, marker="o", ms=3.5, label="full model")
    v_oc = _open_circuit(axes, iv)
    if not iv.equal:
        _power_points(axes, iv, v_oc)
    failed = int(np.count_nonzero(~iv.ok))
    if failed:
        axes.text(0.02, 0.02, f"{failed} point(s) did not converge, not shown", transform=axes.transAxes,
                  fontsize="small")
    axes.set_xlabel(f"applied voltage ΔV = V(right) − V(left) ({iv.v_unit})")
    axes.set_ylabel(iv.i_label)
    axes.grid(True, lw=0.4, alpha=0.5)
    axes.legend(fontsize="small", loc="best")
    left, right = (float(dataset.attrs.get(k, math.nan)) for k in ("left_concentration", "right_concentration"))
    length = float(dataset.attrs.get("length", math.nan))
    title = (f"I–V curve of a channel of length {show('length', None, length)(length)} between reservoirs of "
             f"{number(left)} mM (left) and {number(right)} mM (right)")
    case = case_of(dataset)
    if case is not None:
        title += f"\n{_iv_section_text(case, dataset, tapered)}"
    if tapered:
        draw_taper_panels(panels, dataset)
        words = shape_words(dataset.attrs)
        title += f"\n{'along x' if 'all along' in words else 'tapered'}: {words}"
    figure.suptitle(title, fontsize="medium")
    return save_png(figure, path)


def _iv_section_text(case: Any, dataset: Any, tapered: bool) -> str:
    """The section line of the I-V figure: the case's, less what varies along x (the size of a tapered channel,
    told on the next line; a wall given by a profile or by segments)."""
    walls = None
    if "wall_profile_value" in dataset.attrs:
        walls = "wall varying along x"
    elif "wall_segment_end" in dataset.variables:
        walls = f"wall in {dataset['wall_segment_end'].size} segments along x"
    return section_text(case, concentrations=False, size=not tapered, walls=walls)
