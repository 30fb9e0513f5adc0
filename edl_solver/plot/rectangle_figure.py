"""The figure of a rectangular section: filled contours of the potential and of the electroosmotic (EO) velocity
over the section, and the velocity along the two mid-lines, each against the thin-layer slip model.

The section is drawn with y across the width and z up. A section up to ``_ELONGATED`` times longer one way than
the other is drawn at equal scale; a longer one gets two panels per field, the whole section with its short side
stretched (the factor is written on the axis) and, at equal scale, one end of it (the side-wall layer and the
corner, which the stretch distorts). Called by ``plot.profiles.profile_figure`` for a rectangle's result.

matplotlib is imported only when a figure is asked for; the figure is a ``matplotlib.figure.Figure`` on its own Agg
canvas (``plot.shared.new_figure``), so pyplot and the process-wide backend are left alone.
"""

from __future__ import annotations

import os
import textwrap
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.constants import ZERO_CELSIUS
from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Rectangle
from edl_solver.model.thin_layer import slip_velocity
from edl_solver.model.walls import isolated_wall
from edl_solver.plot.shared import new_figure, number, prefix, save_png, wall_text
from edl_solver.report.formatting import MODEL_NAMES, prefixed
from edl_solver.results.profiles import RectangleProfiles
from edl_solver.results.result import Result

__all__ = ["rectangle_figure", "thin_layer_per_field"]

#: Sides in a ratio up to this are drawn at equal scale; beyond it, the whole section stretched and one end zoomed.
_ELONGATED = 3.0
#: Height over width of the stretched whole-section box (of a flat section; its inverse for a tall one).
_STRETCHED_BOX = 1.0 / 3.0
#: A section up to this much wider than high has its two maps side by side, a flatter one a row per map.
_SIDE_BY_SIDE = 1.5
#: The zoomed end spans this many short sides along the long one (at most half the section).
_ZOOM_SPAN = 2.0
_LEVELS = 24
_SLIP_COLOURS = ("C3", "C1")


@dataclass(frozen=True)
class _Velocity:
    """The EO velocity as drawn: per unit field when the case has none, in the display unit ``unit``."""

    field: np.ndarray  # (ny, nz), in the display unit
    thin_layer: np.ndarray  # the thin-layer model's field, (ny, nz), display unit
    slips: tuple[tuple[str, float], ...]  # (which walls, thin-layer slip velocity), display unit
    label: str  # the quantity and its unit, for colour bars and axes
    unit: str  # the display unit


def thin_layer_per_field(case: Case) -> tuple[float, float]:
    """The thin-layer (Helmholtz-Smoluchowski) slip velocity per unit field of the (top and bottom, sides) walls,
    m^2/(V s): each wall pair alone in the bulk (``model.walls.isolated_wall``), with its Navier slip
    (``model.thin_layer.slip_velocity``); what ``hs_velocity`` / E is when the case has a field."""
    values = []
    for wall in case.walls:
        zeta, sigma = isolated_wall(wall, case.electrolyte, case.solvent, case.model)
        values.append(slip_velocity(zeta, case.solvent, 1.0, sigma, wall.slip_length))
    return values[0], values[-1]


def _velocity(result: Result) -> _Velocity:
    """The EO velocity of ``result`` in µm/s or mm/s (prefix from the data), or per unit field in (µm/s)/(kV/m)
    when the case has no field (E = 0: the velocity itself is zero)."""
    case, p = result.case, result.profiles
    if case.field != 0.0:  # the slip velocities of the summary, (top and bottom, sides) when they differ
        hs = result.summary["hs_velocity"]
        field, thin, slip = p.velocity_eo, p.velocity_thin_layer, hs if isinstance(hs, tuple) else (hs, hs)
        scale, unit = prefix(max(np.max(np.abs(field)), *map(abs, slip)), "m/s")
        label, shown = f"EO velocity u ({unit})", unit
    else:  # per kV/m: the thin-layer field of equal walls is the plug; that of two slips (the harmonic field on
        # the solver's grid, which the result does not keep) is not drawn, its two slip values are
        field, slip = p.eo_per_field * 1e3, tuple(1e3 * s for s in thin_layer_per_field(case))
        thin = np.full(field.shape, slip[0]) if slip[0] == slip[1] else np.full(field.shape, np.nan)
        scale, unit = prefix(max(np.max(np.abs(field)), *map(abs, slip)), "m/s")
        shown = f"{unit} per kV/m"
        label = f"EO velocity per field u/E ({shown})"
    words = case.geometry.wall_words
    slips = (("all walls", slip[0]),) if case.symmetric else ((words[0], slip[0]), (words[1], slip[1]))
    return _Velocity(field * scale, thin * scale, tuple((w, s * scale) for w, s in slips), label, shown)


def _elongation(geometry: Rectangle) -> float:
    """The long side over the short one."""
    return max(geometry.width, geometry.height) / min(geometry.width, geometry.height)


def _draw_field(axes: Any, p: RectangleProfiles, values: np.ndarray, levels: np.ndarray, cmap: str) -> Any:
    """Filled contours of ``values`` (ny, nz) over the section in nm, y across and z up."""
    return axes.contourf(p.y * 1e9, p.z * 1e9, values.T, levels=levels, cmap=cmap, extend="neither")


def _levels(values: np.ndarray, marks: tuple[float, ...] = ()) -> np.ndarray:
    """Round contour levels over the range of ``values`` and of ``marks`` (so a marked value lies on the colour
    bar)."""
    from matplotlib.ticker import MaxNLocator

    low = min(float(np.nanmin(values)), *marks, np.inf)
    high = max(float(np.nanmax(values)), *marks, -np.inf)
    if high - low <= 1e-9 * max(abs(low), abs(high), 1e-300):
        low, high = low - 0.5, high + 0.5  # a uniform field: one band around its value
    return MaxNLocator(nbins=_LEVELS, steps=[1, 2, 2.5, 5, 10]).tick_values(low, high)


def _mark_slips(axes_list: list[Any], colour_bar: Any, p: RectangleProfiles, velocity: _Velocity) -> None:
    """The thin-layer slip velocity as a dashed line on the colour bar and, where the full velocity reaches it, a
    dashed contour line on the velocity maps; named with its value under the first map's title."""
    lines = []
    for (walls, slip), colour in zip(velocity.slips, _SLIP_COLOURS):
        colour_bar.ax.axhline(slip, color=colour, lw=2.5, ls="--")
        colour_bar.ax.text(-0.3, slip, "u_s", transform=colour_bar.ax.get_yaxis_transform(), ha="right",
                           va="center", color=colour, fontsize="small", clip_on=False)
        reached = np.nanmin(velocity.field) < slip < np.nanmax(velocity.field)
        for axes in axes_list if reached else ():
            axes.contour(p.y * 1e9, p.z * 1e9, velocity.field.T, levels=[slip], colors=colour,
                         linestyles="--", linewidths=1.2)
        where = "dashed contour" if reached else "dashed on the colour bar; the full flow stays below it"
        lines.append(f"thin-layer slip u_s{'' if walls == 'all walls' else f' ({walls})'} = {number(slip)} "
                     f"{velocity.unit} ({where})")
    first = axes_list[0]
    first.set_title(first.get_title() + "\n" + "\n".join(textwrap.fill(line, 60) for line in lines), fontsize="small")


def _frame_section(axes: Any, geometry: Rectangle, zoom: bool) -> str:
    """Limits and aspect of one map: the whole section (stretched when elongated) or its zoomed end at equal
    scale; returns the panel's title."""
    w, h = geometry.width * 1e9, geometry.height * 1e9
    axes.set_xlabel("y, across the width (nm)")
    axes.set_ylabel("z, across the height (nm)")
    if zoom:
        if w >= h:
            axes.set_xlim(0.0, min(_ZOOM_SPAN * h, 0.5 * w))
            axes.set_ylim(0.0, h)
        else:
            axes.set_xlim(0.0, w)
            axes.set_ylim(0.0, min(_ZOOM_SPAN * w, 0.5 * h))
        axes.set_aspect("equal")
        return "one end, to scale"
    axes.set_xlim(0.0, w)
    axes.set_ylim(0.0, h)
    if _elongation(geometry) <= _ELONGATED:
        axes.set_aspect("equal")
        return "the section, to scale"
    box = _STRETCHED_BOX if w >= h else 1.0 / _STRETCHED_BOX
    axes.set_box_aspect(box)
    stretch = box * w / h  # (screen length per nm of z) / (per nm of y)
    if stretch >= 1.0:
        axes.set_ylabel(f"z (nm), stretched ×{number(stretch, 2)}")
        return f"the whole section, z stretched ×{number(stretch, 2)}"
    axes.set_xlabel(f"y (nm), stretched ×{number(1.0 / stretch, 2)}")
    return f"the whole section, y stretched ×{number(1.0 / stretch, 2)}"


def _draw_maps(figure: Any, rows: list[list[Any]], result: Result, velocity: _Velocity) -> None:
    """The potential (first row) and the EO velocity (second row) over the section, a colour bar for each row."""
    p, geometry = result.profiles, result.case.geometry
    potential = p.potential * 1e3
    for row, values, levels, cmap, label in (
            (rows[0], potential, _levels(potential), "cividis", "potential φ (mV), 0 in the reservoir"),
            (rows[1], velocity.field, _levels(velocity.field, tuple(s for _, s in velocity.slips)), "viridis",
             velocity.label)):
        filled = None
        for number_in_row, axes in enumerate(row):
            filled = _draw_field(axes, p, values, levels, cmap)
            title = _frame_section(axes, geometry, zoom=number_in_row == 1)
            axes.set_title(f"{label.split(' (')[0]}\n{title}", fontsize="small")
        colour_bar = figure.colorbar(filled, ax=row, shrink=0.9, pad=0.02, aspect=15)
        colour_bar.set_label(label)
        if values is velocity.field:
            _mark_slips(row, colour_bar, p, velocity)


def _draw_mid_lines(axes_y: Any, axes_z: Any, result: Result, velocity: _Velocity) -> None:
    """The EO velocity along y at z = H/2 and along z at y = W/2, each against the thin-layer model (dashed)."""
    p = result.profiles
    geometry = result.case.geometry
    i = int(np.argmin(np.abs(p.y - 0.5 * geometry.width)))
    j = int(np.argmin(np.abs(p.z - 0.5 * geometry.height)))
    for axes, x, full, thin, name, at in (
            (axes_y, p.y, velocity.field[:, j], velocity.thin_layer[:, j], "y", f"z = H/2 = {number(p.z[j] * 1e9)}"),
            (axes_z, p.z, velocity.field[i, :], velocity.thin_layer[i, :], "z", f"y = W/2 = {number(p.y[i] * 1e9)}")):
        axes.axhline(0.0, color="0.6", lw=0.6)
        axes.plot(x * 1e9, full, color="C0", label="full solution")
        axes.plot(x * 1e9, thin, color=_SLIP_COLOURS[0], ls="--", label="thin-layer slip model")
        for edge in (x[0], x[-1]):
            axes.axvline(edge * 1e9, color="0.35", lw=1.2)
        axes.set_xlabel(f"{name} (nm), at {at} nm")
        axes.set_ylabel(velocity.label.replace("EO velocity ", ""))
        axes.set_title(f"EO velocity along {name} through the centre", fontsize="small")
        axes.grid(True, lw=0.4, alpha=0.5)
    axes_y.legend(fontsize="small", loc="best")


def _title(result: Result) -> str:
    """The case in brief: section and liquid; the walls; drives, model, κh and eo_ratio."""
    case, s = result.case, result.summary
    liquid = ", ".join(f"{ion.name} {ion.concentration:.3g} mM" for ion in case.electrolyte.ions)
    if case.electrolyte.pH is not None:
        liquid += f", pH {case.electrolyte.pH:.3g}"
    liquid += f"; {case.solvent.temperature - ZERO_CELSIUS:.3g} °C"

    def wall(w: Any) -> str:
        return wall_text(w) + (f", slip b = {w.slip_length * 1e9:.3g} nm" if w.slip_length > 0.0 else "")

    words = case.geometry.wall_words
    walls = f"all four walls {wall(case.walls[0])}" if case.symmetric else \
        f"{words[0]} walls {wall(case.walls[0])}; {words[1]} walls {wall(case.walls[1])}"
    drives = f"E = {prefixed(case.field, 'V/m')}"
    if case.pressure_gradient != 0.0:
        drives += f", dp/dx = {prefixed(case.pressure_gradient, 'Pa/m')} (pressure-driven flow not drawn)"
    numbers = f"{case.geometry.kappa_symbol} = {number(s['kappa_h'])}, eo_ratio (full / thin-layer EO flow) = " \
        f"{number(s['eo_ratio'])}"
    return f"{case.geometry.label()}; {liquid}\n{walls}\n{drives}; {MODEL_NAMES.get(case.model, case.model)}\n{numbers}"


def rectangle_figure(result: Result, path: str | os.PathLike[str]) -> Path:
    """Write a PNG of a rectangular section: potential and EO velocity maps, and the velocity on the mid-lines.

    Filled contours of the potential (mV) and of the EO velocity (µm/s or mm/s; per unit field, per kV/m, when
    the case has no field) over the section, y across the width and z up, at equal scale, or for an elongated
    section the whole of it stretched beside one end to scale. The thin-layer slip velocity is a dashed contour
    line on the velocity maps and a dashed line on its colour bar. Below, the velocity along y at z = H/2 and
    along z at y = W/2 against the thin-layer model. The title gives the case, κh, eo_ratio and the verdict.

    Parameters
    ----------
    result : Result
        The result of a rectangle's solve (profiles a ``RectangleProfiles``).
    path : str or PathLike
        PNG file to create or replace (atomically); its directory must exist.

    Returns
    -------
    Path
        ``path`` as a Path.

    Raises
    ------
    InputError
        If ``result`` is not a Result of a rectangle or ``path`` cannot be written.
    """
    if not isinstance(result, Result) or not isinstance(result.profiles, RectangleProfiles):
        raise InputError(f"result: {type(result).__name__} is not a Result of a rectangle, expected the return of "
                         "solve() for a Rectangle")
    velocity = _velocity(result)
    figure, rows, lines = _panels(result.case.geometry)
    _draw_maps(figure, rows, result, velocity)
    _draw_mid_lines(lines[0], lines[1], result, velocity)
    columns = int(12 * figure.get_figwidth())
    title = _title(result) + f"\nVerdict: {result.verdict}"
    figure.suptitle("\n".join(textwrap.fill(line, columns) for line in title.splitlines()), fontsize="medium")
    return save_png(figure, path)


def _panels(geometry: Rectangle) -> tuple[Any, list[list[Any]], list[Any]]:
    """The figure, its rows of maps (potential, velocity; each the section, or the whole and one end) and the two
    mid-line panels: a square or tall section has the two maps side by side (a very tall one, all four in one row);
    a flat one, a row per field (a very flat one, the whole and its end side by side)."""
    elongated = _elongation(geometry) > _ELONGATED
    if geometry.width <= _SIDE_BY_SIDE * geometry.height and not elongated:
        figure = new_figure(11.0, 9.0)
        axes = figure.subplot_mosaic([["p", "u"], ["ly", "lz"]], height_ratios=[1.4, 1.0])
    elif geometry.width > geometry.height and not elongated:
        figure = new_figure(11.0, 11.0)
        axes = figure.subplot_mosaic([["p", "p"], ["u", "u"], ["ly", "lz"]], height_ratios=[1.0, 1.0, 1.1])
    elif geometry.width > geometry.height:
        figure = new_figure(11.0, 11.0)
        axes = figure.subplot_mosaic([["p", "p_end"], ["u", "u_end"], ["ly", "lz"]], width_ratios=[2.2, 1.0],
                                     height_ratios=[1.0, 1.0, 1.1])
    else:
        figure = new_figure(12.0, 11.0)
        axes = figure.subplot_mosaic([["p", "p_end", "u", "u_end"], ["ly", "ly", "lz", "lz"]],
                                     height_ratios=[1.6, 1.0])
    rows = [[axes[name] for name in (field, f"{field}_end") if name in axes] for field in ("p", "u")]
    return figure, rows, [axes["ly"], axes["lz"]]
