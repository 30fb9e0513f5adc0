"""A solve's Result builds its presentation (profiles, summary dict, verdict, message, validity notes) on
first access, and behaves as a plain frozen dataclass otherwise; the profiles follow the geometry.

Outside references: the Helmholtz-Smoluchowski slip velocity u_s = -eps zeta E / eta (Smoluchowski 1903)
for the thin-layer profile; the rest are rules of this project's design (common practice: a deferred value
must equal the eagerly built one and never hide an error of the solve).
"""

from __future__ import annotations

import copy
import dataclasses
import pickle

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.model import profiles as model_profiles
from edl_solver.results.result import Deferred, Result

KCL = {"K+": "1 mM", "Cl-": "1 mM"}


def slit(**kw) -> edl.Case:
    base = {"geometry": edl.Slit(height="40 nm"), "wall": edl.Wall(zeta="-50 mV"), "field": "10 kV/m",
            "electrolyte": edl.Electrolyte.from_ions(KCL), "pressure_gradient": "-1 MPa/m"}
    return edl.Case(**{**base, **kw})


def arrays_equal(a: edl.Profiles, b: edl.Profiles) -> bool:
    return all(np.array_equal(getattr(a, f.name), getattr(b, f.name)) for f in dataclasses.fields(a)
               if isinstance(getattr(a, f.name), np.ndarray))


def test_solve_builds_no_profiles_until_they_are_read(monkeypatch: pytest.MonkeyPatch) -> None:
    def refuse(*args: object) -> None:
        raise AssertionError("profiles built")

    monkeypatch.setattr(model_profiles, "section_profiles", refuse)
    result = edl.solve(slit())
    assert result.summary["zeta"] == pytest.approx(-0.050, rel=1e-12)  # the summary needs no profiles
    with pytest.raises(AssertionError, match="profiles built"):
        _ = result.profiles


def test_deferred_fields_are_built_once_and_kept() -> None:
    result = edl.solve(slit())
    assert result.profiles is result.profiles
    assert result.summary is result.summary
    assert result.warnings is result.warnings and isinstance(result.warnings, tuple)
    assert isinstance(result.summary, dict) and isinstance(result.verdict, str)
    assert result.message.startswith("converged:")


def test_copies_replace_and_pickle_carry_built_values() -> None:
    result = edl.solve(slit())
    for other in (dataclasses.replace(result, status="converged"), copy.copy(result), copy.deepcopy(result),
                  pickle.loads(pickle.dumps(result))):
        assert other.summary == result.summary
        assert other.verdict == result.verdict and other.warnings == result.warnings
        assert arrays_equal(other.profiles, result.profiles)
        assert np.array_equal(other.response_matrix, result.response_matrix)
    assert "summary={" in repr(result) and "Deferred" not in repr(result)


def test_the_keyword_constructor_takes_plain_values_and_deferred_ones() -> None:
    solved = edl.solve(slit())
    plain = Result(case=solved.case, profiles=solved.profiles, summary=dict(solved.summary), verdict="v",
                   status="converged", message="m", iterations=3, residual=0.0, warnings=("w",),
                   response_matrix=solved.response_matrix, ion_response_matrix=solved.ion_response_matrix)
    assert (plain.verdict, plain.message, plain.warnings, plain.iterations) == ("v", "m", ("w",), 3)
    deferred = Result(case=solved.case, profiles=solved.profiles, summary={"a": 1.0},
                      verdict=Deferred(lambda r: f"a = {r.summary['a']}"))
    assert deferred.verdict == "a = 1.0" and deferred.warnings == () and deferred.message == ""
    with pytest.raises(dataclasses.FrozenInstanceError):
        deferred.summary = {}  # type: ignore[misc]


def test_the_converged_shortcut_fills_every_field_as_the_constructor_does() -> None:
    solved = edl.solve(slit())
    given = {f.name: getattr(solved, f.name) for f in dataclasses.fields(Result) if f.name != "status"}
    shortcut, constructed = Result.converged(**given), Result(status="converged", **given)
    assert vars(shortcut).keys() == vars(constructed).keys()
    assert all(getattr(shortcut, f.name) is getattr(constructed, f.name) for f in dataclasses.fields(Result))


def test_a_failing_case_still_raises_inside_solve() -> None:
    hard = slit(wall=edl.Wall(zeta="-300 mV"), numerics=edl.Numerics(accuracy=1e-13, max_intervals=8))
    with pytest.raises(edl.ConvergenceError, match="accuracy"):
        edl.solve(hard)


def test_thin_layer_profile_joins_the_two_smoluchowski_slip_velocities() -> None:
    # u_s = -eps zeta E / eta at each wall (Smoluchowski 1903), linear in between for two different walls
    case = slit(wall=(edl.Wall(zeta="-50 mV"), edl.Wall(zeta="-20 mV")))
    p = edl.solve(case).profiles
    eps, eta, field = case.solvent.permittivity, case.solvent.viscosity, case.field
    assert p.coordinate_name == "y" and p.coordinate[0] == 0.0 and p.coordinate[-1] == case.geometry.height
    assert p.velocity_thin_layer[0] == pytest.approx(-eps * -0.050 * field / eta, rel=1e-12)
    assert p.velocity_thin_layer[-1] == pytest.approx(-eps * -0.020 * field / eta, rel=1e-12)
    middle = np.interp(0.5 * case.geometry.height, p.coordinate, p.velocity_thin_layer)
    assert middle == pytest.approx(-eps * -0.035 * field / eta, rel=1e-12)


def test_capillary_profiles_run_from_the_axis_with_plug_slip() -> None:
    case = slit(geometry=edl.Capillary(radius="20 nm"))
    p = edl.solve(case).profiles
    eps, eta = case.solvent.permittivity, case.solvent.viscosity
    assert p.coordinate_name == "r" and p.coordinate[0] == 0.0
    assert p.coordinate[-1] == pytest.approx(case.geometry.radius, rel=1e-15)
    assert np.all(p.velocity_thin_layer == p.velocity_thin_layer[0])
    assert p.velocity_thin_layer[0] == pytest.approx(-eps * -0.050 * case.field / eta, rel=1e-12)


def test_a_symmetric_slit_is_mirrored_about_the_mid_plane() -> None:
    case = slit()
    p = edl.solve(case).profiles
    assert p.coordinate.size % 2 == 1
    assert np.allclose(p.coordinate + p.coordinate[::-1], case.geometry.height, rtol=0, atol=1e-15 * 40e-9)
    assert np.array_equal(p.potential, p.potential[::-1]) and np.array_equal(p.velocity, p.velocity[::-1])


@pytest.mark.parametrize("case", [
    slit(),
    slit(wall=(edl.Wall(zeta="-80 mV"), edl.Wall(charge_density="-2 mC/m^2"))),
    slit(geometry=edl.Capillary(radius="5 nm"), electrolyte=edl.Electrolyte.from_ions({"Ca2+": "1 mM",
                                                                                       "Cl-": "2 mM"})),
], ids=["symmetric slit", "asymmetric slit", "capillary 2:1"])
def test_the_compiled_path_and_the_python_path_agree_bit_for_bit(case: edl.Case,
                                                                 monkeypatch: pytest.MonkeyPatch) -> None:
    # the Python path (scaling.prepare, equilibrium.solve_section with continuation) runs when the compiled
    # one does not converge; both run the same compiled steps, so every number must be the same
    from edl_solver.kernels import single

    compiled = edl.solve(case)
    real = single.solve_packed

    def refused(p: np.ndarray, out: np.ndarray) -> tuple:
        solved = list(real(p, out))
        solved[0] = 1  # as if the compiled path had not converged
        return tuple(solved)

    monkeypatch.setattr(single, "solve_packed", refused)
    python = edl.solve(case)
    assert repr(python.summary) == repr(compiled.summary)
    assert np.array_equal(python.response_matrix, compiled.response_matrix)
    assert np.array_equal(python.ion_response_matrix, compiled.ion_response_matrix)
    assert arrays_equal(python.profiles, compiled.profiles)
    assert (python.iterations, python.residual, python.message) == (compiled.iterations, compiled.residual,
                                                                    compiled.message)
