"""What the figures share: a figure on its own Agg canvas and its atomic writing, numbers and units in the
units of the field (SI prefixes picked from the data), the case in brief, and the check of a dataset.

matplotlib is imported only when a figure is asked for; each figure is a ``matplotlib.figure.Figure`` on its
own Agg canvas, so no pyplot figure is created and the process-wide backend is left alone
(``matplotlib.use`` would switch, and close, the figures of a user's interactive session).
"""

from __future__ import annotations

import json
import math
import os
from pathlib import Path
from typing import Any

from edl_solver.constants import ZERO_CELSIUS
from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Geometry
from edl_solver.inputs.wall import Wall

__all__ = ["case_of", "new_figure", "number", "prefix", "require_dataset", "save_png", "section_text", "size_text",
           "wall_text"]

_PREFIXES = {-18: "a", -15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G", 12: "T"}


def prefix(largest: float, unit: str) -> tuple[float, str]:
    """(scale, prefixed unit) that puts ``largest`` (in ``unit``) in [1, 1000): 2e-11, "A" -> (1e12, "pA")."""
    if not math.isfinite(largest) or largest <= 0.0:
        return 1.0, unit
    exponent = min(max(3 * math.floor(math.log10(largest) / 3), -18), 12)
    return 10.0 ** (-exponent), f"{_PREFIXES[exponent]}{unit}"


def number(value: float, digits: int = 3) -> str:
    """``value`` to ``digits`` significant digits, written out below a million: 12345 -> "12345", not "1.23e+04"."""
    text = f"{value:.{digits}g}"
    return f"{float(text):.0f}" if "e+" in text and abs(value) < 1e6 else text


def wall_text(wall: Wall) -> str:
    """A wall's condition in display units: ζ, σ, or what regulates its charge (sites, a fixed charge behind a
    Stern layer, a gate)."""
    if wall.kind == "potential":
        return f"ζ = {wall.zeta * 1e3:.3g} mV"
    if wall.kind == "charge":
        return f"σ = {wall.charge_density * 1e3:.3g} mC/m²"
    parts = [f"{site.name} pK {'/'.join(f'{pk:g}' for pk in site.pks)}" for site in wall.sites]
    if wall.charge_density is not None:
        parts.append(f"σ = {wall.charge_density * 1e3:.3g} mC/m²")
    if wall.gate_voltage is not None:
        parts.append(f"gate {wall.gate_voltage:.3g} V behind {wall.gate_capacitance:.3g} F/m²")
    if wall.stern_capacitance is not None:
        parts.append(f"Stern layer {wall.stern_capacitance:.3g} F/m²")
    return "charge regulated: " + ", ".join(parts)


def size_text(geometry: Geometry) -> str:
    """"slit height H = 50 nm": the kind and the name of the size before the geometry's label ("Slit H = 50 nm")
    less its kind."""
    return f"{geometry.kind} {geometry.size_name} {geometry.label().split(' ', 1)[1]}"


def section_text(case: Case, concentrations: bool = True, size: bool = True, walls: str | None = None) -> str:
    """The section in brief: geometry, walls, electrolyte (with or without its concentrations), temperature.
    ``size=False`` names the kind of section only, and ``walls`` replaces the case's walls (for a channel whose
    size or wall varies along x, described elsewhere)."""
    shape = size_text(case.geometry) if size else case.geometry.kind
    words = case.geometry.wall_words
    if walls is None:
        walls = f"wall {wall_text(case.walls[0])}" if case.symmetric else \
            f"walls {wall_text(case.walls[0])} ({words[0]}), {wall_text(case.walls[1])} ({words[1]})"
    ions = case.electrolyte.ions
    liquid = ", ".join(f"{ion.name} {ion.concentration:.3g} mM" for ion in ions) if concentrations else \
        "/".join(ion.name for ion in ions)
    return f"{shape}, {walls}; {liquid}, {case.solvent.temperature - ZERO_CELSIUS:.3g} °C"


def case_of(dataset: Any) -> Case | None:
    """The case stored in a dataset's ``case_json`` attribute, if any."""
    from edl_solver.inputs.casefile import case_from_mapping

    text = dataset.attrs.get("case_json")
    return case_from_mapping(json.loads(text)) if isinstance(text, str) else None


def new_figure(width: float, height: float) -> Any:
    """A ``matplotlib.figure.Figure`` of ``width`` x ``height`` inches at 110 dpi, constrained layout, on its own
    Agg canvas."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    figure = Figure(figsize=(width, height), dpi=110, layout="constrained")
    FigureCanvasAgg(figure)
    return figure


def save_png(figure: Any, path: str | os.PathLike[str]) -> Path:
    """Write ``figure`` as a PNG to ``path``, atomically (created or replaced whole, or not at all)."""
    from edl_solver.io.files import atomic_output

    with atomic_output(path) as temporary:
        figure.savefig(temporary, format="png")
    return Path(os.fspath(path)).expanduser()


def require_dataset(dataset: Any, names: tuple[str, ...], what: str, source: str) -> None:
    """A one-line InputError unless ``dataset`` is an xarray.Dataset with every variable of ``names``."""
    import xarray as xr

    if not isinstance(dataset, xr.Dataset):
        raise InputError(f"dataset: {type(dataset).__name__} is not an xarray.Dataset, expected {source}")
    missing = [name for name in names if name not in dataset.variables]
    if missing:
        raise InputError(f"dataset: no {missing[0]!r}, expected {what} ({source})")
