"""The lines ``edl transport`` prints after the report: the conductance curve and the finite channel's
landmarks, with units (per metre of width for a slit)."""

from __future__ import annotations

from typing import Any

__all__ = ["channel_lines", "conductance_lines"]


def conductance_lines(curve: Any) -> str:
    """The conductance curve at up to seven concentrations, ends included, and where the bulk line meets the
    counter-ion estimate."""
    import math

    import numpy as np

    from edl_solver.channel.conductance import crossover_concentration
    from edl_solver.inputs.geometry import GEOMETRIES
    from edl_solver.report.formatting import prefixed

    data = curve.sortby("concentration")
    c = data["concentration"].values
    unit = data["conductance"].attrs["units"].replace("*", "·")
    shape = GEOMETRIES.get(data.attrs.get("geometry"))
    slit = shape is not None and shape.extent == "per_width"
    length = data.attrs.get("length_m")
    of = "per unit length" if length is None else f"of the {prefixed(length, 'm')} channel"
    status = data["status"].values
    lines = [f"Conductance against salt concentration ({of}{', per metre of slit width' if slit else ''}; "
             f"{c.size} concentrations, {int(np.count_nonzero(status == 0))} converged)",
             f"  {'c (mM)':>10}  {'full model':>12}  {'bulk line K·A':>14}  {'counter-ions only':>18}"]
    picks = sorted({round(i * (c.size - 1) / 6) for i in range(7)})
    estimate = np.where(np.isfinite(data["plateau_estimate"].values), data["plateau_estimate"].values,
                        data["plateau_conduction"].values)
    for i in picks:
        full = prefixed(data["conductance"].values[i], unit) if status[i] == 0 else "failed"
        lines.append(f"  {c[i]:>10.4g}  {full:>12}  {prefixed(data['bulk_conductance'].values[i], unit):>14}  "
                     f"{prefixed(estimate[i], unit):>18}")
    crossing = crossover_concentration(data)
    if math.isfinite(crossing):
        lines.append(f"  the bulk line meets the counter-ion estimate at c = {crossing:.3g} mM: below it the "
                     "double layers carry more current than the bulk")
    lines.append("  counter-ions only: their conduction 2μ|σ| (2πaμ|σ| in a capillary, μ = |z|eD/kT) and EO "
                 "convection; the limit c -> 0")
    return "\n".join(lines) + "\n"


def channel_lines(data: Any, result: Any) -> str:
    """The finite channel's landmarks with units (per metre of width for a slit)."""
    from edl_solver.inputs.geometry import extent_unit
    from edl_solver.report.formatting import prefixed

    geometry = result.case.geometry
    left, right = data.attrs["left_concentration"], data.attrs["right_concentration"]
    per = "; per metre of slit width" if geometry.extent == "per_width" else ""
    siemens = extent_unit(("S/m", "S"), geometry)
    lines = [f"Finite channel: length {prefixed(data.attrs['length'], 'm')} between reservoirs of {left:.4g} mM "
             f"(left, x = 0) and {right:.4g} mM (right, x = L){per}",
             _row("conductance -dI/dΔV at zero current", prefixed(_value(data, "conductance"), siemens, 4))]
    if data.attrs["equal_reservoirs"]:
        lines.append("  equal reservoirs: no membrane potential and no osmotic power (give --left and --right)")
    else:
        lines += _reservoir_lines(data, result)
    if "voltage" in data.dims:
        status = data["status"].values
        volts = data["voltage"].values
        failed = int((status != 0).sum())
        span = f"{volts.size} voltages from {volts.min() * 1e3:+.4g} to {volts.max() * 1e3:+.4g} mV"
        lines.append(_row("I-V curve", f"{span}, {'all converged' if not failed else f'{failed} did not converge'}"))
    if data.attrs.get("osmotic_power_status", "converged") != "converged":
        lines.append("  note: the maximum-power search did not converge; its values are undefined")
    return "\n".join(lines) + "\n"


def _reservoir_lines(data: Any, result: Any) -> list[str]:
    """Membrane potential (beside the Henderson and, for a charged channel in a binary electrolyte, the Nernst
    limits of ``model.bulk``), short-circuit current, maximum osmotic power and its efficiency."""
    from edl_solver.inputs.geometry import extent_unit
    from edl_solver.model.bulk import counter_ion, nernst_potential
    from edl_solver.report.formatting import prefixed

    case = result.case
    amp, watt = extent_unit(("A/m", "A"), case.geometry), extent_unit(("W/m", "W"), case.geometry)
    left, right = data.attrs["left_concentration"], data.attrs["right_concentration"]
    references = [f"uncharged channel (Henderson) {_value(data, 'henderson_potential') * 1e3:+.4g} mV"]
    sigma = result.summary["wall_charge_density"]  # (bottom, top) when the walls differ
    counter = counter_ion(case, sum(sigma) if isinstance(sigma, tuple) else sigma)
    if counter is not None:
        nernst = nernst_potential(case, counter.valence, left, right)
        kind = "cation" if counter.valence > 0 else "anion"
        references.append(f"ideally {kind}-selective (Nernst) {nernst * 1e3:+.4g} mV")
    return [
        _row("membrane potential V(right) - V(left) at I = 0", f"{_value(data, 'membrane_potential') * 1e3:+.4f} mV"),
        _row("", f"(for comparison: {'; '.join(references)})"),
        _row("short-circuit current (ΔV = 0)", prefixed(_value(data, "short_circuit_current"), amp, 4)),
        _row("maximum osmotic power", f"{prefixed(_value(data, 'max_power'), watt, 4)} at ΔV = "
                                      f"{_value(data, 'voltage_at_max_power') * 1e3:+.4g} mV"),
        _row("efficiency at maximum power", f"{100 * _value(data, 'efficiency'):.3g} % of the Gibbs energy released "
                                            f"by the salt flux ({100 * _value(data, 'efficiency_total'):.3g} % of the "
                                            "whole free-energy input)"),
    ]


def _value(data: Any, name: str) -> float:
    return float(data[name].values)


def _row(label: str, text: str) -> str:
    return f"  {label:<48} {text}"
