"""The rectification of a channel against the salt concentration (``channel.rectification_curve``): the ratio
|I(+V)/I(-V)| against c (both reservoirs at c), log-log, with kappa a_tip on a top axis and the line ratio = 1
(no rectification) marked; each side of that line says which polarity passes more current."""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.plot.shared import case_of, new_figure, number, require_dataset, save_png, wall_text

__all__ = ["rectification_curve_figure"]

_RATIO = "#8e44ad"


def _shape_text(dataset: Any) -> str:
    """"capillary, radius 5 nm at x = 0 to 40 nm at x = L" (a table: from the smallest to the largest)."""
    sizes = np.asarray(dataset.attrs["size_sizes"], dtype=float) * 1e9
    name, kind = str(dataset.attrs.get("size_name", "size")), str(dataset.attrs.get("geometry", "channel"))
    if sizes.size == 2:
        return f"{kind}, {name} {number(sizes[0])} nm at x = 0 to {number(sizes[1])} nm at x = L"
    return f"{kind}, {name} from {number(sizes.min())} to {number(sizes.max())} nm along x"


def _title(dataset: Any) -> str:
    volts = float(dataset.attrs["voltage"])
    left, right = _end_words(dataset)
    lines = [f"Rectification |I(+V)/I(−V)| at V = {number(volts * 1e3)} mV against the salt concentration",
             f"{_shape_text(dataset)}, L = {number(float(dataset.attrs['length']) * 1e6)} µm",
             f"below 1: more current with x = 0{left} positive; above 1: with x = L{right} positive"]
    case = case_of(dataset)
    if case is not None:
        ions = "/".join(ion.name for ion in case.electrolyte.ions)
        lines[1] += f"; wall {wall_text(case.walls[0])}; {ions}"
    failed = int(np.count_nonzero(dataset["status"].values != 0))
    if failed:
        lines.append(f"({failed} point(s) failed, marked × on the axis: see the message of each in the dataset)")
    return "\n".join(lines)


def rectification_curve_figure(dataset: Any, path: str | os.PathLike[str]) -> Path:
    """Write a PNG of the rectification against concentration.

    Parameters
    ----------
    dataset : xarray.Dataset
        The return of ``channel.rectification_curve``.
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
    require_dataset(dataset, ("concentration", "rectification", "kappa_a_tip", "status"),
                    "a rectification curve", "the return of channel.rectification_curve()")
    data = dataset.sortby("concentration")
    c, ratio = data["concentration"].values, data["rectification"].values
    ok = (data["status"].values == 0) & np.isfinite(ratio) & (ratio > 0)
    figure = new_figure(7.6, 5.6)
    axes = figure.subplots()
    axes.set_xscale("log")
    axes.set_yscale("log")
    axes.axhline(1.0, color="0.35", lw=1.0, ls="--", label="ratio = 1: no rectification")
    axes.plot(c[ok], ratio[ok], color=_RATIO, lw=1.8, marker="o", ms=4,
              label="full model" + _mark_strongest(axes, c[ok], ratio[ok], data["kappa_a_tip"].values[ok]))
    _frame_ratio(axes, ratio[ok])
    _mark_failed(axes, c[~ok])
    _kappa_axis(axes, data)
    first = str(data["concentration"].attrs.get("long_name", "")).rsplit(", ", 1)[-1].rstrip(")")
    axes.set_xlabel(f"salt concentration c in both reservoirs (mM{', ' + first if first else ''})")
    axes.set_ylabel("|I(+V) / I(−V)|,  ΔV = V(L) − V(0)")
    axes.grid(True, which="major", lw=0.4, alpha=0.5)
    figure.legend(fontsize="small", loc="outside lower center", ncols=2)
    figure.suptitle(_title(dataset), fontsize="medium")
    return save_png(figure, path)


def _end_words(dataset: Any) -> tuple[str, str]:
    """(" (the tip)", " (the base)") when the channel narrows towards x = 0, the reverse when towards x = L."""
    sizes = np.asarray(dataset.attrs["size_sizes"], dtype=float)
    if sizes[0] < sizes[-1] and sizes[0] == sizes.min():
        return " (the tip)", " (the base)"
    if sizes[-1] < sizes[0] and sizes[-1] == sizes.min():
        return " (the base)", " (the tip)"
    return "", ""


def _frame_ratio(axes: Any, ratio: np.ndarray) -> None:
    """y limits that always hold the line ratio = 1 with room on both sides for the notes of each side."""
    from matplotlib.ticker import FuncFormatter, LogLocator

    low = min(float(ratio.min()), 1.0) if ratio.size else 0.5
    high = max(float(ratio.max()), 1.0) if ratio.size else 2.0
    axes.set_ylim(min(low / 1.3, 0.8), max(high * 1.3, 1.25))
    if high / low < 30.0:  # not much more than a decade: plain numbers, a few minor ticks labelled
        axes.yaxis.set_minor_locator(LogLocator(subs=(0.2, 0.3, 0.5, 0.7)))
        plain = FuncFormatter(lambda value, _: number(value, 2))
        axes.yaxis.set_minor_formatter(plain)
        axes.yaxis.set_major_formatter(plain)


def _mark_strongest(axes: Any, c: np.ndarray, ratio: np.ndarray, kappa: np.ndarray) -> str:
    """Circle the point farthest from 1 (in log); its ratio, as a factor, and its kappa a_tip for the legend."""
    if not ratio.size:
        return ""
    k = int(np.argmax(np.abs(np.log(ratio))))
    if abs(np.log(ratio[k])) < 1e-3:
        return ""
    factor = ratio[k] if ratio[k] > 1.0 else 1.0 / ratio[k]
    axes.plot(c[k], ratio[k], "o", ms=11, mfc="none", mec=_RATIO, mew=1.2)
    return f" (circled: the strongest, {number(ratio[k])}, a factor {number(factor)}, at κ a_tip = {number(kappa[k])})"


def _mark_failed(axes: Any, c: np.ndarray) -> None:
    """A grey x at the foot of the axes at each failed concentration (the asked range stays in view)."""
    if not c.size:
        return
    from matplotlib.transforms import blended_transform_factory

    foot = blended_transform_factory(axes.transData, axes.transAxes)
    axes.plot(c, np.full(c.size, 0.03), "x", color="0.45", ms=7, mew=1.5, transform=foot, clip_on=False,
              label="failed point (see its message)")


def _kappa_axis(axes: Any, data: Any) -> None:
    """kappa a_tip on the top axis: it grows as sqrt(c) (Debye length ~ c^-1/2 for a fixed composition)."""
    c0, k0 = float(data["concentration"].values[0]), float(data["kappa_a_tip"].values[0])

    def forward(c: np.ndarray) -> np.ndarray:
        return k0 * np.sqrt(np.maximum(c, 1e-300) / c0)

    def inverse(k: np.ndarray) -> np.ndarray:
        return c0 * (np.maximum(k, 1e-300) / k0) ** 2

    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter

    top = axes.secondary_xaxis("top", functions=(forward, inverse))
    top.set_xlabel("κ a_tip (the smallest size over the Debye length)")
    top.xaxis.set_major_formatter(FuncFormatter(lambda value, _: number(value, 2)))
    c = data["concentration"].values
    few = np.log10(c.max() / c.min()) < 4.0  # under two decades of kappa a_tip: label the minor ticks too
    if few:
        top.xaxis.set_minor_locator(LogLocator(subs=(2.0, 3.0, 5.0)))
    top.xaxis.set_minor_formatter(FuncFormatter(lambda value, _: number(value, 1)) if few else NullFormatter())
