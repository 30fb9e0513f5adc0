"""The identifiability warning of edl.fit."""

from __future__ import annotations

import warnings

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.fitting.uncertainty import IdentifiabilityWarning, identifiability


def test_site_density_and_pk_far_below_the_pk_are_not_separable() -> None:
    # issue 12: a silica-like wall (Wall.silica: pK 7.5, 8 sites/nm^2) at pH 4, far below its pK, carries the
    # charge -e Gamma K / [H+]_s (mass action, common practice): conductance data fix only Gamma K, so fitting
    # density and pK together must warn, naming both
    case = edl.Case(geometry=edl.Slit(height="50 nm"), wall=edl.Wall.silica(),
                    electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}, pH=4))
    c = np.logspace(-1, 1, 6)
    g = np.asarray(edl.sweep(case, {"electrolyte.concentration": c}, progress=False)["conductance_per_length"].values)
    noisy = g * (1 + 1e-3 * np.random.default_rng(0).standard_normal(c.size))
    with pytest.warns(IdentifiabilityWarning, match=r"wall.site\[0\].density and wall.site\[0\].pK are not "
                                                    "identifiable"):
        fit = edl.fit(case, {"electrolyte.concentration": c, "conductance_per_length": noisy},
                      ["wall.site[0].density", "wall.site[0].pK"])
    assert len(fit.warnings) == 1 and "wall.site[0].pK" in fit.warnings[0]
    assert abs(fit.correlation[0, 1]) > 0.999


def test_a_parameter_the_model_ignores_is_named() -> None:
    # a zero column of the Jacobian: the data do not depend on that parameter at all
    jac = np.array([[1.0, 0.0], [2.0, 0.0], [0.5, 0.0]])
    assert identifiability(jac, ["a", "b"]) == ["b is not identifiable from the data: the model does not change "
                                                "with it"]


def test_separable_parameters_give_no_warning() -> None:
    # two independent directions (orthogonal columns) are identifiable
    jac = np.array([[1.0, 0.0], [0.0, 1.0], [1.0, 1.0]])
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert identifiability(jac, ["a", "b"]) == []
