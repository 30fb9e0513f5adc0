"""The lines ``edl transport`` prints after the report: the conductance curve and the finite channel's
landmarks, in the units of ``report.units`` (per metre of width for a slit), or what its flags add."""

from __future__ import annotations

from typing import Any

__all__ = ["channel_lines", "conductance_lines", "flags_line", "shown_number"]


def conductance_lines(curve: Any) -> str:
    """The conductance curve at up to seven concentrations, ends included, and where the bulk line meets the
    counter-ion estimate; one unit for the whole table (``report.units``: a conductance per unit length as that
    of a channel 1 µm long, per metre of width for a slit)."""
    import math

    import numpy as np

    from edl_solver.channel.conductance import crossover_concentration
    from edl_solver.inputs.geometry import GEOMETRIES
    from edl_solver.report.units import REFERENCE_LENGTH, show

    data = curve.sortby("concentration")
    c = data["concentration"].values
    shape = GEOMETRIES.get(data.attrs.get("geometry"))
    slit = shape is not None and shape.extent == "per_width"
    length = data.attrs.get("length_m")
    quantity = "conductance_length" if length is None else "conductance"
    status = data["status"].values
    picks = sorted({round(i * (c.size - 1) / 6) for i in range(7)})
    estimate = np.where(np.isfinite(data["plateau_estimate"].values), data["plateau_estimate"].values,
                        data["plateau_conduction"].values)
    columns = (data["conductance"].values, data["bulk_conductance"].values, estimate)
    shown = show(quantity, shape, *(column[i] for column in columns for i in picks))
    of = f"of a {REFERENCE_LENGTH * 1e6:g} µm long channel" if length is None else \
        f"of the {show('length', None, length)(length)} channel"
    lines = [f"Conductance against salt concentration ({of}{', per metre of slit width' if slit else ''}, "
             f"{shown.unit}; {c.size} concentrations, {int(np.count_nonzero(status == 0))} converged)",
             f"  {'c (mM)':>10}  {'full model':>12}  {'bulk line K·A':>14}  {'counter-ions only':>18}"]
    for i in picks:
        full = shown.value(data["conductance"].values[i]) if status[i] == 0 else "failed"
        lines.append(f"  {shown_number(c[i]):>10}  {full:>12}  {shown.value(data['bulk_conductance'].values[i]):>14}  "
                     f"{shown.value(estimate[i]):>18}")
    crossing = crossover_concentration(data)
    if math.isfinite(crossing):
        lines.append(f"  the bulk line meets the counter-ion estimate at c = {shown_number(crossing)} mM: below it "
                     "the double layers carry more current than the bulk")
    lines.append("  counter-ions only: their conduction 2μ|σ| (2πaμ|σ| in a capillary, μ = |z|eD/kT) and EO "
                 "convection; the limit c -> 0")
    return "\n".join(lines) + "\n"


def shown_number(value: float) -> str:
    """A plain number to 3 significant figures (a concentration in mM)."""
    from edl_solver.report.units import significant

    return significant(float(value))


def flags_line() -> str:
    """What ``edl transport`` adds to ``edl solve``'s report, for a run without its flags."""
    return ("edl transport adds, with its flags: --length L (a finite channel's conductance; with --left and "
            "--right its membrane potential and osmotic power; --iv its I-V curve; --size A:B a tapered channel, "
            "--rectification its |I(+V)/I(-V)|), --conductance C1:C2:N (the "
            "conductance against concentration), --pump-figure (the EO pump curve), --channels/--width/--voltage/"
            "--pressure-difference with --length (a device's flow in uL/min, pump curve and streaming potential); "
            "see edl transport --help\n")


def channel_lines(data: Any, result: Any) -> str:
    """The finite channel's landmarks, in the units of ``report.units`` (per metre of width for a slit)."""
    from edl_solver.report.units import show

    geometry = result.case.geometry
    left, right = data.attrs["left_concentration"], data.attrs["right_concentration"]
    per = "; per metre of slit width" if geometry.extent == "per_width" else ""
    length = data.attrs["length"]
    siemens = show("conductance", geometry, _value(data, "conductance"))
    lines = [f"Finite channel: length {show('length', None, length)(length)} between reservoirs of "
             f"{shown_number(left)} mM (left, x = 0) and {shown_number(right)} mM (right, x = L){per}",
             *_taper_lines(data), *_segment_lines(data),
             _row("conductance -dI/dΔV at zero current", siemens(_value(data, "conductance")))]
    if data.attrs["equal_reservoirs"]:
        lines.append("  equal reservoirs: no membrane potential and no osmotic power (give --left and --right, or left "
                     "and right in [channel])")
    else:
        lines += _reservoir_lines(data, result)
    if "voltage" in data.dims:
        status = data["status"].values
        volts = data["voltage"].values
        failed = int((status != 0).sum())
        mv = show("potential", geometry)
        span = f"{volts.size} voltages from {mv(volts.min(), signed=True)} to {mv(volts.max(), signed=True)}"
        lines.append(_row("I-V curve", f"{span}, {'all converged' if not failed else f'{failed} did not converge'}"))
        lines += _rectification_lines(data, mv)
    lines += _access_lines(data, geometry)
    if data.attrs.get("osmotic_power_status", "converged") != "converged":
        lines.append("  note: the maximum-power search did not converge; its values are undefined")
    return "\n".join(lines) + "\n"


def _taper_lines(data: Any) -> list[str]:
    """A tapered channel's shape and the interpolation error of its table over (concentration, size); none for a
    uniform channel."""
    from edl_solver.channel.taper_outputs import shape_words

    words = shape_words(data.attrs)
    if words is None:
        return []
    error = float(data.attrs.get("interpolation_error", float("nan")))
    label = "straight channel, wall along x" if "all along" in words else "tapered channel"
    lines = [_row(label, words),
             _row("table over (c, size): interpolation error", f"{error:.2g} (largest, relative to sqrt(L_ii L_jj), "
                                                                  "at the cells' centres)")]
    span = float(data.attrs.get("concentration_span", float("nan")))
    lines += [f"  note: {note}" for note in str(data.attrs.get("notes", "")).split("; ") if note]
    if span > 50.0:  # widened because the salt inside left the default table (``operating._wider``)
        lines.append(_row("", f"its concentrations span the reservoirs' {span:g} times each way (widened: the salt "
                              "inside left a narrower table)"))
    return lines


def _segment_lines(data: Any) -> list[str]:
    """The wall segments along x (``transport_outputs``), one line each; none for a wall that does not vary."""
    from edl_solver.report.formatting import prefixed

    if "wall_segment_end" not in data.variables:
        return []
    starts, ends = data["wall_segment_start"].values, data["wall_segment_end"].values
    words = data["wall_segment_wall"].values
    return [_row("wall along x" if k == 0 else "", f"from {'x = 0' if a == 0.0 else prefixed(float(a), 'm')} to "
                                                   f"{prefixed(float(b), 'm')}: {w}")
            for k, (a, b, w) in enumerate(zip(starts, ends, words))]


def _access_lines(data: Any, geometry: Any) -> list[str]:
    """Each end's access resistance, with its size and reservoir, and their sum (in series with the channel)."""
    from edl_solver.report.formatting import prefixed

    if "end_access_resistance" not in data.variables:
        return []
    unit = "Ω·m" if geometry.extent == "per_width" else "Ω"
    values, sizes = data["end_access_resistance"].values, data["end_size"].values
    name = geometry.size_name
    lines = [_row(f"access resistance of the {end} end",
                  f"{prefixed(float(values[k]), unit)} ({name} {prefixed(float(sizes[k]), 'm')}, reservoir "
                  f"{shown_number(float(data['end_concentration'].values[k]))} mM)")
             for k, end in enumerate(("left (x = 0)", "right (x = L)"))]
    total = prefixed(float(values.sum()), unit)
    lines.append(_row("", f"both {total} in series with the channel, included in every current above"))
    return lines


def _rectification_lines(data: Any, mv: Any) -> list[str]:
    """|I(+V)/I(-V)| at up to five voltage magnitudes, when the curve (or --rectification) has both signs."""
    from edl_solver.channel.taper_outputs import curve_rectification

    found = curve_rectification(data)
    if found is None:
        return []
    magnitudes, ratios = found
    picks = sorted({round(i * (magnitudes.size - 1) / 4) for i in range(5)})
    shown = ", ".join(f"{shown_number(ratios[i])} at {mv(magnitudes[i])}" for i in picks)
    return [_row("rectification |I(+V)/I(-V)|", shown)]


def _reservoir_lines(data: Any, result: Any) -> list[str]:
    """Membrane potential (beside the Henderson and, for a charged channel in a binary electrolyte, the Nernst
    limits of ``model.bulk``), short-circuit current, maximum osmotic power and its efficiency."""
    from edl_solver.model.bulk import counter_ion, nernst_potential
    from edl_solver.report.formatting import percent
    from edl_solver.report.units import show

    case = result.case
    mv = show("potential", case.geometry)
    amps = show("current", case.geometry, _value(data, "short_circuit_current"))
    watts = show("power", case.geometry, _value(data, "max_power"))
    left, right = data.attrs["left_concentration"], data.attrs["right_concentration"]
    references = [f"uncharged channel (Henderson) {mv(_value(data, 'henderson_potential'), signed=True)}"]
    sigma = result.summary["wall_charge_density"]  # (bottom, top) when the walls differ
    counter = counter_ion(case, sum(sigma) if isinstance(sigma, tuple) else sigma)
    if counter is not None:
        nernst = nernst_potential(case, counter.valence, left, right)
        kind = "cation" if counter.valence > 0 else "anion"
        references.append(f"ideally {kind}-selective (Nernst) {mv(nernst, signed=True)}")
    return [
        _row("membrane potential V(right) - V(left) at I = 0", mv(_value(data, "membrane_potential"), signed=True)),
        _row("", f"(for comparison: {'; '.join(references)})"),
        _row("short-circuit current (ΔV = 0)", amps(_value(data, "short_circuit_current"))),
        _row("maximum osmotic power", f"{watts(_value(data, 'max_power'))} at ΔV = "
                                      f"{mv(_value(data, 'voltage_at_max_power'), signed=True)}"),
        _row("efficiency at maximum power", f"{percent(_value(data, 'efficiency'))} of the Gibbs energy released "
                                            f"by the salt flux ({percent(_value(data, 'efficiency_total'))} of the "
                                            "whole free-energy input)"),
    ]


def _value(data: Any, name: str) -> float:
    return float(data[name].values)


def _row(label: str, text: str) -> str:
    return f"  {label:<48} {text}"
