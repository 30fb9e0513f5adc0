"""The channel package after its split by concern: the public names stay where users import them, and the
access resistance comes from the geometry (Hall's formula for a circular opening)."""

from __future__ import annotations

import math

import pytest

import edl_solver as edl
import edl_solver.channel as channel
import edl_solver.channel.conductance as conductance
from edl_solver.errors import InputError
from edl_solver.model.bulk import bulk_conductivity

PUBLIC = {"Channel", "ChannelTable", "Device", "OperatingPoint", "OsmoticPower", "current_voltage",
          "membrane_potential", "operating_point", "osmotic_power", "rectification_curve", "salt_flux", "tabulate"}
CONDUCTANCE = {"bulk_conductivity", "cases_at", "channel_characteristics", "checked_length", "conductance_curve",
               "conductance_units", "counterion_convection", "counterion_mobility", "crossover_concentration",
               "henderson_potential", "planck_current"}


def test_public_names_are_importable_where_they_were() -> None:
    """Common practice: a reorganisation keeps the import paths of the public API."""
    assert set(channel.__all__) == PUBLIC
    assert all(callable(getattr(channel, name)) for name in PUBLIC)
    assert set(conductance.__all__) == CONDUCTANCE
    assert all(callable(getattr(conductance, name)) for name in CONDUCTANCE)
    assert edl.Channel is channel.Channel


def test_capillary_access_resistance_is_halls_formula() -> None:
    """Access resistance of a circular pore of radius a opening into a half-space of conductivity K:
    R = 1/(4 K a) (Hall 1975, J. Gen. Physiol. 66, 531, from memory; the spreading resistance of a disk,
    Newman 1966, J. Electrochem. Soc. 113, 501, from memory)."""
    radius, conductivity = 12e-9, 0.0149  # 1 mM KCl is about 0.0149 S/m (handbook, from memory)
    assert edl.Capillary(radius=radius).access_resistance(conductivity) == pytest.approx(
        1.0 / (4.0 * conductivity * radius), rel=1e-15)
    assert edl.Slit(height="20 nm").access_resistance(conductivity) is None  # diverges in two dimensions


def test_access_resistance_of_a_table_is_both_ends_in_series() -> None:
    """The channel's access resistance is the geometry's at each reservoir's conductivity, in series; K from
    the Nernst-Einstein sum F^2/(RT) sum z_i^2 D_i c_i (common practice). Equal reservoirs: one solve."""
    case = edl.Case(geometry=edl.Capillary(radius="10 nm"),
                    electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}),
                    wall=edl.Wall(charge_density="-10 mC/m^2"))
    table = channel.tabulate(channel.Channel(case, "2 um", "1 mM", "1 mM", access_resistance=True))
    kcl = bulk_conductivity(case)
    assert kcl == pytest.approx(0.0149, rel=0.02)  # handbook molar conductivity of KCl, ~149.9 S cm^2/mol
    assert table.access_resistance == pytest.approx(2.0 / (4.0 * kcl * 10e-9), rel=1e-14)
    assert math.isfinite(table.access_resistance)


def test_access_resistance_of_a_slit_is_refused_naming_the_field() -> None:
    """No finite access resistance for a slit: the input is refused, one line naming the field."""
    case = edl.Case(geometry=edl.Slit(height="20 nm"),
                    electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}),
                    wall=edl.Wall(charge_density="-2 mC/m^2"))
    with pytest.raises(InputError, match=r"^channel\.access_resistance: True for a slit"):
        channel.Channel(case, "5 um", "0.1 mM", "1 mM", access_resistance=True)
