"""Compiled wall arithmetic: the kernels' dimensionless wall row, the charge of a regulated wall (sites, gate,
Stern layer), and the charge-potential relation of an isolated wall in contact with the bulk electrolyte (the
thin-layer picture; see ``model.walls``).

Takes only arrays and scalars: SI wall rows as ``packing.wall_row_si`` builds them (``W_*`` layout), and the
ions as the ``ION_*`` rows of the packed case vector.
"""

from __future__ import annotations

import numpy as np
from numba import njit

from edl_solver.constants import AVOGADRO, ELEMENTARY_CHARGE
from edl_solver.kernels.layout import (
    DH,
    FLUX,
    ION_CONCENTRATION,
    ION_VALENCE,
    MAX_STATES,
    POTENTIAL,
    SITE_CHARGES,
    SITE_DENSITY,
    SITE_LOG_K,
    SITE_SIZE,
    SITE_STATES,
    STERIC,
    W_GATE_C,
    W_GATE_V,
    W_SIGMA,
    W_SITE0,
    W_SITES,
    W_STERN,
    W_TYPE,
    W_VALUE,
    WALL_SIZE,
)

LN_1000 = np.log(1000.0)
LN_10 = np.log(10.0)


@njit(cache=True)
def dimensionless_wall(si, thermal_voltage, permittivity, length, protons):
    """The kernels' row of an SI wall row: charges in eps kT / (e L), capacitances in eps / L, potentials in
    kT/e (L = ``length``), and per acid-base step ln(K / [H+]_bulk) with K = 10^-pK mol/L = 1000 * 10^-pK
    mol/m^3 and the bulk proton concentration ``protons`` (mol/m^3)."""
    row = np.zeros(WALL_SIZE)
    kind = si[W_TYPE]
    row[W_TYPE] = kind
    charge_unit = permittivity * thermal_voltage / length
    if kind == POTENTIAL:
        row[W_VALUE] = si[W_VALUE] / thermal_voltage
        return row
    if kind == FLUX:
        row[W_VALUE] = si[W_VALUE] / charge_unit
        return row
    capacitance_unit = permittivity / length
    row[W_SIGMA] = si[W_SIGMA] / charge_unit
    row[W_GATE_C] = si[W_GATE_C] / capacitance_unit
    row[W_GATE_V] = si[W_GATE_V] / thermal_voltage
    row[W_STERN] = capacitance_unit * si[W_STERN]
    sites = int(si[W_SITES])
    row[W_SITES] = sites
    for j in range(sites):
        base = W_SITE0 + j * SITE_SIZE
        row[base + SITE_DENSITY] = ELEMENTARY_CHARGE * si[base + SITE_DENSITY] / charge_unit
        states = int(si[base + SITE_STATES])
        row[base + SITE_STATES] = states
        for q in range(MAX_STATES):
            row[base + SITE_CHARGES + q] = si[base + SITE_CHARGES + q]
        for i in range(states - 1):
            row[base + SITE_LOG_K + i] = LN_1000 - si[base + SITE_LOG_K + i] * LN_10 - np.log(protons)
    return row


@njit(cache=True)
def plane_charge(psi0, wall):
    """Charge sigma_hat of a regulated wall at charge-plane potential psi0, and d sigma_hat / d psi0.

    Fixed part, gate term C_g (V_g - psi0), and for each kind of site with states k = 0..K of charge q_k
    (successive deprotonations with constants K_i) the Boltzmann-weighted mean charge: f_k proportional
    to prod_{i<=k} K_i / [H+]_0 with the proton concentration at the plane [H+]_0 = [H+]_bulk exp(-psi0),
    i.e. log-weight l_k = sum_{i<=k} (ln(K_i / [H+]_bulk) + psi0) (the mass-action law of each step).
    """
    sigma = wall[W_SIGMA] + wall[W_GATE_C] * (wall[W_GATE_V] - psi0)
    dsigma = -wall[W_GATE_C]
    for j in range(int(wall[W_SITES])):
        base = W_SITE0 + j * SITE_SIZE
        density = wall[base + SITE_DENSITY]
        states = int(wall[base + SITE_STATES])
        logs = np.empty(states)
        logs[0] = 0.0
        top = 0.0
        for k in range(1, states):
            logs[k] = logs[k - 1] + wall[base + SITE_LOG_K + k - 1] + psi0
            top = max(top, logs[k])
        total = 0.0
        mean_q = 0.0
        mean_k = 0.0
        mean_qk = 0.0
        for k in range(states):
            f = np.exp(logs[k] - top)
            q = wall[base + SITE_CHARGES + k]
            total += f
            mean_q += q * f
            mean_k += k * f
            mean_qk += q * k * f
        mean_q /= total
        mean_k /= total
        mean_qk /= total
        sigma += density * mean_q
        dsigma += density * (mean_qk - mean_q * mean_k)
    return sigma, dsigma


@njit(cache=True)
def regulated_charge(psi_d, wall):
    """Charge of a regulated wall whose diffuse layer starts at potential ``psi_d``.

    Solves the Stern relation psi0 = psi_d + sigma(psi0) / C_S for the charge-plane potential (Newton on
    g(psi0) = psi0 - psi_d - sigma(psi0)/C_S, g' = 1 - sigma'/C_S >= 1 because sigma decreases with
    psi0), then returns sigma_hat, d sigma_hat / d psi_d = sigma' / (1 - sigma'/C_S) and psi0.
    """
    inverse = wall[W_STERN]
    psi0 = psi_d
    sigma, dsigma = plane_charge(psi0, wall)
    if inverse > 0.0:
        for _ in range(200):
            g = psi0 - psi_d - inverse * sigma
            dg = 1.0 - inverse * dsigma
            step = g / dg
            if abs(step) > 5.0:  # keep the exponentials of the site weights in range
                step = 5.0 if step > 0 else -5.0
            psi0 -= step
            sigma, dsigma = plane_charge(psi0, wall)
            if abs(step) < 1e-14 * (1.0 + abs(psi0)):
                break
        return sigma, dsigma / (1.0 - inverse * dsigma), psi0
    return sigma, dsigma, psi0


@njit(cache=True)
def twice_ionic_strength(ions):
    """sum z^2 c of the ``ION_*`` rows, mol/m^3."""
    total = 0.0
    for i in range(ions.shape[0]):
        total += ions[i, ION_VALENCE] ** 2 * ions[i, ION_CONCENTRATION]
    return total


@njit(cache=True)
def layer_pressure(zeta, ions, model, diameter, thermal_voltage):
    """P(zeta) of the diffuse layer's first integral, J/m^3 (see walls.py; Debye-Hueckel: its quadratic
    approximation). ``ions`` are ``ION_*`` rows."""
    psi = zeta / thermal_voltage
    kt = ELEMENTARY_CHARGE * thermal_voltage
    if model == DH:
        return 0.5 * kt * AVOGADRO * twice_ionic_strength(ions) * psi * psi
    total = 0.0
    if model == STERIC:
        volume = diameter**3
        for i in range(ions.shape[0]):
            total += ions[i, ION_CONCENTRATION] * AVOGADRO * volume * np.expm1(-ions[i, ION_VALENCE] * psi)
        return kt / volume * np.log1p(total)
    for i in range(ions.shape[0]):
        total += ions[i, ION_CONCENTRATION] * np.expm1(-ions[i, ION_VALENCE] * psi)
    return kt * AVOGADRO * total


@njit(cache=True)
def isolated_charge(zeta, ions, model, diameter, thermal_voltage, permittivity):
    """Charge density (C/m^2) of an isolated wall at potential ``zeta`` (V): sign(zeta) sqrt(2 eps P)."""
    pressure = max(layer_pressure(zeta, ions, model, diameter, thermal_voltage), 0.0)
    return np.copysign(np.sqrt(2.0 * permittivity * pressure), zeta)


@njit(cache=True)
def _mismatch(psi, si, row, ions, model, diameter, thermal_voltage, permittivity, charge_unit):
    """Layer charge minus wall charge (C/m^2) at wall potential psi (kT/e); it increases with psi."""
    layer = isolated_charge(psi * thermal_voltage, ions, model, diameter, thermal_voltage, permittivity)
    if si[W_TYPE] == FLUX:
        return layer - si[W_VALUE]
    return layer - regulated_charge(psi, row)[0] * charge_unit


@njit(cache=True)
def isolated_wall(si, ions, model, diameter, thermal_voltage, permittivity, protons, debye_length):
    """(zeta, sigma) of a wall alone in contact with the bulk electrolyte, V and C/m^2.

    Fixed potential: sigma from the layer's first integral; fixed charge: zeta by inverting it; regulated:
    the root of sigma_layer(zeta) = sigma_wall(zeta) (the layer charge rises and the wall charge falls with
    zeta, so the root is unique), by Brent's method (Brent 1973, Algorithms for Minimization without
    Derivatives) on a bracket grown from [-1, 1] kT/e. NaN when no bracket is found.
    """
    if si[W_TYPE] == POTENTIAL:
        zeta = si[W_VALUE]
        return zeta, isolated_charge(zeta, ions, model, diameter, thermal_voltage, permittivity)
    row = dimensionless_wall(si, thermal_voltage, permittivity, debye_length, protons)
    unit = permittivity * thermal_voltage / debye_length
    args = (si, row, ions, model, diameter, thermal_voltage, permittivity, unit)
    a, b = -1.0, 1.0
    fa, fb = _mismatch(a, *args), _mismatch(b, *args)
    for _ in range(64):
        if not fa > 0.0:
            break
        a *= 2.0
        fa = _mismatch(a, *args)
    for _ in range(64):
        if not fb < 0.0:
            break
        b *= 2.0
        fb = _mismatch(b, *args)
    if not (fa <= 0.0 <= fb):
        return np.nan, np.nan
    psi = _brent(a, b, fa, fb, args)
    zeta = psi * thermal_voltage
    return zeta, isolated_charge(zeta, ions, model, diameter, thermal_voltage, permittivity)


@njit(cache=True)
def _brent(a, b, fa, fb, args):
    """Root of ``_mismatch`` in the bracket [a, b] (fa, fb of opposite sign) to 1e-14 absolute and relative."""
    c, fc = a, fa
    d = e = b - a
    for _ in range(500):
        if (fb > 0.0) == (fc > 0.0) and fb != 0.0:
            c, fc = a, fa
            d = e = b - a
        if abs(fc) < abs(fb):
            a, b, c = b, c, b
            fa, fb, fc = fb, fc, fb
        tol = 2e-14 * abs(b) + 0.5e-14
        xm = 0.5 * (c - b)
        if abs(xm) <= tol or fb == 0.0:
            return b
        if abs(e) >= tol and abs(fa) > abs(fb):
            s = fb / fa
            if a == c:  # secant
                p = 2.0 * xm * s
                q = 1.0 - s
            else:  # inverse quadratic interpolation
                q = fa / fc
                r = fb / fc
                p = s * (2.0 * xm * q * (q - r) - (b - a) * (r - 1.0))
                q = (q - 1.0) * (r - 1.0) * (s - 1.0)
            if p > 0.0:
                q = -q
            p = abs(p)
            if 2.0 * p < min(3.0 * xm * q - abs(tol * q), abs(e * q)):
                e = d
                d = p / q
            else:  # bisection
                d = xm
                e = d
        else:
            d = xm
            e = d
        a, fa = b, fb
        b += d if abs(d) > tol else (tol if xm > 0.0 else -tol)
        fb = _mismatch(b, *args)
    return b
