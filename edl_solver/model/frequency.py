"""The EO flow's response to an oscillating field (issue 14, item 3): amplitude and phase against frequency.

For a field E0 cos(2 pi f t) along a long uniform channel the double layer stays at equilibrium to first order
(the field has no component across the section and no gradient along it), so the flow is the linear problem
eta lap(u) - rho_m du/dt = -rho_e E with the equilibrium space charge rho_e. With u = Re[u^ exp(i w t)]:
eta lap(u^) - i w rho_m u^ = -rho_e E0, one complex solve per frequency (unsteady Stokes; the oscillatory
EO flow of the kind in Soderman & Jonsson 1996, J. Chem. Phys. 105, 10300, from memory). Dimensionless as the
steady solve (``kernels.fv1d.section_integrals``): lap(v) - i Omega v = -kappa2 rho_hat, Omega = w rho_m L^2 / eta,
u^ = (eps kT E0 / (e eta)) v, on the same wall-clustered grids and finite volumes.

Accuracy: the equilibrium potential is solved on a fixed grid of N cells and on N/2, N/4 and N/8 (every grid
shares the finest one's nodes), the complex mean velocity computed on each, extrapolated (Richardson, h^2 and
h^4, ``kernels.adaptive.extrapolate`` as the steady solve does) from the three finest and from the three coarsest,
and N doubled until their difference over 8 meets ``Numerics(accuracy=...)`` relative to the response's size.
"""

from __future__ import annotations

import json
from typing import Any

import numpy as np

from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.case import Case, Numerics
from edl_solver.inputs.casefile import case_to_mapping
from edl_solver.kernels import layout
from edl_solver.kernels.adaptive import ROUNDOFF
from edl_solver.model.flow_operator import FlowOperator, check_section, extrapolated, flow_operator, level_intervals

#: Cells of the finest grid to start from, and the most the refinement takes.
FIRST_INTERVALS = 64
#: Values below this fraction of the steady response count as vanishing when errors are measured.
VANISHING = 1e-9
#: A response below this fraction of its natural size at every frequency has cancelled (by symmetry) and is measured
#: against that fraction of it, raised with ``ROUNDOFF`` / accuracy (as ``kernels.adaptive.VANISHING``).
CANCELLED = 1e-6


def _frequencies(frequencies: Any) -> np.ndarray:
    """The frequencies as a 1-D float array of finite values >= 0 (Hz), or an InputError naming the field."""
    try:
        values = np.atleast_1d(np.asarray(frequencies, dtype=float))
    except (TypeError, ValueError):
        raise InputError(f"frequencies: {frequencies!r} is not a list of numbers, expected frequencies in Hz "
                         ">= 0") from None
    if values.ndim != 1 or values.size == 0 or not np.all(np.isfinite(values)) or np.any(values < 0.0):
        raise InputError(f"frequencies: {frequencies!r} is not allowed, expected a non-empty 1-D list of finite "
                         "frequencies in Hz >= 0")
    return values


def _grid_response(case: Case, intervals: int, omegas: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The complex section integrals (sum V v and sum V rho_hat v per unit field, dimensionless) at every
    dimensionless frequency ``omegas`` on the equilibrium grid of ``intervals`` cells, the scales vector, and the
    natural sizes of the two integrals (``_banded_flow``'s steady flow of the space charge's magnitude |rho_hat|)."""
    op = flow_operator(case, intervals)
    out = np.empty((omegas.size, 2), dtype=complex)
    for k, omega in enumerate(omegas):
        v = _banded_flow(op, omega, op.rho)
        out[k] = op.volume @ v, op.volume @ (op.rho * v)
    v = _banded_flow(op, 0.0, np.abs(op.rho)).real
    return out, op.scales, np.array([op.volume @ v, op.volume @ (np.abs(op.rho) * v)])


def _banded_flow(op: FlowOperator, omega: float, rho: np.ndarray) -> np.ndarray:
    """The complex flow per unit field of the space charge ``rho`` (rho_hat at the nodes) at the dimensionless
    frequency ``omega``: rows sum_j a_ij (v_j - v_i) - i Omega V_i v_i = -kappa2 V_i rho_i, v = 0 on a no-slip
    wall."""
    from scipy.linalg import solve_banded

    rhs = (-op.kappa2 * op.volume * rho).astype(complex)
    rhs[list(op.fixed)] = 0.0
    bands = np.zeros((3, op.volume.size), dtype=complex)
    bands[0, 1:], bands[1], bands[2, :-1] = op.upper[:-1], op.diagonal - 1j * omega * op.volume, op.lower[1:]
    for row in op.fixed:
        bands[1, row] = 1.0
        if row + 1 < op.volume.size:
            bands[0, row + 1] = 0.0
        if row > 0:
            bands[2, row - 1] = 0.0
    return solve_banded((1, 1), bands, rhs)


def _responses(case: Case, omegas: np.ndarray) -> tuple[np.ndarray, np.ndarray, float, int]:
    """The extrapolated complex integrals (frequency, 2), the scales, the error estimate and the finest grid.

    Each response is measured against its own size, floored at ``VANISHING`` x its largest over the frequencies (a
    response vanishing at high frequency is measured against what it falls from). A response below ``CANCELLED`` x
    the natural size of its integral at every frequency (the steady response of the space charge's magnitude)
    vanishes by symmetry (walls of exactly opposite potential, whose EO flows cancel): it is measured against that
    fraction of its natural size, as the steady solve does (``kernels.adaptive.error_scale``), never as round-off
    over round-off.
    """
    numerics: Numerics = case.numerics
    intervals = numerics.intervals or FIRST_INTERVALS
    while True:
        levels, sc, natural = [], None, None
        for cells in level_intervals(intervals):
            values, sc, natural = _grid_response(case, cells, omegas)
            levels.append(values)
        finer, coarser = extrapolated(levels)
        steady = np.max(np.abs(finer), axis=0)
        cancelled = steady < CANCELLED * np.abs(natural)
        floor = np.where(cancelled, max(CANCELLED, ROUNDOFF / numerics.accuracy) * np.abs(natural), VANISHING * steady)
        scale = np.maximum(np.abs(finer), floor + 1e-300)
        estimate = float(np.max(np.abs(finer - coarser) / scale) / 8.0)
        if estimate <= numerics.accuracy or numerics.intervals:
            return finer, sc, estimate, intervals
        if 2 * intervals > numerics.max_intervals:
            raise ConvergenceError(f"{case.describe()}: frequency response: accuracy {numerics.accuracy:g} missed "
                                   f"(estimate {estimate:.2g}) with {intervals} cells (max_intervals = "
                                   f"{numerics.max_intervals})")
        intervals *= 2


def frequency_response(case: Case, frequencies: Any) -> Any:
    """Amplitude and phase of the EO flow driven by the field ``case.field * cos(2 pi f t)``.

    Parameters
    ----------
    case : Case
        A slit or capillary; its field is the amplitude E0 (the pressure gradient is not part of this response).
    frequencies : sequence of float
        Frequencies f in Hz, >= 0 (0: the steady EO flow).

    Returns
    -------
    xarray.Dataset
        On the dimension ``frequency`` (Hz): ``eo_velocity_amplitude`` A >= 0 and ``eo_velocity_phase`` in
        (-pi, pi] with mean EO velocity = A cos(2 pi f t + phase); the same for ``flow_rate`` (per unit width for a
        slit) and ``convection_current`` (the space charge carried by that flow; the conduction current follows
        the field in phase). ``error_estimate``: the estimated relative error of each complex response. For E0 = 0
        the amplitudes are 0 and the phases those of a positive field. Attributes: the case, E0, the viscous
        frequency nu / (2 pi L^2) (L the half-height or radius) where the Stokes layer reaches the centre.

    Raises
    ------
    InputError
        Frequencies that are not finite and >= 0, a rectangle, a viscoelectric solvent, a solvent without density.
    ConvergenceError
        The equilibrium solve or the accuracy of the response failed.
    """
    import xarray as xr

    check_section(case, "frequency response")
    freqs = _frequencies(frequencies)
    omega = 2.0 * np.pi * freqs
    rho_m, eta = case.solvent.density, case.solvent.viscosity
    length = case.geometry.half_size
    values, sc, estimate, intervals = _responses(case, omega * rho_m * length**2 / eta)
    field = case.field
    per_field_flow = sc[layout.S_EO_VELOCITY] * sc[layout.S_AREA] * values[:, 0]
    per_field_current = sc[layout.S_VOLUME_CHARGE] * sc[layout.S_AREA] * sc[layout.S_EO_VELOCITY] * values[:, 1]
    sign = -1.0 if field < 0 else 1.0
    out = {}
    for name, response, unit in (
            ("eo_velocity", per_field_flow / sc[layout.S_SECTION_AREA], "m/s"),
            ("flow_rate", per_field_flow, "m^2/s" if case.geometry.extent == "per_width" else "m^3/s"),
            ("convection_current", per_field_current, "A/m" if case.geometry.extent == "per_width" else "A")):
        complex_value = response * sign
        phase = np.angle(complex_value)
        phase = np.where(phase <= -np.pi, np.pi, phase)  # (-pi, pi]
        out[f"{name}_amplitude"] = ("frequency", np.abs(response) * abs(field), {"units": unit})
        out[f"{name}_phase"] = ("frequency", phase, {"units": "rad"})
    nu = eta / rho_m
    return xr.Dataset(
        {**out, "error_estimate": ("frequency", np.full(freqs.size, estimate), {"units": "1"})},
        coords={"frequency": ("frequency", freqs, {"units": "Hz"})},
        attrs={"case": case.describe(), "case_json": json.dumps(case_to_mapping(case)),
               "field_amplitude_V_per_m": field,
               "viscous_frequency_Hz": nu / (2.0 * np.pi * length**2), "intervals": intervals})
