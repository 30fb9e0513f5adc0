"""The forward model of a fit: packed vectors assembled per parameter equal cases built in full, and its values
equal a sweep's."""

from __future__ import annotations

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.fitting.forward import Forward
from edl_solver.fitting.problem import parse_data
from edl_solver.model import packing

SILICA = edl.Case(geometry=edl.Slit(height="50 nm"), wall=edl.Wall.silica(),
                  electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}, pH=7))
ZETA = edl.Case(geometry=edl.Slit(height="30 nm"), wall=edl.Wall(zeta="-40 mV"),
                electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}), pressure_gradient="-1 bar/mm")


@pytest.mark.parametrize(("case", "inputs", "paths", "theta"), [
    (SILICA, {"electrolyte.concentration": [0.1, 1.0, 10.0], "electrolyte.pH": [4.0, 6.0, 9.0]},
     ["wall.site[0].density", "wall.site[0].pK", "geometry.height"], [6e18, 7.0, 45e-9]),
    (ZETA, {"electrolyte.concentration": [0.1, 1.0, 10.0]}, ["wall.bottom.charge_density", "wall.slip_length"],
     [-0.02, 2e-9]),
    (ZETA, {"geometry.height": [20e-9, 40e-9, 80e-9]}, ["wall.stern_capacitance", "wall.charge_density"],
     [0.5, -0.01]),
])
def test_assembled_vectors_are_the_cases_built_in_full(case: edl.Case, inputs: dict, paths: list,
                                                       theta: list) -> None:
    # the assembly (a parameter sets only its own columns, as sweeping.plan assembles a sweep) must give the
    # packed vector of the case built from the template, the point's inputs and the parameters, bit for bit
    data = parse_data({**inputs, "conductance_per_length": [1e-9, 2e-9, 3e-9]})
    start = np.array(theta) * 1.1
    forward = Forward(case, data, paths, start)
    assert forward.assembled
    assembled = forward._vectors(np.array([theta]))
    for p, (d, i) in enumerate(forward.points):
        assert np.array_equal(assembled[p], packing.case_vector(forward.case(d, i, theta)), equal_nan=True)


def test_values_equal_a_sweep() -> None:
    # the fit's model values are the sweep's (the same compiled steps)
    c = [0.1, 1.0, 10.0]
    data = parse_data({"electrolyte.concentration": c, "streaming_conductance": [1.0, 1.0, 1.0]})
    forward = Forward(ZETA, data, ["wall.charge_density"], np.array([-0.015]))
    truth = edl.Case(geometry=ZETA.geometry, wall=edl.Wall(charge_density=-0.015), electrolyte=ZETA.electrolyte,
                     pressure_gradient=ZETA.pressure_gradient)
    swept = edl.sweep(truth, {"electrolyte.concentration": c}, progress=False)["streaming_conductance"].values
    assert forward.evaluate([-0.015])[0] == pytest.approx(swept, rel=1e-12)
