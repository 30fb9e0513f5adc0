"""The discrete transient Poisson-Nernst-Planck problem of a step (``kernels.pnp_system.PnpProblem``): the grid,
the walls and drives after the step, the state before it, and the scales the time-error control measures against.

The state before the step is the reservoir equilibrium of ``before`` with its steady flow, solved on the same
finite volumes (``model.closed_section``), so a step that changes nothing leaves it unchanged. From t = 0 the
walls, field and pressure gradient are those of ``case``, or of the drives that vary in time. The section is
closed: its ions stay in it, so the long-time state is the closed-section equilibrium, not the reservoir's.
"""

from __future__ import annotations

from typing import Any, NamedTuple

import numpy as np
from scipy.linalg import solve_banded

from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.kernels import layout, prepare
from edl_solver.kernels.adaptive import computational_nodes, inner_length, stretching
from edl_solver.kernels.fv1d import finite_volume_metric
from edl_solver.kernels.pnp_system import PnpProblem
from edl_solver.model import closed_section, packing
from edl_solver.model.pnp_drives import DriveSlots, drive_slots

#: Inputs that must be the same before and after a step: a closed section keeps its ions and its solvent.
SAME_BEFORE_AND_AFTER = ("geometry", "electrolyte", "solvent", "model", "bulk_conductivity")
#: Smallest scales of the error control: concentrations in bulk units, psi in kT/e, velocities in their units.
SCALE_FLOOR = 1e-7


class Setup(NamedTuple):
    """Everything a run needs on one grid (dimensionless unless named)."""

    problem: PnpProblem
    start: np.ndarray  # (n, n_ions + 3) the state before the step: ions, psi, v, w
    x: np.ndarray  # node positions from the centre, units of L
    sc: np.ndarray  # the case's scales vector (layout.S_*)
    half: bool
    time_unit: float  # L^2 / D_ref, s
    field_scale: float  # V/m
    pressure_scale: float  # Pa/m
    bulk: np.ndarray  # bulk concentrations, mol/m^3
    diffusivity: np.ndarray  # m^2/s
    error_scales: np.ndarray  # (m,)
    breakpoints: np.ndarray  # dimensionless times of jumps and kinks of the drives
    centre: int
    closed: closed_section.Equilibrium  # the closed-section equilibrium of the walls of ``case``
    reservoir: closed_section.Equilibrium  # the reservoir equilibrium of the walls of ``case``


def check_before(case: Case, before: Case) -> None:
    """A ``before`` the closed section can start from: same geometry, electrolyte, solvent and model."""
    if not isinstance(before, Case):
        raise InputError(f"before: {type(before).__name__} is not a Case, expected edl_solver.Case(...) or None")
    other = [name for name in SAME_BEFORE_AND_AFTER if getattr(before, name) != getattr(case, name)]
    if other:
        raise InputError(f"before: differs from case in {', '.join(other)}, expected the same geometry, "
                         "electrolyte, solvent and model: the section is closed, so its ions and solvent stay; "
                         "only the walls, the field and the pressure gradient may step")
    if case.model == "steric":
        raise InputError("model: 'steric' has no transient Poisson-Nernst-Planck solver here, expected 'pb' "
                         "(full) or 'dh' (linearised)")


def _vector(case: Case, half: bool, intervals: int) -> np.ndarray:
    vector = packing.case_vector(case)
    vector[layout.P_SYMMETRIC] = 1.0 if half else 0.0
    vector[layout.P_INTERVALS] = intervals
    return vector


def _pinned(walls: np.ndarray) -> bool:
    """Whether some wall fixes the potential's reference: an electrode, a gate or charge-regulating sites."""
    for row in walls:
        kind = int(row[layout.W_TYPE])
        if kind == layout.POTENTIAL or (kind == layout.REGULATED and (row[layout.W_GATE_C] > 0.0
                                                                         or row[layout.W_SITES] > 0)):
            return True
    return False


def steady_flow(link: np.ndarray, flow_walls: np.ndarray, rhs: np.ndarray) -> np.ndarray:
    """v with A v = rhs (the Stokes operator of ``kernels.pnp_system``; no-slip rows v = 0)."""
    n = rhs.size
    bands = np.zeros((3, n))
    bands[1, :-1] -= link
    bands[1, 1:] -= link
    bands[0, 1:] = link
    bands[2, :-1] = link
    rhs = rhs.copy()
    for end, j in ((0, 0), (1, n - 1)):
        code = int(flow_walls[end, layout.FLOW_CODE])
        if code == layout.POTENTIAL:
            bands[1, j] = 1.0
            if j + 1 < n:
                bands[0, j + 1] = 0.0
            if j - 1 >= 0:
                bands[2, j - 1] = 0.0
            rhs[j] = 0.0
        elif code == layout.ROBIN:
            bands[1, j] -= flow_walls[end, layout.FLOW_VALUE]
    return solve_banded((1, 1), bands, rhs)


def _state(eq: closed_section.Equilibrium, link: np.ndarray, volume: np.ndarray, kappa2: float,
           weight: np.ndarray, flow_walls: np.ndarray, model: int, e: float, g: float) -> np.ndarray:
    """The (n, m) state of an equilibrium with its steady flows at field and pressure multipliers e, g."""
    conc = eq.ions if model == layout.DH else np.exp(eq.ions)
    rho = conc @ weight
    v = steady_flow(link, flow_walls, -kappa2 * volume * rho * e)
    w = steady_flow(link, flow_walls, volume * g)
    return np.column_stack((eq.ions, eq.psi, v, w))


def build(case: Case, before: Case, drives: Any, intervals: int, t_end: float) -> Setup:
    """The problem of a step from ``before`` to ``case`` (and ``drives``) on a grid of ``intervals`` cells per
    half section; ``t_end`` (s) bounds the drives' tables and breakpoints."""
    slots: DriveSlots = drive_slots(drives, case, before, t_end)
    half = case.symmetric and before.symmetric and not slots.one_wall
    pv, pb = _vector(case, half, intervals), _vector(before, half, intervals)
    sc = prepare.scales(pv)
    slots.attach(sc, half)
    after = prepare.section_problem(pv, sc, prepare.isolated_walls(pv, sc))
    prior = prepare.section_problem(pb, sc, prepare.isolated_walls(pb, sc))
    kappa2 = after.kappa2
    strongest = max(slots.largest_potential / sc[layout.S_THERMAL_VOLTAGE], 0.0)
    beta = max(stretching(inner_length(kappa2, p.wall_potential_guess, p.counter_valence)) for p in (after, prior))
    beta = max(beta, stretching(inner_length(kappa2, np.array([strongest, 0.0]), after.counter_valence)))
    cells = finite_volume_metric(computational_nodes(intervals, half), beta, int(pv[layout.P_METRIC]))
    link, volume = cells.link, cells.volume
    species, model = after.ions, after.model
    valence, weight = species[:, layout.SPECIES_VALENCE], species[:, layout.SPECIES_WEIGHT]
    bulk = np.array([ion.concentration for ion in case.electrolyte.ions])
    diffusivity = np.array(case.electrolyte.diffusivities(case.solvent.temperature))
    d_ref = float(np.sum(valence**2 * bulk * diffusivity) / np.sum(valence**2 * bulk))
    length = sc[layout.S_LENGTH]
    time_unit = length**2 / d_ref
    ratio = case.solvent.density * d_ref / case.solvent.viscosity
    n, nion = volume.size, valence.size
    centre = 0 if half else int(np.argmin(np.abs(cells.x)))
    reference = np.zeros(nion)
    reservoir_before = closed_section.solve(link, volume, kappa2, species, model, prior.walls, np.zeros(n),
                                            reference, None, what=f"{before.describe()}: equilibrium before")
    e_before = before.field / slots.field_scale
    g_before = before.pressure_gradient / slots.pressure_scale
    start = _state(reservoir_before, link, volume, kappa2, weight, prior.flow_walls, model, e_before, g_before)
    walls, wall_field, code, base, sine, starts, times, values = slots.kernel_arrays(after.walls, sc, half,
                                                                                      t_end / time_unit, time_unit)
    gauge = -1 if _pinned(walls) else centre
    problem = PnpProblem(link, volume, kappa2, species, diffusivity / d_ref, model, walls, wall_field,
                         after.flow_walls, ratio, gauge, float(start[centre, nion]), code, base, sine, starts,
                         times, values)
    inventory = volume @ (start[:, :nion] if model == layout.DH else np.exp(start[:, :nion]))
    if gauge >= 0:
        _check_neutral(case, kappa2, volume, start, weight, model, walls, slots)
    closed = closed_section.solve(link, volume, kappa2, species, model, walls, start[:, nion],
                                  reference, inventory, gauge, float(start[centre, nion]),
                                  what=f"{case.describe()}: closed-section equilibrium")
    reservoir = closed_section.solve(link, volume, kappa2, species, model, walls, closed.psi, reference, None,
                                     what=f"{case.describe()}: reservoir equilibrium")
    scales = _error_scales(start, closed, slots, link, volume, kappa2, species, model, walls, after.flow_walls,
                           inventory, gauge)
    return Setup(problem, start, cells.x, sc, half, time_unit, slots.field_scale, slots.pressure_scale, bulk,
                 diffusivity, scales, slots.breakpoints(t_end) / time_unit, centre, closed, reservoir)


def _check_neutral(case: Case, kappa2: float, volume: np.ndarray, start: np.ndarray, weight: np.ndarray,
                   model: int, walls: np.ndarray, slots: DriveSlots) -> None:
    """Walls of fixed charge only: the closed section must stay neutral (no electrode takes up a difference)."""
    nion = weight.size
    conc = start[:, :nion] if model == layout.DH else np.exp(start[:, :nion])
    space = kappa2 * float(volume @ (conc @ weight))
    wall = sum(float(row[layout.W_VALUE]) if int(row[layout.W_TYPE]) == layout.FLUX else float(row[layout.W_SIGMA])
               for row in walls)
    if slots.drives_charge or abs(space + wall) > 1e-9 * (abs(space) + abs(wall) + 1e-300):
        raise InputError(f"wall: a change of the wall charge of {case.describe()} with walls of fixed charge "
                         "only would leave the closed section charged (no electrode or gate takes up the "
                         "difference), expected the same total wall charge before and after, or a wall at fixed "
                         "potential or with a gate")


def _error_scales(start: np.ndarray, closed: closed_section.Equilibrium, slots: DriveSlots, link: np.ndarray,
                  volume: np.ndarray, kappa2: float, species: np.ndarray, model: int, walls: np.ndarray,
                  flow_walls: np.ndarray, inventory: np.ndarray, gauge: int) -> np.ndarray:
    """How much each kind of unknown changes in the run: the largest difference from the start of the
    closed-section equilibria at the drives' extreme wall values, and the steady flows at full drive."""
    nion = species.shape[0]
    weight = species[:, layout.SPECIES_WEIGHT]
    ends = [closed]
    for wall_values in slots.extreme_walls(walls):
        ends.append(closed_section.solve(link, volume, kappa2, species, model, wall_values, closed.psi,
                                         closed.constants, inventory, gauge, float(closed.psi[gauge]) if gauge >= 0
                                         else 0.0, what="closed-section equilibrium at a drive's extreme"))
    total = volume.sum()
    scales = np.full(nion + 3, SCALE_FLOOR)
    conc0 = start[:, :nion] if model == layout.DH else np.exp(start[:, :nion])
    for eq in ends:
        conc = eq.ions if model == layout.DH else np.exp(eq.ions)
        scales[:nion] = np.maximum(scales[:nion], np.max(volume @ np.abs(conc - conc0)) / total)
        scales[nion] = max(scales[nion], float(np.max(np.abs(eq.psi - start[:, nion]))))
        state = _state(eq, link, volume, kappa2, weight, flow_walls, model, slots.field_peak, slots.pressure_peak)
        for q in (nion + 1, nion + 2):
            scales[q] = max(scales[q], float(volume @ np.abs(state[:, q])) / total,
                            float(volume @ np.abs(start[:, q])) / total)
    return scales

