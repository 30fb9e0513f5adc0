"""The figure of a validity map: |thin-layer error| of the EO flow rate and of the current over the map's
plane, with the tolerance lines and the root-found boundary.

matplotlib is imported only when a figure is asked for; the figure is a ``matplotlib.figure.Figure`` on its
own Agg canvas (no pyplot state, the process-wide backend untouched) and is written atomically. Axes are in
the units of the field (nm, mM, mV, mC/m², or κh and ζ/(kT/e)), logarithmic where the values are.
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.analysis.thin_layer_errors import QUANTITIES
from edl_solver.errors import InputError
from edl_solver.inputs.geometry import GEOMETRIES
from edl_solver.plot.shared import new_figure, save_png, wall_text

__all__ = ["axis_display", "map_figure"]

#: How an axis is shown: SI -> display (value * scale + offset) and its label. "{ion}" is the first
#: ion of the base case.
_DISPLAY: dict[str, tuple[float, float, str]] = {
    "geometry.height": (1e9, 0.0, "channel height H (nm)"),
    "geometry.radius": (1e9, 0.0, "capillary radius a (nm)"),
    "geometry.width": (1e9, 0.0, "channel width W (nm)"),
    "aspect_ratio": (1.0, 0.0, "aspect ratio W/H"),
    "electrolyte.concentration": (1.0, 0.0, "bulk concentration of {ion} (mM)"),
    "wall.zeta": (1e3, 0.0, "wall potential ζ (mV)"),
    "wall.bottom.zeta": (1e3, 0.0, "bottom wall potential ζ (mV)"),
    "wall.top.zeta": (1e3, 0.0, "top wall potential ζ (mV)"),
    "wall.charge_density": (1e3, 0.0, "wall charge density σ (mC/m²)"),
    "wall.bottom.charge_density": (1e3, 0.0, "bottom wall charge density σ (mC/m²)"),
    "wall.top.charge_density": (1e3, 0.0, "top wall charge density σ (mC/m²)"),
    "solvent.temperature": (1.0, -273.15, "temperature (°C)"),
    "solvent.relative_permittivity": (1.0, 0.0, "relative permittivity ε_r"),
    "solvent.viscosity": (1e3, 0.0, "viscosity η (mPa·s)"),
    "field": (1e-3, 0.0, "field E (kV/m)"),
    "pressure_gradient": (1e-8, 0.0, "pressure gradient dp/dx (bar/mm)"),
    "tolerance": (100.0, 0.0, "tolerance (%)"),
    "numerics.accuracy": (1.0, 0.0, "accuracy"),
    "zeta_kT": (1.0, 0.0, "wall potential ζ/(kT/e)"),
}
_PANEL_TITLES = {
    "flow_rate": "EO flow rate: |thin-layer slip − full| / full",
    "current": "Current per field: |bulk conduction K·A − full| / full",
}
_BOUNDARY_COLOUR = "#e8301c"
_FAILED_COLOUR = "0.82"


def axis_display(name: str, table: Mapping[str, Any]) -> tuple[float, float, str]:
    """How an axis is shown: ``(scale, offset, label)``, display value = SI value * scale + offset.

    Parameters
    ----------
    name : str
        An axis path or pseudo-axis.
    table : mapping
        The base case as a plain dict (``case_to_mapping``), for the geometry and the first ion.
    """
    if name == "kappa_h":  # "κh = half-height / Debye length" from the geometry's "κh (half-height / ...)"
        geometry = GEOMETRIES[table["geometry"]["kind"]]
        words = geometry.kappa_text.partition(" (")[2].removesuffix(")")
        return 1.0, 0.0, f"{geometry.kappa_symbol} = {words}"
    scale, offset, label = _DISPLAY.get(name, (1.0, 0.0, name))
    return scale, offset, label.format(ion=table["electrolyte"]["ions"][0]["name"])


def _negated(label: str) -> str:
    """The label of the magnitude of a negative quantity: "wall potential ζ (mV)" -> "... −ζ (mV)"."""
    head, sep, unit = label.rpartition(" (")
    if not sep:
        head, unit = label, ""
    name, _, symbol = head.rpartition(" ")
    return f"{name} −{symbol}" + (f" ({unit}" if sep else "")


def _logarithmic(values: np.ndarray) -> bool:
    """A log axis for positive values spread over more than a decade, or evenly spaced in log."""
    if values.size < 2 or not np.all(values > 0.0):
        return False
    spread = float(values.max() / values.min())
    steps = np.diff(np.log(values))
    geometric = values.size >= 3 and bool(np.allclose(steps, steps[0], rtol=1e-6))
    linear = values.size >= 3 and bool(np.allclose(np.diff(values), values[1] - values[0], rtol=1e-6))
    return spread >= 10.0 if (geometric == linear) else geometric


def _percent(value: float) -> str:
    """A fraction in percent: 0.05 -> "5 %", 100 -> "10,000 %"."""
    number = value * 100.0
    return f"{number:,.0f} %" if number >= 1000.0 else f"{number:.3g} %"


def _case_brief(table: Mapping[str, Any], swept: set[str]) -> str:
    """The fixed part of the base case in one line (inputs set by the axes are left out)."""
    from edl_solver.inputs.casefile import case_from_mapping
    from edl_solver.report.formatting import MODEL_NAMES

    parts = []
    kind = GEOMETRIES[table["geometry"]["kind"]]
    if kind.size_path in swept:
        parts.append(kind.kind)
    else:  # "slit H = 30 nm": the geometry's label, in the middle of a line
        label = kind(table["geometry"][kind.size_name]).label()
        parts.append(label[:1].lower() + label[1:])
    case = case_from_mapping(table)
    ions = case.electrolyte.ions
    if "electrolyte.concentration" in swept:
        parts.append("ions " + ", ".join(ion.name for ion in ions) + " (concentrations swept together)")
    else:
        parts.append(", ".join(f"{ion.name} {ion.concentration:.3g} mM" for ion in ions))
    if case.electrolyte.pH is not None:
        parts.append(f"pH {case.electrolyte.pH:.3g}")
    if not any(path.startswith("wall.") for path in swept):
        parts.append(f"wall {wall_text(case.walls[0])}" if case.symmetric else
                     f"walls {wall_text(case.walls[0])} (bottom), {wall_text(case.walls[1])} (top)")
    if "solvent.temperature" not in swept:
        parts.append(f"{case.solvent.temperature - 273.15:.3g} °C")
    model = MODEL_NAMES.get(case.model, case.model)
    if case.model == "steric" and ions[0].diameter is not None:
        model += f", ion diameter {ions[0].diameter * 1e9:.3g} nm"
    parts.append(model)
    return "; ".join(parts)


def _boundary_label(curve: Any, along_x: bool) -> str:
    side = curve.attrs.get("valid_side", "")
    where = {("above", False): "above", ("below", False): "below", ("above", True): "to the right",
             ("below", True): "to the left"}.get((side, along_x), "")
    text = f"|error| = {_percent(float(curve.attrs['tolerance']))}, root-found"
    text += f": thin-layer model valid {where}" if where else ""
    missing = int(np.isnan(np.asarray(curve.values, dtype=float)).sum())
    if missing:
        text += f"\n(the boundary lies outside the map, or a solve failed, for {missing} of {curve.size} values)"
    return text


def map_figure(ds: Any, path: str | os.PathLike[str], boundary: Any = None) -> Path:
    """Write a PNG of a validity map: |thin-layer error| of the EO flow rate and of the current.

    One panel per quantity: filled contours of |(thin − full)/full| on a log colour scale whose range
    is centred on the boundary's tolerance (0.1 % to 100 % for 5 %; values beyond are clipped, the
    colour bar's arrows), the contour lines at the map's tolerances labelled inside the axes ("1 %"),
    and on each panel its own root-found boundary (``edl_solver.analysis.boundary.boundary_curve``,
    dashed, labelled with its tolerance, the legend below saying where the thin-layer model holds).
    Axes in the units of the field (nm, mM, mV, mC/m², or κh and ζ/(kT/e)), logarithmic where the
    values are. Cases without a converged solution (or with an undefined error) are grey.

    Parameters
    ----------
    ds : xarray.Dataset
        The return of ``edl_solver.analysis.validity_map.validity_map`` (or the file it wrote, opened
        with xarray).
    path : str or PathLike
        PNG file to create or replace (atomically); its directory must exist.
    boundary : xarray.DataArray or False, optional
        A curve to overlay, from ``boundary_curve`` on one axis of the map against the other; it is
        drawn on the panel of its quantity, the other panel keeping the dataset's curve. By default the
        dataset's ``boundary`` and ``boundary_current`` variables where it has them; False for none.

    Returns
    -------
    Path

    Raises
    ------
    InputError
        If ``ds`` is not a validity map, the boundary does not belong to its axes, or ``path`` cannot
        be written.
    """
    x_name, y_name, table = _map_parts(ds)
    curves = _curves_for(ds, boundary, x_name, y_name)
    quantities = [q for q, key in QUANTITIES.items() if key in ds]
    plane = _Plane.of(ds, x_name, y_name, table)
    tolerances = [float(t) for t in np.atleast_1d(ds.attrs.get("tolerances", [0.05]))]
    scale = _ColourScale.around(_main_tolerance(curves, tolerances))

    figure = new_figure(6.4 * len(quantities), 5.9)
    panels = np.atleast_1d(figure.subplots(1, len(quantities), squeeze=False)[0])
    for axes, quantity in zip(panels, quantities):
        error = np.abs(ds[QUANTITIES[quantity]].transpose(y_name, x_name).values.astype(float))
        _draw_panel(figure, axes, plane, error, (tolerances, scale), curves.get(quantity))
        axes.set_title(_PANEL_TITLES[quantity], fontsize="medium")
    figure.suptitle(_figure_title(ds, table, x_name, y_name), fontsize="medium")
    return save_png(figure, path)


def _main_tolerance(curves: Mapping[str, Any], tolerances: list[float]) -> float:
    """The tolerance the colour scale is centred on: the boundary's, else 5 % if the map has it, else the
    middle one of the map's."""
    for curve in curves.values():
        return float(curve.attrs["tolerance"])
    return 0.05 if any(math.isclose(t, 0.05) for t in tolerances) else sorted(tolerances)[len(tolerances) // 2]


@dataclass(frozen=True)
class _ColourScale:
    """The colour scale of the errors, in log10|error|: from ``low`` to ``high`` (whole decades about three
    apart, the tolerance inside, nearer the middle), values beyond clipped to the ends' colours."""

    low: int
    high: int
    tolerance: float

    @classmethod
    def around(cls, tolerance: float) -> _ColourScale:
        # 5 % -> 0.1 % ... 100 %: the 1-10 % band around the tolerance gets a third of the colours
        centre = math.log10(tolerance)
        return cls(math.floor(centre - 1.5), math.ceil(centre + 1.2), tolerance)

    def levels(self, tolerances: list[float]) -> np.ndarray:
        """Eight bands a decade, the tolerances among the edges (so that a colour changes exactly there)."""
        steps = np.arange(self.low, self.high + 1e-9, 0.125)
        marks = [math.log10(t) for t in tolerances if self.low < math.log10(t) < self.high]
        return np.unique(np.round(np.concatenate([steps, marks]), 12))


def _draw_panel(figure: Any, axes: Any, plane: _Plane, error: np.ndarray,
                scale: tuple[list[float], _ColourScale], curve: Any) -> None:
    """One quantity's panel: the contours of |error|, the boundary ``curve`` (None for none), the axes."""
    shown = plane.converged & np.isfinite(error)
    axes.set_facecolor(_FAILED_COLOUR)  # what the contours leave uncovered: failed or undefined cases
    axes.set_xlim(plane.x.min(), plane.x.max())
    axes.set_ylim(plane.y.min(), plane.y.max())
    if shown.any():
        overlaid = float(curve.attrs["tolerance"]) if curve is not None else math.nan
        _contours(figure, axes, plane, error, shown, scale, overlaid)
    if curve is not None:
        _draw_curve(axes, curve, plane.x_name, plane.shown_x, plane.shown_y)
    if not shown.all():
        axes.text(0.01, 0.01, "grey: no converged solution or undefined error", transform=axes.transAxes,
                  fontsize="x-small", color="0.25")
    plane.shown_x.ticks(axes.xaxis)
    plane.shown_y.ticks(axes.yaxis)
    axes.set_xlabel(plane.shown_x.label)
    axes.set_ylabel(plane.shown_y.label)


def _contours(figure: Any, axes: Any, plane: _Plane, error: np.ndarray, shown: np.ndarray,
              scale: tuple[list[float], _ColourScale], overlaid: float) -> None:
    """Filled contours of log10|error| with a percent colour bar, and the tolerance lines (all but
    ``overlaid``, the boundary's own, which the root-found curve draws), labelled inside the axes; every
    tolerance is a labelled tick of the colour bar."""
    from matplotlib.ticker import FixedFormatter, FixedLocator

    tolerances, colours = scale
    x, y = plane.x, plane.y
    # Contoured in log10|error| over log10 of the log axes: the error follows near power laws, so
    # linear interpolation there keeps the tolerance lines smooth on coarse maps.
    data = np.where(shown, np.log10(np.clip(error, 1e-300, None)), np.nan)
    filled = axes.contourf(x, y, data, levels=colours.levels(tolerances), cmap="viridis", extend="both",
                           vmin=colours.low, vmax=colours.high)
    bar = figure.colorbar(filled, ax=axes, shrink=0.9)
    bar.set_label("|(thin − full) / full|")
    marks = [math.log10(t) for t in tolerances if colours.low < math.log10(t) < colours.high]
    ticks = sorted({*range(colours.low, colours.high + 1), *marks})
    bar.ax.yaxis.set_major_locator(FixedLocator(ticks))
    bar.ax.yaxis.set_major_formatter(FixedFormatter([_percent(10.0**t) for t in ticks]))
    bar.ax.yaxis.set_minor_locator(FixedLocator([]))
    inside = [m for m in marks if not math.isclose(m, math.log10(overlaid))] if math.isfinite(overlaid) else marks
    if inside:
        lines = axes.contour(x, y, data, levels=inside, colors="white", linewidths=1.3,
                             linestyles="solid")  # log levels are negative: not dashed
        _label_lines(axes, lines)
    for level in marks:
        overlay = math.isfinite(overlaid) and math.isclose(level, math.log10(overlaid))
        bar.ax.axhline(level, color=_BOUNDARY_COLOUR if overlay else "white", lw=2.0 if overlay else 1.3)


def _inner_point(axes: Any, xs: np.ndarray, ys: np.ndarray) -> tuple[float, float] | None:
    """The point of a line (xs, ys) nearest its middle among those well inside the axes (10 % from each
    edge), where a label stays within the axes; None if the line has none."""
    (x0, x1), (y0, y1) = sorted(axes.get_xlim()), sorted(axes.get_ylim())
    mx, my = 0.1 * (x1 - x0), 0.1 * (y1 - y0)
    inner = np.flatnonzero((xs > x0 + mx) & (xs < x1 - mx) & (ys > y0 + my) & (ys < y1 - my))
    if inner.size == 0:
        return None
    pick = inner[np.argmin(np.abs(inner - (xs.size - 1) / 2.0))]
    return float(xs[pick]), float(ys[pick])


def _label_lines(axes: Any, lines: Any) -> None:
    """Label each tolerance line once ("5 %"), on its longest piece, at a point well inside the axes: the
    automatic placement puts labels at the ends of the lines, half outside the axes."""
    positions = []
    for segments in lines.allsegs:
        longest = max(segments, key=len, default=None)
        point = _inner_point(axes, longest[:, 0], longest[:, 1]) if longest is not None and len(longest) else None
        if point is not None:
            positions.append(point)
    if positions:
        texts = axes.clabel(lines, fmt=lambda level: _percent(10.0**level), fontsize="small", inline=True,
                            manual=positions)
        for text in texts:
            text.set_clip_on(True)


def _figure_title(ds: Any, table: Mapping[str, Any], x_name: str, y_name: str) -> str:
    """The case in brief, without the inputs the axes set; the reference scales of a pseudo-axis."""
    title = "Error of the thin-layer model\n" + _case_brief(table, {ds.attrs.get("x_input", x_name),
                                                                   ds.attrs.get("y_input", y_name)})
    if "kappa_h" in (x_name, y_name) or "zeta_kT" in (x_name, y_name):
        title += _reference_scales(table)
    return title


@dataclass(frozen=True)
class _Shown:
    """How one axis of the map is drawn: display units (value * scale + offset), and on a log axis the
    log10 of that. Log axes are drawn as linear axes of log10(value) with decade ticks, so that the
    contours interpolate in log coordinates, as the data were sampled."""

    scale: float
    offset: float
    label: str
    log: bool

    @classmethod
    def of(cls, name: str, values: Any, table: Mapping[str, Any]) -> _Shown:
        scale, offset, label = axis_display(name, table)
        si = np.asarray(values, dtype=float)
        # Negative values spread over decades (wall charges, potentials) are shown as magnitudes.
        if np.all(si < 0.0) and _logarithmic(-si):
            scale, label = -scale, _negated(label)
        return cls(scale, offset, label, _logarithmic(si * scale + offset))

    def place(self, values: Any) -> np.ndarray:
        shown = np.asarray(values, dtype=float) * self.scale + self.offset
        return np.log10(shown) if self.log else shown

    def ticks(self, axis: Any) -> None:
        """Decades labelled 0.1, 1, 10 (not 10^-1); 2 and 5 labelled too within under two decades."""
        if not self.log:
            return
        from matplotlib.ticker import FixedLocator, FuncFormatter

        low, high = axis.get_view_interval()
        low, high = min(low, high), max(low, high)
        decades = range(math.floor(low) - 1, math.ceil(high) + 1)
        major = [float(k) for k in decades if low - 1e-9 <= k <= high + 1e-9]
        minor = [k + math.log10(m) for k in decades for m in range(2, 10) if low <= k + math.log10(m) <= high]
        axis.set_major_locator(FixedLocator(major))
        axis.set_minor_locator(FixedLocator(minor))
        axis.set_major_formatter(FuncFormatter(lambda u, _: f"{10.0**u:.4g}"))
        few = high - low < 2.0 or len(major) < 2

        def label_minor(u: float, _: Any) -> str:
            mantissa = round(10.0 ** (u - math.floor(u + 1e-9)))
            return f"{10.0**u:.4g}" if few and mantissa in (2, 5) else ""

        axis.set_minor_formatter(FuncFormatter(label_minor))


@dataclass(frozen=True)
class _Plane:
    """The map's plane as drawn: both axes, the display coordinates of their values, and which cases
    converged (y, x)."""

    x_name: str
    shown_x: _Shown
    shown_y: _Shown
    x: np.ndarray
    y: np.ndarray
    converged: np.ndarray

    @classmethod
    def of(cls, ds: Any, x_name: str, y_name: str, table: Mapping[str, Any]) -> _Plane:
        shown_x = _Shown.of(x_name, ds[x_name].values, table)
        shown_y = _Shown.of(y_name, ds[y_name].values, table)
        converged = ds["status"].transpose(y_name, x_name).values == 0
        return cls(x_name, shown_x, shown_y, shown_x.place(ds[x_name].values), shown_y.place(ds[y_name].values),
                   converged)


def _map_parts(ds: Any) -> tuple[str, str, dict[str, Any]]:
    """The axis names and the base case (plain dict) of a validity map, checked."""
    attrs = getattr(ds, "attrs", None)
    if not isinstance(attrs, Mapping) or "x_axis" not in attrs or "case_json" not in attrs:
        raise InputError(f"ds: {type(ds).__name__} is not a validity map, expected the Dataset returned by "
                         "validity_map() or the file it wrote")
    x_name, y_name = str(attrs["x_axis"]), str(attrs["y_axis"])
    missing = [name for name in (x_name, y_name, "status") if name not in ds.variables]
    if missing:
        raise InputError(f"ds: the validity map lacks {missing[0]!r}, expected the Dataset of validity_map()")
    return x_name, y_name, json.loads(attrs["case_json"])


def _curves_for(ds: Any, boundary: Any, x_name: str, y_name: str) -> dict[str, Any]:
    """The boundary curve of each quantity: the dataset's, replaced by ``boundary`` for its quantity."""
    from edl_solver.analysis.validity_map import BOUNDARY_VARIABLES

    if boundary is False:
        return {}
    curves = {q: ds[name] for q, name in BOUNDARY_VARIABLES.items() if name in ds.variables}
    if boundary is None:
        return curves
    dims = getattr(boundary, "dims", None)
    attrs = getattr(boundary, "attrs", {})
    if dims is None or len(dims) != 1 or {dims[0], attrs.get("axis")} != {x_name, y_name}:
        raise InputError(f"boundary: {type(boundary).__name__} is not a curve of this map, expected "
                         f"boundary_curve() along {x_name!r} or {y_name!r} against the other")
    curves[attrs.get("quantity", "flow_rate")] = boundary
    return curves


def _draw_curve(axes: Any, curve: Any, x_name: str, shown_x: _Shown, shown_y: _Shown) -> None:
    """The boundary, in the map's display coordinates, dashed over a white casing so it reads on any colour."""
    import matplotlib.patheffects as effects

    other = curve.dims[0]
    along = np.asarray(curve.values, dtype=float)
    against = np.asarray(curve[other].values, dtype=float)
    along_x = other != x_name
    xs, ys = (along, against) if along_x else (against, along)
    px, py = shown_x.place(xs), shown_y.place(ys)
    axes.plot(px, py, color=_BOUNDARY_COLOUR, lw=2.2, ls=(0, (5, 2)), label=_boundary_label(curve, along_x),
              path_effects=[effects.Stroke(linewidth=4.0, foreground="white"), effects.Normal()])
    finite = np.isfinite(px) & np.isfinite(py)
    point = _inner_point(axes, px[finite], py[finite])
    if point is not None:  # the tolerance on the curve, as on the contour lines, inside the axes
        axes.text(*point, _percent(float(curve.attrs["tolerance"])), color=_BOUNDARY_COLOUR, fontsize="small",
                  fontweight="bold", ha="center", va="center", clip_on=True, zorder=5,
                  bbox={"boxstyle": "round,pad=0.2", "facecolor": "white", "edgecolor": "none", "alpha": 0.85})
    # below the axes: inside, it would hide part of the map (often the curve itself)
    axes.legend(loc="upper center", bbox_to_anchor=(0.5, -0.11), fontsize="small", frameon=False)


def _reference_scales(table: Mapping[str, Any]) -> str:
    """The Debye length and kT/e the pseudo-axes are measured against."""
    from edl_solver.inputs.casefile import case_from_mapping

    case = case_from_mapping(table)
    return (f"\ndimensionless axes against the base case: Debye length {case.debye_length * 1e9:.3g} nm, "
            f"kT/e = {case.solvent.thermal_voltage * 1e3:.4g} mV")
