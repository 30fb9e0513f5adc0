"""Ion current rectification of channels whose section varies along x (``channel.rectification``).

Conventions of ``edl_solver.channel.model``: Delta V = V(L) - V(0), I positive along +x; the cones here have
their tip at x = 0. The ratio is |I(+Delta V) / I(-Delta V)|.
"""

from __future__ import annotations

import numpy as np
import pytest

import edl_solver as edl
from edl_solver import channel as ch
from edl_solver.channel.rectification import rectification_ratio
from edl_solver.errors import InputError
from tests.helpers import SOLVENT


def _case(millimolar: float, charge: str, equal: bool = False) -> edl.Case:
    """KCl, or a model 1:1 salt with equal diffusivities (``equal``), in a capillary of -20 mC/m^2 or ``charge``."""
    if equal:
        electrolyte = edl.Electrolyte((edl.Ion("A", valence=1, concentration=millimolar, diffusivity=2e-9),
                                       edl.Ion("B", valence=-1, concentration=millimolar, diffusivity=2e-9)))
    else:
        electrolyte = edl.Electrolyte.from_ions({"K+": millimolar, "Cl-": millimolar})
    return edl.Case(geometry=edl.Capillary(radius="10 nm"), electrolyte=electrolyte,
                    wall=edl.Wall(charge_density=charge), solvent=SOLVENT)


def _cone(case: edl.Case, tip: float, millimolar: float) -> ch.ChannelTable:
    return ch.tabulate(ch.Channel(case, "1 um", millimolar, millimolar, size=(tip, 8.0 * tip), points=16,
                                  size_points=8))


def test_a_symmetric_hourglass_does_not_rectify() -> None:
    """Two mirrored cones between equal reservoirs are symmetric under x -> L - x, which maps the state at
    +Delta V onto the one at -Delta V with I -> -I (a symmetry of the equations, common practice)."""
    case = _case(10.0, "-20 mC/m^2")

    def hourglass(x: float) -> float:
        return 5e-9 + 35e-9 * abs(2.0 * x / 1e-6 - 1.0)

    table = ch.tabulate(ch.Channel(case, "1 um", "10 mM", "10 mM", size=hourglass, points=16, size_points=8))
    cone = rectification_ratio(_cone(case, 5e-9, 10.0), [0.2])
    assert abs(cone[0] - 1.0) > 0.1  # each half alone rectifies
    np.testing.assert_allclose(rectification_ratio(table, [0.05, 0.2]), 1.0, atol=1e-5)


def test_flipping_the_wall_charge_and_the_voltage_maps_the_curve_onto_itself() -> None:
    """With equal diffusivities, exchanging the ions' roles (psi -> -psi, c+ <-> c-) turns sigma into -sigma,
    Delta V into -Delta V and I into -I, leaving Q, J_s and c(x) as they were (a symmetry of the
    Poisson-Nernst-Planck-Stokes equations, common practice)."""
    voltages = np.array([-0.2, -0.05, 0.05, 0.2])
    negative = ch.current_voltage(_cone(_case(10.0, "-20 mC/m^2", equal=True), 5e-9, 10.0), voltages)
    positive = ch.current_voltage(_cone(_case(10.0, "20 mC/m^2", equal=True), 5e-9, 10.0), -voltages)
    np.testing.assert_allclose(positive["current"].values, -negative["current"].values, rtol=1e-6)
    np.testing.assert_allclose(positive["volume_flow"].values, negative["volume_flow"].values, rtol=1e-5)
    ratio = np.abs(negative["current"].values[3] / negative["current"].values[0])
    assert abs(ratio - 1.0) > 0.1  # the symmetry is not a trivial one


def test_rectification_vanishes_without_charge_and_for_thin_layers_and_grows_near_the_debye_length() -> None:
    """Trend only (Ai et al. 2010; White & Bund 2008; Vlassiouk, Smirnov & Siwy 2008, from memory): an
    uncharged cone is ohmic; a charged one rectifies most when its tip is a few Debye lengths wide and less and
    less as kappa a_tip grows (about as 1/(kappa a_tip), as a Dukhin number). In 30 mM KCl (Debye length
    1.76 nm) cones of tip 5, 20 and 80 nm (kappa a_tip 2.8, 11, 45) and base eight tips. A negative cone passes
    more current from its tip to its base (Delta V < 0 here, the ratio below 1), the direction those papers
    report for negative conical pores."""
    uncharged = rectification_ratio(_cone(_case(30.0, "0 C/m^2"), 5e-9, 30.0), [0.2])
    np.testing.assert_allclose(uncharged, 1.0, atol=1e-5)
    charged = _case(30.0, "-20 mC/m^2")
    departure = [1.0 - rectification_ratio(_cone(charged, tip, 30.0), [0.2])[0] for tip in (5e-9, 20e-9, 80e-9)]
    assert departure[0] > 0.2
    assert departure[0] > departure[1] > departure[2] > 0.0
    assert departure[2] < 0.25 * departure[0]  # 0.45, 0.25, 0.08 measured at 0.2 V


def test_rectification_needs_positive_voltages() -> None:
    with pytest.raises(InputError, match=r"voltages: .* expected positive voltage magnitudes"):
        rectification_ratio(_cone(_case(30.0, "0 C/m^2"), 5e-9, 30.0), [0.0, 0.1])


def test_the_collocation_tolerance_keeps_the_currents_of_a_rectifying_cone_within_1e_6(
        monkeypatch: pytest.MonkeyPatch) -> None:
    """The along-x solve at its default tolerance against the same solve at 1e-8 (a numerical check of the
    error the docs state, 4e-7, common practice): the error it adds stays below the table's."""
    from edl_solver.channel import taper_path

    table = _cone(_case(10.0, "-20 mC/m^2"), 5e-9, 10.0)
    voltages = np.array([-0.5, -0.1, 0.1, 0.5])
    default = ch.current_voltage(table, voltages)["current"].values
    monkeypatch.setattr(taper_path, "BVP_TOLERANCE", 1e-8)
    tight = ch.current_voltage(table, voltages)["current"].values
    np.testing.assert_allclose(default, tight, rtol=1e-6)
    assert table.interpolation_error > 1e-6
