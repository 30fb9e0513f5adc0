"""What a solve returns: profiles across the section, the summary and the solver's status."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.inputs.case import Case
from edl_solver.results.profiles import Profiles


@dataclass(frozen=True)
class Result:
    """The outcome of ``solve``.

    Attributes
    ----------
    case : Case
        The inputs, SI.
    profiles : Profiles
    summary : dict
        SI values keyed as in ``SUMMARY_UNITS``; for a slit with two different walls, ``zeta``,
        ``wall_charge_density``, ``hs_velocity`` and ``thin_layer_zeta`` are (bottom, top) pairs.
    verdict : str
        The thin-layer model's validity in plain words, at ``case.tolerance``.
    status : str
        "converged" (a single solve raises instead of returning anything else).
    message : str
    iterations : int
        Newton iterations over all grids.
    residual : float
        Max row-scaled residual of the finest grid, kT/e.
    warnings : tuple of str
        Notes on the physical validity of the model for this case.
    response_matrix : ndarray, optional
        3 x 3 linear-response matrix of (volume flow, current, salt flux) against (solvent force X_P = -dp/dx
        + RT sum c_i d ln c/dx, field E, salt force X_s), per unit length; see ``_summary.reduced_matrix``.
    ion_response_matrix : ndarray, optional
        The same resolved per ion, (1 + n) x (1 + n); see ``_summary.ion_response_matrix``.
    """

    case: Case
    profiles: Profiles
    summary: dict[str, Any]
    verdict: str
    status: str = "converged"
    message: str = ""
    iterations: int = 0
    residual: float = 0.0
    warnings: tuple[str, ...] = field(default_factory=tuple)
    response_matrix: np.ndarray | None = None
    ion_response_matrix: np.ndarray | None = None

    def to_hdf5(self, path: str | Path) -> Path:
        """Write the result to an HDF5 (netCDF-4) file atomically; see ``edl_solver.io.hdf5``."""
        from edl_solver.io import hdf5 as io

        return io.write_result(self, path)

    def report(self) -> str:
        """A short plain-text report: inputs, Debye length, kappa h, summary and verdict."""
        from edl_solver.report import text as report

        return report.text(self)
