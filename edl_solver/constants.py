"""Physical constants (CODATA 2018, through ``scipy.constants``), SI units."""

from __future__ import annotations

from scipy import constants as _c

ELEMENTARY_CHARGE: float = _c.e  #: C
BOLTZMANN: float = _c.k  #: J/K
AVOGADRO: float = _c.N_A  #: 1/mol
VACUUM_PERMITTIVITY: float = _c.epsilon_0  #: F/m
FARADAY: float = _c.physical_constants["Faraday constant"][0]  #: C/mol
GAS_CONSTANT: float = _c.R  #: J/(mol K)
ZERO_CELSIUS: float = _c.zero_Celsius  #: K
