"""The report of a transient run: what was stepped, the time scales, the table at chosen times in display units,
the conservation and accuracy lines, and what a flow start-up (a subset of the variables) leaves out.

Formatting of this project's design, not physics: the values are those of made-up runs, read back.
"""

from __future__ import annotations

import numpy as np
import pytest

from edl_solver.errors import InputError
from edl_solver.report.transient_text import TABLE_WIDTH, pick_times, transient_report
from tests.io.transient_runs import full_run, startup_run


def test_full_run_reports_step_drives_scales_table_and_checks() -> None:
    text = transient_report(full_run())
    lines = text.splitlines()
    assert lines[0] == "Transient Poisson-Nernst-Planck run"
    assert "  wall.top.zeta: 0 mV → -50 mV" in lines  # only the top wall was stepped
    assert not any(line.startswith("  wall.bottom") for line in lines)
    assert "  field: sine, amplitude 10 kV/m, frequency 1 MHz" in lines
    assert "Time scales: Debye λ_D²/D 46 ns, RC 920 ns, diffusion 200 ns, viscous ρL²/η 450 ps" in lines
    assert "Output: 12 times from 1 ns to 100 µs" in lines
    assert "largest relative change over the run: Na+ 1e-09, Cl- 1e-09" in text
    assert "Final state against the equilibrium of the closed section: relative difference 2e-07" in lines
    assert "Error estimate: 3e-07 (relative, largest over the run)" in lines
    assert lines[-1] == "Note: made up for the tests"
    assert text.endswith("\n")


def test_table_shows_each_wall_in_display_units_within_the_width() -> None:
    lines = transient_report(full_run()).splitlines()
    table = lines[lines.index("Values at chosen times:") + 1:]
    headers = [line.split() for line in table if line.split()[0] == "t"]
    assert len(headers) >= 2  # cut into blocks of columns
    assert all(len(line) <= TABLE_WIDTH + 2 for line in table if not line.startswith(("Inventory", "Final", "Error",
                                                                                        "Note")))
    first_block = table[:7]
    assert "σ bottom (mC/m²)" in first_block[0] and "ψ wall top (mV)" in first_block[0]
    last_time = first_block[6].split()
    assert last_time[:2] == ["100", "µs"]
    assert last_time[2:6] == ["-0.25", "-0.5", "-25", "-50"]  # σ 0.01 F/m² x ψ; the top wall charged at the end
    assert any("space charge (µC/m²)" in line for line in table)


def test_flow_start_up_reads_in_the_short_form_without_missing_variables() -> None:
    text = transient_report(startup_run())
    lines = text.splitlines()
    assert lines[0] == "Flow start-up after a step of the drives"
    assert "  field: 0 V/m → 10 kV/m" in lines
    assert not any(word in text for word in ("Inventory", "space charge", "drives:", "closed section"))
    assert lines[lines.index("Values at chosen times:") + 1].split()[:3] == ["t", "σ", "bottom"]


def test_a_run_without_attributes_still_reports() -> None:
    run = full_run()[["flow_rate"]]
    run.attrs = {}
    lines = transient_report(run).splitlines()  # no kind and no concentrations: read as a flow start-up
    assert lines[:2] == ["Flow start-up after a step of the drives", "Case after the step: not stated"]
    assert lines[4].split() == ["t", "Q", "(nL/s)"]  # no case: per channel, prefixed from the largest value


def test_pick_times_spreads_in_log_time_with_both_ends() -> None:
    t = np.geomspace(1e-9, 1e-3, 61)
    picked = pick_times(t, 7)
    assert picked.tolist() == [0, 10, 20, 30, 40, 50, 60]
    assert pick_times(t[:4]).tolist() == [0, 1, 2, 3]


def test_not_a_run_is_refused_in_one_line() -> None:
    with pytest.raises(InputError, match=r"^run: dict is not a transient run"):
        transient_report({})


def test_a_step_of_one_wall_from_a_common_wall_names_that_wall_alone() -> None:
    import dataclasses
    import json

    from edl_solver.inputs.casefile import case_to_mapping
    from tests.io.transient_runs import CASE

    run = full_run()
    run.attrs["before_json"] = json.dumps(case_to_mapping(dataclasses.replace(CASE, wall=CASE.walls[0])))
    lines = transient_report(run).splitlines()
    start = lines.index("Step at t = 0 (before → after):")
    assert lines[start + 1:start + 3] == ["  wall.top.zeta: -25 mV → -50 mV", "Time-dependent drives:"]
