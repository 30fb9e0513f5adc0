"""Sweep axes are checked before any case is solved: a value that makes no valid case is refused at once,
naming its axis and value, from Python as from a sweep file (project rule: bad input is refused at the edge
with one line naming the field and value; no physics reference needed)."""

from __future__ import annotations

import pytest

import edl_solver as edl
from edl_solver.pipeline import solve as real_solve

BASE = edl.Case(geometry=edl.Slit(height="20 nm"), wall=edl.Wall.silica(),
                electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}, pH=7))


@pytest.mark.parametrize(("axes", "shown"), [
    ({"geometry.height": ["10 nm", "-5 nm"]}, "axes['geometry.height']: at -5e-09"),
    ({"electrolyte.pH": [7, 20]}, "axes['electrolyte.pH']: at 20.0"),
    ({"solvent.temperature": ["25 degC", "500 K"]}, "axes['solvent.temperature']: at 500.0"),
    ({"electrolyte.valence": [1, 0]}, "axes['electrolyte.valence']: at 0.0"),
    ({"model": ["pb", "xyz"]}, "axes['model']: at 'xyz'"),
    ({"wall.site[3].pK": [7.0]}, "axes['wall.site[3].pK']: at 7.0"),
], ids=["negative height", "pH 20", "500 K", "valence 0", "unknown model", "missing site"])
def test_a_bad_axis_value_is_refused_before_any_case_is_solved(axes: dict, shown: str,
                                                                monkeypatch: pytest.MonkeyPatch) -> None:
    solved = []
    monkeypatch.setattr("edl_solver.pipeline.solve", lambda case: solved.append(case) or real_solve(case))
    with pytest.raises(edl.InputError) as info:
        edl.sweep(BASE, {**axes, "electrolyte.concentration": ["1 mM", "2 mM"]})
    message = str(info.value)
    assert message.startswith(shown) and "the case is not valid" in message and "\n" not in message
    assert solved == []


def test_a_refused_sweep_leaves_no_file(tmp_path) -> None:
    out = tmp_path / "bad.h5"
    with pytest.raises(edl.InputError):
        edl.sweep(BASE, {"electrolyte.pH": [7, 20]}, path=out)
    assert list(tmp_path.iterdir()) == []


def test_valid_axes_still_sweep() -> None:
    ds = edl.sweep(BASE, {"electrolyte.pH": [5, 7], "geometry.height": ["10 nm", "20 nm"]})
    assert int((ds["status"] == 0).sum()) == 4
