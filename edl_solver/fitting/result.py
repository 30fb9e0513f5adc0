"""What ``edl_solver.fit`` returns: the fitted parameters, their uncertainty, the data against the model, and the
thin-layer fit of the same data beside it."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np


@dataclass(frozen=True)
class FittedDataset:
    """One data set against the fitted model (SI): ``inputs`` (independent variable -> values), the measured
    ``quantity`` and ``values``, their ``uncertainty`` (None when not given), the ``model`` values at the best
    parameters and the ``residuals`` (model - measured)."""

    inputs: dict[str, np.ndarray]
    quantity: str
    values: np.ndarray
    uncertainty: np.ndarray | None
    model: np.ndarray
    residuals: np.ndarray


@dataclass(frozen=True)
class ThinLayerFit:
    """The same data fitted with the thin-layer formulas practitioners use.

    Attributes
    ----------
    formula : str
        The formulas, named (e.g. bulk conductance plus Bikerman's surface conductance of a Gouy-Chapman layer).
    parameters, standard_errors : dict of str to float
        The thin-layer estimate (SI) and its standard error.
    relative_difference : dict of str to float
        (thin-layer - full) / full estimate of each parameter.
    model : list of ndarray
        The thin-layer model values at its estimate, per data set.
    """

    formula: str
    parameters: dict[str, float]
    standard_errors: dict[str, float]
    relative_difference: dict[str, float]
    model: list[np.ndarray]


@dataclass(frozen=True)
class Fit:
    """A fit of case inputs to measured summary quantities.

    Attributes
    ----------
    names : tuple of str
        The parameter paths, in order.
    parameters, standard_errors : dict of str to float
        Best values and one standard error, SI.
    covariance, correlation : ndarray
        (parameters x parameters), in the order of ``names``.
    chi2, reduced_chi2 : float
        Sum of squared weighted residuals, and over ``dof``.
    dof : int
        Points minus parameters.
    absolute_uncertainty : bool
        Whether every data set gave its uncertainty (else the covariance is scaled by the reduced chi^2).
    warnings : tuple of str
        Identifiability and other warnings, in words.
    datasets : tuple of FittedDataset
    thin_layer : ThinLayerFit or None
        The thin-layer fit (None where no thin-layer formula applies to the data and parameters).
    forward_solves : int
        Compiled forward solves used (a Jacobian of n points and k parameters is n k of them, in one batch).
    batches : int
        Compiled batch calls.
    success : bool
    message : str
        The optimiser's reason for stopping.
    intervals : dict of str to (float, float) or None
        Profile-likelihood intervals at one standard error (``profile=True``), else None.
    start : dict of str to float
        Where the optimiser started.
    """

    names: tuple[str, ...]
    parameters: dict[str, float]
    standard_errors: dict[str, float]
    covariance: np.ndarray
    correlation: np.ndarray
    chi2: float
    reduced_chi2: float
    dof: int
    absolute_uncertainty: bool
    warnings: tuple[str, ...]
    datasets: tuple[FittedDataset, ...]
    thin_layer: ThinLayerFit | None
    forward_solves: int
    batches: int
    success: bool
    message: str
    intervals: dict[str, tuple[float, float]] | None = None
    start: dict[str, float] = field(default_factory=dict)

    def __repr__(self) -> str:
        shown = ", ".join(f"{name}={self.parameters[name]:.6g}+-{self.standard_errors[name]:.2g}"
                          for name in self.names)
        return f"Fit({shown}; reduced_chi2={self.reduced_chi2:.3g}, forward_solves={self.forward_solves})"

    def as_dict(self) -> dict[str, Any]:
        """Plain values (for files and reports)."""
        return {"names": list(self.names), "parameters": dict(self.parameters),
                "standard_errors": dict(self.standard_errors), "chi2": self.chi2, "reduced_chi2": self.reduced_chi2,
                "dof": self.dof, "warnings": list(self.warnings), "forward_solves": self.forward_solves,
                "success": self.success, "message": self.message}
