"""The packed layouts of ``kernels.layout``: every index unique and inside its vector, the fields of each layout
laid end to end, the summary slots in the order of the summary keys, and the packing of a case in the declared
slots.

These are rules of this project's design, not physics: they need no outside reference ("project design").
"""

from __future__ import annotations

import pytest

import edl_solver as edl
from edl_solver.kernels import layout
from edl_solver.model import packing
from edl_solver.results import schema

#: Prefix of each layout's index names, its table, and the names with that prefix that are not its indices.
LAYOUTS = {
    "ION_": (layout.ION, {"ION_SIZE", "ION_INTEGRALS"}),
    "SPECIES_": (layout.SPECIES, {"SPECIES_SIZE"}),
    "SITE_": (layout.SITE, {"SITE_SIZE"}),
    "W_": (layout.WALL, set()),
    "FLOW_": (layout.FLOW, {"FLOW_SIZE"}),
    "P_": (layout.CASE, {"P_IONS"}),
    "S_": (layout.SCALES, set()),
    "ISO_": (layout.ISOLATED, set()),
    "I_": (layout.INTEGRALS, set()),
    "PROFILE_": (layout.PROFILES, {"PROFILE_ROWS"}),
}


def _indices(prefix: str, excluded: set[str]) -> dict[str, int]:
    return {name: value for name, value in vars(layout).items()
            if name.startswith(prefix) and name not in excluded and isinstance(value, int)}


@pytest.mark.parametrize("prefix", list(LAYOUTS))
def test_every_index_is_unique_in_range_and_starts_a_field(prefix: str) -> None:
    """Project design: one name per field, each inside the vector, and together they are the whole table."""
    table, excluded = LAYOUTS[prefix]
    indices = _indices(prefix, excluded)
    assert len(set(indices.values())) == len(indices), indices
    assert all(0 <= value < table.size for value in indices.values()), (indices, table.size)
    assert sorted(indices.values()) == [start for start, _ in table.spans]


@pytest.mark.parametrize("prefix", list(LAYOUTS))
def test_fields_are_laid_end_to_end(prefix: str) -> None:
    """Project design: no gap and no overlap between the fields of a layout."""
    table, _ = LAYOUTS[prefix]
    at = 0
    for start, size in table.spans:
        assert start == at and size >= 1
        at += size
    assert at == table.size


def test_open_ended_blocks_follow_their_tables() -> None:
    """Project design: the ions follow the case vector's fields, the ion integrals the integral fields, and
    the response blocks the ion integrals, one after another."""
    assert layout.CASE.size == layout.P_IONS
    assert layout.case_size(3) == layout.CASE.size + 3 * layout.ION_SIZE
    assert layout.INTEGRALS.size == layout.ION_INTEGRALS
    n = 3
    ion_flow, conc_up, conc_flow, size = layout.response_offsets(n)
    assert (ion_flow, conc_up, conc_flow) == (layout.ION_INTEGRALS + n, layout.ION_INTEGRALS + 2 * n,
                                              layout.ION_INTEGRALS + 3 * n)
    assert size == conc_flow + n * n == layout.integral_count(n)
    assert layout.WALL.spans[-1] == (layout.W_SITE0, layout.MAX_SITES * layout.SITE_SIZE)
    assert layout.SITE_SIZE == 2 + layout.MAX_STATES + (layout.MAX_STATES - 1)


def test_codes_are_distinct() -> None:
    """Project design: each family of codes tells its members apart."""
    for codes in ((layout.POTENTIAL, layout.FLUX, layout.ROBIN, layout.REGULATED),
                  (layout.PB, layout.DH, layout.STERIC),
                  (layout.CONVERGED, layout.NEWTON_FAILED, layout.ACCURACY_MISSED, layout.IDENTITY_FAILED),
                  (layout.PLANAR, layout.AXISYMMETRIC)):
        assert len(set(codes)) == len(codes)
    assert sorted(layout.MODEL_CODES.values()) == sorted((layout.PB, layout.DH, layout.STERIC))
    assert (edl.Slit(height=1e-8).metric, edl.Capillary(radius=1e-8).metric) == (layout.PLANAR, layout.AXISYMMETRIC)


def test_summary_slots_follow_the_summary_keys() -> None:
    """Project design: one slot per key, two for a (bottom, top) pair, in the order of ``SUMMARY_KEYS``; every
    ``Z_*`` name is the slot of one key; every key has a unit (``results.schema``)."""
    assert list(layout.SLOTS) == list(layout.SUMMARY_KEYS)
    at = 0
    for key in layout.SUMMARY_KEYS:
        assert layout.SLOTS[key] == at
        at += 2 if key in layout.PAIR_KEYS else 1
    assert at == layout.SUMMARY_SIZE == len(layout.SUMMARY_KEYS) + len(layout.PAIR_KEYS)
    z = _indices("Z_", set())
    assert len(set(z.values())) == len(z)
    assert set(z.values()) <= set(layout.SLOTS.values())
    assert set(schema.SUMMARY_KEYS) == set(layout.SUMMARY_KEYS)


def test_lab_quantities_are_summary_keys() -> None:
    """Project design: each lab quantity has its summary slot, and each compared one its thin-layer value
    and relative error."""
    assert set(layout.LAB_KEYS) <= set(layout.SUMMARY_KEYS)
    assert sorted(_indices("L_", set()).values()) == list(range(layout.LAB_SIZE))
    for key in layout.COMPARED:
        assert key in layout.LAB
        assert f"thin_layer_{key}" in layout.SLOTS and f"thin_layer_{key}_error" in layout.SLOTS


def test_a_case_is_packed_in_the_declared_slots() -> None:
    """Project design: ``packing.case_vector`` writes each input where the layout says."""
    wall = edl.Wall(sites=(edl.Site(density="4 nm^-2", pK=(3.0, 9.0), charges=(1, 0, -1)),),
                    stern_capacitance="2 F/m^2", slip_length="1 nm")
    case = edl.Case(geometry=edl.Capillary(radius="20 nm"), wall=wall, field=1e4, pressure_gradient=-1e5,
                    electrolyte=edl.Electrolyte.from_ions({"Ca2+": "1 mM", "Cl-": "2 mM"}, pH=6.0))
    p = packing.case_vector(case)
    ions = case.electrolyte.ions
    assert p.size == layout.case_size(len(ions))
    assert p[layout.P_LENGTH] == 20e-9 and p[layout.P_METRIC] == layout.AXISYMMETRIC
    assert p[layout.P_TEMPERATURE] == case.solvent.temperature and p[layout.P_FIELD] == 1e4
    assert p[layout.P_PRESSURE_GRADIENT] == -1e5 and p[layout.P_SLIP + 1] == pytest.approx(1e-9)
    top = p[layout.P_WALLS + layout.WALL_SIZE:layout.P_WALLS + 2 * layout.WALL_SIZE]
    site = top[layout.W_SITE0:layout.W_SITE0 + layout.SITE_SIZE]
    assert top[layout.W_TYPE] == layout.REGULATED and top[layout.W_SITES] == 1
    assert top[layout.W_STERN] == pytest.approx(0.5)
    assert site[layout.SITE_DENSITY] == pytest.approx(4e18) and site[layout.SITE_STATES] == 3
    assert list(site[layout.SITE_CHARGES:layout.SITE_CHARGES + 3]) == [1, 0, -1]
    assert list(site[layout.SITE_LOG_K:layout.SITE_LOG_K + 2]) == [3.0, 9.0]
    rows = p[layout.P_IONS:].reshape(len(ions), layout.ION_SIZE)
    for row, ion in zip(rows, ions):
        assert (row[layout.ION_VALENCE], row[layout.ION_CONCENTRATION], row[layout.ION_DIFFUSIVITY]) == (
            ion.valence, ion.concentration, ion.diffusivity)
