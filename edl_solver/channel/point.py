"""The steady state of a finite channel at one drive: what the path solvers return (``path``) and the
operating functions hand out (``operating``).

Signs as in ``edl_solver.channel.model``: x from the left reservoir (0) to the right one (L),
Delta V = V(L) - V(0), flows positive along +x; slit values per unit width.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from edl_solver.results.schema import CONVERGED, FAILED, STATUS, status_word

__all__ = ["CONVENTIONS", "CONVERGED_WORD", "FAILED_WORD", "STATUS_TEXT", "OperatingPoint"]

#: The status words of an operating point (``results.schema``'s one vocabulary).
CONVERGED_WORD = status_word(CONVERGED)
FAILED_WORD = status_word(FAILED)
#: Long name of a ``status`` variable of channel datasets: "0 converged, 1 failed (see message)".
STATUS_TEXT = f"{CONVERGED} {STATUS[CONVERGED][0]}, {FAILED} {STATUS[FAILED][0]} (see message)"
#: The sign conventions, as an attribute of channel datasets.
CONVENTIONS = ("x from the left (0) to the right (L) reservoir; voltage = V(L) - V(0); flows positive along +x; "
               "slit values per unit width")


@dataclass(frozen=True)
class OperatingPoint:
    """The steady state of the channel at one applied voltage (or current) and pressure difference.

    Attributes
    ----------
    voltage : float
        Delta V = V(L) - V(0) between the reservoirs, V.
    current, volume_flow, salt_flux : float
        I (A; A/m for a slit), Q (m^3/s; m^2/s), J_s (mol/s of formula units; mol/(m s)), positive along +x.
    pressure_difference : float
        Delta p = p(L) - p(0), Pa.
    channel_voltage : float
        Voltage across the channel proper, Delta V + R_access I, V.
    position, concentration, potential, pressure : ndarray
        Profiles along the channel: x (m), salt concentration c(x) (mol/m^3), V(x) and the hydrostatic p(x)
        relative to the left reservoir (V, Pa).
    status : str
        "converged" or "failed".
    message : str
    iterations : int
        Newton iterations (0 for equal reservoirs).
    quadrature_error : float
        Estimated relative error of the fluxes (and of the voltage) from the quadrature along the channel.
    """

    voltage: float
    current: float
    volume_flow: float
    salt_flux: float
    pressure_difference: float
    channel_voltage: float
    position: np.ndarray = field(repr=False)
    concentration: np.ndarray = field(repr=False)
    potential: np.ndarray = field(repr=False)
    pressure: np.ndarray = field(repr=False)
    status: str = CONVERGED_WORD
    message: str = ""
    iterations: int = 0
    quadrature_error: float = 0.0
    unknown_t: float = field(default=0.0, repr=False)  # the solver's t, to start a nearby solve from

    @property
    def power(self) -> float:
        """Electrical power delivered to the external circuit, P = I Delta V, W (W/m for a slit)."""
        return self.current * self.voltage
