"""``--rectangle W×H`` and the side-wall flags of a rectangle on the command line: the report of a rectangle, and
bad values as one line with exit code 2 (project rule: bad input refused at the edge, no traceback)."""

from __future__ import annotations

from pathlib import Path

import pytest

from edl_solver.cli.case_flags import _rectangle_sides
from tests.helpers import run, write

IONS = ["--ion", "K+=1mM", "--ion", "Cl-=1mM"]
QUICK = ["--accuracy", "1e-4"]


def _one_line_error(argv: list[str], *parts: str) -> str:
    code, out, err = run(["solve", *argv])
    assert code == 2, (code, out, err)
    assert err.startswith("edl: error: ") and err.count("\n") == 1 and "Traceback" not in err, err
    for part in parts:
        assert part in err, f"{part!r} not in {err!r}"
    return err


@pytest.mark.parametrize("text", ["200nm×40nm", "200nmx40nm", "200nmX40nm", "200nm*40nm", "200 nm x 40 nm",
                                  " 200nm × 40nm "])
def test_the_two_sides_of_rectangle_are_parted_by_a_times_sign_an_x_or_a_star(text: str) -> None:
    assert tuple(side.replace(" ", "") for side in _rectangle_sides(text)) == ("200nm", "40nm")


def test_edl_solve_of_a_rectangle_prints_its_report() -> None:
    code, out, err = run(["solve", "--rectangle", "200nm×40nm", *IONS, "--zeta", "-50mV", "--field", "1kV/m", *QUICK])
    assert code == 0, err
    assert out.startswith("Rectangle of width W = 200 nm and height H = 40 nm (W/H = 5)")
    assert "All four walls: zeta = -50 mV" in out


def test_a_case_file_rectangle_takes_its_sides_from_the_flag(tmp_path: Path) -> None:
    case = write(tmp_path, '[geometry]\nkind = "slit"\nheight = "30 nm"\n[electrolyte]\nions = { "K+" = "1 mM", '
                           '"Cl-" = "1 mM" }\n[wall]\nzeta = "-50 mV"\n')
    code, out, err = run(["solve", str(case), "--rectangle", "1um x 20nm", *QUICK])
    assert code == 0, err
    assert out.startswith("Rectangle of width W = 1000 nm and height H = 20 nm (W/H = 50)"), out.splitlines()[0]


@pytest.mark.parametrize(("argv", "parts"), [
    (["--rectangle", "200nm"], ("--rectangle: '200nm' is not WIDTH×HEIGHT", "200nm×40nm")),
    (["--rectangle", "200nmx"], ("--rectangle: '200nmx' is not WIDTH×HEIGHT",)),
    (["--rectangle", "1x2x3nm"], ("--rectangle: '1x2x3nm' is not WIDTH×HEIGHT",)),
    (["--rectangle", "200nmx-40nm"], ("--rectangle height: '-40nm' is not positive",)),
    (["--rectangle", "200kgx40nm"], ("--rectangle width: '200kg' has units of kilogram",)),
    (["--rectangle", "200nmx4m"], ("--rectangle height: '4m'", "above the solver's domain")),
], ids=["one side", "empty side", "three sides", "negative height", "wrong unit", "too large"])
def test_a_bad_rectangle_is_one_line_naming_the_flag_and_exit_2(argv: list[str], parts: tuple[str, ...]) -> None:
    _one_line_error([*argv, *IONS, "--zeta", "-50mV"], *parts)


def test_rectangle_and_slit_together_are_refused() -> None:
    _one_line_error(["--rectangle", "200nmx40nm", "--slit", "20nm", *IONS, "--zeta", "-50mV"],
                    "not allowed with argument")


def test_side_walls_apart_reach_the_solver_as_the_rectangles_second_pair() -> None:
    # --charge-density sets the top and bottom walls, --sides-charge-density the side walls: two pairs, solved
    code, out, err = run(["solve", "--rectangle", "200nmx40nm", *IONS, "--charge-density", "-1mC/m^2",
                          "--sides-charge-density", "-2mC/m^2", *QUICK])
    assert code == 0, err
    assert "Top and bottom walls: charge density = -1 mC/m²" in out and "Side walls: charge density = -2 mC/m²" in out
    assert "top/bottom -1 mC/m², sides -2 mC/m²" in out
    _one_line_error(["--rectangle", "200nmx40nm", *IONS, "--zeta", "-50mV", "--sides-zeta", "-1mV"],
                    "--sides-zeta: -0.001 V differs from wall.top_bottom.zeta -0.05 V")


@pytest.mark.parametrize(("argv", "parts"), [
    (["--slit", "40nm", "--zeta", "-50mV", "--sides-zeta", "-1mV"],
     ("--sides-zeta: a slit has no side walls", "--top-zeta")),
    (["--rectangle", "200nmx40nm", "--zeta", "-50mV", "--top-zeta", "-1mV"],
     ("--top-zeta: a rectangle's top wall is one pair with its bottom wall", "--sides-zeta")),
    (["--capillary", "20nm", "--zeta", "-50mV", "--sides-charge-density", "-1mC/m^2"],
     ("--sides-charge-density: a capillary has one wall",)),
    (["--rectangle", "200nmx40nm", "--sides-zeta", "-1mV"], ("--sides-zeta: the top_bottom walls have no condition",)),
], ids=["sides of a slit", "top of a rectangle", "sides of a capillary", "sides alone"])
def test_wall_flags_of_another_geometry_are_refused_naming_the_right_ones(argv: list[str], parts: tuple[str, ...]
                                                                          ) -> None:
    _one_line_error([*argv, *IONS], *parts)


def test_no_geometry_names_the_rectangle_among_the_flags() -> None:
    _one_line_error([*IONS, "--zeta", "-50mV"], "--rectangle W×H")


def test_silica_with_a_second_wall_flag_makes_the_first_wall_silica() -> None:
    # it said "the bottom walls have no condition" although --silica gives every wall one
    code, out, err = run(["solve", "--slit", "40nm", *IONS, "--pH", "7", "--silica", "--top-zeta", "-20mV", *QUICK])
    assert code == 0, err
    assert "Bottom wall: charge-regulated; silanol sites" in out and "Top wall: zeta = -20 mV" in out
    code, out, err = run(["solve", "--rectangle", "200nmx40nm", *IONS, "--pH", "7", "--silica",
                          "--sides-charge-density", "1mC/m^2", *QUICK])
    assert code == 0, err
    assert "Top and bottom walls: charge-regulated" in out and "Side walls: charge density = 1 mC/m²" in out
