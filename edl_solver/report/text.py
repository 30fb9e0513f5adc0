"""A short plain-text report of one result, in the units a reader of the field expects.

SI values are converted here for reading only (mV, mM, nm, µm/s, engineering prefixes for currents);
the Result itself stays SI.
"""

from __future__ import annotations

import math
from typing import Any

from edl_solver.constants import AVOGADRO, ZERO_CELSIUS
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Capillary, Slit
from edl_solver.inputs.wall import Site, Wall
from edl_solver.results.result import Result

__all__ = ["MODEL_NAMES", "close_packing", "prefixed", "text"]

#: Plain names of the models, for reports and figure titles.
MODEL_NAMES = {"pb": "nonlinear Poisson-Boltzmann", "dh": "linearised Debye-Hückel",
               "steric": "Poisson-Boltzmann with finite ion size (steric, lattice gas)"}
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
    text = _number(100.0 * fraction)  # 2360, not 2.36e+03
    return f"{'+' if signed and fraction > 0 else ''}{text} %"


def _site_text(site: Site) -> str:
    """'silanol sites 8 nm⁻², pK 7.5 (charge 0 → -1)': density per nm², one pK per step."""
    pks = ", ".join(_number(pk, 4) for pk in site.pks)
    charges = " → ".join(f"{q:+d}" if q else "0" for q in site.charges)
    return f"{site.name} sites {_number(site.density * 1e-18, 4)} nm⁻², pK {pks} (charge {charges})"


def _wall_text(wall: Wall) -> str:
    """The condition of one wall: its potential, its charge, or what regulates its charge; and its slip."""
    if wall.kind == "potential":
        parts = [f"zeta = {_scaled(wall.zeta, 1e3, 'mV')}"]
    elif wall.kind == "charge":
        parts = [f"charge density = {_scaled(wall.charge_density, 1e3, 'mC/m²')}"]
    else:
        parts = ["charge-regulated"]
        parts += [_site_text(site) for site in wall.sites]
        if wall.charge_density is not None:
            parts.append(f"fixed charge density {_scaled(wall.charge_density, 1e3, 'mC/m²')}")
        if wall.stern_capacitance is not None:
            parts.append(f"Stern capacitance C_S = {_number(wall.stern_capacitance)} F/m²")
        if wall.gate_voltage is not None:
            parts.append(f"gate at V_g = {_scaled(wall.gate_voltage, 1.0, 'V')} behind "
                         f"C_g = {_scaled(wall.gate_capacitance, 1e3, 'mF/m²')}")
    if wall.slip_length > 0.0:
        parts.append(f"slip length b = {_scaled(wall.slip_length, 1e9, 'nm')}")
    return "; ".join(parts)


def _model_text(case: Case) -> str:
    """The model's plain name; for the steric model, the ion size and the close-packing limit it implies."""
    name = MODEL_NAMES.get(case.model, case.model)
    if case.model != "steric":
        return name
    diameter = case.electrolyte.ions[0].diameter  # Case checks that every ion has this same diameter
    return (f"{name}; ion diameter d = {_scaled(diameter, 1e9, 'nm')}, close packing at 1/(N_A d³) = "
            f"{_scaled(close_packing(diameter), 1e-3, 'M')}")


def close_packing(diameter: float) -> float:
    """Largest total ion concentration of the lattice-gas (steric) model, c_max = 1/(N_A d^3), mol/m^3
    (Kilic, Bazant & Ajdari 2007, Phys. Rev. E 75, 021502)."""
    return 1.0 / (AVOGADRO * diameter**3)


def _case_lines(case: Case, capillary: bool) -> list[str]:
    g = case.geometry
    if isinstance(g, Slit):
        geometry = f"Slit of height H = {_scaled(g.height, 1e9, 'nm', 4)}, y from 0 (bottom wall) to H (top wall)"
    else:
        assert isinstance(g, Capillary)
        geometry = f"Capillary of radius a = {_scaled(g.radius, 1e9, 'nm', 4)}, r from 0 (axis) to a (wall)"
    electrolyte = case.electrolyte
    ions = ", ".join(f"{ion.name} {_number(ion.concentration, 4)} mM" for ion in electrolyte.ions)
    ions += f", ionic strength {_number(electrolyte.ionic_strength, 4)} mM"
    if electrolyte.pH is not None:
        among = any(ion.name == "H+" for ion in electrolyte.ions)
        ions += f"; pH {_number(electrolyte.pH, 4)}" + ("" if among else " (H+ and OH- not among the ions)")
    s = case.solvent
    properties = f"εr = {_number(s.relative_permittivity)}, viscosity {_scaled(s.viscosity, 1e3, 'mPa·s')}"
    if s.viscoelectric_coefficient > 0.0:
        properties += f", viscoelectric coefficient f = {_number(s.viscoelectric_coefficient)} m²/V²"
    solvent = f"Solvent: {s.name} at {_number(s.temperature - ZERO_CELSIUS, 4)} °C ({properties})"
    if isinstance(case.wall, tuple):
        walls = [f"Bottom wall: {_wall_text(case.wall[0])}", f"Top wall: {_wall_text(case.wall[1])}"]
    else:
        walls = [f"{'Wall' if capillary else 'Both walls'}: {_wall_text(case.wall)}"]
    return [
        geometry,
        f"Electrolyte: {ions}",
        solvent,
        *walls,
        f"Drives: field E = {prefixed(case.field, 'V/m')}, pressure gradient dp/dx = "
        f"{prefixed(case.pressure_gradient, 'Pa/m')}",
        f"Model: {_model_text(case)}",
        "Signs: E > 0 points along the channel axis +x; positive velocities, flow rates and currents go to +x",
    ]


def _stern(value: Any) -> str:
    """The charge-plane potential, mV; a wall without Stern layer (NaN in a pair) says so."""
    if not isinstance(value, tuple):
        return _scaled(value, 1e3, "mV")
    shown = [_scaled(v, 1e3, "mV") if math.isfinite(v) else "none (no Stern layer)" for v in value]
    return f"bottom {shown[0]}, top {shown[1]}"


def _row(label: str, value: str) -> str:
    return f"  {label:<{_LABEL_WIDTH}} {value}"


def _transport_lines(s: dict[str, Any], capillary: bool) -> list[str]:
    """Lab quantities per unit channel length, each beside its thin-layer value and that value's error."""
    if "conductance_per_length" not in s:
        return []
    per = "per unit length" + ("" if capillary else ", per metre of width")

    def pair(key: str, scale: float, unit: str) -> str:
        full = _scaled(s[key], scale, unit).rstrip()
        thin = s.get(f"thin_layer_{key}", math.nan)
        error = s.get(f"thin_layer_{key}_error", math.nan)
        if not math.isfinite(thin):  # e.g. a coupling beyond the second law (q^2 >= 1) in an overlapped channel
            return f"{full}   (thin-layer: no consistent value here)"
        return f"{full}   (thin-layer {_scaled(thin, scale, unit).rstrip()}, {_percent(error, signed=True)})"

    conductance_unit = ("nS·m", 1e9) if capillary else ("nS", 1e9)
    return [
        f"Transport and energy conversion ({per}; in brackets the thin-layer value and its error)",
        _row("conductance × length", pair("conductance_per_length", conductance_unit[1], conductance_unit[0])),
        _row("streaming potential per pressure", pair("streaming_potential_coefficient", 1e9, "mV/MPa")),
        _row("EO pump pressure per volt (no flow)", pair("eo_pump_pressure_per_voltage", 1e-3, "kPa/V")),
        _row("electroviscous ratio η_app/η", pair("electroviscous_ratio", 1.0, "")),
        _row("cation transference / selectivity",
             f"{_number(s['cation_transference'])} / {_number(s['selectivity'])}   (thin-layer "
             f"{_number(s['thin_layer_cation_transference'])})"),
        _row("diffusion potential per unit ln c", pair("diffusion_potential", 1e3, "mV")),
        _row("max efficiency, pressure -> electric", pair("max_efficiency", 100.0, "%")),
    ]


def text(result: Result) -> str:
    """A short plain-text report of ``result`` (about 35 lines).

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
        *([_row("charge-plane potential ψ0 = ζ + σ/C_S (Stern)", _stern(s["stern_potential"]))]
          if "stern_potential" in s else []),
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
        "Thin-layer model (" + ("slip velocity u_s = -(εE/η)(ζ + bσ/ε) at the wall: Helmholtz-Smoluchowski with "
                                "Navier slip length b)" if any(w.slip_length > 0.0 for w in case.walls) else
                                "Helmholtz-Smoluchowski slip u_s = -εζE/η at the wall)"),
    ]
    kinds = {wall.kind for wall in case.walls}
    if "regulated" in kinds:
        lines.append(_row("zeta it uses (isolated wall, regulated charge)", mv("thin_layer_zeta")))
    elif "charge" in kinds:
        lines.append(_row("zeta it uses (Grahame, from the wall charge)", mv("thin_layer_zeta")))
    lines += [
        _row("slip velocity u_s", um_s("hs_velocity")),
        _row("eo_ratio (full / thin-layer mean EO velocity)", _number(get("eo_ratio"))),
        _row("flow-rate error (thin-layer - full) / full", _percent(get("thin_layer_flow_rate_error"), signed=True)),
        _row("largest profile deviation outside the layers",
             f"{_percent(get('thin_layer_max_outer_deviation'))} of the slip speed"),
        f"Verdict: {result.verdict}",
        "",
        *_transport_lines(s, capillary),
        "",
        f"Solver: {result.message or result.status}",
    ]
    lines += [f"Warning: {warning}" for warning in result.warnings]
    return "\n".join(lines) + "\n"
