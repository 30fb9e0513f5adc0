"""The two errors of the thin-layer slip model that a validity map holds, both as (thin − full)/full, unit "1":

- the EO flow rate (``thin_layer_flow_rate_error`` of every solve): plug flow at the
  Helmholtz–Smoluchowski slip velocity −εζE/η (Smoluchowski 1903), with the Grahame ζ of the bulk
  for a wall of fixed charge;
- the current per unit field at zero pressure gradient (``thin_layer_current_error``). The thin-layer
  model's current is bulk conduction alone, ``I/E = K A`` with the bulk conductivity from the
  Nernst–Einstein relation, ``K = (F²/RT) Σ z_i² D_i c_i``, and A the section area (H per unit width,
  or πa²). In the thin-layer picture the liquid outside the double layers is neutral at the bulk
  composition, so the plug flow carries no net charge; what the model leaves out — conduction by the
  excess counter-ions in the layers (surface conduction) and their convection by the EO flow — is
  exactly what this error measures (common practice: the everyday model of a channel's conductance).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import Any, Literal

from edl_solver.errors import InputError
from edl_solver.inputs.case import Case
from edl_solver.model.bulk import bulk_conductivity

__all__ = ["QUANTITIES", "QUANTITY_NAMES", "Quantity", "checked_quantity", "thin_layer_current_per_field",
           "thin_layer_error"]

Quantity = Literal["flow_rate", "current"]
#: The quantities whose thin-layer error is mapped, and the dataset variable holding each error.
QUANTITIES: dict[str, str] = {"flow_rate": "thin_layer_flow_rate_error", "current": "thin_layer_current_error"}
#: Each quantity in words, for messages and long names.
QUANTITY_NAMES = {"flow_rate": "EO flow rate", "current": "current per field"}


def checked_quantity(value: object) -> str:
    """``value`` if it is a mapped quantity ("flow_rate" or "current"), else a one-line InputError."""
    if value not in QUANTITIES:
        raise InputError(f"quantity: {value!r} is not a mapped quantity, expected one of "
                         f"{', '.join(repr(q) for q in QUANTITIES)}")
    return str(value)


def thin_layer_current_per_field(case: Case) -> float:
    """Current per unit field of the thin-layer model: bulk conduction over the whole section.

    ``I/E = K A`` with ``K = (F²/RT) Σ z_i² D_i c_i = (F/(kT/e)) Σ z_i² D_i c_i`` (Nernst–Einstein;
    Kohlrausch's independent migration at infinite dilution) and A = H per unit width (slit) or πa²
    (capillary). The outer liquid of the thin-layer picture is neutral, so its plug flow carries no
    current (common practice).

    Parameters
    ----------
    case : Case

    Returns
    -------
    float
        S per unit width (slit, "S") or S·m (capillary).
    """
    return bulk_conductivity(case) * case.geometry.area


def thin_layer_error(case: Case, summary: Mapping[str, Any], quantity: str) -> float:
    """(thin − full)/full of ``quantity`` for a solve of ``case`` (its summary); NaN when the full current
    vanishes."""
    if quantity == "flow_rate":
        return float(summary["thin_layer_flow_rate_error"])
    full = float(summary["current_per_field"])
    return (thin_layer_current_per_field(case) - full) / full if full != 0.0 else math.nan
