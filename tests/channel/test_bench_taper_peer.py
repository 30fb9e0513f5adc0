"""The peer of the taper benchmark (benchmarks/bench_taper.py): the along-x solve with each evaluation of the local
relations replaced by a direct cross-section solve, checked against the tabulated path it is compared with.

The benchmark's speed ratio means something only if the peer solves the same problem: its case at each (c, size,
wall) must be the one the table solved there, and one I-V point on direct solves must agree with the table's within
the table's interpolation error (common practice: an interpolated table is checked against direct evaluations)."""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

import numpy as np
import pytest

import edl_solver as edl
from edl_solver import channel as ch
from edl_solver.channel.taper_path import TaperPath

PATH = Path(__file__).resolve().parents[2] / "benchmarks" / "bench_taper.py"


@pytest.fixture(scope="module")
def bench():
    spec = importlib.util.spec_from_file_location("bench_taper", PATH)
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module
    try:
        spec.loader.exec_module(module)
        yield module
    finally:
        sys.modules.pop(spec.name, None)


def _channel(bench, kind: str) -> ch.Channel:
    """A small channel of each kind the benchmark runs: a cone, a bipolar capillary, a linear wall profile."""
    case = edl.Case(geometry=edl.Capillary(radius="5 nm"), electrolyte=bench.kcl(10.0),
                    wall=edl.Wall(charge_density="-20 mC/m^2"), solvent=bench.SOLVENT)
    if kind == "cone":
        return ch.Channel(case, "1 um", 10.0, 10.0, size=("5 nm", "20 nm"), points=10, size_points=4)
    if kind == "bipolar":
        walls = [("0.5 um", edl.Wall(charge_density="-20 mC/m^2")), ("1 um", edl.Wall(charge_density="18 mC/m^2"))]
        return ch.Channel(case, "1 um", 10.0, 10.0, wall_segments=walls, points=10)
    profile = {"position": [0.0, 1e-6], "value": ["-20 mC/m^2", "18 mC/m^2"]}
    return ch.Channel(case, "1 um", 10.0, 10.0, wall_profile=profile, points=10, wall_points=3)


@pytest.mark.parametrize("kind", ["cone", "bipolar", "profile"])
def test_direct_case_is_the_tables_case(bench, kind):
    """At x = L (the base of the cone; the +18 mC/m^2 wall, last segment or last wall node) and a concentration node
    of the table, the peer's direct solve gives the matrix the table solved there (to rounding)."""
    table = ch.tabulate(_channel(bench, kind))
    direct = bench.DirectRelations(table._path)
    got = direct(np.array([np.log(table.concentrations[3])]), np.array([1.0]))[0]
    stored = table.matrices[-1, -1, 3] if kind != "cone" else table.matrices[-1, 3]
    assert direct.solves == 1 and direct.failures == 0
    assert np.allclose(got, stored, rtol=1e-12, atol=0.0)


def test_direct_peer_point_agrees_with_the_table(bench):
    """One I-V point of a small cone at 0.3 V from the linear start: the peer converges with every direct solve,
    its current is the table's within ten times the table's interpolation error, and the counting is undone."""
    table = ch.tabulate(_channel(bench, "cone"))
    original = TaperPath._matrices
    figures = bench.peer_point(table, 0.3, 1e-4)
    assert TaperPath._matrices is original
    assert figures["table_point_status"] == figures["peer_point_status"] == "converged"
    assert figures["peer_point_failed_solves"] == 0 and figures["table_point_evaluated"] > 0
    assert figures["current_difference"] < 10.0 * table.interpolation_error
