"""What a lab measures on a finite channel between two reservoirs: the I-V curve and its landmarks
(membrane potential, short-circuit current, small-signal conductance, maximum osmotic power and
efficiency), beside the free-solution (uncharged-channel) references, as one ``xarray.Dataset`` (the HDF5
group "channel" of ``edl transport``).

Signs and units follow ``edl_solver.channel.model``: x from the left reservoir (0) to the right one (L),
Delta V = V(L) - V(0), currents positive along +x; slit values per unit width.
"""

from __future__ import annotations

import json
import math
from typing import Any

import numpy as np

from edl_solver.channel.model import ChannelTable, tabulate
from edl_solver.channel.operating import OsmoticPower, current_voltage, operating_point, osmotic_power
from edl_solver.channel.point import CONVENTIONS, CONVERGED_WORD, OperatingPoint
from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import extent_unit
from edl_solver.inputs.units import to_si
from edl_solver.model.bulk import henderson_potential

__all__ = ["channel_characteristics", "planck_current"]

#: Central-difference step of the small-signal conductance, in units of kT/e (truncation ~1e-7).
_SLOPE_STEP = 1e-3


def _binary_valence(case: Case) -> int | None:
    """z of a binary z:z electrolyte, else None."""
    ions = case.electrolyte.ions
    if len(ions) != 2 or ions[0].valence != -ions[1].valence:
        return None
    return abs(ions[0].valence)


def planck_current(case: Case, left: float, right: float, length: float, voltages: Any) -> np.ndarray:
    """Current of an uncharged channel in free-solution electrodiffusion (a binary z:z salt, no flow), A (A/m
    per unit width of a slit), at each applied voltage Delta V = V(L) - V(0).

    Planck's electroneutral solution (Planck 1890, from memory; derived here): with phi = F V / RT and
    J_+/D_+ = -(c' + z c phi'), J_-/D_- = -(c' - z c phi'), the sum makes c linear in x and the difference
    integrates to d = J_+/D_+ - J_-/D_- = -2 z Delta c Delta phi / (L ln(c_R/c_L)) (-2 z c Delta phi / L for
    equal reservoirs). With s = -2 Delta c / L, J_+ = D_+ (s + d)/2, J_- = D_- (s - d)/2 and
    I = z F A (J_+ - J_-). Its zero is the Henderson potential.

    Raises
    ------
    InputError
        If the electrolyte is not a binary z:z salt.
    """
    z = _binary_valence(case)
    if z is None:
        raise InputError("planck_current: the electrolyte is not a binary z:z salt, expected two ions of valence "
                         "+z and -z")
    plus, minus = case.electrolyte.ions
    if plus.valence < 0:
        plus, minus = minus, plus
    rt = GAS_CONSTANT * case.solvent.temperature
    area = case.geometry.area
    phi = np.asarray(voltages, dtype=float) * FARADAY / rt
    difference = right - left
    log_mean = difference / math.log(right / left) if not math.isclose(left, right, rel_tol=1e-12) else left
    d = -2.0 * z * log_mean * phi / length
    s = -2.0 * difference / length
    return z * FARADAY * area * (plus.diffusivity * (s + d) - minus.diffusivity * (s - d)) / 2.0


def channel_characteristics(channel: Any, voltages: Any = None, pressure_difference: float | str = 0.0) -> Any:
    """What a lab measures on a finite channel between two reservoirs: the I-V curve and its landmarks.

    Parameters
    ----------
    channel : edl_solver.channel.model.Channel or ChannelTable
    voltages : sequence of float, optional
        Applied voltages Delta V = V(L) - V(0), V, for the I-V curve (``channel.current_voltage``).
    pressure_difference : float or str
        Delta p = p(L) - p(0), Pa.

    Returns
    -------
    xarray.Dataset
        The ``current_voltage`` dataset (dimension ``voltage``) when ``voltages`` are given, with
        ``bulk_current`` (``planck_current``; binary z:z salts only) beside ``current``; and 0-d variables:
        ``membrane_potential`` (zero-current Delta V, V), ``short_circuit_current`` (I at Delta V = 0),
        ``conductance`` (-dI/d Delta V at zero current: S, S/m per unit width), ``max_power`` and
        ``voltage_at_max_power`` (largest I Delta V over a load), ``efficiency`` (P over the Gibbs energy
        J_s Delta mu_s released by the salt flux, at maximum power), ``efficiency_total`` (P over the whole
        free-energy input) and ``henderson_potential`` (the uncharged channel's membrane potential). Attributes
        as ``current_voltage``'s, plus ``case_json`` and ``equal_reservoirs`` (0 or 1).

    Raises
    ------
    ConvergenceError
        If a cross-section solve or the zero-current point fails.
    """
    table = channel if isinstance(channel, ChannelTable) else tabulate(channel)
    dp = to_si(pressure_difference, "Pa", "pressure_difference")
    data = _curve(table, voltages, dp)
    open_circuit = operating_point(table, current=0.0, pressure_difference=dp)
    if open_circuit.status != CONVERGED_WORD:
        raise ConvergenceError(f"channel: the zero-current point did not converge ({open_circuit.message})")
    slope = _conductance(table, open_circuit, dp)
    power = osmotic_power(table, dp)
    _add_landmarks(data, table, open_circuit, slope, power)
    return data


def _curve(table: ChannelTable, voltages: Any, dp: float) -> Any:
    """The ``current_voltage`` dataset with the uncharged channel's ``bulk_current`` beside it (binary z:z
    salts), or an empty dataset with the same attributes when no ``voltages`` are given."""
    import xarray as xr

    spec = table.channel
    case = spec.case
    left, right = spec.left_concentration, spec.right_concentration
    if voltages is None:
        return xr.Dataset(attrs={"length": spec.length, "left_concentration": left, "right_concentration": right,
                                 "pressure_difference": dp, "access_resistance": table.access_resistance,
                                 "interpolation_error": table.interpolation_error, "conventions": CONVENTIONS,
                                 "case": case.describe()})
    data = current_voltage(table, voltages, dp)
    if _binary_valence(case) is not None and spec.size is None:  # Planck's closed form is for a uniform section
        data["bulk_current"] = (("voltage",), planck_current(case, left, right, spec.length, data["voltage"].values),
                                {"units": extent_unit(("A/m", "A"), case.geometry), "long_name": "current of an "
                                 "uncharged channel (free-solution electrodiffusion, Planck), no access resistance"})
    return data


def _conductance(table: ChannelTable, open_circuit: OperatingPoint, dp: float) -> float:
    """-dI/d(Delta V) at zero current by central differences of step ``_SLOPE_STEP`` kT/e; NaN when a side
    does not converge."""
    step = _SLOPE_STEP * GAS_CONSTANT * table.channel.case.solvent.temperature / FARADAY
    sides = [operating_point(table, voltage=open_circuit.voltage + s, pressure_difference=dp,
                             guess=open_circuit) for s in (-step, step)]
    return -(sides[1].current - sides[0].current) / (2.0 * step) if all(
        p.status == CONVERGED_WORD for p in sides) else math.nan


def _add_landmarks(data: Any, table: ChannelTable, open_circuit: OperatingPoint, slope: float,
                   power: OsmoticPower) -> None:
    """The 0-d variables and the attributes of ``channel_characteristics``, added to ``data``."""
    from edl_solver.inputs.casefile import case_to_mapping

    spec = table.channel
    case = spec.case
    amp, siemens, watt = (extent_unit(units, case.geometry) for units in (("A/m", "A"), ("S/m", "S"), ("W/m", "W")))

    def scalar(value: float, unit: str, text: str) -> tuple[tuple[()], float, dict[str, str]]:
        return (), float(value), {"units": unit, "long_name": text}

    data["membrane_potential"] = scalar(open_circuit.voltage, "V", "zero-current voltage V(L) - V(0)")
    data["short_circuit_current"] = scalar(power.short_circuit_current, amp, "current at V(L) - V(0) = 0")
    data["conductance"] = scalar(slope, siemens, "small-signal conductance -dI/d(V(L) - V(0)) at zero current")
    data["max_power"] = scalar(power.max_power, watt, "largest electrical power I (V(L) - V(0)) delivered to a load")
    data["voltage_at_max_power"] = scalar(power.voltage_at_max_power, "V", "V(L) - V(0) at maximum power")
    data["efficiency"] = scalar(power.efficiency, "1", "electrical power over the Gibbs energy released by the "
                                "salt flux, at maximum power")
    data["efficiency_total"] = scalar(power.efficiency_total, "1", "electrical power over the whole free-energy "
                                      "input (salt and osmotic flow), at maximum power")
    data["henderson_potential"] = scalar(henderson_potential(case, spec.left_concentration, spec.right_concentration),
                                         "V", "zero-current voltage of an uncharged channel (Henderson)")
    data.attrs["case_json"] = json.dumps(case_to_mapping(case))
    data.attrs["equal_reservoirs"] = int(spec.equal_reservoirs)
    data.attrs["osmotic_power_status"] = power.status
