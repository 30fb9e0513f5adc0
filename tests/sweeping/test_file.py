"""Sweep files (``edl_solver.sweeping.file``): the case, the axes and the zipped groups they give. Their errors,
as the ``edl sweep`` command reports them, are checked in tests/cli/test_sweep_command.py."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from edl_solver.sweeping.file import load_sweep
from tests.helpers import SWEEP_BASE_TOML as BASE_TOML
from tests.helpers import SWEEP_TOML
from tests.helpers import write_sweep as write

# -- the file format ---------------------------------------------------------------------------------


def test_sweep_file_gives_the_case_axes_and_zipped_groups(tmp_path: Path) -> None:
    case, axes, zipped = load_sweep(write(tmp_path, SWEEP_TOML))
    assert case.geometry.height == 20e-9 and case.wall.zeta == -0.040 and case.field == 1000.0
    assert list(axes) == ["geometry.height", "wall.zeta", "electrolyte.concentration"]
    assert axes["geometry.height"] == [5e-9, 5e-8, 5e-7]  # log range, both bounds included
    np.testing.assert_allclose(axes["wall.zeta"], [-0.150, -0.150 + 0.140 / 3, -0.150 + 0.280 / 3, -0.010],
                               rtol=1e-14)
    assert axes["wall.zeta"][0] == -0.150 and axes["wall.zeta"][-1] == -0.010
    assert axes["electrolyte.concentration"] == [0.1, 1.0, 10.0]
    assert zipped == [["geometry.height", "electrolyte.concentration"]]


def test_sweep_file_short_forms(tmp_path: Path) -> None:
    # Unquoted dotted keys, a zip group without its outer brackets, numbers in SI, a one-point range,
    # and a wall section left to the axis that sets it.
    text = BASE_TOML.replace('[wall]\nzeta = "-40 mV"\n', "") + """
[sweep]
zip = ["wall.zeta", "field"]
output_profiles = false

[sweep.axes]
wall.zeta = [-0.02, -0.05]
field = ["1 kV/m", "2 kV/m"]
geometry.height = { log = ["30 nm", "90 nm"], points = 1 }
model = ["pb", "dh"]
"""
    case, axes, zipped = load_sweep(write(tmp_path, text))
    assert axes == {"wall.zeta": [-0.02, -0.05], "field": [1000.0, 2000.0], "geometry.height": [3e-8],
                    "model": ["pb", "dh"]}
    assert zipped == [["wall.zeta", "field"]] and case.wall.zeta == -0.02
