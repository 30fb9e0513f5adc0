"""The Nernst potential of an ideally selective channel (model.bulk), against the handbook value, and the
transport command's report that quotes it beside the membrane potential."""

from __future__ import annotations

import contextlib
import io
import math

import pytest

import edl_solver as edl
from edl_solver.cli import main
from edl_solver.model.bulk import counter_ion, nernst_potential

KCL = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})


def case(charge_density: str = "-5 mC/m^2", electrolyte: edl.Electrolyte = KCL) -> edl.Case:
    return edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=electrolyte,
                    wall=edl.Wall(charge_density=charge_density))


def test_nernst_potential_is_59_16_mV_per_decade_at_25_degC() -> None:
    # (RT/F) ln 10 = 59.16 mV at 298.15 K (handbook value, from memory); V(right) - V(left) for a cation is
    # negative when the right reservoir is the more concentrated one.
    assert nernst_potential(case(), 1, 1.0, 10.0) == pytest.approx(-0.05916, abs=5e-6)
    assert nernst_potential(case(), -1, 1.0, 10.0) == pytest.approx(0.05916, abs=5e-6)
    assert nernst_potential(case(), 2, 1.0, 10.0) == pytest.approx(-0.05916 / 2, abs=5e-6)
    assert nernst_potential(case(), 1, 3.0, 3.0) == 0.0
    assert nernst_potential(case(), 1, 10.0, 1.0) == pytest.approx(-nernst_potential(case(), 1, 1.0, 10.0),
                                                                 rel=1e-15)


def test_the_counter_ion_is_of_the_opposite_sign_to_the_wall() -> None:
    assert counter_ion(case(), -0.005).name == "K+"
    assert counter_ion(case(), 0.005).name == "Cl-"
    assert counter_ion(case(), 0.0) is None  # an uncharged channel selects nothing
    three = edl.Electrolyte.from_ions({"K+": "1 mM", "Na+": "1 mM", "Cl-": "2 mM"})
    assert counter_ion(case(electrolyte=three), -0.005) is None  # no single counter-ion


def test_transport_report_quotes_the_nernst_limit() -> None:
    out, err = io.StringIO(), io.StringIO()
    argv = ["transport", "--slit", "20nm", "--ion", "K+=1mM", "--ion", "Cl-=1mM", "--charge-density", "-5mC/m^2",
            "--length", "2um", "--left", "1mM", "--right", "10mM"]
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(argv)
    assert (code, err.getvalue()) == (0, ""), err.getvalue()
    text = out.getvalue()
    assert "ideally cation-selective (Nernst) -59.2 mV" in text, text  # three significant figures
    membrane = float(text.split("at I = 0")[1].split("mV")[0])
    assert -59.16 < membrane < 0.0 and math.isfinite(membrane)  # between the uncharged and the ideal limits
