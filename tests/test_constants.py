"""The package's constants agree with CODATA (2022 for the vacuum permittivity) as shipped by scipy.constants."""

from __future__ import annotations

import pytest
from scipy import constants

from edl_solver import constants as c


def test_constants_match_codata() -> None:
    assert constants.e == c.ELEMENTARY_CHARGE
    assert constants.k == c.BOLTZMANN
    assert c.AVOGADRO == constants.N_A
    assert pytest.approx(constants.epsilon_0, rel=1e-12, abs=0) == c.VACUUM_PERMITTIVITY
    assert pytest.approx(constants.physical_constants["Faraday constant"][0], rel=1e-15, abs=0) == c.FARADAY
    assert pytest.approx(constants.R, rel=1e-15, abs=0) == c.GAS_CONSTANT
    assert constants.zero_Celsius == c.ZERO_CELSIUS
