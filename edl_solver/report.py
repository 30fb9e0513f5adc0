"""A short plain-text report of one result, in the units a reader of the field expects.

SI values are converted here for reading only (mV, mM, nm, µm/s, engineering prefixes for currents);
the Result itself stays SI.
"""

from __future__ import annotations

import math
from typing import Any

from edl_solver.case import Capillary, Case, Slit, Wall
from edl_solver.constants import ZERO_CELSIUS
from edl_solver.result import Result

__all__ = ["MODEL_NAMES", "prefixed", "text"]

#: Plain names of the models, for reports and figure titles.
MODEL_NAMES = {"pb": "nonlinear Poisson-Boltzmann", "dh": "linearised Debye-Hückel"}
_PREFIXES = {-18: "a", -15: "f", -12: "p", -9: "n", -6: "µ", -3: "m", 0: "", 3: "k", 6: "M", 9: "G"}
_LABEL_WIDTH = 46


def _number(value: float, digits: int = 3) -> str:
    """``value`` with ``digits`` significant digits, without exponent noise for ordinary sizes."""
    if not math.isfinite(value):
        return "undefined"
    text = f"{value:.{digits}g}"
    if "e+" in text and abs(value) < 1e6:  # 2340, not 2.34e+03
        return f"{float(text):.0f}"
    return text


def _scaled(value: Any, scale: float, unit: str, digits: int = 3) -> str:
    """A value, or a (bottom, top) pair, multiplied by ``scale`` and followed by ``unit``."""
    if isinstance(value, tuple):
        return f"bottom {_scaled(value[0], scale, unit, digits)}, top {_scaled(value[1], scale, unit, digits)}"
    value = float(value)
    return _number(value * scale, digits) + (f" {unit}" if math.isfinite(value) else "")


def prefixed(value: float, unit: str, digits: int = 3) -> str:
    """``value`` with the SI prefix that puts its mantissa in [1, 1000): 1.2e-11 A -> '12 pA'.

    Parameters
    ----------
    value : float
        In the unprefixed ``unit``.
    unit : str
        E.g. "A", "V/m" (the prefix applies to the first symbol, so avoid "m^3").
    digits : int
        Significant digits.

    Returns
    -------
    str
        "undefined" for NaN or infinity.
    """
    value = float(value)
    if not math.isfinite(value):
        return "undefined"
    if value == 0.0:
        return f"0 {unit}"
    exponent = min(max(3 * math.floor(math.log10(abs(value)) / 3), -18), 9)
    mantissa = value / 10.0**exponent
    if abs(float(f"{mantissa:.{digits}g}")) >= 1000.0 and exponent < 9:  # rounding reached the next prefix
        exponent += 3
        mantissa /= 1000.0
    return f"{mantissa:.{digits}g} {_PREFIXES[exponent]}{unit}"


def _percent(fraction: float, signed: bool = False) -> str:
    if not math.isfinite(fraction):
        return "undefined"
    return f"{100.0 * fraction:+.3g} %" if signed else f"{100.0 * fraction:.3g} %"


def _wall_text(wall: Wall) -> str:
    if wall.kind == "potential":
        return f"zeta = {_scaled(wall.zeta, 1e3, 'mV')}"
    return f"charge density = {_scaled(wall.charge_density, 1e3, 'mC/m²')}"


def _case_lines(case: Case, capillary: bool) -> list[str]:
    g = case.geometry
    if isinstance(g, Slit):
        geometry = f"Slit of height H = {_scaled(g.height, 1e9, 'nm', 4)}, y from 0 (bottom wall) to H (top wall)"
    else:
        assert isinstance(g, Capillary)
        geometry = f"Capillary of radius a = {_scaled(g.radius, 1e9, 'nm', 4)}, r from 0 (axis) to a (wall)"
    ions = ", ".join(f"{ion.name} {_number(ion.concentration, 4)} mM" for ion in case.electrolyte.ions)
    s = case.solvent
    solvent = (f"{s.name} at {_number(s.temperature - ZERO_CELSIUS, 4)} °C (εr = {_number(s.relative_permittivity)}, "
               f"viscosity {_scaled(s.viscosity, 1e3, 'mPa·s')})")
    if isinstance(case.wall, tuple):
        walls = f"Walls: bottom {_wall_text(case.wall[0])}; top {_wall_text(case.wall[1])}"
    else:
        walls = f"{'Wall' if capillary else 'Both walls'}: {_wall_text(case.wall)}"
    return [
        geometry,
        f"Electrolyte: {ions} (ionic strength {_number(case.electrolyte.ionic_strength, 4)} mM) in {solvent}",
        walls,
        f"Drives: field E = {prefixed(case.field, 'V/m')}, pressure gradient dp/dx = "
        f"{prefixed(case.pressure_gradient, 'Pa/m')}; model: {MODEL_NAMES.get(case.model, case.model)}",
        "Signs: E > 0 points along the channel axis +x; positive velocities, flow rates and currents go to +x",
    ]


def _row(label: str, value: str) -> str:
    return f"  {label:<{_LABEL_WIDTH}} {value}"


def text(result: Result) -> str:
    """A short plain-text report of ``result`` (about 25 lines).

    It states the case, the Debye length and κh (or κa), the main summary values in convenient units,
    the thin-layer (Helmholtz-Smoluchowski slip) comparison with its verdict, the solver status and
    any warnings.

    Parameters
    ----------
    result : Result

    Returns
    -------
    str
        Lines separated by newlines, ending with a newline.
    """
    case, s = result.case, result.summary
    capillary = isinstance(case.geometry, Capillary)

    def get(key: str) -> Any:
        return s.get(key, math.nan)  # a partial summary still reports what it has

    # Flow rates: µm²/s (= µm³/s per µm of width) for a slit; litres with a prefix for a capillary,
    # since prefixes on cubic metres (µm³ is not µ·m³) confuse.
    def flow(value: Any) -> str:
        if not capillary:
            return _scaled(value, 1e12, "µm²/s")
        return f"{prefixed(float(value) * 1e3, 'L/s')} ({_scaled(value, 1.0, 'm³/s')})"

    def mv(key: str) -> str:
        return _scaled(get(key), 1e3, "mV")

    def um_s(key: str) -> str:
        return _scaled(get(key), 1e6, "µm/s")

    def amps(key: str) -> str:
        return prefixed(get(key), "A" if capillary else "A/m")

    kappa = "κa (radius / Debye length)" if capillary else "κh (half-height / Debye length)"
    centre = "potential on the axis" if capillary else "potential at the mid-plane"
    lines = _case_lines(case, capillary)
    lines += [
        f"Debye length λ_D = {_scaled(get('debye_length'), 1e9, 'nm')}; {kappa} = {_number(get('kappa_h'))}",
        "",
        "Full solution" + ("" if capillary else " (flow rates and currents per metre of slit width)"),
        _row("wall potential (zeta)", mv("zeta")),
        _row("wall charge density", _scaled(get("wall_charge_density"), 1e3, "mC/m²")),
        _row(f"{centre} / section mean", f"{mv('centre_potential')} / {mv('mean_potential')}"),
        _row("electroosmotic (EO) mean velocity / flow rate",
             f"{um_s('mean_velocity_eo')} / {flow(get('flow_rate_eo'))}"),
    ]
    if case.pressure_gradient != 0.0:
        lines.append(_row("pressure-driven mean velocity / flow rate",
                          f"{um_s('mean_velocity_pressure')} / {flow(get('flow_rate_pressure'))}"))
    lines += [
        _row("current: conduction / EO convection", f"{amps('conduction_current')} / "
                                                     f"{amps('eo_convection_current')}"),
        _row("current: streaming / total", f"{amps('streaming_current')} / {amps('current')}"),
        "",
        "Thin-layer model (Helmholtz-Smoluchowski slip u_s = -εζE/η at the wall)",
    ]
    if any(wall.kind == "charge" for wall in case.walls):
        lines.append(_row("zeta it uses (Grahame, from the wall charge)", mv("thin_layer_zeta")))
    lines += [
        _row("slip velocity u_s", um_s("hs_velocity")),
        _row("eo_ratio (full / thin-layer mean EO velocity)", _number(get("eo_ratio"))),
        _row("flow-rate error (thin-layer - full) / full", _percent(get("thin_layer_flow_rate_error"), signed=True)),
        _row("largest profile deviation outside the layers",
             f"{_percent(get('thin_layer_max_outer_deviation'))} of the slip speed"),
        f"Verdict: {result.verdict}",
        "",
        f"Solver: {result.message or result.status}",
    ]
    lines += [f"Warning: {warning}" for warning in result.warnings]
    return "\n".join(lines) + "\n"
