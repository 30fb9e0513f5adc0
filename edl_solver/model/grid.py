"""Wall-clustered cross-section grids and their finite-volume metric.

The grid maps a uniform computational coordinate s onto the section with a tanh stretching that is
odd about the channel centre (slit mid-plane or capillary axis)::

    x(s) = tanh(beta * s) / tanh(beta),   s uniform in [-1, 1] (full slit) or [0, 1] (half section)

where x is the position from the centre in units of the half-size L (slit half-height h = H/2 or
capillary radius a). Near a wall the spacing grows geometrically, so the nodes follow the double layer
from its innermost (Gouy-Chapman) scale out to the bulk, and kappa*L = 1000 costs no more than
kappa*L = 1. The map is smooth and the finite-volume scheme centred, so the discretisation error
expands in even powers of the spacing in s; the solver extrapolates on that (Richardson).

Finite volumes (control volume of node i between the midpoints of its links)::

    a_i = r_{i+1/2}^m / (x_{i+1} - x_i)        link conductance; m = 0 slit, 1 capillary
    V_i = int r^m dr over the control volume    node volume; half cells at the ends

so the discrete operator (L f)_i = a_i (f_{i+1} - f_i) - a_{i-1} (f_i - f_{i-1}) is symmetric and
sum_i V_i g_i is the matching quadrature. The arithmetic lives in ``kernels.fv1d.finite_volume_metric``.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from edl_solver.kernels import adaptive as _adaptive
from edl_solver.kernels import fv1d as _kernels
from edl_solver.kernels.records import Cells

Section = Literal["full", "half"]


@dataclass(frozen=True)
class Grid:
    """Nodes and finite-volume metric of one cross-section grid (lengths in units of the half-size L).

    Attributes
    ----------
    s : ndarray
        Uniform computational nodes.
    beta : float
        Stretching parameter of the tanh map.
    metric : int
        0 planar slit, 1 axisymmetric capillary.
    cells : Cells
        The finite-volume metric as the kernels take it (``kernels.records.Cells``).
    """

    s: np.ndarray
    beta: float
    metric: int
    cells: Cells

    @property
    def x(self) -> np.ndarray:
        """Node positions from the centre, dimensionless: -1 (bottom wall) ... 1 (top wall) for a full slit
        section; 0 (centre or axis) ... 1 (wall) for a half section."""
        return self.cells.x

    @property
    def link(self) -> np.ndarray:
        """Link conductances a_i, length n - 1."""
        return self.cells.link

    @property
    def volume(self) -> np.ndarray:
        """Control-volume weights V_i, length n; they sum to the (half-)section measure."""
        return self.cells.volume

    @property
    def centre(self) -> int:
        """Index of the centre node (slit mid-plane or capillary axis)."""
        return int(np.argmin(np.abs(self.s)))


def from_cells(s: np.ndarray, beta: float, metric: int, cells: Cells) -> Grid:
    """Grid of the computational nodes ``s``, mapped with stretching ``beta``, whose metric ``cells`` the
    kernels have already computed (``kernels.fv1d.finite_volume_metric``)."""
    return Grid(s=s, beta=beta, metric=metric, cells=cells)


def from_nodes(s: np.ndarray, beta: float, metric: int) -> Grid:
    """Grid of the computational nodes ``s`` mapped with stretching ``beta``."""
    return from_cells(s, beta, metric, _kernels.finite_volume_metric(s, beta, metric))


def build(intervals: int, section: Section, metric: int, inner_length: float) -> Grid:
    """Wall-clustered grid with ``intervals`` cells between the centre and a wall.

    Parameters
    ----------
    intervals : int
        Cells per half section (a full slit section gets twice as many).
    section : {"full", "half"}
        "full": slit from wall to wall (two different walls); "half": centre to wall (symmetric slit
        or capillary).
    metric : int
        0 slit, 1 capillary (a capillary is always a half section, the centre being the axis).
    inner_length : float
        Smallest length to resolve at the wall, in units of L (see ``_adaptive.stretching``).
    """
    s = _adaptive.computational_nodes(intervals, section == "half")
    return from_nodes(s, _adaptive.stretching(inner_length), metric)
