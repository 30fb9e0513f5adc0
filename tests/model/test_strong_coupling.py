"""The note on ion-ion correlations of multivalent counter-ions goes by the coupling parameter
Xi = 2 pi z^3 l_B^2 |sigma| / e (mean-field Poisson-Boltzmann for Xi < ~1, strong coupling for Xi >> 1:
Moreira & Netz 2001, Phys. Rev. Lett. 87, 078301; Netz 2001, Eur. Phys. J. E 5, 557; from memory) as well as
by the counter-ions' attraction -z e phi / kT to the wall (common practice)."""

from __future__ import annotations

import math

import pytest

import edl_solver as edl

#: Bjerrum length of water at 25 degC, e^2 / (4 pi eps_0 eps_r kT) with eps_r = 78.4: 0.714 nm (textbook
#: value, e.g. Israelachvili, Intermolecular and Surface Forces; from memory).
BJERRUM_WATER = 0.714e-9


def _correlation_notes(ions: dict[str, str], wall: edl.Wall, geometry: object = None) -> list[str]:
    case = edl.Case(geometry=geometry or edl.Slit(height="50 nm"), wall=wall,
                    electrolyte=edl.Electrolyte.from_ions(ions))
    return [note for note in edl.solve(case).warnings if "correlations" in note]


def test_trivalent_counter_ions_at_a_strongly_charged_wall_are_noted() -> None:
    # issue 11: a 10 nm capillary of 1 mM LaCl3 at -100 mC/m^2 sits at Xi ~ 50, deep in the strong-coupling
    # (charge inversion) regime, yet its wall potential stays below 4 kT/e
    notes = _correlation_notes({"La3+": "1 mM", "Cl-": "3 mM"}, edl.Wall(charge_density="-100 mC/m^2"),
                               edl.Capillary(radius="5 nm"))
    expected = 2 * math.pi * 27 * BJERRUM_WATER**2 * 0.1 / 1.602176634e-19
    assert len(notes) == 1 and "La3+" in notes[0]
    xi = float(notes[0].split("reaches ")[1].split()[0])
    assert xi == pytest.approx(expected, rel=0.02)
    assert xi > 10


def test_monovalent_counter_ions_at_the_same_charge_are_not() -> None:
    # Xi = 2 for z = 1 at -100 mC/m^2: monovalent ions in water are held to be mean-field at the charge
    # densities met in practice (common practice); the note speaks of multivalent counter-ions only
    assert _correlation_notes({"K+": "1 mM", "Cl-": "1 mM"}, edl.Wall(charge_density="-100 mC/m^2"),
                              edl.Capillary(radius="5 nm")) == []


def test_the_note_follows_the_counter_ions_and_the_mean_field_range() -> None:
    calcium = {"Ca2+": "1 mM", "Cl-": "2 mM"}
    # -12.6 mC/m^2 gives Xi = 2.0 for Ca2+: beyond mean field; -3.0 mC/m^2 gives 0.49: within it
    assert _correlation_notes(calcium, edl.Wall(zeta="-50 mV"))
    assert not _correlation_notes(calcium, edl.Wall(zeta="-20 mV"))
    # a positive wall: the counter-ions are Cl- and Ca2+ a co-ion, whatever the potential
    assert not _correlation_notes(calcium, edl.Wall(zeta="+150 mV"))
    # sulfate is the counter-ion of a positive wall
    assert _correlation_notes({"K+": "1 mM", "SO4 2-": "0.5 mM"}, edl.Wall(zeta="+80 mV"))


def test_a_weakly_charged_wall_at_a_high_potential_is_noted_by_the_potential() -> None:
    # 0.01 mM CaCl2 at -60 mV: Xi ~ 0.3, but -z e phi / kT = 4.7 for Ca2+ at the wall
    notes = _correlation_notes({"Ca2+": "0.01 mM", "Cl-": "0.02 mM"}, edl.Wall(zeta="-60 mV"))
    assert len(notes) == 1 and "-z e phi / kT" in notes[0]
