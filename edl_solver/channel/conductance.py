"""Conductance of a nanochannel against salt concentration (``conductance_curve``), beside its two limits,
and the crossover between them (``crossover_concentration``).

The curve is an ``xarray.Dataset`` with ``units`` and ``long_name`` on every variable (the HDF5 group
"conductance" of ``edl transport``). The characteristics of a finite channel between two reservoirs
(``channel_characteristics``, ``planck_current``: the group "channel") are in
``edl_solver.channel.characteristics``, the counter-ion closed forms in ``edl_solver.channel.plateau``; both
stay importable from here, as do the bulk electrolyte's ``bulk_conductivity`` and ``henderson_potential``
(``edl_solver.model.bulk``) and ``cases_at`` (``edl_solver.channel.model``).

The conductance is the current per unit field at no pressure or salt gradient, ``conductance_per_length``
(conduction plus the electroosmotic convection of the space charge), per unit length or divided by a
channel length. Its limits:

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
"""

from __future__ import annotations

import json
import math
from collections.abc import Sequence
from typing import Any

import numpy as np

from edl_solver.channel.characteristics import channel_characteristics, planck_current
from edl_solver.channel.model import cases_at
from edl_solver.channel.plateau import counterion_convection, counterion_mobility
from edl_solver.channel.point import STATUS_TEXT
from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.inputs.geometry import Geometry
from edl_solver.inputs.units import to_positive_si
from edl_solver.model.bulk import bulk_conductivity, henderson_potential
from edl_solver.results.schema import SUMMARY_UNITS, summary_unit

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

    Its limits, the **bulk line** G_bulk = K(c) A (/L) and the **counter-ion plateau** G_cond = mu |q| (plus
    the counter-ions' electroosmotic convection), are derived in the module docstring; Stein, Kruithof &
    Dekker (2004, Phys. Rev. Lett. 93, 035901, from memory) measured this trend in silica nanochannels.

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
    from edl_solver.sweeping.run import sweep

    if not isinstance(case, Case):
        raise InputError(f"case: {type(case).__name__} is not a Case, expected edl_solver.Case(...)")
    values = _concentrations(concentrations)
    channel_length = checked_length(length)
    cases = cases_at(case, values)  # checks every case before the first solve
    swept = sweep(case, {"electrolyte.concentration": values}, progress=progress)
    return _curve_dataset(case, cases, swept, channel_length)


def _wall_charge(geometry: Geometry, sigma: np.ndarray) -> np.ndarray:
    """Wall charge per unit length q (per unit width too for a slit), C/m: the perimeter times sigma, each
    wall's share of it times its own sigma when the walls differ (sigma on a last ``wall`` axis)."""
    if sigma.ndim == 2:
        return sigma.sum(axis=-1) * (geometry.perimeter / geometry.wall_count)
    return geometry.perimeter * sigma


def _curve_dataset(case: Case, cases: list[Case], swept: Any, channel_length: float | None) -> Any:
    """The conductance curve of ``conductance_curve`` from the sweep and the cases at each concentration."""
    import xarray as xr

    from edl_solver.inputs.casefile import case_to_mapping

    dim = "electrolyte.concentration"
    geometry = case.geometry
    divide = channel_length if channel_length is not None else 1.0
    sigma = swept["wall_charge_density"].values
    charge = _wall_charge(geometry, sigma)
    mobility = np.array([counterion_mobility(c, float(np.sign(q)))[0] for c, q in zip(cases, charge)])
    conduction = np.where(charge == 0.0, 0.0, mobility * np.abs(charge))
    convection = np.array([counterion_convection(c, float(s)) if sigma.ndim == 1 else math.nan
                           for c, s in zip(cases, sigma)])
    bulk = np.array([bulk_conductivity(c) * geometry.area for c in cases])

    unit = conductance_units(geometry.extent == "per_channel", channel_length is None)
    of = "per unit length" if channel_length is None else f"of a channel of length {channel_length:.4g} m"
    of += ", per unit width" if geometry.extent == "per_width" else ""

    def column(data: np.ndarray, text: str) -> tuple[tuple[str], np.ndarray, dict[str, str]]:
        return ("concentration",), np.asarray(data, dtype=float) / divide, {"units": unit,
                                                                           "long_name": f"{text}, {of}"}

    def summary(key: str) -> dict[str, str]:
        return {"units": summary_unit(key, geometry), "long_name": SUMMARY_UNITS[key][1]}

    data: dict[str, Any] = {
        "conductance": column(swept["conductance_per_length"].values, "conductance of the full model"),
        "bulk_conductance": column(bulk, "bulk line K(c) A, K the bulk conductivity and A the section area"),
        "plateau_conduction": column(conduction, "conduction by the counter-ions alone, mu |q|"),
        "plateau_estimate": column(conduction + convection,
                                   "counter-ions alone: conduction plus their electroosmotic convection"),
        "wall_charge_density": (("concentration", "wall") if sigma.ndim == 2 else ("concentration",), sigma,
                                summary("wall_charge_density")),
        "kappa_h": (("concentration",), swept["kappa_h"].values, summary("kappa_h")),
        "counterion_mobility": (("concentration",), mobility,
                                {"units": "m^2/(V*s)", "long_name": "electric mobility |z| e D / kT of the "
                                 "counter-ions"}),
        "status": (("concentration",), swept["status"].values.astype(np.int8),
                   {"units": "1", "long_name": STATUS_TEXT}),
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
        "geometry": geometry.kind,
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
