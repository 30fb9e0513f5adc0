"""Bad data and parameters of edl.fit: one-line InputErrors naming the field."""

from __future__ import annotations

import pytest

import edl_solver as edl
from tests.helpers import KCL

CASE = edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=KCL, wall=edl.Wall(zeta="-50 mV"))
C = [0.1, 1.0, 10.0]
G = [4e-9, 5e-9, 2e-8]


@pytest.mark.parametrize(("data", "parameters", "message"), [
    ({"electrolyte.concentration": [0.1, "x", 1.0], "conductance_per_length": G}, ["wall.charge_density"],
     r"data\['electrolyte.concentration'\]\[1\]"),
    ({"electrolyte.concentration": C, "conductance_per_length": [1e-9, None, 2e-9]}, ["wall.charge_density"],
     r"data\['conductance_per_length'\]\[1\]: None is not a number"),
    ({"electrolyte.concentraton": C, "conductance_per_length": G}, ["wall.charge_density"],
     r"'electrolyte.concentraton' is neither.*did you mean 'electrolyte.concentration'"),
    ({"electrolyte.concentration": ["1 mM", "2 furlongs", "3 mM"], "conductance_per_length": G},
     ["wall.charge_density"], r"electrolyte.concentration"),
    ({"electrolyte.concentration": [1.0], "conductance_per_length": [1e-9]}, ["wall.charge_density",
                                                                            "geometry.height"],
     r"data: 1 point\(s\) for 2 parameters"),
    ({"electrolyte.concentration": [0.1, -1.0, 1.0], "conductance_per_length": G}, ["wall.charge_density"],
     r"data\['electrolyte.concentration'\]\[1\]: -1.0 is not positive"),
    ({"electrolyte.concentration": C, "conductance_per_length": G}, ["wall.charge_densty"],
     r"parameters: 'wall.charge_densty' is not a sweepable input.*did you mean 'wall.charge_density'"),
    ({"electrolyte.concentration": C, "conductance_per_length": G}, ["model"], r"parameters: 'model'"),
    ({"electrolyte.concentration": C, "conductance_per_length": G}, ["electrolyte.concentration"],
     r"also an independent variable"),
    ({"electrolyte.concentration": C}, ["wall.charge_density"], r"0 summary quantities"),
    ({"electrolyte.concentration": C, "conductance_per_length": G, "uncertainty": [1e-10, 0.0, 1e-10]},
     ["wall.charge_density"], r"data\['uncertainty'\]\[1\]: 0.0 is not positive"),
    ({"electrolyte.concentration": C[:2], "conductance_per_length": G}, ["wall.charge_density"],
     r"data\['electrolyte.concentration'\]: 2 values, expected one per measured point"),
    ({"wall.zeta": [-0.01, -0.02, -0.03], "conductance_per_length": G}, ["wall.charge_density"],
     r"parameters: \"wall.zeta\" and \"wall.charge_density\" both set the same input"),
])
def test_bad_data_is_one_line_naming_the_field(data: dict, parameters: list, message: str) -> None:
    with pytest.raises(edl.InputError, match=message) as error:
        edl.fit(CASE, data, parameters)
    assert "\n" not in str(error.value)


def test_bad_case_bounds_and_start() -> None:
    data = {"electrolyte.concentration": C, "conductance_per_length": G}
    with pytest.raises(edl.InputError, match="case: dict is not a Case"):
        edl.fit({}, data, ["wall.charge_density"])
    with pytest.raises(edl.InputError, match=r"bounds: 'geometry.height' is not one of the parameters"):
        edl.fit(CASE, data, ["wall.charge_density"], bounds={"geometry.height": (1e-9, 1e-6)})
    with pytest.raises(edl.InputError, match=r"parameters\['geometry.height'\]: start value -1.0 is not positive"):
        edl.fit(CASE, data, {"geometry.height": -1.0})


def test_a_quantity_the_case_does_not_have_and_bad_options() -> None:
    # stern_potential exists only with a Stern layer: the fit refuses it instead of fitting NaN
    data = {"electrolyte.concentration": C, "stern_potential": [-0.05, -0.04, -0.03]}
    with pytest.raises(edl.InputError, match=r"data: 'stern_potential' is not defined for this case"):
        edl.fit(CASE, data, ["wall.charge_density"])
    data = {"electrolyte.concentration": C, "conductance_per_length": G}
    with pytest.raises(edl.InputError, match=r"profile: 'yes' is not allowed"):
        edl.fit(CASE, data, ["wall.charge_density"], profile="yes")
    with pytest.raises(edl.InputError, match=r"max_evaluations: 0 is not allowed"):
        edl.fit(CASE, data, ["wall.charge_density"], max_evaluations=0)


def test_a_point_that_makes_no_valid_case_is_named() -> None:
    data = {"electrolyte.pH": [7.0, 20.0, 8.0], "conductance_per_length": G}
    case = edl.Case(geometry=edl.Slit(height="20 nm"), wall=edl.Wall.silica(),
                    electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}, pH=7))
    with pytest.raises(edl.InputError, match=r"data: point 1 \(electrolyte.pH = 20\) is not a valid case") as error:
        edl.fit(case, data, ["wall.site[0].density"])
    assert "\n" not in str(error.value)
