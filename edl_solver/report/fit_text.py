"""The report of a fit on the terminal: the parameters with their standard errors in lab units, the correlation
matrix, chi^2, the number of forward solves, the warnings, and the thin-layer fit beside the full one.

Units follow ``edl_solver.report.units`` where the quantity has a unit there (mC/m², mV, nm, mM), three
significant figures; the others (a site density, a capacitance, a temperature) read in the lab's unit of this
module's table.
"""

from __future__ import annotations

import math
from typing import Any

from edl_solver.inputs.paths import PATH_UNITS
from edl_solver.report.units import significant, unit_of

__all__ = ["fit_lines", "parameter_unit", "three"]

#: Units of the leaves of parameter paths without a quantity in ``report.units``: (factor from SI, symbol).
_OTHER_UNITS = {"density": (1e-18, "/nm²"), "stern_capacitance": (1.0, "F/m²"), "gate_capacitance": (1e3, "mF/m²"),
                "gate_voltage": (1.0, "V"), "temperature": (1.0, "K"), "viscosity": (1e3, "mPa·s"),
                "field": (1.0, "V/m"), "pressure_gradient": (1.0, "Pa/m")}
#: Leaves with a quantity of ``report.units``.
_QUANTITIES = {"charge_density": "charge_density", "zeta": "potential", "height": "size", "radius": "size",
               "slip_length": "size", "diameter": "size", "concentration": "concentration"}


def parameter_unit(path: str) -> tuple[float, str]:
    """(factor from SI, unit text) in which the parameter at ``path`` is reported."""
    leaf = path.rsplit(".", 1)[-1]
    if leaf in _QUANTITIES:
        unit = unit_of(_QUANTITIES[leaf])
        return unit.factor, unit.symbol + unit.after
    if leaf in _OTHER_UNITS:
        return _OTHER_UNITS[leaf]
    si = PATH_UNITS.get(path, "dimensionless")
    return 1.0, "" if si == "dimensionless" else si


def three(value: float) -> str:
    """``value`` to three significant figures, trailing zeros kept (-8.00, 0.0620, 145)."""
    if not math.isfinite(value):
        return "undefined"
    if value == 0.0 or abs(value) >= 1e6 or abs(value) < 1e-4:
        return significant(value)
    return f"{value:#.3g}".rstrip(".")


def _value(path: str, value: float, error: float | None = None) -> str:
    """``-8.05 ± 0.062 mC/m²``: three significant figures, in the parameter's unit."""
    factor, unit = parameter_unit(path)
    text = three(value * factor)
    if error is not None:
        text += f" ± {three(error * factor)}"
    return f"{text} {unit}".rstrip()


def fit_lines(fit: Any, sources: list[str] | None = None) -> list[str]:
    """The report of ``fit`` (an ``edl_solver.Fit``), one line per item.

    Parameters
    ----------
    fit : Fit
    sources : list of str, optional
        Where the data sets came from (file names), to say what was fitted.
    """
    points = sum(one.values.size for one in fit.datasets)
    quantities = ", ".join(dict.fromkeys(one.quantity for one in fit.datasets))
    where = f" from {', '.join(sources)}" if sources else ""
    sets = f"{len(fit.datasets)} data sets, " if len(fit.datasets) > 1 else ""
    lines = [f"fit of {', '.join(fit.names)} to {sets}{points} points of {quantities}{where}"]
    width = max(len(name) for name in fit.names)
    for name in fit.names:
        line = f"  {name:<{width}} = {_value(name, fit.parameters[name], fit.standard_errors[name])}"
        if fit.intervals is not None:
            low, high = fit.intervals[name]
            line += f"   profile interval [{_value(name, low)}, {_value(name, high)}]"
        lines.append(line)
    lines.extend(_thin_layer_lines(fit))
    if len(fit.names) > 1:
        lines.extend(_correlation_lines(fit, width))
    reduced = three(fit.reduced_chi2) if math.isfinite(fit.reduced_chi2) else "undefined (no degree of freedom)"
    lines.append(f"chi^2 = {three(fit.chi2)}, reduced chi^2 = {reduced}, dof = {fit.dof}")
    if fit.absolute_uncertainty:
        lines.append("standard errors: from the uncertainties given with the data (not scaled by chi^2)")
    else:
        lines.append("standard errors: scaled by the reduced chi^2 (the data gave no uncertainty)")
    lines.append(f"forward solves: {fit.forward_solves}" + ("" if fit.success else
                                                             f"; the optimiser did not converge: {fit.message}"))
    lines.extend(f"warning: {note}" for note in fit.warnings)
    return lines


def _thin_layer_lines(fit: Any) -> list[str]:
    thin = fit.thin_layer
    if thin is None:
        return ["thin-layer fit: none (it fits one wall charge density or zeta, to conductance, streaming or "
                "electro-osmotic data)"]
    lines = [f"thin-layer fit ({thin.formula}):"]
    for name, value in thin.parameters.items():
        difference = thin.relative_difference.get(name, math.nan)
        differs = f"{three(100 * difference)} % from the full model's" if math.isfinite(difference) else ""
        lines.append(f"  {name} = {_value(name, value, thin.standard_errors.get(name))}" +
                     (f"   ({differs})" if differs else ""))
    return lines


def _correlation_lines(fit: Any, width: int) -> list[str]:
    lines = ["correlation:"]
    for i, name in enumerate(fit.names):
        cells = " ".join(f"{fit.correlation[i][j]:+.3f}" for j in range(len(fit.names)))
        lines.append(f"  {name:<{width}}  {cells}")
    return lines
