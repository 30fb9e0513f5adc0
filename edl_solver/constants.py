"""Physical constants, SI units: the exact SI-2019 defining constants and the CODATA 2022 vacuum
permittivity (tests/test_constants.py checks them against ``scipy.constants``). Written out rather than
imported from scipy so that importing the package stays fast."""

from __future__ import annotations

ELEMENTARY_CHARGE: float = 1.602176634e-19  #: C (exact)
BOLTZMANN: float = 1.380649e-23  #: J/K (exact)
AVOGADRO: float = 6.02214076e23  #: 1/mol (exact)
VACUUM_PERMITTIVITY: float = 8.8541878188e-12  #: F/m (CODATA 2022)
FARADAY: float = ELEMENTARY_CHARGE * AVOGADRO  #: C/mol
GAS_CONSTANT: float = BOLTZMANN * AVOGADRO  #: J/(mol K)
ZERO_CELSIUS: float = 273.15  #: K
