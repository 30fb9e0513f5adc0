"""Ion current rectification: the ratio |I(+Delta V) / I(-Delta V)| of a channel's current at opposite voltages.

Signs as in ``edl_solver.channel.model``: Delta V = V(L) - V(0), I positive along +x. For a cone whose tip is at
x = 0 (``size[0] < size[1]``) a ratio above 1 means the larger current flows when the base (right) reservoir is
the positive one. A channel that is symmetric under x -> L - x (equal reservoirs, a mirror-symmetric shape and
wall) has the ratio 1; so has any channel whose current is linear in the voltage (an uncharged one, or one whose
double layers are thin against its size, where the concentration inside stays the reservoirs').
"""

from __future__ import annotations

from typing import Any

import numpy as np

from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.units import to_si

__all__ = ["rectification_ratio"]


def rectification_ratio(channel: Any, voltages: Any) -> np.ndarray:
    """|I(+V) / I(-V)| at each voltage magnitude V (V > 0), from one I-V curve over -V and +V.

    Parameters
    ----------
    channel : Channel or ChannelTable
    voltages : sequence of float or str
        Positive voltage magnitudes, V.

    Raises
    ------
    InputError
        If a voltage is not positive.
    ConvergenceError
        If a point of the curve does not converge.
    """
    from edl_solver.channel.operating import current_voltage

    values = np.array([to_si(v, "V", "voltages") for v in np.ravel(np.asarray(voltages, dtype=object))], dtype=float)
    if values.size == 0 or not np.all(values > 0.0):
        raise InputError(f"voltages: {list(values)!r} is not allowed, expected positive voltage magnitudes")
    curve = current_voltage(channel, np.concatenate((-values[::-1], values)))
    if np.any(curve["status"].values != 0):
        bad = [str(m) for m, s in zip(curve["message"].values, curve["status"].values) if s != 0]
        raise ConvergenceError(f"rectification_ratio: a point of the I-V curve failed ({bad[0]})")
    current = curve["current"].values
    return np.abs(current[values.size:] / current[:values.size][::-1])
