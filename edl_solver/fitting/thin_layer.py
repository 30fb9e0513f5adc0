"""The thin-layer fit: the same data fitted with the formulas practitioners use, beside the full model's fit.

Each wall carries an isolated Gouy-Chapman layer in the bulk electrolyte of the point; its zeta follows the wall
charge by Grahame's relation (Grahame 1947, Chem. Rev. 41, 441), sigma^2 = 2 eps RT sum_i c_i (exp(-z_i F zeta /
RT) - 1). The quantities:

- conductance: bulk conductance K_b A plus the surface conductance K^s of the layer on the perimeter P,
  G = K_b A + P K^s (Bikerman 1940, Kolloid-Z. 72, 100; from memory). K^s is Bikerman's for any mixture: the
  excess conduction sum_i z_i^2 F^2 D_i c_i / RT int (exp(-z_i F psi / RT) - 1) dx plus the electro-osmotic
  convection of the layer's charge, (eps^2 / eta) int psi'^2 dx, both as integrals over psi from 0 to zeta
  (dx = dpsi / |psi'|); for a z:z salt it is Bikerman's closed form with its (1 + 3 m / z^2) factors;
- streaming conductance -eps zeta A / eta, streaming potential coefficient eps zeta / (eta K_b), and the
  electro-osmotic mean velocity -eps zeta E / eta and flow rate (Smoluchowski 1903).
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.inputs.case import Case

from .problem import Dataset
from .result import ThinLayerFit

#: Measured quantities with a thin-layer formula.
QUANTITIES = ("conductance_per_length", "streaming_conductance", "streaming_potential_coefficient",
              "mean_velocity_eo", "flow_rate_eo")
#: Parameters the thin-layer fit estimates (one, every wall alike).
PARAMETERS = ("wall.charge_density", "wall.zeta")
_NODES, _WEIGHTS = np.polynomial.legendre.leggauss(64)


class _Point:
    """The bulk electrolyte and section of one data point, in the units of the formulas."""

    def __init__(self, case: Case) -> None:
        t = case.solvent.temperature
        self.c = np.array([ion.concentration for ion in case.electrolyte.ions])
        self.z = np.array([ion.valence for ion in case.electrolyte.ions], dtype=float)
        self.d = np.asarray(case.electrolyte.diffusivities(t), dtype=float)
        self.rt = GAS_CONSTANT * t
        self.eps, self.eta = case.solvent.permittivity, case.solvent.viscosity
        self.area, self.perimeter, self.field = case.geometry.area, case.geometry.perimeter, case.field
        self.bulk = FARADAY**2 / self.rt * float(np.sum(self.z**2 * self.d * self.c))

    def g(self, psi: np.ndarray) -> np.ndarray:
        """psi'^2 in the isolated layer (Poisson-Boltzmann first integral), (V/m)^2."""
        y = np.multiply.outer(psi, self.z) * (FARADAY / self.rt)
        return 2 * self.rt / self.eps * np.sum(self.c * np.expm1(-y), axis=-1)

    def charge(self, zeta: float) -> float:
        """Grahame: the wall charge of a layer of potential zeta, C/m^2."""
        return math.copysign(self.eps * math.sqrt(max(float(self.g(np.array(zeta))), 0.0)), zeta)

    def zeta(self, sigma: float) -> float:
        """Grahame inverted (bisection in the potential), V."""
        from scipy.optimize import brentq

        if sigma == 0:
            return 0.0
        top = 0.05
        while abs(self.charge(math.copysign(top, sigma))) < abs(sigma):
            top *= 2
        return brentq(lambda v: self.charge(v) - sigma, 0.0, math.copysign(top, sigma), xtol=1e-14, rtol=1e-13)

    def surface_conductance(self, zeta: float) -> float:
        """Bikerman's surface conductance of the layer, S (module docstring)."""
        if zeta == 0:
            return 0.0
        psi = 0.5 * zeta * (_NODES + 1)
        slope = np.sqrt(self.g(psi))
        y = np.multiply.outer(psi, self.z) * (FARADAY / self.rt)
        per_ion = FARADAY**2 / self.rt * self.z**2 * self.d * self.c
        conduction = np.sum(per_ion * np.expm1(-y) / slope[:, None], axis=1)
        convection = self.eps**2 / self.eta * slope
        return 0.5 * abs(zeta) * float(np.sum(_WEIGHTS * (conduction + convection)))

    def value(self, quantity: str, zeta: float) -> float:
        if quantity == "conductance_per_length":
            return self.bulk * self.area + self.perimeter * self.surface_conductance(zeta)
        mobility = -self.eps * zeta / self.eta
        return {"streaming_conductance": mobility * self.area, "streaming_potential_coefficient": -mobility / self.bulk,
                "mean_velocity_eo": mobility * self.field, "flow_rate_eo": mobility * self.field * self.area}[quantity]


def applies(datasets: Sequence[Dataset], paths: Sequence[str]) -> bool:
    """Whether the thin-layer fit exists for these data and parameters."""
    return len(paths) == 1 and paths[0] in PARAMETERS and all(one.quantity in QUANTITIES for one in datasets)


def thin_layer_fit(cases: Sequence[Sequence[Case]], datasets: Sequence[Dataset], path: str, sign: float,
                   sigma: np.ndarray, absolute: bool) -> tuple[float, float, list[np.ndarray]]:
    """Fit the one parameter ``path`` with the thin-layer formulas.

    ``cases`` are the cases of the points per data set, ``sign`` the sign the estimate takes where the data do not
    fix it (conductance is even in the charge), ``sigma`` the weights of the residuals (as the full fit's).

    Returns
    -------
    value, standard_error : float
        The estimate (SI) and its standard error.
    model : list of ndarray
        The thin-layer values at the estimate, per data set.
    """
    from scipy.optimize import least_squares

    points = [[_Point(case) for case in per_set] for per_set in cases]
    measured = np.concatenate([one.values for one in datasets])
    odd = [one.quantity != "conductance_per_length" for one in datasets]

    def model(value: float) -> list[np.ndarray]:
        return [np.array([p.value(one.quantity, value if path == "wall.zeta" else p.zeta(value)) for p in per_set])
                for one, per_set in zip(datasets, points)]

    if any(odd):  # the sign is fixed by the odd quantities: the sign of the data against the model at +1
        unit = 0.025 if path == "wall.zeta" else 1e-3
        probe = np.concatenate([m for m, o in zip(model(unit), odd) if o])
        data = np.concatenate([one.values for one, o in zip(datasets, odd) if o])
        sign = 1.0 if float(np.dot(probe, data)) >= 0 else -1.0
    start = math.log(0.025 if path == "wall.zeta" else 1e-2)

    def residuals(u: np.ndarray) -> np.ndarray:
        return (np.concatenate(model(sign * math.exp(u[0]))) - measured) / sigma

    fit = least_squares(residuals, [start], method="trf", x_scale=1.0, xtol=1e-12, ftol=1e-12, gtol=1e-12,
                        diff_step=1e-6)
    value = sign * math.exp(fit.x[0])
    j = fit.jac[:, 0] / value  # d residual / d value
    chi2 = float(np.sum(fit.fun**2))
    dof = max(measured.size - 1, 1)
    variance = (1.0 if absolute else chi2 / dof) / float(np.dot(j, j)) if np.dot(j, j) > 0 else math.inf
    return value, math.sqrt(variance), model(value)


def make_thin_layer(cases: Sequence[Sequence[Case]], datasets: Sequence[Dataset], path: str, sign: float,
                    sigma: np.ndarray, absolute: bool, full: float | None) -> ThinLayerFit:
    """The ``ThinLayerFit`` beside a full estimate ``full`` (None before the full fit)."""
    value, error, model = thin_layer_fit(cases, datasets, path, sign, sigma, absolute)
    formulas = {"conductance_per_length": "bulk conductance plus Bikerman's surface conductance of a Gouy-Chapman "
                                          "layer (Grahame zeta)",
                "streaming_conductance": "Smoluchowski streaming current", "streaming_potential_coefficient":
                "Smoluchowski streaming potential (bulk conductivity)", "mean_velocity_eo": "Helmholtz-Smoluchowski "
                "slip velocity", "flow_rate_eo": "Helmholtz-Smoluchowski slip velocity"}
    named = "; ".join(dict.fromkeys(formulas[one.quantity] for one in datasets))
    difference = {path: (value - full) / full if full else math.nan}
    return ThinLayerFit(formula=named, parameters={path: value}, standard_errors={path: error},
                        relative_difference=difference, model=model)
