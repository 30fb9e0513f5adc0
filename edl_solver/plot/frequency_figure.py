"""The Bode figure of the EO flow under an oscillating field (``edl.frequency_response``)."""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.plot.shared import case_of, new_figure, number, prefix, require_dataset, save_png, section_text


def bode_figure(response: Any, path: str | os.PathLike[str]) -> Path:
    """Amplitude (log-log) and phase (degrees) of the mean EO velocity against frequency, the steady value and the
    viscous frequency nu / (2 pi L^2) marked (where the Stokes layer from the walls reaches the centre).

    Parameters
    ----------
    response : xarray.Dataset
        The return of ``edl.frequency_response``.
    path : str or PathLike
        PNG file to create or replace (atomically).

    Returns
    -------
    Path
    """
    require_dataset(response, ("eo_velocity_amplitude", "eo_velocity_phase"), "response",
                    "the return of edl.frequency_response(case, frequencies)")
    f = np.asarray(response["frequency"].values, dtype=float)
    amplitude = np.asarray(response["eo_velocity_amplitude"].values, dtype=float)
    phase = np.degrees(np.asarray(response["eo_velocity_phase"].values, dtype=float))
    shown = f > 0
    scale, unit = prefix(float(np.max(amplitude)) if amplitude.size else 0.0, "m/s")
    figure = new_figure(6.4, 5.6)
    top, bottom = figure.subplots(2, 1, sharex=True)
    top.loglog(f[shown], amplitude[shown] * scale, "o-", color="C0", ms=3)
    if not shown.all():
        top.axhline(amplitude[~shown][0] * scale, color="0.5", ls=":", label="steady (f = 0)")
    bottom.semilogx(f[shown], phase[shown], "o-", color="C3", ms=3)
    viscous = float(response.attrs.get("viscous_frequency_Hz", np.nan))
    for axes in (top, bottom):
        if np.isfinite(viscous):
            axes.axvline(viscous, color="0.4", ls="--", lw=1, label="viscous frequency ν/(2πL²)")
        axes.grid(True, which="both", alpha=0.3)
    top.set_ylabel(f"mean EO velocity amplitude ({unit})")
    bottom.set_ylabel("phase (degrees)")
    bottom.set_xlabel("frequency f (Hz)")
    bottom.set_ylim(min(-95.0, float(np.min(phase)) - 5.0) if phase.size else -95.0, 5.0)
    top.legend(loc="lower left", fontsize=8)
    case = case_of(response)
    field = float(response.attrs.get("field_amplitude_V_per_m", np.nan))
    title = f"EO flow under E = {number(abs(field))} V/m × cos(2πft)"
    if case is not None:
        title += f"\n{section_text(case)}"
    figure.suptitle(title, fontsize=9)
    return save_png(figure, path)
