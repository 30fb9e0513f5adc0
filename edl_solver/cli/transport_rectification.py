"""``edl transport --rectification-curve C1:C2:N``: the rectification of a tapered channel against the salt
concentration (``channel.rectification_curve``, both reservoirs at each c), at --rectification-voltage V or the
largest |V| of --iv; its report lines, its HDF5 group "rectification" and --rectification-figure PNG.

``transport_command`` calls, in order: ``add_rectification_flags`` (the flags), ``rectification_plan`` (the flags
checked, before any solve), ``rectification_dataset`` (the curve), ``rectification_lines`` (the printed table) and
``write_rectification_figure``.
"""

from __future__ import annotations

import argparse
import math
from pathlib import Path
from typing import Any

__all__ = ["FLAGS", "add_rectification_flags", "rectification_dataset", "rectification_lines", "rectification_plan",
           "write_rectification_figure"]

#: Most concentrations of a curve (each a solve along x at +V and -V).
_MOST_POINTS = 200
#: The flags this module adds (each takes a value).
FLAGS = frozenset({"--rectification-curve", "--rectification-voltage", "--rectification-figure"})


def add_rectification_flags(group: Any) -> None:
    """Add the flags to ``group`` (the "finite channel" group of ``edl transport``)."""
    group.add_argument("--rectification-curve", metavar="C1:C2:N",
                       help="|I(+V)/I(-V)| of the tapered channel (--size) at N salt concentrations from C1 to C2, "
                            "evenly spaced in log, both reservoirs at each, e.g. 0.01mM:1M:15; at "
                            "--rectification-voltage or the largest |V| of --iv (HDF5 group \"rectification\")")
    group.add_argument("--rectification-voltage", metavar="V",
                       help="the voltage magnitude of --rectification-curve, e.g. 500mV (default: the largest "
                            "|V| of --iv)")
    group.add_argument("--rectification-figure", metavar="PNG",
                       help="write the rectification against concentration, with kappa a_tip (needs "
                            "--rectification-curve)")


def rectification_plan(args: argparse.Namespace, plan: dict[str, Any]) -> tuple[list[float], float] | None:
    """(concentrations in mol/m^3, voltage in V) of --rectification-curve, checked against the other flags; None
    when it is not asked. ``plan`` is ``transport_command``'s, with "length", "size", "varies" (a channel varying
    along x, from the flags or the case file) and "voltages" set."""
    from edl_solver.errors import InputError
    from edl_solver.inputs.units import to_si

    if args.rectification_curve is None:
        for flag, value in (("--rectification-voltage", args.rectification_voltage),
                            ("--rectification-figure", args.rectification_figure)):
            if value is not None:
                raise InputError(f"{flag}: needs --rectification-curve too, expected e.g. --rectification-curve "
                                 "0.01mM:1M:15")
        return None
    if plan["length"] is None or not plan.get("varies", plan["size"] is not None):
        missing = "--length" if plan["length"] is None else "--size"
        raise InputError(f"--rectification-curve: needs {missing}, expected a tapered channel, e.g. --length 1um "
                         "--size 5nm:40nm")
    concentrations = _concentrations(args.rectification_curve)
    if args.rectification_voltage is not None:
        voltage = to_si(args.rectification_voltage, "V", "--rectification-voltage")
        if not (math.isfinite(voltage) and voltage > 0.0):
            raise InputError(f"--rectification-voltage: {args.rectification_voltage!r} is not allowed, expected a "
                             "positive voltage magnitude, e.g. 500mV")
        return concentrations, voltage
    largest = max((abs(v) for v in plan["voltages"] or []), default=0.0)
    if largest == 0.0:
        raise InputError("--rectification-curve: needs --rectification-voltage V or --iv with a nonzero voltage, "
                         "expected e.g. --rectification-voltage 500mV")
    return concentrations, largest


def _concentrations(text: str) -> list[float]:
    """``C1:C2:N`` -> N concentrations (mol/m^3) from C1 to C2, evenly spaced in log (as --conductance's)."""
    import numpy as np

    from edl_solver.errors import InputError
    from edl_solver.inputs.units import to_si

    flag = "--rectification-curve"
    parts = [part.strip() for part in text.split(":")]
    if len(parts) != 3 or not all(parts):
        raise InputError(f"{flag}: {text!r} is not FROM:TO:N, expected e.g. {flag} 0.01mM:1M:15")
    low, high = (to_si(part, "mol/m^3", f"{flag} {name}") for part, name in zip(parts[:2], ("FROM", "TO")))
    if not parts[2].isdigit() or not 2 <= int(parts[2]) <= _MOST_POINTS:
        raise InputError(f"{flag}: N {parts[2]!r} is not allowed, expected a whole number from 2 to {_MOST_POINTS}")
    if not (low > 0.0 and high > 0.0) or low == high:
        raise InputError(f"{flag}: {text!r} is not allowed, expected two different concentrations above zero")
    return [float(c) for c in np.geomspace(low, high, int(parts[2]))]


def rectification_dataset(spec: Any, asked: tuple[list[float], float] | None) -> Any:
    """The curve of the channel ``spec`` (None when not asked).

    Raises
    ------
    ConvergenceError
        If no point converged (the first one's reason).
    """
    if asked is None:
        return None
    from edl_solver.channel.rectification_curve import rectification_curve
    from edl_solver.errors import ConvergenceError

    curve = rectification_curve(spec, *asked)
    if not (curve["status"].values == 0).any():
        raise ConvergenceError(f"--rectification-curve: none of the {curve['status'].size} points converged (the "
                               f"first: {curve['message'].values[0]})")
    return curve


def rectification_lines(curve: Any) -> str:
    """The printed table: c, kappa a_tip, the ratio (and which end passes more current), failures with why."""
    volts = float(curve.attrs["voltage"])
    sizes = curve.attrs["size_sizes"]
    tip = ("the tip", "the base") if sizes[0] <= sizes[-1] else ("the base", "the tip")
    table = "one table per concentration (the shared one failed)"
    if "table_solves" in curve.attrs:
        table = (f"one table for all: {curve.attrs['table_solves']} cross-section solves in "
                 f"{curve.attrs['table_seconds']:.2g} s, interpolation error {curve.attrs['interpolation_error']:.2g}")
    lines = [f"rectification |I(+V)/I(-V)| against concentration at |V| = {volts:.4g} V, both reservoirs at c",
             f"  below 1: more current with the left reservoir (x = 0, {tip[0]}) positive; above 1: with the right "
             f"one (x = L, {tip[1]})",
             f"  {table}",
             f"  {'c (mM)':>10s} {'kappa a_tip':>12s} {'|I(+V)/I(-V)|':>14s}"]
    for c, kappa, ratio, message in zip(curve["concentration"].values, curve["kappa_a_tip"].values,
                                        curve["rectification"].values, curve["message"].values):
        shown = f"{ratio:14.4f}" if math.isfinite(ratio) else f"{'failed':>14s}  ({message})"
        lines.append(f"  {c:10.4g} {kappa:12.4g} {shown}")
    return "\n".join(lines)


def write_rectification_figure(outputs: dict[str, Path], curve: Any) -> list[tuple[str, Path]]:
    """The figure of --rectification-figure, when asked: [("rectification curve", path)]."""
    if curve is None or "rectification curve" not in outputs:
        return []
    from edl_solver.plot.rectification_figure import rectification_curve_figure

    return [("rectification curve", rectification_curve_figure(curve, outputs["rectification curve"]))]
