"""The transport figures (``edl_solver.plot.transport``): pump curve, conductance curve and I-V curve.

Conventions of ``edl_solver.channel.model``: x from the left reservoir (0) to the right one (L); Delta V = V(L) - V(0);
currents positive along +x; slit values per unit width.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

import edl_solver as edl
from edl_solver import channel as ch
from edl_solver.channel.conductance import (
    channel_characteristics,
    conductance_curve,
)
from edl_solver.errors import InputError
from edl_solver.plot.transport import conductance_figure, iv_figure, pump_curve_figure
from tests.helpers import assert_png, case_of

# -- figures -------------------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def charged_slit() -> edl.Result:
    return edl.solve(case_of(edl.Slit(height="50 nm"), edl.Wall(charge_density="-2 mC/m^2"), field="10 kV/m"))


@pytest.mark.parametrize("length", [None, "10 um"])
def test_pump_curve_figure_is_a_png_and_leaves_pyplot_alone(charged_slit: edl.Result, tmp_path: Path,
                                                            length: str | None) -> None:
    import matplotlib
    import matplotlib.pyplot as plt

    figures, backend = plt.get_fignums(), matplotlib.get_backend()
    path = pump_curve_figure(charged_slit, tmp_path / "pump.png", length=length)
    assert_png(path)
    assert plt.get_fignums() == figures and matplotlib.get_backend() == backend
    assert [p.name for p in tmp_path.iterdir()] == ["pump.png"]


def test_pump_curve_of_a_capillary_and_its_refusals(tmp_path: Path) -> None:
    capillary = edl.solve(case_of(edl.Capillary(radius="25 nm"), edl.Wall(zeta="-50 mV"), field="1 kV/m"))
    assert_png(pump_curve_figure(capillary, tmp_path / "pump.png", length="5 um"))
    still = edl.solve(case_of(edl.Slit(height="50 nm"), edl.Wall(zeta="-50 mV")))
    with pytest.raises(InputError, match="no field"):
        pump_curve_figure(still, tmp_path / "still.png")
    with pytest.raises(InputError, match="length"):
        pump_curve_figure(capillary, tmp_path / "bad.png", length="-1 um")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["pump.png"]


def test_conductance_figures(tmp_path: Path) -> None:
    slit = case_of(edl.Slit(height="20 nm"), edl.Wall(charge_density="-2 mC/m^2"))
    assert_png(conductance_figure(conductance_curve(slit, np.geomspace(1e-3, 100, 9)), tmp_path / "slit.png"))
    # two different walls: the convection has no closed form (NaN), the conduction estimate stays
    pair = case_of(edl.Slit(height="20 nm"), (edl.Wall(charge_density="-2 mC/m^2"), edl.Wall(zeta="-20 mV")))
    curve = conductance_curve(pair, np.geomspace(1e-2, 10, 5), length="2 um")
    assert curve["wall_charge_density"].dims == ("concentration", "wall")
    assert np.all(np.isnan(curve["plateau_estimate"].values)) and np.all(curve["plateau_conduction"].values > 0)
    assert_png(conductance_figure(curve, tmp_path / "pair.png"))
    with pytest.raises(InputError, match="conductance curve"):
        conductance_figure(curve.drop_vars("bulk_conductance"), tmp_path / "bad.png")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["pair.png", "slit.png"]


def test_iv_figures(tmp_path: Path) -> None:
    case = case_of(edl.Slit(height="10 nm"), edl.Wall(charge_density="-5 mC/m^2"))
    data = channel_characteristics(ch.Channel(case, "2 um", "0.1 mM", "1 mM"), np.linspace(-0.1, 0.1, 11))
    assert_png(iv_figure(data, tmp_path / "iv.png"))
    # a bare current_voltage dataset (no landmarks: they are interpolated) and equal reservoirs
    bare = ch.current_voltage(ch.Channel(case, "2 um", "1 mM", "1 mM"), [-0.1, 0.0, 0.1])
    assert_png(iv_figure(bare, tmp_path / "uniform.png"))
    with pytest.raises(InputError, match="I-V curve"):
        iv_figure(data.drop_vars("current"), tmp_path / "bad.png")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["iv.png", "uniform.png"]
