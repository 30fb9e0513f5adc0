"""Figures of one result: potential, ion concentrations and velocity across the section.

matplotlib is imported only when a figure is asked for. The figure is built on
``matplotlib.figure.Figure`` with an explicit Agg canvas, so no pyplot figure is created and the
process-wide backend is left alone (``matplotlib.use`` would switch, and close, the figures of a
user's interactive session).
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.constants import ZERO_CELSIUS
from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Geometry
from edl_solver.inputs.ion_size import close_packing
from edl_solver.inputs.wall import Wall
from edl_solver.plot.rectangle_figure import rectangle_figure, thin_layer_per_field
from edl_solver.plot.shared import new_figure, save_png, wall_text
from edl_solver.report.formatting import MODEL_NAMES, prefixed
from edl_solver.results.profiles import RectangleProfiles
from edl_solver.results.result import Result

__all__ = ["profile_figure"]

_WALL_COLOUR = "0.85"
#: Width of the wall zoom panels, in Debye lengths: the double layer and the start of the outer region.
_ZOOM_DEBYE_LENGTHS = 8.0


def _condition(wall: Wall) -> str:
    """A wall in brief (``shared.wall_text``: ζ, σ, or its regulation) and its slip length."""
    text = wall_text(wall)
    return text + (f", slip b = {wall.slip_length * 1e9:.3g} nm" if wall.slip_length > 0.0 else "")


def _title(case: Case) -> str:
    """The case in brief, in the units of the field: section and liquid; the walls (one line each when they
    differ); drives and model."""
    size = case.geometry.label()
    electrolyte = case.electrolyte
    liquid = ", ".join(f"{ion.name} {ion.concentration:.3g} mM" for ion in electrolyte.ions)
    if electrolyte.pH is not None:
        liquid += f", pH {electrolyte.pH:.3g}"
    liquid += f"; {case.solvent.temperature - ZERO_CELSIUS:.3g} °C"
    if case.solvent.viscoelectric_coefficient > 0.0:
        liquid += f", viscoelectric f = {case.solvent.viscoelectric_coefficient:.2g} m²/V²"
    if case.symmetric:
        walls = f"wall {_condition(case.walls[0])}"
    else:
        walls = f"bottom wall {_condition(case.walls[0])}\ntop wall {_condition(case.walls[1])}"
    drives = f"E = {prefixed(case.field, 'V/m')}"
    if case.pressure_gradient != 0.0:
        drives += f", dp/dx = {prefixed(case.pressure_gradient, 'Pa/m')}"
    model = MODEL_NAMES.get(case.model, case.model)
    if case.model == "steric":
        model += f", d = {case.electrolyte.ions[0].diameter * 1e9:.3g} nm"
    return f"{size}; {liquid}\n{walls}\n{drives}; {model}"


def _wall_ends(geometry: Geometry, low: float, high: float) -> tuple[float, ...]:
    """The ends of the coordinate that are walls: both (slit), or the far one when the coordinate starts on
    the axis of symmetry (a geometry with one wall: capillary)."""
    return (low, high)[-geometry.wall_count:]


def _mark_walls(axes: Any, geometry: Geometry, low: float, high: float, margin: float, label: bool) -> None:
    """Shade the solid beyond each wall and draw the wall line, so the channel's extent is plain."""
    bands = ((low - margin, low, low), (high, high + margin, high))[-geometry.wall_count:]  # as _wall_ends
    for start, end, wall in bands:
        axes.axvspan(start, end, color=_WALL_COLOUR, zorder=0, lw=0)
        axes.axvline(wall, color="0.35", lw=1.2, zorder=1)
        if label:
            axes.text(0.5 * (start + end), 0.5, "wall", transform=axes.get_xaxis_transform(), rotation=90,
                      ha="center", va="center", fontsize="small", color="0.3")


def _draw_potential(axes: Any, x: np.ndarray, result: Result) -> bool:
    """The potential, and the charge plane behind each Stern layer on its wall; True if there are such planes."""
    p = result.profiles
    axes.axhline(0.0, color="0.6", lw=0.6)
    axes.plot(x, p.potential * 1e3, color="C0", label="potential φ (at the wall: ζ)")
    stern = result.summary.get("stern_potential")
    if stern is None:
        return False
    values = stern if isinstance(stern, tuple) else (stern, stern)  # (bottom, top) pair, or one value
    # on the ends that are walls: both of a slit, the far one of a capillary (see _wall_ends)
    sides = ((x[0], values[0]), (x[-1], values[1]))[-result.case.geometry.wall_count:]
    shown = [(where, value * 1e3) for where, value in sides if np.isfinite(value)]
    axes.plot([w for w, _ in shown], [v for _, v in shown], ls="none", marker="D", color="C4",
              clip_on=False, label="charge-plane potential ψ0 = ζ + σ/C_S (behind the Stern layer)")
    return True


def _draw_concentrations(axes: Any, x: np.ndarray, result: Result) -> tuple[list[Any], bool]:
    """One line per ion on a log axis, reservoir values dotted, the steric ceiling dashed; the legend's
    handles, and whether points were masked (c <= 0)."""
    from matplotlib.lines import Line2D
    from matplotlib.ticker import FuncFormatter

    case, p = result.case, result.profiles
    # The Debye-Hueckel model linearises the Boltzmann factor and can give c <= 0, which a log axis
    # cannot show: mask those points and say so.
    concentration = np.where(p.concentration > 0.0, p.concentration, np.nan)
    handles = []
    for number, (name, row) in enumerate(zip(p.ion_names, concentration)):
        colour = f"C{number + 1}"
        handles += axes.plot(x, row, color=colour, label=name)
        axes.axhline(case.electrolyte.ions[number].concentration, color=colour, lw=0.8, ls=":")
    handles.append(Line2D([], [], color="0.4", lw=0.8, ls=":", label="reservoir value"))
    top = np.nanmax(concentration)
    if case.model == "steric":  # the lattice-gas ceiling of the total ion concentration
        ceiling = close_packing(case.electrolyte.ions[0].diameter)
        top = max(top, ceiling)
        handles.append(axes.axhline(ceiling, color="k", lw=1.0, ls="--",
                                    label="close packing 1/(N_A d³) (steric limit)"))
    axes.set_yscale("log")
    plain = FuncFormatter(lambda value, _: f"{value:g}")  # 0.5, 2, 10 rather than 5x10^-1
    axes.yaxis.set_major_formatter(plain)
    # Within a few decades no or one power of ten shows: label the minor ticks at 2 and 5 as well.
    decades = np.log10(top / np.nanmin(concentration))

    def minor(value: float, _: Any) -> str:
        mantissa = round(value / 10.0 ** np.floor(np.log10(value) + 1e-9))
        return f"{value:g}" if decades < 3.0 and mantissa in (2, 5) else ""

    axes.yaxis.set_minor_formatter(FuncFormatter(minor))
    axes.tick_params(axis="y", which="minor", labelsize="x-small")
    return handles, bool(np.isnan(concentration).any())


def _at_rest(case: Case) -> bool:
    """No field and no pressure gradient: the velocities are zero, so the figure draws the EO velocity per unit
    field instead (as the rectangle's figure does)."""
    return case.field == 0.0 and case.pressure_gradient == 0.0


def _draw_velocities(axes: Any, x: np.ndarray, result: Result) -> None:
    """The EO velocity, the pressure-driven one and their sum when there is a pressure gradient, and the
    thin-layer slip profile dashed; per kV/m for a case at rest (``_at_rest``)."""
    p, case = result.profiles, result.case
    axes.axhline(0.0, color="0.6", lw=0.6)
    if _at_rest(case):  # µm/s per kV/m; the thin-layer profile is linear between the walls' slip velocities
        bottom, top = (1e9 * slip for slip in thin_layer_per_field(case))
        thin = bottom + (top - bottom) * x / x[-1] if case.geometry.wall_count == 2 else np.full(x.shape, top)
        axes.plot(x, p.eo_per_field * 1e9, color="C0", label="electroosmotic, per kV/m (no field in the case)")
        axes.plot(x, thin, color="C3", ls="--", label="thin-layer slip model (EO), per kV/m")
        return
    pressure = bool(np.any(p.velocity_pressure != 0.0))
    if pressure:  # drawn first and broad, so the EO line stays visible where the two coincide
        axes.plot(x, p.velocity * 1e6, color="0.2", lw=3.0, alpha=0.35, label="total")
    axes.plot(x, p.velocity_eo * 1e6, color="C0", label="electroosmotic" if pressure else "electroosmotic (= total)")
    if pressure:
        axes.plot(x, p.velocity_pressure * 1e6, color="C2", label="pressure-driven")
    axes.plot(x, p.velocity_thin_layer * 1e6, color="C3", ls="--", label="thin-layer slip model (EO)")


def _draw_column(column: Any, x: np.ndarray, result: Result, label: bool) -> None:
    """Potential, concentrations and velocities on one column of three axes; legends when ``label``."""
    potential_axes, concentration_axes, velocity_axes = column
    stern = _draw_potential(potential_axes, x, result)
    handles, masked = _draw_concentrations(concentration_axes, x, result)
    _draw_velocities(velocity_axes, x, result)
    if label:
        if stern:
            potential_axes.legend(fontsize="small", loc="best")
        concentration_axes.legend(handles=handles, fontsize="small", loc="best")
        velocity_axes.legend(fontsize="small", loc="best")
        if masked:
            concentration_axes.text(0.5, 0.03, "c ≤ 0 of the linearised (Debye-Hückel) model not shown",
                                    transform=concentration_axes.transAxes, ha="center", fontsize="small")


def _zooms(case: Case, low: float, high: float) -> list[tuple[str, float, float]]:
    """Columns that zoom on the walls, ``(where, start, end)`` in nm, when the double layers are thin at the
    scale of the section: ZOOM_DEBYE_LENGTHS wide, on the one wall of a capillary, on the bottom wall of a
    slit and on its top wall too when the two walls differ."""
    width = _ZOOM_DEBYE_LENGTHS * case.debye_length * 1e9
    if width >= 0.2 * (high - low):
        return []
    bottom = (low - 0.15 * width, low + width)
    top = (high - width, high + 0.15 * width)
    if case.geometry.wall_count == 1:
        return [("near the wall", *top)]
    return [("near the bottom wall", *bottom)] + ([] if case.symmetric else [("near the top wall", *top)])


def profile_figure(result: Result, path: str | os.PathLike[str]) -> Path:
    """Write a PNG of the potential, the ion concentrations and the velocity across the section.

    Three stacked panels share the cross-section axis in nm (slit: y from the bottom wall;
    capillary: r from the axis): potential (mV); concentrations (mM, log scale, one line per ion,
    reservoir values dotted; for the steric model the close-packing limit 1/(N_A d³) dashed); axial
    velocity (µm/s) of the full electroosmotic flow, the
    pressure-driven flow when there is one, their sum, and the thin-layer slip profile dashed.
    Walls are shaded grey; a wall with a Stern layer carries a marker at its charge-plane potential
    ψ0 = ζ + σ/C_S on the potential panel. The title gives the case in brief and the verdict.

    Parameters
    ----------
    result : Result
    path : str or PathLike
        PNG file to create or replace (atomically); its directory must exist.

    Returns
    -------
    Path
        ``path`` as a Path.

    Raises
    ------
    InputError
        If ``result`` is not a Result or ``path`` cannot be written.
    """
    if not isinstance(result, Result):
        raise InputError(f"result: {type(result).__name__} is not a Result, expected the return of solve()")
    if isinstance(result.profiles, RectangleProfiles):  # 2-D fields: maps over the section
        return rectangle_figure(result, path)
    case = result.case
    x = result.profiles.coordinate * 1e9
    low, high = float(x[0]), float(x[-1])
    margin = 0.05 * (high - low)
    # Thin double layers vanish at the scale of the section: add a column that zooms on each wall.
    zooms = _zooms(case, low, high)

    figure = new_figure(7.5 + 2.6 * len(zooms), 9.0)
    grid = figure.subplots(3, 1 + len(zooms), sharey="row", squeeze=False,
                           gridspec_kw={"width_ratios": [3.0] + [1.1] * len(zooms)})
    for column in range(1 + len(zooms)):
        _draw_column(grid[:, column], x, result, label=column == 0)
        for axes in grid[:, column]:
            _mark_walls(axes, case.geometry, low, high, margin, label=axes is grid[0, 0])
            axes.grid(True, lw=0.4, alpha=0.5)
        for axes in grid[:-1, column]:
            axes.tick_params(labelbottom=False)
    _frame(grid, case.geometry, zooms, low, high, margin)
    if _at_rest(case):
        grid[2, 0].set_ylabel("u/E (µm/s per kV/m)\n(> 0 along E)")
    _write_titles(figure, grid[0, 0], result, zoomed=bool(zooms))

    return save_png(figure, path)


def _frame(grid: Any, geometry: Geometry, zooms: list[tuple[str, float, float]], low: float, high: float,
           margin: float) -> None:
    """Limits and labels: the full section in the first column (a margin of solid beyond each wall), the
    zooms in the others."""
    full = grid[:, 0]
    for axes in full:
        # solid beyond the start only when it is a wall (see _wall_ends)
        axes.set_xlim(low - (margin if geometry.wall_count == 2 else 0.0), high + margin)
    full[2].set_xlabel(f"{geometry.coordinate_name}, distance from {geometry.origin_text} (nm)")
    for column, (where, start, end) in enumerate(zooms, start=1):
        for axes in grid[:, column]:
            axes.set_xlim(start, end)
            axes.tick_params(labelleft=False)
        grid[0, column].set_title(f"zoom {where}", fontsize="small")
        grid[2, column].set_xlabel(f"{geometry.coordinate_name} (nm)")
    full[0].set_ylabel("potential φ (mV)\n(0 in the reservoir)")
    full[1].set_ylabel("concentration (mM)")
    full[2].set_ylabel("axial velocity u (µm/s)\n(> 0 along E)")


def _write_titles(figure: Any, first: Any, result: Result, zoomed: bool) -> None:
    """The case in brief over the figure, the verdict over the first panel."""
    import textwrap

    # About 13 characters of medium text per inch: long lines (many ions, regulated walls) wrap, not clip.
    columns = int(13 * figure.get_figwidth())
    figure.suptitle("\n".join(textwrap.fill(line, columns) for line in _title(result.case).splitlines()),
                    fontsize="medium")
    first.set_title(textwrap.fill(f"Verdict: {result.verdict}", 90 if zoomed else 100), fontsize="small", loc="left")
