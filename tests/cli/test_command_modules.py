"""The ``edl`` command put together from one module per command: the commands in the order of the help,
every flag that takes a value declared as such (so "--flag -40mV" reaches it), and the case flags written
into the case-file mapping at the dotted paths that sweeps use.

Rules of this project's design, not physics: they need no outside reference.
"""

from __future__ import annotations

import argparse
from pathlib import Path

import pytest

from edl_solver.cli import app
from edl_solver.cli.case_flags import case_from_args
from edl_solver.errors import InputError
from edl_solver.inputs.paths import set_input

PAIR_TOML = """\
[geometry]
kind = "slit"
height = "40 nm"

[electrolyte]
ions = { "K+" = "2 mM", "Cl-" = "2 mM" }

[wall.bottom]
zeta = "-30 mV"

[wall.top]
charge_density = "-1 mC/m^2"
"""


def subparsers(parser: argparse.ArgumentParser) -> dict[str, argparse.ArgumentParser]:
    action = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    return dict(action.choices)


def test_the_commands_come_in_the_order_of_the_help() -> None:
    assert list(subparsers(app._parser())) == [name for name, _ in app._COMMANDS] == [
        "solve", "transport", "demo", "sweep", "map", "fit", "transient"]


def test_every_flag_that_takes_a_value_is_declared() -> None:
    parser = app._parser()
    undeclared = []
    for name, sub in subparsers(parser).items():
        for action in sub._actions:
            takes_value = action.option_strings and action.nargs != 0 and not isinstance(
                action, (argparse._HelpAction, argparse._StoreTrueAction))
            if takes_value and name != "map":  # map's axes are paths, which never start with "-"
                undeclared += [f"{name} {flag}" for flag in action.option_strings if flag not in parser.value_flags]
    assert not undeclared, undeclared


@pytest.mark.parametrize("flag", ["--zeta", "--top-charge-density", "--pressure-gradient", "--iv", "-o"])
def test_a_value_starting_with_a_minus_is_attached_to_its_flag(flag: str) -> None:
    parser = app._parser()
    assert app._attach_values([flag, "-4mV", "--quiet"], parser.value_flags) == [f"{flag}=-4mV", "--quiet"]
    assert app._attach_values([flag, "--quiet"], parser.value_flags) == [flag, "--quiet"]  # a flag stays one


def case_of(argv: list[str]) -> object:
    args = app._parser().parse_args(app._attach_values(["solve", *argv], app._parser().value_flags))
    return case_from_args(args)


def test_slip_length_flag_sets_every_wall_as_the_sweep_path_does(tmp_path: Path) -> None:
    path = tmp_path / "pair.toml"
    path.write_text(PAIR_TOML, encoding="utf-8")
    case = case_of([str(path), "--slip-length", "2nm", "--temperature", "30degC", "--accuracy", "1e-5"])
    assert [wall.slip_length for wall in case.walls] == pytest.approx([2e-9, 2e-9], rel=1e-15)
    assert case.walls[0].zeta == pytest.approx(-0.03, rel=1e-15)  # the rest of each wall is kept
    assert case.walls[1].charge_density == pytest.approx(-1e-3, rel=1e-15)
    assert case.solvent.temperature == pytest.approx(303.15, rel=1e-15)
    assert case.numerics.accuracy == 1e-5


def test_geometry_flag_replaces_the_geometry_section(tmp_path: Path) -> None:
    path = tmp_path / "pair.toml"
    path.write_text(PAIR_TOML.split("[wall.bottom]")[0] + '[wall]\nzeta = "-30 mV"\n', encoding="utf-8")
    with pytest.raises(InputError, match=r"^--charge-density: "):  # the flag is blamed, not the file
        case_of([str(path), "--capillary", "10nm", "--charge-density", "5nm"])
    with pytest.raises(InputError, match=r"^--top-zeta: a capillary has one wall"):
        case_of([str(path), "--capillary", "10nm", "--top-zeta", "-5mV"])
    assert case_of([str(path), "--capillary", "10nm"]).geometry.kind == "capillary"


def test_set_input_sets_a_value_at_its_path_creating_tables() -> None:
    table: dict = {"solvent": "not a table", "wall": {"zeta": -0.05, "slip_length": 1e-9}}
    set_input(table, "numerics.accuracy", 1e-5)
    set_input(table, "solvent.temperature", 300.0)
    set_input(table, "field", 10.0)
    set_input(table, "wall.charge_density", -0.002)  # a charge replaces a fixed zeta
    assert table == {"solvent": {"temperature": 300.0}, "numerics": {"accuracy": 1e-5}, "field": 10.0,
                     "wall": {"slip_length": 1e-9, "charge_density": -0.002}}
    set_input(table, "wall.top.zeta", -0.01)  # one wall of a slit: the common condition becomes a pair
    assert table["wall"] == {"bottom": {"slip_length": 1e-9, "charge_density": -0.002},
                             "top": {"slip_length": 1e-9, "zeta": -0.01}}
    set_input(table, "wall.slip_length", 3e-9)  # every wall of the pair
    assert table["wall"]["bottom"]["slip_length"] == table["wall"]["top"]["slip_length"] == 3e-9
