"""The figure of a fit (edl_solver.plot.fit_figure): per data set the data with error bars, the model curve, the
thin-layer fit and the residuals below."""

from __future__ import annotations

from pathlib import Path

import numpy as np

import edl_solver as edl
from edl_solver.analysis.fit_record import fit_dataset
from edl_solver.plot.fit_figure import fit_figure
from tests.helpers import KCL, PNG_SIGNATURE


def _record(uncertainty: bool) -> object:
    case = edl.Case(geometry=edl.Slit(height="50 nm"), wall=edl.Wall(charge_density="-5 mC/m^2"), electrolyte=KCL)
    c = np.geomspace(0.1, 10.0, 5)
    g = edl.sweep(case, {"electrolyte.concentration": c})["conductance_per_length"].values
    data = {"electrolyte.concentration": c, "conductance_per_length": g * (1 + 0.01 * np.array([1, -1, 0, 1, -1]))}
    if uncertainty:
        data["uncertainty"] = 0.01 * g
    return fit_dataset(case, edl.fit(case, data, ["wall.charge_density"]))


def test_the_figure_has_data_model_thin_layer_and_residuals(tmp_path: Path) -> None:
    figure = fit_figure(_record(True))
    top, bottom = figure.axes
    assert top.containers, "no error bars"
    labels = [line.get_label() for line in top.get_lines()]
    assert "full model (fit)" in labels and any(label.startswith("thin-layer fit") for label in labels)
    assert top.get_xscale() == "log"  # concentrations over two decades
    residuals = [line for line in bottom.get_lines() if len(line.get_xdata()) == 5]
    assert residuals and "σ" in bottom.get_ylabel()
    assert fit_figure(_record(True), tmp_path / "fit.png").read_bytes()[:8] == PNG_SIGNATURE


def test_without_uncertainty_the_residuals_keep_their_unit() -> None:
    top, bottom = fit_figure(_record(False)).axes
    assert not top.containers or all(c.has_yerr is False for c in top.containers)
    assert "σ" not in bottom.get_ylabel() and "S)" in bottom.get_ylabel()
