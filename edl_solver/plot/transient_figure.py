"""The figure of a transient run (``edl.transient``): (a) the wall charge density and wall potential against time,
(b) the mean velocities and the flow rate against time, both on a log time axis; with profiles, (c) and (d) the
potential and the concentration of each ion across the section at a few times (the velocity where the run has no
potential or concentrations).

Variables the run lacks are left out (a flow start-up has no wall potential and no profiles: two panels).
"""

from __future__ import annotations

import os
from typing import Any

import numpy as np

from edl_solver.errors import InputError
from edl_solver.plot.shared import case_of, new_figure, prefix, save_png, section_text
from edl_solver.report.formatting import prefixed
from edl_solver.report.transient_text import pick_times
from edl_solver.report.units import show

__all__ = ["PROFILE_COUNT", "profile_indices", "transient_figure"]

#: Profile times drawn by default, spread in log time.
PROFILE_COUNT = 5
#: Profile panels in order of preference: (variable, axis label, quantity of ``report.units``).
_PROFILES = (("potential", "potential ψ", "potential"), ("concentration", "concentration", "concentration"),
             ("velocity", "axial velocity", "velocity"))
_ION_STYLES = ("-", "--", ":", "-.")
_WALL_COLOURS = ("C0", "C3")


def profile_indices(times: np.ndarray, profile_times: Any = None) -> np.ndarray:
    """Indices of the output times nearest (in log time) to ``profile_times`` (s), by default ``PROFILE_COUNT``
    spread over the run.

    Raises
    ------
    InputError
        A profile time that is not a positive number, or lies outside the run's times.
    """
    if profile_times is None:
        return pick_times(times, PROFILE_COUNT)
    try:
        wanted = np.atleast_1d(np.asarray(profile_times, dtype=float))
    except (TypeError, ValueError):
        raise InputError(f"profile_times: {profile_times!r} is not a list of numbers, expected times in s") from None
    if wanted.ndim != 1 or wanted.size == 0 or not np.all(np.isfinite(wanted)) or np.any(wanted <= 0):
        raise InputError(f"profile_times: {profile_times!r} is not allowed, expected a list of times in s > 0")
    outside = [t for t in wanted if not times[0] * (1 - 1e-9) <= t <= times[-1] * (1 + 1e-9)]
    if outside:
        raise InputError(f"profile_times: {outside[0]:g} s is outside the run, expected times from "
                         f"{times[0]:g} s to {times[-1]:g} s")
    return np.unique([int(np.argmin(np.abs(np.log(times) - np.log(t)))) for t in wanted])


def _walls_panel(axes: Any, run: Any, t: np.ndarray) -> None:
    """(a) Wall charge density (solid, left axis) and wall potential (dashed, right axis) of each wall."""
    drawn = []
    for name, label, quantity, style, on in (("wall_charge_density", "wall charge density σ", "charge_density", "-",
                                               axes), ("wall_potential", "wall potential ψ_w", "potential", "--",
                                                       None)):
        if name not in run.data_vars:
            continue
        target = on if on is not None else (axes.twinx() if drawn else axes)
        variable = run[name].transpose("time", ...)
        shown = show(quantity, None, *np.ravel(variable.values))
        walls = list(run["wall"].values) if "wall" in variable.dims else [None]
        for j, wall in enumerate(walls):
            values = variable.values[:, j] if wall is not None else variable.values
            target.plot(t, np.asarray(values, float) * shown.scale, style, color=_WALL_COLOURS[j % 2],
                        label=f"{'σ' if style == '-' else 'ψ_w'}{f' {wall}' if wall else ''}")
        target.set_ylabel(f"{label} ({shown.unit})")
        target.set_xscale("log")
        drawn.append(target)
    if drawn:
        handles = [h for a in drawn for h in a.get_legend_handles_labels()[0]]
        drawn[0].legend(handles=handles, fontsize=7, loc="best")
    axes.set_title("(a) walls", fontsize=9, loc="left")


def _flow_panel(axes: Any, run: Any, t: np.ndarray) -> None:
    """(b) Mean EO, pressure and total velocity; the flow rate on a second axis (flow = mean velocity x area)."""
    names = [(n, label, style) for n, label, style in (("mean_velocity_eo", "U eo", "-"), ("mean_velocity_pressure",
             "U p", ":"), ("mean_velocity", "U", "--")) if n in run.data_vars]
    values = [np.asarray(run[n].values, float) for n, _, _ in names]
    shown = show("velocity", None, *np.concatenate(values)) if values else None
    for (_, label, style), v in zip(names, values):
        axes.plot(t, v * shown.scale, style, label=label)
    if "flow_rate" in run.data_vars:
        flow = np.asarray(run["flow_rate"].values, float)
        flow_shown = _flow_shown(run, flow)
        label = f"flow rate Q ({flow_shown.unit})"
        if shown is None:
            axes.plot(t, flow * flow_shown.scale, "-", color="C2", label="Q")
            axes.set_ylabel(label)
        else:
            right = axes.twinx()
            right.plot(t, flow * flow_shown.scale, "-", color="C2", lw=3, alpha=0.3, label="Q")
            right.set_ylabel(label)
            right.set_xscale("log")
            area = _area(run, flow)
            if area is not None:  # the right axis reads the total mean velocity's line as a flow rate
                right.set_ylim(*(np.array(axes.get_ylim()) / shown.scale * area * flow_shown.scale))
    if shown is not None:
        axes.set_ylabel(f"mean velocity ({shown.unit})")
        axes.legend(fontsize=7, loc="best")
    axes.set_xscale("log")
    axes.set_title("(b) flow", fontsize=9, loc="left")


def _flow_shown(run: Any, flow: np.ndarray) -> Any:
    """How the flow rate is shown: per unit width (µm²/s) when its unit says so, else per channel (L/s)."""
    from edl_solver.report.units import Shown

    if str(run["flow_rate"].attrs.get("units", "")) == "m^2/s":
        return Shown(1e12, "µm²/s", float(np.max(np.abs(flow))) if flow.size else 0.0)
    return show("flow_rate", None, *flow)


def _area(run: Any, flow: np.ndarray) -> float | None:
    """Flow rate over mean velocity (the section's area, or height per unit width), if the run has both."""
    if "mean_velocity" not in run.data_vars:
        return None
    velocity = np.asarray(run["mean_velocity"].values, float)
    useful = np.abs(velocity) > 1e-12 * np.max(np.abs(velocity), initial=0.0)
    if not np.any(useful & (np.abs(velocity) > 0)):
        return None
    area = flow[useful] / velocity[useful]
    return float(np.median(area)) if np.all(np.isfinite(area)) and np.ptp(area) <= 1e-6 * abs(area[0]) else None


def _profile_panel(axes: Any, run: Any, name: str, label: str, quantity: str, picked: np.ndarray, letter: str) -> None:
    """(c)/(d) A profile across the section at the picked times (one colour per time, one line style per ion)."""
    import matplotlib

    variable = run[name].transpose("time", ..., "x")
    x = np.asarray(run["x"].values, float)
    xscale, xunit = prefix(float(np.max(np.abs(x))) if x.size else 0.0, "m")
    shown = show(quantity, None, *np.ravel(variable.values[picked]))
    colours = matplotlib.colormaps["viridis"](np.linspace(0.0, 0.85, picked.size))
    ions = list(run["ion"].values) if "ion" in variable.dims else [None]
    t = np.asarray(run["time"].values, float)
    for k, i in enumerate(picked):
        for j, ion in enumerate(ions):
            values = variable.values[i, j] if ion is not None else variable.values[i]
            axes.plot(x * xscale, np.asarray(values, float) * shown.scale, _ION_STYLES[j % 4], color=colours[k],
                      label=f"t = {prefixed(t[i], 's')}" if j == 0 else None)
    shown_values = np.asarray(variable.values[picked], float)
    if quantity == "concentration" and np.all(shown_values > 0) and shown_values.max() > 100 * shown_values.min():
        axes.set_yscale("log")  # counter-ions pile up over decades at a charged wall
    if ion is not None:
        for j, ion in enumerate(ions):
            axes.plot([], [], _ION_STYLES[j % 4], color="0.3", label=str(ion))
    axes.set_xlabel(f"x from the centre ({xunit})")
    axes.set_ylabel(f"{label} ({shown.unit})")
    axes.legend(fontsize=7, loc="best", ncol=2 if len(ions) > 1 else 1)
    axes.set_title(f"({letter}) {label}", fontsize=9, loc="left")


def _title(run: Any) -> str:
    kind = run.attrs.get("kind", "flow start-up" if "concentration" not in run.data_vars else "transient")
    title = f"Transient run ({kind})"
    try:
        case = case_of(run)
    except (TypeError, ValueError):  # InputError and bad JSON are ValueErrors: no case line then
        case = None
    return title + (f"\n{section_text(case)}" if case is not None else "")


def transient_figure(run: Any, profile_times: Any = None, path: str | os.PathLike[str] | None = None) -> Any:
    """Draw a transient run; write it as a PNG to ``path`` when given.

    Parameters
    ----------
    run : xarray.Dataset
        The return of ``edl.transient`` (or ``read_transient``); variables it lacks are left out.
    profile_times : sequence of float, optional
        Times (s) of the profiles drawn, each replaced by the nearest output time; by default ``PROFILE_COUNT``
        spread in log time over the run.
    path : str or PathLike, optional
        PNG file to create or replace (atomically).

    Returns
    -------
    matplotlib.figure.Figure, or the Path written when ``path`` is given.

    Raises
    ------
    InputError
        ``run`` is not a Dataset on ``time``, or a profile time is not one of the run's span.
    """
    import xarray as xr

    if not isinstance(run, xr.Dataset) or "time" not in run.coords:
        raise InputError(f"run: {type(run).__name__} is not a transient run, expected the xarray.Dataset of "
                         "edl.transient (with a 'time' coordinate)")
    t = np.asarray(run["time"].values, dtype=float)
    profiles = [entry for entry in _PROFILES if entry[0] in run.data_vars and "x" in run[entry[0]].dims][:2]
    picked = profile_indices(t, profile_times) if profiles else np.array([], dtype=int)
    figure = new_figure(11.0, 7.6 if profiles else 4.2)
    panels = figure.subplots(2 if profiles else 1, 2, squeeze=False)
    _walls_panel(panels[0, 0], run, t)
    _flow_panel(panels[0, 1], run, t)
    for axes in panels[0]:
        axes.set_xlabel("time after the step t (s)")
        axes.grid(True, which="major", alpha=0.3)
    for axes, (name, label, quantity), letter in zip(panels[1] if profiles else (), profiles, "cd"):
        _profile_panel(axes, run, name, label, quantity, picked, letter)
        axes.grid(True, alpha=0.3)
    if profiles and len(profiles) == 1:
        panels[1, 1].set_visible(False)
    figure.suptitle(_title(run), fontsize=9)
    return save_png(figure, path) if path is not None else figure
