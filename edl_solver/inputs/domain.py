"""The domain the solver promises (README): inputs outside it are refused here, when the case is built, with
the field, the value and the limit, instead of reaching the solver (where they end in a failed charge balance,
NaN values or a silent solve of an absurd case).

- sizes (slit height, capillary radius) from ``SIZE_RANGE``, 0.1 nm to 1 m;
- kappa times the half-size (the half-height of a slit, the radius of a capillary, as the summary's ``kappa_h``)
  within ``KAPPA_SIZE_RANGE``, 1e-3 to 1e4 (a margin around the promised 0.01 to 1000);
- a given wall potential of at most ``MAX_POTENTIAL`` = 15 kT/e at the case temperature;
- a given charge (fixed, behind a Stern layer, or put on by a gate) whose wall, alone in the bulk, would sit
  beyond 15 kT/e in the nonlinear Poisson-Boltzmann picture, whatever the ion model: the domain is the same for
  every model (a Debye-Hueckel wall of large charge is a valid case). Walls with acid-base sites are not
  checked: their charge is limited by their sites.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

from edl_solver.constants import AVOGADRO, ELEMENTARY_CHARGE
from edl_solver.errors import InputError

if TYPE_CHECKING:
    from edl_solver.inputs.case import Case
    from edl_solver.inputs.electrolyte import Electrolyte
    from edl_solver.inputs.solvent import Solvent
    from edl_solver.inputs.wall import Wall

#: Smallest and largest slit height or capillary radius, m.
SIZE_RANGE = (1e-10, 1.0)
#: Smallest and largest kappa times the half-size.
KAPPA_SIZE_RANGE = (1e-3, 1e4)
#: Largest |zeta| in units of kT/e.
MAX_POTENTIAL = 15.0
#: Relative slack at every limit, so that a value set exactly at it (15 kT/e, kappa h = 1e4) is not refused for
#: its last rounding bit.
_SLACK = 1e-9


def check_size(value: object, size: float, field: str) -> None:
    """Refuse a slit height or capillary radius ``size`` (m, converted from the user's ``value``) outside
    ``SIZE_RANGE``."""
    low, high = SIZE_RANGE
    if low * (1 - _SLACK) <= size <= high * (1 + _SLACK):
        return
    given = f"{value!r} ({size:.4g} m)" if isinstance(value, str) else f"{size:.4g} m"
    side = "below" if size < low else "above"
    name = field.rpartition(".")[2]
    raise InputError(f"{field}: {given} is {side} the solver's domain, expected a {name} from 1e-10 m (0.1 nm) "
                     "to 1 m")


def kappa_size(case: Case) -> float:
    """kappa times the half-size of ``case``: its half-height (slit) or radius (capillary) over the Debye length
    of the bulk electrolyte, as the solver measures it (the summary's ``kappa_h``)."""
    return case.geometry.half_size / case.debye_length


def check_case(case: Case) -> None:
    """Refuse a case whose size is outside ``KAPPA_SIZE_RANGE`` in Debye lengths, or a wall whose given potential,
    charge or gate is beyond ``MAX_POTENTIAL`` (see the module docstring)."""
    _check_kappa_size(case)
    walls = case.wall if isinstance(case.wall, tuple) else (case.wall,)
    names = tuple(f"wall.{side}" for side in case.geometry.wall_names) if len(walls) == 2 else ("wall",)
    for wall, name in zip(walls, names, strict=True):
        _check_wall(wall, name, case.electrolyte, case.solvent)
    if case.geometry.kind == "rectangle":
        _check_rectangle(case, walls, names)


def _check_rectangle(case: Case, walls: tuple[Wall, ...], names: tuple[str, ...]) -> None:
    """What the rectangle's solver does not model: Navier slip, a viscoelectric solvent, and two different fixed
    potentials (they meet at the corners, where the potential would jump and the wall charge diverge)."""
    for wall, name in zip(walls, names, strict=True):
        if wall.slip_length:
            raise InputError(f"{name}.slip_length: {wall.slip_length:.4g} m is not modelled for a rectangle, "
                             "expected 0 (no slip); slip walls are solved for slits and capillaries")
    if case.solvent.viscoelectric_coefficient:
        raise InputError(f"solvent.viscoelectric_coefficient: {case.solvent.viscoelectric_coefficient:.4g} m^2/V^2 is "
                         "not modelled for a rectangle, expected 0")
    if len(walls) == 2 and walls[0].kind == walls[1].kind == "potential" and walls[0].zeta != walls[1].zeta:
        raise InputError(f"wall.sides.zeta: {walls[1].zeta:.4g} V differs from wall.top_bottom.zeta "
                         f"{walls[0].zeta:.4g} V, expected one zeta for all four walls: two fixed potentials would "
                         "jump at the corners, where the wall charge diverges; give charge densities or regulated "
                         "walls for walls that differ")


def _check_kappa_size(case: Case) -> None:
    geometry = case.geometry
    value = kappa_size(case)
    low, high = KAPPA_SIZE_RANGE
    if low * (1 - _SLACK) <= value <= high * (1 + _SLACK):
        return
    symbol = "kappa*" + geometry.kappa_symbol[1:]  # "kappa*h", "kappa*a": plain letters for any terminal
    half = "half-height" if geometry.half_size != geometry.size else geometry.size_name
    raise InputError(f"{geometry.size_path}: {geometry.size:.4g} m gives {symbol} = {value:.4g} ({half} over the "
                     f"Debye length {case.debye_length:.4g} m), outside the solver's domain, expected {symbol} "
                     f"from {low:g} to {high:g}")


def _check_wall(wall: Wall, name: str, electrolyte: Electrolyte, solvent: Solvent) -> None:
    vt = solvent.thermal_voltage
    limit = MAX_POTENTIAL * vt * (1 + _SLACK)
    at = f"{solvent.temperature:g} K"
    if wall.zeta is not None:
        if abs(wall.zeta) > limit:
            raise InputError(f"{name}.zeta: {wall.zeta:.4g} V is {wall.zeta / vt:.4g} kT/e at {at}, outside the "
                             f"solver's domain, expected |zeta| <= 15 kT/e = {MAX_POTENTIAL * vt:.4g} V at {at}")
        return
    if wall.sites:
        return
    for sign in (1.0, -1.0):
        layer = grahame_charge(sign * MAX_POTENTIAL * vt, electrolyte, solvent)
        charge = _wall_charge(wall, sign * MAX_POTENTIAL * vt)
        if sign * (charge - layer) > abs(layer) * _SLACK:
            _refuse_charge(wall, name, sign, layer, at, MAX_POTENTIAL * vt)


def _wall_charge(wall: Wall, zeta: float) -> float:
    """Charge density of ``wall`` (no sites) when its diffuse layer starts at ``zeta``, C/m^2: the fixed charge
    plus the gate's C_g (V_g - psi_0), with psi_0 = zeta + sigma / C_S behind a Stern layer."""
    if wall.gate_voltage is None:
        return wall.fixed_charge
    gate = wall.gate_capacitance
    series = 1.0 + (gate / wall.stern_capacitance if wall.stern_capacitance is not None else 0.0)
    return (wall.fixed_charge + gate * (wall.gate_voltage - zeta)) / series


def grahame_charge(zeta: float, electrolyte: Electrolyte, solvent: Solvent) -> float:
    """Charge density (C/m^2) of a wall at potential ``zeta`` (V) alone in the bulk electrolyte, nonlinear
    Poisson-Boltzmann: sign(zeta) sqrt(2 eps kT N_A sum_i c_i (exp(-z_i e zeta / kT) - 1)), ions in mol/m^3
    (Grahame 1947, Chem. Rev. 41, 441)."""
    psi = zeta / solvent.thermal_voltage
    total = sum(ion.concentration * math.expm1(-ion.valence * psi) for ion in electrolyte.ions)
    kt = ELEMENTARY_CHARGE * solvent.thermal_voltage
    return math.copysign(math.sqrt(2.0 * solvent.permittivity * kt * AVOGADRO * max(total, 0.0)), zeta)


def _refuse_charge(wall: Wall, name: str, sign: float, layer: float, at: str, volts: float) -> None:
    """The message for a charged wall that would sit beyond 15 kT/e (``sign`` of the side it crosses)."""
    why = (f"would hold a wall alone in this electrolyte at {at} beyond {'+' if sign > 0 else '-'}15 kT/e = "
           f"{sign * volts:.4g} V (nonlinear Poisson-Boltzmann, Grahame's charge), outside the solver's domain")
    if wall.gate_voltage is None:
        raise InputError(f"{name}.charge_density: {wall.fixed_charge:.4g} C/m^2 {why}, expected |charge_density| "
                         f"<= {abs(layer):.4g} C/m^2 for a {'positive' if sign > 0 else 'negative'} wall")
    fixed = f" with a fixed charge of {wall.fixed_charge:.4g} C/m^2" if wall.fixed_charge else ""
    raise InputError(f"{name}.gate_voltage: {wall.gate_voltage:.4g} V behind {wall.gate_capacitance:.4g} F/m^2"
                     f"{fixed} {why}, expected a wall charge there of at most {abs(layer):.4g} C/m^2 (without "
                     f"fixed charge any |gate_voltage| <= 15 kT/e = {volts:.4g} V is inside)")
