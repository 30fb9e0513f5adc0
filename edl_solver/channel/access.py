"""Access resistance: the spreading resistance of the reservoir where the current of a channel converges onto
its opening. Each end's is in series with the channel; both are in ohms for one channel.

Capillary of radius a (Hall 1975, J. Gen. Physiol. 66, 531, from memory): the opening as an equipotential
disk in a half-space of conductivity K, R_end = 1/(4 K a); both ends 1/(2 K a).

Slit of height H and width W >> H: the opening is a long flat strip. Its resistance to a half-space is
R_end = 2 eps / (K C) with C the free-space capacitance of the strip as a conductor (as Hall's is twice the
full-space resistance of a disk). A flat strip of width H has, seen from afar, the field of a round wire of
radius H/4 (the conformal map of a strip onto a circle; equivalent radius a quarter of the width, from
memory), and a thin straight wire of length W and radius r has C = 2 pi eps W / (ln(2W/r) - 1) to leading
orders in 1/ln(W/r) (Jackson 2000, Am. J. Phys. 68, 789, "Charge density on thin straight wire, revisited",
from memory). Hence

    R_end = (ln(8 W / H) - 1) / (pi K W).

Checked against a boundary-element solution of the rectangle's capacitance (tests/channel/test_access.py):
within 2 % for W/H >= 10, the error falling as W/H grows; it is refused below ``SLIT_MIN_ASPECT``.
Neither form includes surface conduction at the mouth or the reservoirs' concentration polarisation.
"""

from __future__ import annotations

import math

from edl_solver.errors import InputError
from edl_solver.inputs.geometry import Capillary, Slit

__all__ = ["SLIT_MIN_ASPECT", "end_access_resistance", "slit_access_resistance"]

#: Smallest width / height of a slit whose access resistance is computed (the strip formula's range).
SLIT_MIN_ASPECT = 10.0


def slit_access_resistance(conductivity: float, height: float, width: float) -> float:
    """Access resistance of one end of a slit of height H and width W opening into a reservoir of
    conductivity K (S/m): (ln(8 W/H) - 1) / (pi K W), ohm (see the module notes for its source and range).

    Raises
    ------
    InputError
        If W < ``SLIT_MIN_ASPECT`` H (the strip formula does not hold).
    """
    if width < SLIT_MIN_ASPECT * height:
        raise InputError(f"channel.width: {width:.4g} m is less than {SLIT_MIN_ASPECT:g} times the slit height "
                         f"{height:.4g} m, expected a slit at least {SLIT_MIN_ASPECT:g} times wider than high (the "
                         "per-width section and the slit's access resistance assume W >> H)")
    return (math.log(8.0 * width / height) - 1.0) / (math.pi * conductivity * width)


def end_access_resistance(geometry: Slit | Capillary, conductivity: float, width: float | None) -> float:
    """Access resistance of one end of one channel, ohm: Hall's for a capillary, the strip's for a slit of
    width ``width`` (m; required for a slit)."""
    if isinstance(geometry, Slit):
        if width is None:
            raise InputError("channel.width: None for a slit with access_resistance=True, expected the slit's width "
                             "(e.g. '1 um'): a slit's access resistance depends on it")
        return slit_access_resistance(conductivity, geometry.height, width)
    return geometry.access_resistance(conductivity)
