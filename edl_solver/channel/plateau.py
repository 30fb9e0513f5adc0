"""The counter-ion plateau of a nanochannel's conductance: closed forms for the limit c -> 0 at fixed wall
charge, where the counter-ions alone neutralise the walls (``conductance.conductance_curve``).

- ``counterion_mobility``: their electric mobility, whose product with the wall charge is the conduction.
- ``counterion_convection``: the current of their electroosmotic convection, in closed form for a slit of
  two equal walls and for a capillary (each geometry's by its ``kind``; NaN for a shape without one).
"""

from __future__ import annotations

import math
from collections.abc import Callable

from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Geometry

__all__ = ["counterion_convection", "counterion_mobility"]


def counterion_mobility(case: Case, wall_sign: float) -> tuple[float, int]:
    """Electric mobility of the counter-ions that neutralise a wall charge of sign ``wall_sign`` in the
    low-concentration limit, m^2/(V s), and their valence |z|.

    mu = |z| e D / kT. The counter-ions are the ions of sign opposite to the wall's. When there are several,
    the Boltzmann factors exp(-z_i e phi / kT) of the overlapped channel (|phi| growing without bound as
    c -> 0) leave those of the largest |z| in the limit, sharing the charge in their bulk ratio; their mean
    mobility sum_i D_i c_i / sum_i c_i times |z| e / kT is returned.

    Parameters
    ----------
    case : Case
    wall_sign : float
        Sign of the wall charge (negative: cations are the counter-ions).

    Returns
    -------
    mobility : float
        m^2/(V s); NaN when ``wall_sign`` is zero or NaN.
    valence : int
        |z| of the counter-ions (0 with a NaN mobility).
    """
    if not wall_sign or math.isnan(wall_sign):
        return math.nan, 0
    counter = [ion for ion in case.electrolyte.ions if ion.valence * wall_sign < 0]
    valence = max(abs(ion.valence) for ion in counter)
    top = [ion for ion in counter if abs(ion.valence) == valence]
    diffusivity = sum(ion.diffusivity * ion.concentration for ion in top) / sum(ion.concentration for ion in top)
    return valence * FARADAY * diffusivity / (GAS_CONSTANT * case.solvent.temperature), valence


def _tan_minus_x(x: float) -> float:
    """tan x - x without cancellation for small x (Taylor series to x^13 below 0.1; error < 1e-16 relative)."""
    if x >= 0.1:
        return math.tan(x) - x
    x2 = x * x
    # coefficients of tan x = x + x^3/3 + 2x^5/15 + 17x^7/315 + 62x^9/2835 + 1382x^11/155925 + ... (Abramowitz &
    # Stegun 4.3.67, from memory)
    series = (1.0 / 3.0, 2.0 / 15.0, 17.0 / 315.0, 62.0 / 2835.0, 1382.0 / 155925.0, 21844.0 / 6081075.0)
    return x**3 * sum(c * x2**k for k, c in enumerate(series))


def _x_minus_log1p(beta: float) -> float:
    """beta - ln(1 + beta) without cancellation for small beta."""
    if beta >= 0.01:
        return beta - math.log1p(beta)
    # beta^2/2 - beta^3/3 + beta^4/4 - ... (terms to beta^9: error < 1e-16 relative below 0.01)
    return sum((-1.0) ** k * beta**k / k for k in range(2, 10))


def counterion_convection(case: Case, charge_density: float) -> float:
    """Current per unit field carried by the electroosmotic convection of a counter-ion-only layer, per unit
    length: S (per unit width) for a slit with two equal walls, S m for a capillary.

    With only counter-ions (valence z, no co-ions: the limit c -> 0 of an overlapped channel), Poisson-Boltzmann
    across the section has closed-form solutions. For uniform permittivity and viscosity and no slip the EO
    velocity is u = -(eps E / eta)(zeta - phi), and with rho = -eps lap(phi) an integration by parts gives
    I_conv / E = (eps^2 / eta) int |grad phi|^2 dA (the boundary terms vanish: phi = zeta at the walls).

    - Slit of half-height h (y from the mid-plane): phi - phi_0 = (2 kT / z e) ln cos(K y) with
      K tan(K h) = 1 / l_GC, l_GC = 2 eps kT / (|z| e |sigma|) the Gouy-Chapman length (Engström &
      Wennerström 1978, J. Phys. Chem. 82, 2711, from memory; checked here by substitution). Then
      I_conv / E = 8 (eps^2 / eta) (kT / z e)^2 (K tan(K h) - K^2 h), which tends to 2 sigma^2 h / (3 eta)
      for weak charge (uniform counter-ions, parabolic phi).
    - Capillary of radius a: phi - phi_0 = (2 kT / z e) ln(1 - K^2 r^2 / 4) (the radial Liouville solution),
      beta = |z| e |sigma| a / (4 eps kT) = K^2 a^2 / (4 - K^2 a^2), and
      I_conv / E = 16 pi (eps^2 / eta) (kT / z e)^2 (beta - ln(1 + beta)), tending to pi sigma^2 a^2 / (2 eta).

    Parameters
    ----------
    case : Case
        Its geometry, solvent, model and counter-ions (``counterion_mobility``).
    charge_density : float
        The wall charge sigma, C/m^2.

    Returns
    -------
    float
        NaN where the closed forms do not apply: two different slit walls, the Debye-Hückel or steric
        model, hydrodynamic slip, a viscoelectric solvent, or a geometry without a closed form; 0 for an
        uncharged wall.
    """
    if charge_density == 0.0:
        return 0.0
    walls = case.walls
    solvent = case.solvent
    closed_form = _CONVECTION.get(case.geometry.kind)
    if (closed_form is None or case.model != "pb" or not case.symmetric or any(w.slip_length > 0.0 for w in walls)
            or solvent.viscoelectric_coefficient > 0.0 or not math.isfinite(charge_density)):
        return math.nan
    _, valence = counterion_mobility(case, math.copysign(1.0, charge_density))
    thermal = GAS_CONSTANT * solvent.temperature / (FARADAY * valence)  # kT / z e
    eps, eta = solvent.permittivity, solvent.viscosity
    scale = eps**2 / eta * thermal**2
    return closed_form(case.geometry, abs(charge_density), eps, thermal, scale)


def _slit_convection(geometry: Geometry, sigma: float, eps: float, thermal: float, scale: float) -> float:
    """8 (eps^2 / eta) (kT / z e)^2 (K tan(K h) - K^2 h) per unit width, K tan(K h) = 1 / l_GC (see
    ``counterion_convection``); ``sigma`` is |sigma| and ``scale`` (eps^2 / eta) (kT / z e)^2."""
    from scipy.optimize import brentq

    h = geometry.half_size
    g = sigma * h / (2.0 * eps * thermal)  # h / l_GC
    # x = K h solves x tan x = g on (0, pi/2); written as x sin x - g cos x = 0, smooth on the whole interval
    x = brentq(lambda t: t * math.sin(t) - g * math.cos(t), 0.0, math.pi / 2.0, xtol=1e-300, rtol=1e-15)
    return 8.0 * scale / h * x * _tan_minus_x(x)


def _capillary_convection(geometry: Geometry, sigma: float, eps: float, thermal: float, scale: float) -> float:
    """16 pi (eps^2 / eta) (kT / z e)^2 (beta - ln(1 + beta)), beta = |z| e |sigma| a / (4 eps kT) (see
    ``counterion_convection``); ``sigma`` is |sigma| and ``scale`` (eps^2 / eta) (kT / z e)^2."""
    beta = sigma * geometry.half_size / (4.0 * eps * thermal)
    return 16.0 * math.pi * scale * _x_minus_log1p(beta)


#: The closed form of the counter-ion-only layer's convection current by geometry ``kind``.
_CONVECTION: dict[str, Callable[[Geometry, float, float, float, float], float]] = {
    "slit": _slit_convection,
    "capillary": _capillary_convection,
}
