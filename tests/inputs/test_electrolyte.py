"""Electrolytes (``edl_solver.inputs.electrolyte``): the Debye length against a handbook rule."""

from __future__ import annotations

import math

import pytest

import edl_solver as edl
from tests.helpers import kcl


def test_debye_length_rule_for_one_to_one_electrolytes() -> None:
    """lambda_D = 0.304 nm / sqrt(I / (mol/L)) for 1:1 in water at 25 degC (Israelachvili, Intermolecular
    and Surface Forces); the rule's 3 digits allow ~0.3 %."""
    water = edl.Water(temperature="25 degC")
    for molar in (0.001, 0.01, 0.1):
        debye = kcl(1000 * molar).debye_length(water)
        assert debye == pytest.approx(0.304e-9 / math.sqrt(molar), rel=3e-3)
