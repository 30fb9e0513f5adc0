"""The case's bulk conductivity law (issue 11): the Onsager-corrected conductivity reaches the thin-layer values
and the bulk values, the double layer keeps its point-ion mobilities, and the choice travels through case files,
the CLI and sweeps."""

from __future__ import annotations

import pytest

import edl_solver as edl
from edl_solver.inputs.casefile import case_from_mapping, dumps_case, loads_case
from edl_solver.model.bulk import bulk_conductivity
from tests.helpers import run

KCL_10 = edl.Electrolyte.from_ions({"K+": "10 mM", "Cl-": "10 mM"})
HEIGHT = 10e-6


def _case(law: str = "limiting") -> edl.Case:
    return edl.Case(geometry=edl.Slit(height=HEIGHT), electrolyte=KCL_10, wall=edl.Wall(zeta="-50 mV"), field=1e3,
                    bulk_conductivity=law)


def test_onsager_law_puts_the_thin_layer_conductivity_on_the_kcl_standard():
    # 0.01 mol/L KCl at 25 degC: 1413 uS/cm (calibration standard, common practice; REFERENCES.md); the slit's
    # thin-layer conductance per length and width is K H (bulk electrolyte everywhere)
    summary = edl.solve(_case("onsager")).summary
    assert summary["thin_layer_conductance_per_length"] / HEIGHT == pytest.approx(0.1413, rel=0.01)


def test_the_default_law_is_infinite_dilution_and_the_double_layer_keeps_its_mobilities():
    limiting, onsager = edl.solve(_case()).summary, edl.solve(_case("onsager")).summary
    # Nernst-Einstein with the table's 25 degC diffusivities: about 6 % above the standard at 10 mM
    assert limiting["thin_layer_conductance_per_length"] / HEIGHT == pytest.approx(0.1499, rel=0.002)
    assert onsager["conductance_per_length"] == limiting["conductance_per_length"]
    assert bulk_conductivity(_case("onsager")) == pytest.approx(
        onsager["thin_layer_conductance_per_length"] / HEIGHT, rel=1e-12)


def test_an_unknown_law_is_refused_naming_the_field():
    with pytest.raises(edl.InputError, match=r"^bulk_conductivity: 'debye' is not a conductivity law"):
        _case("debye")


def test_the_law_survives_a_case_file_round_trip_and_the_default_is_not_written():
    assert loads_case(dumps_case(_case("onsager"))).bulk_conductivity == "onsager"
    assert "bulk_conductivity" not in dumps_case(_case())


def test_the_cli_flag_sets_the_law(tmp_path):
    args = ["solve", "--slit", "10um", "--ion", "K+=10mM", "--ion", "Cl-=10mM", "--zeta", "-50mV"]
    plain, _, _ = run([*args, "-o", str(tmp_path / "a.h5")])
    code, _out, err = run([*args, "--bulk-conductivity", "onsager", "-o", str(tmp_path / "b.h5")])
    assert plain == 0 and code == 0, err
    bad, _, err = run([*args, "--bulk-conductivity", "debye"])
    assert bad == 2 and "Traceback" not in err
    assert edl.load(tmp_path / "b.h5").case.bulk_conductivity == "onsager"


def test_a_sweep_over_concentration_follows_the_law():
    data = edl.sweep(_case("onsager"), {"electrolyte.concentration": ["1 mM", "10 mM"]}, progress=False)
    singles = [edl.solve(case_from_mapping({**_mapping(), "electrolyte": {"ions": {"K+": c, "Cl-": c}}}))
               .summary["thin_layer_conductance_per_length"] for c in ("1 mM", "10 mM")]
    assert list(data["thin_layer_conductance_per_length"].values) == pytest.approx(singles, rel=1e-12)


def _mapping() -> dict:
    return {"geometry": {"kind": "slit", "height": HEIGHT}, "wall": {"zeta": "-50 mV"}, "field": 1e3,
            "bulk_conductivity": "onsager"}
