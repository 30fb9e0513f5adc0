"""Conductance of a nanochannel against salt concentration, and the characteristics of a finite channel.

Two lab measurements, each returned as an ``xarray.Dataset`` with ``units`` and ``long_name`` on every
variable (and so writable to the HDF5 groups "conductance" and "channel" of ``edl transport``):

- :func:`conductance_curve`: the conductance of the section (per unit length, or of a channel of length
  L) against the salt concentration, beside its two limits: the bulk line K(c) A and the plateau of the
  counter-ions that neutralise the wall charge.
- :func:`channel_characteristics`: a channel between two reservoirs (``edl_solver.channel.model``): its I-V
  curve, membrane potential, short-circuit current, maximum osmotic power and efficiency, with the
  free-solution (uncharged-channel) references.

Signs and units follow ``edl_solver.channel.model``: x from the left reservoir (0) to the right one (L),
Delta V = V(L) - V(0), currents positive along +x; slit values per unit width.
"""

from __future__ import annotations

import json
import math
from collections.abc import Sequence
from typing import Any

import numpy as np

from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Capillary
from edl_solver.inputs.units import to_positive_si, to_si
from edl_solver.model.bulk import bulk_conductivity, henderson_potential

__all__ = [
    "bulk_conductivity",
    "cases_at",
    "channel_characteristics",
    "checked_length",
    "conductance_curve",
    "conductance_units",
    "counterion_convection",
    "counterion_mobility",
    "crossover_concentration",
    "henderson_potential",
    "planck_current",
]

#: Central-difference step of the small-signal conductance, in units of kT/e (truncation ~1e-7).
_SLOPE_STEP = 1e-3


# ----------------------------------------------------------------------------------------------
# Closed forms


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
        model, hydrodynamic slip, or a viscoelectric solvent; 0 for an uncharged wall.
    """
    if charge_density == 0.0:
        return 0.0
    walls = case.walls
    solvent = case.solvent
    if (case.model != "pb" or not case.symmetric or any(w.slip_length > 0.0 for w in walls)
            or solvent.viscoelectric_coefficient > 0.0 or not math.isfinite(charge_density)):
        return math.nan
    from scipy.optimize import brentq

    _, valence = counterion_mobility(case, math.copysign(1.0, charge_density))
    thermal = GAS_CONSTANT * solvent.temperature / (FARADAY * valence)  # kT / z e
    eps, eta = solvent.permittivity, solvent.viscosity
    scale = eps**2 / eta * thermal**2
    if isinstance(case.geometry, Capillary):
        beta = abs(charge_density) * case.geometry.radius / (4.0 * eps * thermal)
        return 16.0 * math.pi * scale * _x_minus_log1p(beta)
    h = case.geometry.height / 2.0
    g = abs(charge_density) * h / (2.0 * eps * thermal)  # h / l_GC
    # x = K h solves x tan x = g on (0, pi/2); written as x sin x - g cos x = 0, smooth on the whole interval
    x = brentq(lambda t: t * math.sin(t) - g * math.cos(t), 0.0, math.pi / 2.0, xtol=1e-300, rtol=1e-15)
    return 8.0 * scale / h * x * _tan_minus_x(x)


# ----------------------------------------------------------------------------------------------
# Conductance against concentration


def _concentrations(values: Any) -> list[float]:
    items = list(np.ravel(np.asarray(values, dtype=object))) if not isinstance(values, str) else [values]
    if len(items) < 2:
        raise InputError(f"concentrations: {values!r} has {len(items)} value(s), expected at least 2 salt "
                         "concentrations, e.g. ['0.01 mM', '100 mM']")
    out = []
    for i, value in enumerate(items):
        out.append(to_positive_si(value, "mol/m^3", f"concentrations[{i}]",
                                  "a salt concentration in mol/m^3 (or '1 mM')"))
    return out


def checked_length(length: Any, name: str = "length") -> float | None:
    """A channel length in m (None stays None).

    Raises
    ------
    InputError
        If ``length`` is not a positive length.
    """
    if length is None:
        return None
    return to_positive_si(length, "m", name, "a channel length in m (or '10 um')")


def cases_at(case: Case, concentrations: Sequence[float]) -> list[Case]:
    """The case at each salt concentration, built as the sweep path "electrolyte.concentration" builds it.

    Raises
    ------
    InputError
        If the electrolyte cannot be scaled (H+ or OH- among the ions) or a case is invalid.
    """
    from edl_solver.inputs import paths as sweep_axes
    from edl_solver.inputs.casefile import case_to_mapping

    axes = sweep_axes.make_axes({"electrolyte.concentration": list(concentrations)})
    table = case_to_mapping(case)
    return [sweep_axes.case_at(table, axes, (i,)) for i in range(len(concentrations))]


def conductance_units(capillary: bool, per_length: bool) -> str:
    """Unit of a conductance: per unit length S m (capillary) or S (slit, per unit width); of a channel of
    length L, S or S/m (slit, per unit width)."""
    if per_length:
        return "S*m" if capillary else "S"
    return "S" if capillary else "S/m"


def conductance_curve(case: Case, concentrations: Sequence[float | str], length: float | str | None = None,
                      progress: bool | None = False) -> Any:
    """Conductance of the section against salt concentration, with the bulk line and the surface plateau.

    Every concentration is a full solve (``edl_solver.sweep`` on the path "electrolyte.concentration", which
    scales every ion so that the first one's concentration takes the value); the conductance is the current
    per unit field at no pressure or salt gradient, ``conductance_per_length`` (conduction plus the
    electroosmotic convection of the space charge), divided by ``length`` when one is given.

    Its limits:

    - **Bulk line** G_bulk = K(c) A (/L), K = (F^2/RT) sum z_i^2 D_i c_i and A the section area (H per unit
      width, or pi a^2): the wide-channel, high-concentration limit, where the double layers are a vanishing
      share of the section (the thin-layer model's conductance).
    - **Counter-ion plateau.** When the double layers overlap and c -> 0, co-ions are expelled (their
      concentration falls as c^2 over the counter-ions') and the counter-ions alone neutralise the walls:
      their charge per unit length is -q, q the wall charge per unit length (slit, per unit width:
      sigma_bottom + sigma_top = 2 sigma; capillary: 2 pi a sigma). Each ion of valence z conducts
      z^2 e^2 (D/kT) E, so the conduction current per field is |z| e (D/kT) times their charge:

          G_cond = mu |q|,  mu = |z| e D / kT,  i.e. 2 mu |sigma| (slit) and 2 pi a mu |sigma| (capillary),

      independent of c and of the channel size, and of the potential profile. sigma is the wall charge the
      full solution finds at each concentration (``wall_charge_density``): the given one for walls of fixed
      charge; for walls of fixed zeta it falls with c in an overlapped channel (the potential is pinned, the
      counter-ion amount shrinks), so there is no plateau; regulated walls follow their chemistry. It is the
      low-concentration limit: at higher c the co-ions and the bulk add to it.
      The counter-ions also move with the electroosmotic flow they drive; ``counterion_convection`` gives that
      current in closed form for the counter-ion-only layer (a symmetric slit or a capillary), and
      G_plateau = G_cond + G_conv is the full model's limit as c -> 0 at fixed charge. The convective share is
      not small: about sigma h kT / (3 eta e D) for weak charge and tending to 2 eps (kT/e)^2 / (eta D) (~0.5
      for K+ in water) at strong charge (Bikerman's surface-conductance correction; Bikerman 1940, Trans.
      Faraday Soc. 36, 154, from memory).

    Stein, Kruithof & Dekker (2004, Phys. Rev. Lett. 93, 035901, from memory) measured this trend in silica
    nanochannels in KCl: the conductance follows the bulk line at high concentration and levels off at low
    concentration at a value set by the surface charge and independent of the channel height.

    Parameters
    ----------
    case : Case
        The section; its field and pressure gradient do not matter.
    concentrations : sequence of float or str
        Salt concentrations (the first ion's), mol/m^3 or strings such as "0.1 mM"; at least two, positive.
    length : float or str, optional
        Channel length L, m: the conductances are then of a channel of that length (S, or S/m per unit width
        of a slit) instead of per unit length (S m, or S per unit width).
    progress : bool, optional
        Show a progress bar (see ``edl_solver.sweep``).

    Returns
    -------
    xarray.Dataset
        Dimension ``concentration`` (mol/m^3); ``conductance`` (full model), ``bulk_conductance``,
        ``plateau_conduction`` (G_cond), ``plateau_estimate`` (G_cond + G_conv; NaN where no closed form),
        ``wall_charge_density`` (C/m^2; on a ``wall`` dimension for two different slit walls),
        ``kappa_h``, ``counterion_mobility`` (m^2/(V s)), ``status`` (0 converged, 1 failed) and ``message``;
        attributes ``geometry``, ``first_ion``, ``length_m`` (when given), ``case_json`` (the base case).

    Raises
    ------
    InputError
        If the case, the concentrations or the length are invalid (before any solve).
    """
    import xarray as xr

    from edl_solver.inputs.casefile import case_to_mapping
    from edl_solver.sweeping.run import sweep

    if not isinstance(case, Case):
        raise InputError(f"case: {type(case).__name__} is not a Case, expected edl_solver.Case(...)")
    values = _concentrations(concentrations)
    channel_length = checked_length(length)
    cases = cases_at(case, values)  # checks every case before the first solve
    swept = sweep(case, {"electrolyte.concentration": values}, progress=progress)
    dim = "electrolyte.concentration"
    capillary = isinstance(case.geometry, Capillary)
    area = math.pi * case.geometry.radius**2 if capillary else case.geometry.height
    divide = channel_length if channel_length is not None else 1.0
    sigma = swept["wall_charge_density"].values
    if capillary:
        charge = 2.0 * math.pi * case.geometry.radius * sigma  # per unit length
    else:
        charge = sigma.sum(axis=-1) if sigma.ndim == 2 else 2.0 * sigma  # per unit width and length
    mobility = np.array([counterion_mobility(c, float(np.sign(q)))[0] for c, q in zip(cases, charge)])
    conduction = np.where(charge == 0.0, 0.0, mobility * np.abs(charge))
    convection = np.array([counterion_convection(c, float(s)) if sigma.ndim == 1 else math.nan
                           for c, s in zip(cases, sigma)])
    bulk = np.array([bulk_conductivity(c) * area for c in cases])

    unit = conductance_units(capillary, channel_length is None)
    of = "per unit length" if channel_length is None else f"of a channel of length {channel_length:.4g} m"
    of += "" if capillary else ", per unit width"

    def column(data: np.ndarray, text: str) -> tuple[tuple[str], np.ndarray, dict[str, str]]:
        return ("concentration",), np.asarray(data, dtype=float) / divide, {"units": unit,
                                                                           "long_name": f"{text}, {of}"}

    data: dict[str, Any] = {
        "conductance": column(swept["conductance_per_length"].values, "conductance of the full model"),
        "bulk_conductance": column(bulk, "bulk line K(c) A, K the bulk conductivity and A the section area"),
        "plateau_conduction": column(conduction, "conduction by the counter-ions alone, mu |q|"),
        "plateau_estimate": column(conduction + convection,
                                   "counter-ions alone: conduction plus their electroosmotic convection"),
        "wall_charge_density": (("concentration", "wall") if sigma.ndim == 2 else ("concentration",), sigma,
                                {"units": "C/m^2", "long_name": "wall surface charge density"}),
        "kappa_h": (("concentration",), swept["kappa_h"].values,
                    {"units": "1", "long_name": "half-height (slit) or radius (capillary) over the Debye length"}),
        "counterion_mobility": (("concentration",), mobility,
                                {"units": "m^2/(V*s)", "long_name": "electric mobility |z| e D / kT of the "
                                 "counter-ions"}),
        "status": (("concentration",), swept["status"].values.astype(np.int8),
                   {"units": "1", "long_name": "0 converged, 1 failed (see message)"}),
        "message": (("concentration",), np.array([str(m) for m in swept["message"].values], dtype=object),
                    {"long_name": "why a solve failed (empty when it converged)"}),
    }
    coords: dict[str, Any] = {"concentration": ("concentration", np.asarray(swept[dim].values, dtype=float),
                                                {"units": "mol/m^3", "long_name": "salt concentration (of the "
                                                 f"first ion, {case.electrolyte.ions[0].name})"})}
    if sigma.ndim == 2:
        coords["wall"] = ("wall", np.array(["bottom", "top"], dtype=object))
    attrs: dict[str, Any] = {
        "title": "edl_solver conductance against salt concentration",
        "geometry": "capillary" if capillary else "slit",
        "first_ion": case.electrolyte.ions[0].name,
        "case_json": json.dumps(case_to_mapping(case)),
    }
    if channel_length is not None:
        attrs["length_m"] = channel_length
    return xr.Dataset(data, coords=coords, attrs=attrs)


def crossover_concentration(curve: Any) -> float:
    """The salt concentration, mol/m^3, at which the bulk line of a conductance curve meets the counter-ion
    estimate (``plateau_estimate``, else ``plateau_conduction``): below it the double layers' counter-ions
    carry more current than the bulk would. Interpolated in log-log between the first pair of converged
    points that brackets it; NaN when the curves do not cross in the range.

    For a symmetric slit of a 1:1 salt, K H = 2 mu |sigma| gives c* = 2 D_counter |sigma| / (F (D_+ + D_-) H)
    for the conduction alone: of the order of |sigma| / (F H), the wall charge spread over the section.
    """
    data = curve.sortby("concentration")
    c = data["concentration"].values.astype(float)
    ok = data["status"].values == 0 if "status" in data.variables else np.ones(c.size, dtype=bool)
    estimate = data["plateau_estimate"].values.astype(float)
    plateau = np.where(np.isfinite(estimate), estimate, data["plateau_conduction"].values.astype(float))
    bulk = data["bulk_conductance"].values.astype(float)
    good = ok & np.isfinite(bulk) & np.isfinite(plateau) & (bulk > 0) & (plateau > 0)
    c, d = c[good], np.log(bulk[good]) - np.log(plateau[good])
    for i in range(len(c) - 1):
        if d[i] == 0.0:
            return float(c[i])
        if d[i] * d[i + 1] < 0.0:
            t = d[i] / (d[i] - d[i + 1])
            return float(np.exp(np.log(c[i]) + t * (np.log(c[i + 1]) - np.log(c[i]))))
    return float(c[-1]) if len(c) and d[-1] == 0.0 else math.nan


# ----------------------------------------------------------------------------------------------
# A finite channel between reservoirs


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
    import xarray as xr

    from edl_solver.channel import model as ch
    from edl_solver.inputs.casefile import case_to_mapping

    table = channel if isinstance(channel, ch.ChannelTable) else ch.tabulate(channel)
    dp = to_si(pressure_difference, "Pa", "pressure_difference")
    spec = table.channel
    case = spec.case
    left, right = spec.left_concentration, spec.right_concentration
    capillary = isinstance(case.geometry, Capillary)
    amp, watt = ("A", "W") if capillary else ("A/m", "W/m")
    if voltages is not None:
        data = ch.current_voltage(table, voltages, dp)
        if _binary_valence(case) is not None:
            data["bulk_current"] = (("voltage",), planck_current(case, left, right, spec.length,
                                                                 data["voltage"].values),
                                    {"units": amp, "long_name": "current of an uncharged channel (free-solution "
                                     "electrodiffusion, Planck), no access resistance"})
    else:
        data = xr.Dataset(attrs={"length": spec.length, "left_concentration": left, "right_concentration": right,
                                 "pressure_difference": dp, "access_resistance": table.access_resistance,
                                 "interpolation_error": table.interpolation_error,
                                 "conventions": "x from the left (0) to the right (L) reservoir; voltage = V(L) - "
                                                "V(0); flows positive along +x; slit values per unit width",
                                 "case": case.describe()})
    open_circuit = ch.operating_point(table, current=0.0, pressure_difference=dp)
    if open_circuit.status != "converged":
        raise ConvergenceError(f"channel: the zero-current point did not converge ({open_circuit.message})")
    step = _SLOPE_STEP * GAS_CONSTANT * case.solvent.temperature / FARADAY
    sides = [ch.operating_point(table, voltage=open_circuit.voltage + s, pressure_difference=dp,
                                guess=open_circuit) for s in (-step, step)]
    slope = -(sides[1].current - sides[0].current) / (2.0 * step) if all(
        p.status == "converged" for p in sides) else math.nan
    power = ch.osmotic_power(table, dp)

    def scalar(value: float, unit: str, text: str) -> tuple[tuple[()], float, dict[str, str]]:
        return (), float(value), {"units": unit, "long_name": text}

    data["membrane_potential"] = scalar(open_circuit.voltage, "V", "zero-current voltage V(L) - V(0)")
    data["short_circuit_current"] = scalar(power.short_circuit_current, amp, "current at V(L) - V(0) = 0")
    data["conductance"] = scalar(slope, "S" if capillary else "S/m",
                                 "small-signal conductance -dI/d(V(L) - V(0)) at zero current")
    data["max_power"] = scalar(power.max_power, watt, "largest electrical power I (V(L) - V(0)) delivered to a load")
    data["voltage_at_max_power"] = scalar(power.voltage_at_max_power, "V", "V(L) - V(0) at maximum power")
    data["efficiency"] = scalar(power.efficiency, "1", "electrical power over the Gibbs energy released by the "
                                "salt flux, at maximum power")
    data["efficiency_total"] = scalar(power.efficiency_total, "1", "electrical power over the whole free-energy "
                                      "input (salt and osmotic flow), at maximum power")
    data["henderson_potential"] = scalar(henderson_potential(case, left, right), "V",
                                         "zero-current voltage of an uncharged channel (Henderson)")
    data.attrs["case_json"] = json.dumps(case_to_mapping(case))
    data.attrs["equal_reservoirs"] = int(spec.equal_reservoirs)
    data.attrs["osmotic_power_status"] = power.status
    return data
