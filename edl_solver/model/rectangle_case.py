"""A rectangular channel's Case solved and summarised: the 2-D section (``model.rectangle``) with every summary
value a slit or capillary has, from the same compiled summary (``kernels.summary.summarize_integrals``).

The rectangle's extrapolated integrals are put in the 1-D layout (``kernels.layout.I_*``): the wall values of the
first "wall" are the means over the top and bottom walls (z = 0, H), those of the second over the sides
(y = 0, W); the scales take the full section in units of h^2 (h = min(W, H) / 2). The thin-layer model's flow is
the Stokes flow the two pairs' slip velocities drive (``inputs.geometry.harmonic_share``; plug flow for equal
walls) beside the duct's Poiseuille flow (``inputs.geometry.duct_flow_per_gradient``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Rectangle, duct_flow_per_gradient
from edl_solver.kernels import layout, prepare, summary
from edl_solver.kernels.thin_layer import OUTER_REGION_DEBYE_LENGTHS, thin_slip
from edl_solver.kernels.walls import dimensionless_wall
from edl_solver.model import packing
from edl_solver.model import rectangle_grid as fv
from edl_solver.model.rectangle import IDENTITY_TOLERANCE, RectangleSection, solve_rectangle_section

#: Cells per direction of the quarter at most (a 2-D grid: 512 x 512 is 2.6e5 unknowns per field).
MAX_RECTANGLE_INTERVALS = 512


@dataclass(frozen=True)
class SolvedRectangle:
    """A converged rectangle with what presenting it needs.

    Attributes
    ----------
    section : RectangleSection
        The dimensionless solution (lengths in h, potentials in kT/e).
    scales : ndarray
        The case's ``layout.S_*`` scales (``S_AREA`` = h^2, ``S_SECTION_AREA`` = W H).
    slip : ndarray
        Helmholtz-Smoluchowski slip velocity per unit field of the (top and bottom, sides) walls alone in the bulk,
        m^2/(V s).
    share : float
        The top and bottom walls' share of the thin-layer mean velocity.
    ion_matrix, matrix : ndarray
        Ion-resolved and reduced response matrices (``kernels.response``).
    """

    section: RectangleSection
    scales: np.ndarray
    slip: np.ndarray
    share: float
    ion_matrix: np.ndarray
    matrix: np.ndarray

    @property
    def thermal_voltage(self) -> float:
        return float(self.scales[layout.S_THERMAL_VOLTAGE])


def _wall_conditions(p: np.ndarray, sc: np.ndarray) -> dict[str, object]:
    """The core's keywords for the walls and the model: the dimensionless rows of the (top and bottom, sides)
    walls and, for the steric model, each ion's packing nu_k = c_k N_A d^3 (``kernels.prepare.species``)."""
    vt, h = sc[layout.S_THERMAL_VOLTAGE], sc[layout.S_LENGTH]
    rows = tuple(dimensionless_wall(prepare.wall_si(p, side), vt, p[layout.P_PERMITTIVITY], h, p[layout.P_PROTONS])
                 for side in range(2))
    steric = int(p[layout.P_MODEL]) == layout.STERIC
    return {"wall_rows": rows, "packing": prepare.species(p)[:, layout.SPECIES_PACKING] if steric else None}


def _one_d_integrals(section: RectangleSection, n_ions: int, symmetric: bool) -> np.ndarray:
    """The rectangle's integrals in the 1-D layout: volume integrals over the full section (units h^2), the mean
    wall potential and charge of the (top and bottom, sides) pairs as the (left, right) end values."""
    v = section.integrals
    out = np.empty(layout.integral_count(n_ions))
    out[layout.I_PSI], out[layout.I_UEO], out[layout.I_UP] = v["psi"], v["u_eo"], v["u_p"]
    out[layout.I_RHO], out[layout.I_RHO_UEO], out[layout.I_RHO_UP] = v["rho"], v["rho_u_eo"], v["rho_u_p"]
    if symmetric:  # one condition: the means over the whole perimeter (the split of a zeta wall's charge is NaN)
        out[layout.I_PSI_LEFT] = out[layout.I_PSI_RIGHT] = v["wall_psi"] / section.perimeter
        out[layout.I_FLUX_LEFT] = out[layout.I_FLUX_RIGHT] = v["wall_flux"] / section.perimeter
    else:
        out[layout.I_PSI_LEFT], out[layout.I_PSI_RIGHT] = v["psi_tb"] / (2 * section.width), \
            v["psi_sides"] / (2 * section.height)
        out[layout.I_FLUX_LEFT], out[layout.I_FLUX_RIGHT] = v["flux_tb"] / (2 * section.width), \
            v["flux_sides"] / (2 * section.height)
    out[layout.I_PSI_CENTRE] = v["psi_centre"]
    out[layout.ION_INTEGRALS:] = section.ion_integrals
    return out


def thin_layer_field(section: RectangleSection, share_values: tuple[float, float]) -> np.ndarray:
    """The thin-layer EO velocity per unit field on the finest quarter's nodes, in the units of ``share_values``
    (the (top and bottom, sides) slip velocities): uniform for equal slips, else the harmonic field with those wall
    values, solved on the finest grid with the same 5-point operator (the corner node, a jump, left at the mean)."""
    top, side = share_values
    grid = section.finest
    field = np.full(grid.psi.shape, top)
    if top == side:
        return field
    y, z = _axis_from_nodes(grid.y), _axis_from_nodes(grid.z)
    op = fv.operator(y, z)
    inner = np.zeros((y.x.size - 1, z.x.size - 1))
    inner[:, -1] = y.volume[:-1] * z.link[-1] * top  # the top wall's links into the unknown nodes
    inner[-1, :] += y.link[-1] * z.volume[:-1] * side
    field = fv.full_nodes(op, fv.factor(op.matrix).solve(-inner.ravel()), 0.0)
    field[-1, :], field[:, -1] = side, top
    field[-1, -1] = 0.5 * (top + side)
    return field


def _axis_from_nodes(x: np.ndarray) -> fv.Axis:
    """A grid direction from its node positions (vertex-centred cells: half spacings either side)."""
    dx = np.diff(x)
    volume = np.zeros(x.size)
    volume[:-1] += 0.5 * dx
    volume[1:] += 0.5 * dx
    return fv.Axis(x, 1.0 / dx, volume, float("nan"))


def _outer_deviation(section: RectangleSection, sc: np.ndarray, slip: np.ndarray) -> float:
    """Largest |thin-layer - full| EO velocity farther than ``OUTER_REGION_DEBYE_LENGTHS`` Debye lengths from every
    wall (the centre alone where the layers overlap), over the largest slip speed (``kernels.thin_layer``)."""
    largest = max(abs(slip[0]), abs(slip[1]))
    if largest == 0.0:
        return float("nan")
    grid = section.finest
    h = sc[layout.S_LENGTH]
    distance = h * np.minimum.outer(grid.y[-1] - grid.y, grid.z[-1] - grid.z)
    outer = distance >= min(OUTER_REGION_DEBYE_LENGTHS * sc[layout.S_DEBYE_LENGTH], distance.max())
    thin = thin_layer_field(section, (float(slip[0]), float(slip[1])))
    full = sc[layout.S_EO_VELOCITY] * grid.u_eo
    return float(np.max(np.abs(thin - full)[outer]) / largest)


def _onsager(ion_matrix: np.ndarray) -> float:
    """Largest asymmetry of the ion-resolved matrix, each entry against its row and column scale (as
    ``kernels.identities``)."""
    size = np.sqrt(np.abs(np.diag(ion_matrix)))
    return float(np.max(np.abs(ion_matrix - ion_matrix.T) / np.outer(size, size)))


def solve_rectangle_case(case: Case, values: np.ndarray) -> SolvedRectangle:
    """Solve a rectangle ``case`` and fill its summary vector ``values`` (``layout.SLOTS``).

    Raises
    ------
    ConvergenceError
        Newton failed, the accuracy was missed within the grid limit, or an identity failed; the message names
        the case.
    """
    geometry = case.geometry
    if not isinstance(geometry, Rectangle):
        raise InputError(f"geometry: {geometry!r} is not a Rectangle")
    p = packing.case_vector(case)
    sc = prepare.scales(p)
    sc[layout.S_AREA] = geometry.half_size**2
    sc[layout.S_SECTION_AREA] = geometry.area
    iso = prepare.isolated_walls(p, sc)
    slip = thin_slip(p, iso)
    ions = case.electrolyte.ions
    numerics = case.numerics
    try:
        section = solve_rectangle_section(
            geometry.width, geometry.height, case.debye_length, [ion.valence for ion in ions],
            [ion.concentration for ion in ions], model=case.model, accuracy=numerics.accuracy,
            max_intervals=min(numerics.max_intervals, MAX_RECTANGLE_INTERVALS), intervals=numerics.intervals or 0,
            **_wall_conditions(p, sc))
    except ConvergenceError as error:
        raise ConvergenceError(f"{case.describe()}: {error}") from None
    share = geometry.top_bottom_share
    shape = np.array([share, duct_flow_per_gradient(geometry.width, geometry.height, case.solvent.viscosity)])
    integrals = _one_d_integrals(section, len(ions), case.symmetric)
    deviation = _outer_deviation(section, sc, slip)
    ion_matrix, matrix = summary.summarize_integrals(p, sc, iso, slip, shape, integrals, deviation, values)
    values[layout.Z_CHARGE_BALANCE] = section.charge_balance
    values[layout.Z_RECIPROCITY_RESIDUAL] = max(section.reciprocity, _onsager(ion_matrix))
    values[layout.Z_ERROR_ESTIMATE] = section.estimate
    if not summary.identities_hold(values):
        reciprocity = values[layout.Z_RECIPROCITY_RESIDUAL]
        raise ConvergenceError(f"{case.describe()}: the discrete solution violates charge balance "
                               f"({section.charge_balance:.2g}) or reciprocity ({reciprocity:.2g}; limit "
                               f"{IDENTITY_TOLERANCE:g}); not returned")
    return SolvedRectangle(section, sc, slip, share, ion_matrix, matrix)
