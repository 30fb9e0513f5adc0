"""A short plain-text report of one result, in the units a reader of the field expects.

SI values are converted here for reading only (mV, mM, nm, µm/s, engineering prefixes for currents;
``report.formatting``); the Result itself stays SI. The report works on the result passed in: it does not
import ``results.result``, which is a layer above.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

from edl_solver.constants import BOLTZMANN, ELEMENTARY_CHARGE, ZERO_CELSIUS
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Geometry
from edl_solver.inputs.ion_size import close_packing
from edl_solver.inputs.wall import Site, Wall
from edl_solver.report.formatting import MODEL_NAMES, number, percent, prefixed, scaled
from edl_solver.report.units import REFERENCE_LENGTH, Shown, show

if TYPE_CHECKING:
    from edl_solver.results.result import Result

__all__ = ["text"]

_LABEL_WIDTH = 46


def _row(label: str, value: str) -> str:
    return f"  {label:<{_LABEL_WIDTH}} {value}"


def _value(summary: dict[str, Any], key: str) -> Any:
    return summary.get(key, math.nan)  # a partial summary still reports what it has


# ----------------------------------------------------------------------------------------------
# The case


def _site_text(site: Site) -> str:
    """'silanol sites 8 nm⁻², pK 7.5 (charge 0 → -1)': density per nm², one pK per step."""
    pks = ", ".join(number(pk, 4) for pk in site.pks)
    charges = " → ".join(f"{q:+d}" if q else "0" for q in site.charges)
    return f"{site.name} sites {number(site.density * 1e-18, 4)} nm⁻², pK {pks} (charge {charges})"


def _wall_text(wall: Wall) -> str:
    """The condition of one wall: its potential, its charge, or what regulates its charge; and its slip."""
    if wall.kind == "potential":
        parts = [f"zeta = {scaled(wall.zeta, 1e3, 'mV')}"]
    elif wall.kind == "charge":
        parts = [f"charge density = {scaled(wall.charge_density, 1e3, 'mC/m²')}"]
    else:
        parts = ["charge-regulated"]
        parts += [_site_text(site) for site in wall.sites]
        if wall.charge_density is not None:
            parts.append(f"fixed charge density {scaled(wall.charge_density, 1e3, 'mC/m²')}")
        if wall.stern_capacitance is not None:
            parts.append(f"Stern capacitance C_S = {number(wall.stern_capacitance)} F/m²")
        if wall.gate_voltage is not None:
            parts.append(f"gate at V_g = {scaled(wall.gate_voltage, 1.0, 'V')} behind "
                         f"C_g = {scaled(wall.gate_capacitance, 1e3, 'mF/m²')}")
    if wall.slip_length > 0.0:
        parts.append(f"slip length b = {scaled(wall.slip_length, 1e9, 'nm')}")
    return "; ".join(parts)


def _wall_lines(case: Case) -> list[str]:
    """One line per wall (pair) when they differ; one line for every wall otherwise."""
    names = case.geometry.wall_titles
    if isinstance(case.wall, tuple):
        return [f"{names[0]}: {_wall_text(case.wall[0])}", f"{names[1]}: {_wall_text(case.wall[1])}"]
    return [f"{names[2]}: {_wall_text(case.wall)}"]


def _model_text(case: Case) -> str:
    """The model's plain name; for the steric model, the ion size and the close-packing limit it implies."""
    name = MODEL_NAMES.get(case.model, case.model)
    if case.model != "steric":
        return name
    diameter = case.electrolyte.ions[0].diameter  # Case checks that every ion has this same diameter
    return (f"{name}; ion diameter d = {scaled(diameter, 1e9, 'nm')}, close packing at 1/(N_A d³) = "
            f"{scaled(close_packing(diameter), 1e-3, 'M')}")


def _electrolyte_text(case: Case) -> str:
    electrolyte = case.electrolyte
    ions = ", ".join(f"{ion.name} {number(ion.concentration, 4)} mM" for ion in electrolyte.ions)
    ions += f", ionic strength {number(electrolyte.ionic_strength, 4)} mM"
    if electrolyte.pH is not None:
        among = any(ion.name == "H+" for ion in electrolyte.ions)
        ions += f"; pH {number(electrolyte.pH, 4)}" + ("" if among else " (H+ and OH- not among the ions)")
    return f"Electrolyte: {ions}"


def _solvent_text(case: Case) -> str:
    s = case.solvent
    properties = f"εr = {number(s.relative_permittivity)}, viscosity {scaled(s.viscosity, 1e3, 'mPa·s')}"
    if s.viscoelectric_coefficient > 0.0:
        properties += f", viscoelectric coefficient f = {number(s.viscoelectric_coefficient)} m²/V²"
    return f"Solvent: {s.name} at {number(s.temperature - ZERO_CELSIUS, 4)} °C ({properties})"


def _case_lines(case: Case) -> list[str]:
    g = case.geometry
    return [
        f"{g.kind.capitalize()} of {g.size_text(lambda v: scaled(v, 1e9, 'nm', 4))}, {g.range_text}",
        _electrolyte_text(case),
        _solvent_text(case),
        *_wall_lines(case),
        f"Drives: field E = {prefixed(case.field, 'V/m')}, pressure gradient dp/dx = "
        f"{prefixed(case.pressure_gradient, 'Pa/m')}",
        f"Model: {_model_text(case)}",
        "Signs: E > 0 points along the channel axis +x; positive velocities, flow rates and currents go to +x",
    ]


# ----------------------------------------------------------------------------------------------
# The full solution and the thin-layer model


def _pair(shown: Shown, value: Any, signed: bool = False, names: tuple[str, str] = ("bottom", "top")) -> str:
    """One value, or a pair of the two walls (``names``: the geometry's ``wall_words``), in ``shown``'s unit."""
    if isinstance(value, tuple):
        return f"{names[0]} {shown(value[0], signed)}, {names[1]} {shown(value[1], signed)}"
    return shown(value, signed)


def _flat(*values: Any) -> list[float]:
    """The numbers of values and (bottom, top) pairs, for a common display scale."""
    return [float(v) for value in values for v in (value if isinstance(value, tuple) else (value,))]


def _flow(shown: Shown, value: Any, geometry: Geometry) -> str:
    """A flow rate: µm²/s (= µm³/s per µm of width) per unit width; litres with a prefix per channel, since
    prefixes on cubic metres (µm³ is not µ·m³) confuse."""
    if geometry.extent == "per_width" or shown.is_zero(value):
        return shown(value)
    return f"{shown(value)} ({number(float(value))} m³/s)"


def _stern(shown: Shown, value: Any, names: tuple[str, str]) -> str:
    """The charge-plane potential, mV; a wall without Stern layer (NaN in a pair) says so."""
    if not isinstance(value, tuple):
        return shown(value)
    texts = [shown(v) if math.isfinite(v) else "none (no Stern layer)" for v in value]
    return f"{names[0]} {texts[0]}, {names[1]} {texts[1]}"


def _full_solution_lines(case: Case, s: dict[str, Any]) -> list[str]:
    """Potentials, velocities, flow rates and currents of the full solution; each quantity in one unit
    (``report.units``), round-off of a zero (e.g. the EO flow between walls of opposite charge) as 0."""
    g = case.geometry
    thermal = BOLTZMANN * case.solvent.temperature / ELEMENTARY_CHARGE
    potentials = _flat(*(_value(s, k) for k in ("zeta", "centre_potential", "mean_potential")))
    mv = show("potential", g, natural=max([thermal, *(abs(v) for v in potentials if math.isfinite(v))]))
    velocities = _flat(*(_value(s, k) for k in ("hs_velocity", "mean_velocity_eo", "mean_velocity_pressure")))
    speed = show("velocity", g, *velocities)
    flows = _flat(_value(s, "flow_rate_eo"), _value(s, "flow_rate_pressure"))
    flow = show("flow_rate", g, *flows, natural=speed.natural * g.area)
    currents = ("conduction_current", "eo_convection_current", "streaming_current", "current")
    amps = show("current", g, *_flat(*(_value(s, k) for k in currents)))
    lines = [
        "Full solution" + (f" (flow rates and currents per metre of {g.kind} width)" if g.extent == "per_width"
                           else ""),
        _row("wall potential (zeta)", _pair(mv, _value(s, "zeta"), names=g.wall_words)),
        _row("wall charge density",
             _pair(show("charge_density", g), _value(s, "wall_charge_density"), names=g.wall_words)),
        *([_row("charge-plane potential ψ0 = ζ + σ/C_S (Stern)", _stern(mv, s["stern_potential"], g.wall_words))]
          if "stern_potential" in s else []),
        _row(f"{g.centre_text} / section mean",
             f"{_pair(mv, _value(s, 'centre_potential'))} / {_pair(mv, _value(s, 'mean_potential'))}"),
        _row("electroosmotic (EO) mean velocity / flow rate",
             f"{speed(_value(s, 'mean_velocity_eo'))} / {_flow(flow, _value(s, 'flow_rate_eo'), g)}"),
    ]
    if case.pressure_gradient != 0.0:
        lines.append(_row("pressure-driven mean velocity / flow rate",
                          f"{speed(_value(s, 'mean_velocity_pressure'))} / "
                          f"{_flow(flow, _value(s, 'flow_rate_pressure'), g)}"))
    lines.append(_row("current: conduction / EO convection",
                      f"{amps(_value(s, 'conduction_current'))} / {amps(_value(s, 'eo_convection_current'))}"))
    lines.append(_row("current: streaming / total",
                      f"{amps(_value(s, 'streaming_current'))} / {amps(_value(s, 'current'))}"))
    return lines


def _thin_layer_lines(result: Result) -> list[str]:
    """The thin-layer (Helmholtz-Smoluchowski slip) model beside the full solution, and the verdict, whose
    number is the error line's (both ``formatting.percent``)."""
    case, s = result.case, result.summary
    slip = any(w.slip_length > 0.0 for w in case.walls)
    lines = ["Thin-layer model (" + ("slip velocity u_s = -(εE/η)(ζ + bσ/ε) at the wall: Helmholtz-Smoluchowski "
                                    "with Navier slip length b)" if slip else
                                    "Helmholtz-Smoluchowski slip u_s = -εζE/η at the wall)")]
    kinds = {wall.kind for wall in case.walls}
    thin_zeta = _pair(show("potential", case.geometry), _value(s, "thin_layer_zeta"),
                      names=case.geometry.wall_words)
    if "regulated" in kinds:
        lines.append(_row("zeta it uses (isolated wall, regulated charge)", thin_zeta))
    elif "charge" in kinds:
        lines.append(_row("zeta it uses (Grahame, from the wall charge)", thin_zeta))
    velocities = _flat(_value(s, "hs_velocity"), _value(s, "mean_velocity_eo"))
    return [
        *lines,
        _row("slip velocity u_s", _pair(show("velocity", case.geometry, *velocities), _value(s, "hs_velocity"),
                                                 names=case.geometry.wall_words)),
        _row("eo_ratio (full / thin-layer mean EO velocity)", number(_value(s, "eo_ratio"))),
        _row("flow-rate error (thin-layer - full) / full",
             percent(_value(s, "thin_layer_flow_rate_error"), signed=True)),
        _row("largest profile deviation outside the layers",
             f"{percent(_value(s, 'thin_layer_max_outer_deviation'))} of the slip speed"),
        f"Verdict: {result.verdict}",
    ]


def _slit_lines(result: Result) -> list[str]:
    """A rectangle's slit of the same height beside it (``Result.slit_comparison``): what the side walls cost."""
    slit = result.slit_comparison
    if not slit:
        return []
    g, s = result.case.geometry, result.summary

    def beside(key: str, quantity: str) -> str:
        shown = show(quantity, g, slit[key], s[key])
        return f"{shown(slit[key])} (side walls {percent(slit[f'side_wall_effect_{key}'], signed=True)})"

    conductance = show("conductance", g, 1e6 * slit["conductance_per_length"])
    return [
        "Slit of the same height H, no side walls, scaled to the width W (side walls: rectangle / slit - 1)",
        _row("EO mean velocity", beside("mean_velocity_eo", "velocity")),
        _row("eo_ratio / flow-rate error of the slip model",
             f"{number(slit['eo_ratio'])} / {percent(slit['thin_layer_flow_rate_error'], signed=True)}"),
        _row("conductance of a 1 µm long channel",
             f"{conductance(1e6 * slit['conductance_per_length'])} (side walls "
             f"{percent(slit['side_wall_effect_conductance_per_length'], signed=True)})"),
        "",
    ]


def _transport_scales(case: Case, s: dict[str, Any]) -> dict[str, float]:
    """Natural scales of the transport coefficients in this case, for telling round-off of a zero from a value:
    Smoluchowski's εζ/(ηK) and the pump pressure ε ζ/h² per volt of a wall at ζ = kT/e."""
    thermal = BOLTZMANN * case.solvent.temperature / ELEMENTARY_CHARGE
    solvent, g = case.solvent, case.geometry
    conductivity = float(s.get("thin_layer_conductance_per_length", math.nan)) / g.area
    return {"streaming_potential_coefficient": solvent.permittivity * thermal / (solvent.viscosity * conductivity),
            "eo_pump_pressure_per_voltage": solvent.permittivity * thermal / g.half_size ** 2,
            "electroviscous_ratio": 1.0, "max_efficiency": 1.0}


def _transport_lines(case: Case, s: dict[str, Any]) -> list[str]:
    """Lab quantities per unit channel length, each beside its thin-layer value and that value's error; the
    conductance per length as the conductance of a channel 1 µm long (``report.units``)."""
    if "conductance_per_length" not in s:
        return []
    geometry = case.geometry
    per = "per unit length" + (", per metre of width" if geometry.extent == "per_width" else "")
    scales = _transport_scales(case, s)

    def pair(key: str, quantity: str) -> str:
        thin = s.get(f"thin_layer_{key}", math.nan)
        shown = show(quantity, geometry, s[key], thin, natural=scales.get(key, 0.0))
        error = s.get(f"thin_layer_{key}_error", math.nan)
        if not math.isfinite(thin):  # e.g. a coupling beyond the second law (q^2 >= 1) in an overlapped channel
            return f"{shown(s[key])}   (thin-layer: no consistent value here)"
        if shown.is_zero(s[key]):  # a relative error against round-off of a zero means nothing
            return f"{shown(s[key])}   (thin-layer {shown(thin)})"
        return f"{shown(s[key])}   (thin-layer {shown(thin)}, {percent(error, signed=True)})"

    return [
        f"Transport and energy conversion ({per}; in brackets the thin-layer value and its error)",
        _row(f"conductance of a {number(REFERENCE_LENGTH * 1e6)} µm long channel",
             pair("conductance_per_length", "conductance_length")),
        _row("streaming potential per pressure", pair("streaming_potential_coefficient", "streaming_potential")),
        _row("EO pump pressure per volt (no flow)", pair("eo_pump_pressure_per_voltage", "pump_pressure")),
        _row("electroviscous ratio η_app/η", pair("electroviscous_ratio", "ratio")),
        _row("cation transference / selectivity",
             f"{number(s['cation_transference'])} / {number(s['selectivity'])}   (thin-layer "
             f"{number(s['thin_layer_cation_transference'])})"),
        _row("diffusion potential per unit ln c", pair("diffusion_potential", "potential")),
        _row("max efficiency, pressure -> electric", pair("max_efficiency", "fraction")),
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
    scales = (f"Debye length λ_D = {scaled(_value(s, 'debye_length'), 1e9, 'nm')}; {case.geometry.kappa_text} = "
              f"{number(_value(s, 'kappa_h'))}")
    lines = [
        *_case_lines(case),
        scales,
        "",
        *_full_solution_lines(case, s),
        "",
        *_thin_layer_lines(result),
        "",
        *_slit_lines(result),
        *_transport_lines(case, s),
        "",
        f"Solver: {result.message or result.status}",
        *(f"Warning: {warning}" for warning in result.warnings),
    ]
    return "\n".join(lines) + "\n"
