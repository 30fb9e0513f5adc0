"""How the diffusivity of an ion in water follows the temperature.

The ion table (``inputs.ions``) gives each ion's limiting diffusivity at 25 °C. At another temperature it is

.. math:: D(T) = D_{25} \\frac{T}{T_{25}} \\frac{\\eta(T_{25})}{\\eta(T)} \\frac{W(T)}{W(T_{25})},
          \\qquad W = \\lambda^0 \\eta,

the Stokes-Einstein (Walden) scaling with the viscosity of water (``inputs.solvent.water_viscosity``) times the
drift of the Walden product W of the ion. W is interpolated linearly in t between the limiting ionic
conductivities lambda^0 below and held at its end values outside them: an ion without a row scales by Walden's
rule alone (W constant, D proportional to T / eta), which is about 10 % off for KCl between 0 and 25 °C.

Limiting ionic conductivities, S cm^2/mol (per equivalent), FROM MEMORY (not re-read): 0 to 55 °C from
Robinson & Stokes, Electrolyte Solutions (2nd ed., 1959), Appendix 6.2; 100 °C from the CRC Handbook of
Chemistry and Physics, "Ionic conductivity and diffusion at infinite dilution" (temperature table). OH- rests on
the CRC's 0, 18, 25 and 100 °C values alone. Only ratios to the 25 °C value are used, so the 25 °C diffusivity
of the ion table is kept exactly.

Ions by Walden's rule alone (no temperature row remembered well enough): NH4+, Mg2+, Ca2+, Sr2+, Ba2+, La3+,
F-, NO3-, HCO3-, CH3COO-, SO4 2-, CO3 2-, and every ion outside the table.
"""

from __future__ import annotations

from functools import cache, lru_cache

import numpy as np

from edl_solver.constants import ZERO_CELSIUS
from edl_solver.errors import InputError
from edl_solver.inputs.ions import lookup_ion
from edl_solver.inputs.solvent import water_viscosity

__all__ = ["REFERENCE_TEMPERATURE", "TEMPERATURE_SOURCES", "diffusivity_ratio", "temperature_law"]

#: Temperature of the table diffusivities, K (25 °C).
REFERENCE_TEMPERATURE = ZERO_CELSIUS + 25.0

_RS = (0.0, 5.0, 15.0, 25.0, 35.0, 45.0, 55.0)  # Robinson & Stokes, Appendix 6.2 (from memory)
_RS_CRC = (*_RS, 100.0)  # ... and the CRC Handbook's 100 °C value (from memory)

#: Limiting ionic conductivities per ion of the table: (temperatures °C, lambda^0 S cm^2/mol), from memory.
TEMPERATURE_SOURCES: dict[str, tuple[tuple[float, ...], tuple[float, ...]]] = {
    "H+": (_RS_CRC, (225.0, 250.1, 300.6, 349.8, 397.0, 441.4, 483.1, 630.0)),
    "Li+": (_RS_CRC, (19.4, 22.7, 30.2, 38.7, 48.0, 58.0, 68.7, 115.0)),
    "Na+": (_RS_CRC, (26.5, 30.3, 39.7, 50.1, 61.5, 73.7, 86.8, 145.0)),
    "K+": (_RS_CRC, (40.7, 46.7, 59.6, 73.5, 88.2, 103.5, 119.2, 195.0)),
    "Rb+": (_RS, (43.9, 50.1, 63.4, 77.8, 92.9, 108.6, 124.2)),
    "Cs+": (_RS, (44.0, 50.0, 63.1, 77.3, 92.1, 107.5, 123.6)),
    "Cl-": (_RS_CRC, (41.0, 47.5, 61.4, 76.35, 92.2, 108.9, 126.4, 212.0)),
    "Br-": (_RS, (42.6, 49.2, 63.1, 78.1, 94.0, 110.6, 127.8)),
    "I-": (_RS, (41.4, 48.0, 62.1, 76.8, 92.3, 108.6, 125.4)),
    "OH-": ((0.0, 18.0, 25.0, 100.0), (105.0, 171.0, 198.0, 446.0)),  # CRC Handbook only (from memory)
}


@cache
def _walden_products(name: str) -> tuple[np.ndarray, np.ndarray] | None:
    """(t in °C, lambda^0 eta) of a table ion with a temperature row, else None."""
    if name not in TEMPERATURE_SOURCES:
        return None
    celsius, conductivity = TEMPERATURE_SOURCES[name]
    eta = np.array([water_viscosity(ZERO_CELSIUS + t) for t in celsius])
    return np.array(celsius), np.array(conductivity) * eta


def temperature_law(name: str) -> str:
    """In words, how the diffusivity of the ion called ``name`` follows the temperature (for reports)."""
    canonical = _canonical(name)
    if canonical in TEMPERATURE_SOURCES:
        return "limiting conductivities (Robinson & Stokes; CRC Handbook)"
    return "Walden's rule (D ~ T / eta)"


def _canonical(name: str) -> str | None:
    try:
        return lookup_ion(name).name
    except InputError:  # an ion outside the table scales by Walden's rule
        return None


@lru_cache(maxsize=4096)
def diffusivity_ratio(name: str, temperature: float) -> float:
    """D(T) / D(25 °C) of the ion called ``name`` in water (see the module docstring).

    Parameters
    ----------
    name : str
        The ion's name; table ions with a temperature row follow it, all others Walden's rule.
    temperature : float
        Kelvin, 0-100 °C (the range of the viscosity correlation and of the tables).

    Returns
    -------
    float
        Exactly 1.0 at ``REFERENCE_TEMPERATURE``.

    Raises
    ------
    InputError
        If the temperature is outside 0-100 °C.
    """
    if temperature == REFERENCE_TEMPERATURE:
        return 1.0
    if not ZERO_CELSIUS <= temperature <= ZERO_CELSIUS + 100.0:
        raise InputError(f"ion {name}.diffusivity: the temperature dependence of its diffusivity is known for "
                         f"0-100 degC, got {temperature:g} K; expected a temperature in that range, or the "
                         "diffusivity at that temperature with temperature_dependence=False")
    eta, eta_25 = water_viscosity(temperature), water_viscosity(REFERENCE_TEMPERATURE)
    ratio = temperature / REFERENCE_TEMPERATURE * eta_25 / eta
    products = _walden_products(_canonical(name) or "")
    if products is not None:
        celsius, walden = products
        ratio *= float(np.interp(temperature - ZERO_CELSIUS, celsius, walden) / np.interp(25.0, celsius, walden))
    return ratio
