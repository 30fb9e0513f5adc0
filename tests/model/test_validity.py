"""Physical-validity notes attached to results (rules of common practice, see edl_solver/validity.py)."""

from __future__ import annotations

import edl_solver as edl


def notes_of(**kw) -> tuple[str, ...]:
    base = {"geometry": edl.Slit(height="50 nm"), "wall": edl.Wall(zeta="-25 mV"),
            "electrolyte": edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})}
    return edl.solve(edl.Case(**{**base, **kw})).warnings


def test_an_ordinary_case_has_no_notes() -> None:
    assert notes_of() == ()


def test_each_rule_fires_on_its_own() -> None:
    assert any("below ~2 nm" in n for n in notes_of(geometry=edl.Capillary(radius="0.8 nm")))
    assert any("above ~0.1 M" in n for n in notes_of(electrolyte=edl.Electrolyte.from_ions({"Na+": "0.2 M",
                                                                                             "Cl-": "0.2 M"})))
    multivalent = edl.Electrolyte.from_ions({"Ca2+": "1 mM", "Cl-": "2 mM"})
    assert any("correlations" in n for n in notes_of(electrolyte=multivalent, wall=edl.Wall(zeta="-150 mV")))
    # -20 mV: Xi = 0.49 and -z e phi / kT = 1.6 for Ca2+ (tests/model/test_strong_coupling.py)
    assert not any("correlations" in n for n in notes_of(electrolyte=multivalent, wall=edl.Wall(zeta="-20 mV")))
    assert any("close packing" in n for n in notes_of(wall=edl.Wall(zeta="-380 mV")))
    assert any("Debye-Hueckel linearisation" in n for n in notes_of(wall=edl.Wall(zeta="-60 mV"), model="dh"))
    assert not notes_of(wall=edl.Wall(zeta="-10 mV"), model="dh")
