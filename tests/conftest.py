"""Fixtures shared by the test folders: solved results that several modules draw or print.

Helpers that tests call directly (the ``edl`` runner, file writers, common cases) are in tests/helpers.py.
The tests folder is a package (an ``__init__.py`` in each folder), so modules of the same name in different
folders do not collide and shared modules are imported by their full name (``tests.reference_solutions``).
"""

from __future__ import annotations

import os

import pytest
from hypothesis import settings

import edl_solver as edl
from edl_solver.inputs.wall import Site
from tests.helpers import KCL

# Property-based tests draw the same examples on every run (CI must not pass or fail by chance); for fresh
# examples and more of them, run by hand: HYPOTHESIS_PROFILE=explore python -m pytest tests/inputs
settings.register_profile("suite", derandomize=True)
settings.register_profile("explore", derandomize=False, max_examples=2000)
settings.load_profile(os.environ.get("HYPOTHESIS_PROFILE", "suite"))



@pytest.fixture(scope="session")
def slit() -> edl.Result:
    """A 50 nm slit of 1 mM KCl, zeta -50 mV, driven by a field and a pressure gradient."""
    return edl.solve(edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-50 mV"),
                              field="10 kV/m", pressure_gradient=-1e5))


@pytest.fixture(scope="session")
def regulated() -> edl.Result:
    # A silica wall with slip below; above, an amphoteric wall with fixed charge and a gate, no Stern layer.
    top = edl.Wall(charge_density="-1 mC/m^2", gate_voltage="1 V", gate_capacitance="10 mF/m^2",
                   sites=(Site(density="2 nm^-2", pK=(4.0, 9.0), charges=(1, 0, -1), name="amphoteric"),))
    return edl.solve(edl.Case(geometry=edl.Slit(height="40 nm"), field="1 kV/m",
                              electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}, pH=5,
                                                                    water_ions=True),
                              wall=(edl.Wall.silica(slip_length="1 nm"), top)))


@pytest.fixture(scope="session")
def steric() -> edl.Result:
    """A steric-model capillary with slip, 10 mM KCl of 0.7 nm ions at pH 7, zeta -100 mV."""
    ions = (edl.Ion("K+", concentration="10 mM", diameter="0.7 nm"),
            edl.Ion("Cl-", concentration="10 mM", diameter="0.7 nm"))
    return edl.solve(edl.Case(geometry=edl.Capillary(radius="20 nm"), electrolyte=edl.Electrolyte(ions, pH=7),
                              wall=edl.Wall(zeta="-100 mV", slip_length="5 nm"), field="10 kV/m", model="steric"))
