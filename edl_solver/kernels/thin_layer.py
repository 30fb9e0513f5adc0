"""Compiled thin-layer counterparts of a solved section: the walls' slip velocities, how far the slip model's
EO profile strays from the full one outside the layers, and the slip model's response matrix.

``model.thin_layer`` states the slip model; the matrix here has the layout of ``response.reduced_matrix``,
so ``lab.lab_quantities`` reads both alike.
"""

from __future__ import annotations

import numpy as np
from numba import njit
from numpy.polynomial import legendre

from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.kernels.layout import (
    AXISYMMETRIC,
    ION_CONCENTRATION,
    ION_DIFFUSIVITY,
    ION_VALENCE,
    ISO_SIGMA,
    ISO_ZETA,
    P_BULK_FACTOR,
    P_METRIC,
    P_PERMITTIVITY,
    P_SLIP,
    P_TEMPERATURE,
    P_VISCOSITY,
    S_DEBYE_LENGTH,
    S_EO_VELOCITY,
    S_LENGTH,
    S_SECTION_AREA,
    S_THERMAL_VOLTAGE,
)
from edl_solver.kernels.prepare import ion_block
from edl_solver.kernels.response import salt_totals

#: The thin-layer profile is compared with the full one farther than this many Debye lengths from the walls.
OUTER_REGION_DEBYE_LENGTHS = 3.0


@njit(cache=True, error_model="numpy")
def thin_slip(p, iso):
    """Helmholtz-Smoluchowski slip velocity per unit field of the (bottom, top) isolated walls, m^2/(V s):
    -(eps / eta)(zeta + b sigma / eps) (see ``thin_layer.slip_velocity``)."""
    eps, eta = p[P_PERMITTIVITY], p[P_VISCOSITY]
    out = np.empty(2)
    for side in range(2):
        out[side] = -eps * 1.0 / eta * (iso[side, ISO_ZETA] + p[P_SLIP + side] * iso[side, ISO_SIGMA] / eps)
    return out


@njit(cache=True, error_model="numpy")
def outer_deviation(s, beta, u_eo, p, sc, slip):
    """Largest |thin-layer - full| EO velocity outside the double layers, over the largest slip speed.

    The outer region lies farther than ``OUTER_REGION_DEBYE_LENGTHS`` Debye lengths from every wall; when
    the layers overlap it shrinks to the centre. Inside the layers the slip model does not claim to hold,
    so the comparison stops there. ``u_eo`` is the dimensionless EO profile on the finest computational
    nodes ``s`` of the tanh map with stretching ``beta``.
    """
    largest = max(abs(slip[0]), abs(slip[1]))
    if largest == 0.0:
        return np.nan
    length = sc[S_LENGTH]
    capillary = p[P_METRIC] == AXISYMMETRIC
    t = np.tanh(beta)
    xs = np.empty(s.size)  # the positions once for both passes
    farthest = 0.0
    for i in range(s.size):
        xs[i] = np.tanh(beta * s[i]) / t
        farthest = max(farthest, length * (1.0 - abs(xs[i])))
    limit = min(OUTER_REGION_DEBYE_LENGTHS * sc[S_DEBYE_LENGTH], farthest)
    worst = 0.0
    for i in range(s.size):
        x = xs[i]
        distance = length * (1.0 - abs(x))
        if distance < limit:
            continue
        if capillary:
            thin = slip[1]
        else:
            thin = slip[0] + (slip[1] - slip[0]) * (1.0 + x) / 2.0
        worst = max(worst, abs(thin - sc[S_EO_VELOCITY] * u_eo[i]))
    return worst / largest


def _cumulative_matrix(nodes: np.ndarray) -> np.ndarray:
    """S with (S f)_j = int_{-1}^{x_j} f dt, exact for f a polynomial of degree below the number of nodes:
    the Lagrange basis on ``nodes`` integrated in the Legendre basis, int_{-1}^x P_k = (P_{k+1} - P_{k-1}) /
    (2k + 1)."""
    n = nodes.size
    basis = legendre.legvander(nodes, n)  # P_0 .. P_n at the nodes
    integrals = np.empty((n, n))
    integrals[:, 0] = nodes + 1.0
    for k in range(1, n):
        integrals[:, k] = (basis[:, k + 1] - basis[:, k - 1]) / (2 * k + 1)
    return integrals @ np.linalg.inv(basis[:, :n])


#: Gauss-Legendre nodes and weights on [-1, 1], and the matrix giving the running integral at the nodes.
_NODES, _WEIGHTS = legendre.leggauss(16)
_CUMULATIVE = _cumulative_matrix(_NODES)
#: Panel width of the composite rule, in units of kT / (e max|z|): the integrands vary on that scale.
_PANEL = 4.0


@njit(cache=True, error_model="numpy")
def _root_pressure(phi, origin, sign, rate, ions):
    """sqrt(P(phi)) exp(-rate origin / 2), P(phi) = sum_i c_i (exp(-z_i sign phi) - 1) the excess osmotic
    pressure over RT at dimensionless potential sign phi; the factor keeps it finite however large phi
    (``rate`` is the fastest growth, max_i -z_i sign, and phi - origin stays within one panel)."""
    total = 0.0
    if rate * phi < 600.0:
        for i in range(ions.shape[0]):  # expm1: no cancellation near phi = 0, where P ~ phi^2
            total += ions[i, ION_CONCENTRATION] * np.expm1(-sign * ions[i, ION_VALENCE] * phi)
        return np.sqrt(max(total, 0.0)) * np.exp(-0.5 * rate * origin)
    floor = np.exp(-rate * phi)
    for i in range(ions.shape[0]):  # P exp(-rate phi), each term at most c_i
        total += ions[i, ION_CONCENTRATION] * (np.exp(-(sign * ions[i, ION_VALENCE] + rate) * phi) - floor)
    return np.sqrt(max(total, 0.0)) * np.exp(0.5 * rate * (phi - origin))


@njit(cache=True, error_model="numpy")
def chemiosmotic_integral(potential, ions):
    """J = int_0^|phi_w| G(phi) / sqrt(P(phi)) dphi, G(phi) = int_0^phi sqrt(P), of an isolated Gouy-Chapman
    layer of dimensionless wall potential ``potential`` = e zeta / kT in the mixture ``ions`` (``ION_*`` rows;
    ``_root_pressure`` states P). int_0^inf y Pi(psi(y)) dy = (eps / 2)(kT / e)^2 J (``_chemiosmotic_slip``).

    Composite 16-point Gauss-Legendre: on each panel the running integral G at the nodes comes from the
    panel's own values through ``_CUMULATIVE``, so P is evaluated once per node. The integrand is smooth
    (~ phi / 2 near 0, tending to 2 / max_i(-z_i sign) far out), the panels a fraction of kT / (e max|z|).
    """
    span = abs(potential)
    if span == 0.0:
        return 0.0
    sign = 1.0 if potential > 0.0 else -1.0
    rate = 0.0
    largest = 0.0
    for i in range(ions.shape[0]):
        rate = max(rate, -sign * ions[i, ION_VALENCE])
        largest = max(largest, abs(ions[i, ION_VALENCE]))
    panels = max(1, int(np.ceil(span * largest / _PANEL)))
    half = 0.5 * span / panels
    n = _NODES.size
    root = np.empty(n)
    carried = 0.0  # G at the panel's start, times exp(-rate start / 2)
    total = 0.0
    for k in range(panels):
        start = 2.0 * half * k
        for j in range(n):
            root[j] = _root_pressure(start + half * (1.0 + _NODES[j]), start, sign, rate, ions)
        whole = 0.0
        for j in range(n):
            running = carried
            for m in range(n):
                running += half * _CUMULATIVE[j, m] * root[m]
            total += half * _WEIGHTS[j] * running / root[j]
            whole += _WEIGHTS[j] * root[j]
        carried = (carried + half * whole) * np.exp(-rate * half)
    return total


@njit(cache=True, error_model="numpy")
def _chemiosmotic_slip(zeta, ions, p, thermal_voltage):
    """Thin-layer diffusio-osmotic (chemiosmotic) slip velocity per unit d ln c/dx, m^2/s, of a flat wall of
    potential ``zeta`` in any mixture whose bulk concentrations all scale with c(x).

    In the layer eta u'' = Pi(psi(y)) d ln c/dx, Pi = RT sum_i c_i (exp(-z_i e psi / kT) - 1) the excess
    osmotic pressure (the pressure gradient at fixed psi less the electric body force), so with u(0) = 0
    u = -(1 / eta) d ln c/dx int_0^inf y Pi dy, and with (eps / 2) psi'^2 = Pi the integral becomes
    (eps / 2)(kT / e)^2 ``chemiosmotic_integral`` (Wilson, Shim, Yu, Gupta & Stone 2020, Langmuir 36, 7014,
    general valences; from memory). For a symmetric z:z salt the closed form u = -(eps / eta)(kT / z e)^2
    4 ln cosh(z e zeta / 4 kT) (Prieve, Anderson, Ebel & Lowell 1984, J. Fluid Mech. 148, 247, from memory),
    which the quadrature meets to ~1e-14, is kept as that salt's path.
    """
    eps_over_eta = p[P_PERMITTIVITY] / p[P_VISCOSITY]
    if ions.shape[0] == 2 and ions[0, ION_VALENCE] == -ions[1, ION_VALENCE]:
        vt = thermal_voltage / abs(ions[0, ION_VALENCE])
        return -eps_over_eta * vt * vt * 4.0 * np.log(np.cosh(zeta / (4.0 * vt)))
    return -eps_over_eta * thermal_voltage * thermal_voltage * 0.5 * chemiosmotic_integral(
        zeta / thermal_voltage, ions)


@njit(cache=True, error_model="numpy")
def _poiseuille(p, sc):
    """Flow rate per unit solvent force of plain Poiseuille flow with Navier slip, as
    ``thin_layer.poiseuille_per_gradient`` states it."""
    eta = p[P_VISCOSITY]
    if p[P_METRIC] == AXISYMMETRIC:
        a = sc[S_LENGTH]
        return np.pi * a**4 * (1.0 + 4.0 * p[P_SLIP + 1] / a) / (8.0 * eta)
    h = 2.0 * sc[S_LENGTH]
    b1, b2 = p[P_SLIP], p[P_SLIP + 1]
    c = h * (h + 2.0 * b2) / (h + b1 + b2)
    return (-h**3 / 3.0 + c * (h * h / 2.0 + b1 * h)) / (2.0 * eta)


@njit(cache=True, error_model="numpy")
def plug_shape(p, sc):
    """The thin-layer flow's shape of a slit or capillary (``thin_layer_matrix``'s ``shape``): the first wall's
    share 1/2 of the mean slip-driven velocity (the mean of a Couette profile; a capillary's walls are one), and
    the Poiseuille flow per unit solvent force (``_poiseuille``)."""
    shape = np.empty(2)
    shape[0] = 0.5
    shape[1] = _poiseuille(p, sc)
    return shape


@njit(cache=True, error_model="numpy")
def thin_layer_matrix(p, sc, iso, slip, shape):
    """The 3 x 3 response matrix of the thin-layer model (layout as ``response.reduced_matrix``).

    Bulk electrolyte everywhere, the double layers reduced to slip velocities: Poiseuille flow with the walls'
    slip lengths; EO slip (the mean velocity the walls' Helmholtz-Smoluchowski velocities drive) coupling flow and
    field both ways (Smoluchowski's streaming relation); bulk conduction K = (F^2 / RT) sum z_i^2 D_i c_i times the
    factor of the case's conductivity law (P_BULK_FACTOR); bulk diffusion and convection of the salt; chemiosmotic
    slip for the salt force (any electrolyte, ``_chemiosmotic_slip``). ``shape``: the first wall's share w of the
    mean slip-driven velocity (mean u = w u_1 + (1 - w) u_2) and the Poiseuille flow per unit solvent force of the
    section (``plug_shape``; a rectangle's from its duct series).
    """
    ions = ion_block(p)
    rt = GAS_CONSTANT * p[P_TEMPERATURE]
    total_c, total_nu = salt_totals(ions)
    area = sc[S_SECTION_AREA]
    share, poiseuille = shape[0], shape[1]
    eo = area * (share * slip[0] + (1.0 - share) * slip[1])
    vt = sc[S_THERMAL_VOLTAGE]
    chemi = (share * _chemiosmotic_slip(iso[0, ISO_ZETA], ions, p, vt)
             + (1.0 - share) * _chemiosmotic_slip(iso[1, ISO_ZETA], ions, p, vt))
    salt_flow = total_c / total_nu * poiseuille + area * chemi / (-rt * total_nu)
    conduction = 0.0
    diffusion = 0.0
    salt = 0.0
    for i in range(ions.shape[0]):
        z, c, d = ions[i, ION_VALENCE], ions[i, ION_CONCENTRATION], ions[i, ION_DIFFUSIVITY]
        conduction += z * z * d * c
        diffusion += z * d * c
        salt += d * c
    conductance = FARADAY**2 / rt * area * conduction * p[P_BULK_FACTOR]  # the case's bulk conductivity law
    diffusion_current = FARADAY * area / (rt * total_nu) * diffusion
    salt_diffusion = area / (rt * total_nu**2) * salt
    salt_current = total_c / total_nu * eo + diffusion_current
    m = np.empty((3, 3))
    m[0, 0], m[0, 1], m[0, 2] = poiseuille, eo, salt_flow
    m[1, 0], m[1, 1], m[1, 2] = eo, conductance, salt_current
    m[2, 0], m[2, 1], m[2, 2] = salt_flow, salt_current, total_c / total_nu * salt_flow + salt_diffusion
    return m


@njit(cache=True, error_model="numpy")
def bulk_cation_transference(p):
    """Cation transference of the bulk electrolyte, sum over cations of z^2 D c / sum over all ions (the
    Nernst-Einstein shares of the conductivity): the thin-layer model's, whose channel is all bulk."""
    ions = ion_block(p)
    bulk = 0.0
    bulk_cations = 0.0
    for i in range(ions.shape[0]):
        share = ions[i, ION_VALENCE] ** 2 * ions[i, ION_DIFFUSIVITY] * ions[i, ION_CONCENTRATION]
        bulk += share
        if ions[i, ION_VALENCE] > 0.0:
            bulk_cations += share
    return bulk_cations / bulk
