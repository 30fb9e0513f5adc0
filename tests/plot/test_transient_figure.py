"""The figure of a transient run: the panels a run's variables call for, log time axes, the profile times, the flow
axis that reads the mean velocity's line, and one-line refusals.

Figure checks of this project's design, not physics: they need no outside reference.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from edl_solver.errors import InputError
from edl_solver.plot.transient_figure import profile_indices, transient_figure
from tests.helpers import PNG_SIGNATURE
from tests.io.transient_runs import full_run, startup_run


def _visible(figure: object) -> list:
    return [axes for axes in figure.axes if axes.get_visible()]


def test_full_run_draws_walls_flow_potential_and_concentrations(tmp_path: Path) -> None:
    figure = transient_figure(full_run())
    titles = [axes.get_title(loc="left") for axes in _visible(figure)]
    assert [t for t in titles if t] == ["(a) walls", "(b) flow", "(c) potential ψ", "(d) concentration"]
    walls, flow = figure.axes[0], figure.axes[1]
    assert walls.get_xscale() == flow.get_xscale() == "log"
    assert [line.get_label() for line in walls.get_lines()] == ["σ bottom", "σ top"]
    assert any("wall potential" in axes.get_ylabel() for axes in figure.axes)  # its own axis, in mV
    potential = next(axes for axes in figure.axes if axes.get_title(loc="left") == "(c) potential ψ")
    assert potential.get_xlabel() == "x from the centre (nm)"
    labels = [line.get_label() for line in potential.get_lines()]
    assert labels == ["t = 1 ns", "t = 23.1 ns", "t = 534 ns", "t = 4.33 µs", "t = 100 µs"]
    top_wall = potential.get_lines()[-1].get_ydata()[-1]
    assert top_wall == pytest.approx(1e3 * float(full_run()["potential"][-1, -1]), rel=1e-12)  # in mV
    assert transient_figure(full_run(), path=tmp_path / "run.png").read_bytes()[:8] == PNG_SIGNATURE


def test_flow_rate_axis_reads_the_mean_velocity_line() -> None:
    run = startup_run()
    figure = transient_figure(run)
    assert len(_visible(figure)) == 4  # (a), (b), the wall potential's and the flow rate's axes: no profiles
    left = figure.axes[1]
    right = next(axes for axes in figure.axes if "flow rate" in axes.get_ylabel())
    assert right.get_ylabel() == "flow rate Q (µm²/s)"  # a slit: per unit width
    height = 40e-9  # Q = U H per unit width
    ratio = np.array(right.get_ylim()) / np.array(left.get_ylim())
    assert ratio == pytest.approx([height * 1e12 / 1e6] * 2, rel=1e-9)


def test_concentrations_over_decades_go_on_a_log_axis() -> None:
    run = full_run()
    run["concentration"] = run["concentration"] ** 4  # spans more than two decades
    figure = transient_figure(run, profile_times=[1e-9, 1.1e-9, 1e-4])
    concentration = next(axes for axes in figure.axes if axes.get_title(loc="left") == "(d) concentration")
    assert concentration.get_yscale() == "log"
    assert [line.get_label() for line in concentration.get_lines()][-2:] == ["Na+", "Cl-"]
    assert len([line for line in concentration.get_lines() if line.get_xdata().size]) == 2 * 2  # 2 times x 2 ions


def test_profile_times_are_the_nearest_output_times() -> None:
    t = np.geomspace(1e-9, 1e-5, 5)
    assert profile_indices(t, [1.2e-9, 9e-6, 1e-5]).tolist() == [0, 4]
    assert profile_indices(t).tolist() == [0, 1, 2, 3, 4]


@pytest.mark.parametrize(("times", "message"), [
    ("soon", r"^profile_times: 'soon' is not a list of numbers"),
    ([-1e-9], r"^profile_times: \[-1e-09\] is not allowed, expected a list of times in s > 0"),
    ([1.0], r"^profile_times: 1 s is outside the run, expected times from 1e-09 s to 0.0001 s"),
])
def test_bad_profile_times_are_refused_in_one_line(times: object, message: str) -> None:
    with pytest.raises(InputError, match=message):
        transient_figure(full_run(), profile_times=times)


def test_not_a_run_is_refused_and_nothing_written(tmp_path: Path) -> None:
    with pytest.raises(InputError, match=r"^run: list is not a transient run"):
        transient_figure([], path=tmp_path / "x.png")
    assert not list(tmp_path.iterdir())
