"""The [transient] section of a case file (issue 14): times in each form, profile times, the case before the step,
the drives (inline and from CSV), and the errors, each one line naming the file and the key."""

from __future__ import annotations

import re

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.errors import InputError
from edl_solver.inputs.casefile import load_case, loads_case
from edl_solver.inputs.drives import Drive, bind
from edl_solver.inputs.transient_spec import before_case, read_transient_spec, transient_from_mapping
from tests.helpers import write

CASE = """\
field = "1 kV/m"

[geometry]
kind = "slit"
height = "50 nm"

[electrolyte]
ions = { "K+" = "1 mM", "Cl-" = "1 mM" }

[wall]
zeta = "-50 mV"
"""

RUN = CASE + """
[transient]
times = { start = "1 ns", stop = "10 us", count = 5, spacing = "log" }
profile_times = ["10 ns", "1 us"]

[transient.before]
"wall.top.zeta" = "0 mV"
field = "0 V/m"

[transient.drive.field]
kind = "sine"
amplitude = "10 kV/m"
frequency = "1 MHz"

[transient.drive."wall.top.zeta"]
kind = "table"
csv = "traces/gate.csv"
"""


def spec_of(transient: dict, folder: str = "."):
    return transient_from_mapping({"transient": transient}, folder=folder)


def test_a_case_file_with_a_transient_section_is_read(tmp_path) -> None:
    (tmp_path / "traces").mkdir()
    write(tmp_path / "traces", name="gate.csv", text="time (us), zeta (mV)\n0, 0\n1, -25\n")
    path = write(tmp_path, RUN)
    case = load_case(path)  # the case reader leaves [transient] alone
    assert case == load_case(write(tmp_path, CASE, "plain.toml"))
    spec = read_transient_spec(path)
    # geomspace of 5 values from 1 ns to 10 us: a factor of 10 each (common practice).
    assert spec.times == pytest.approx([1e-9, 1e-8, 1e-7, 1e-6, 1e-5], rel=1e-12)
    assert spec.times[0] == 1e-9 and spec.times[-1] == 1e-5
    assert spec.profile_times == pytest.approx([1e-8, 1e-6])
    assert spec.before_overrides == {"wall.top.zeta": 0.0, "field": 0.0}
    assert spec.drives == {"field": Drive.sine("10 kV/m", 1e6),
                           "wall.top.zeta": Drive.table([0, 1e-6], [0, -25], unit="mV")}
    field, gate = bind(spec.drives, case, "transient.drive")
    assert field.value(0.25e-6) == pytest.approx(1e4) and gate.value(0.5e-6) == pytest.approx(-0.0125)
    before = before_case(case, spec)
    assert before.walls[0].zeta == -0.05 and before.walls[1].zeta == 0.0 and before.field == 0.0
    assert before.geometry == case.geometry and before.electrolyte == case.electrolyte


@pytest.mark.parametrize(("times", "expected"), [
    ({"start": "1 us", "stop": "5 us", "count": 5, "spacing": "linear"}, [1e-6, 2e-6, 3e-6, 4e-6, 5e-6]),
    ({"start": 1e-3, "stop": 1.0, "count": 4}, [1e-3, 1e-2, 1e-1, 1.0]),  # log by default
    (["1 ns", "2 ns", 3e-9], [1e-9, 2e-9, 3e-9]),
    ("1 us", [1e-6]),
    (2.5, [2.5]),
])
def test_times_in_each_form(times, expected) -> None:
    assert spec_of({"times": times}).times == pytest.approx(expected, rel=1e-12)


def test_defaults_without_optional_tables() -> None:
    spec = spec_of({"times": ["1 us"]})
    assert spec.profile_times is None and spec.before_overrides == {} and spec.drives == {}
    case = load_case_text(CASE)
    assert before_case(case, spec) is None


def load_case_text(text: str) -> edl.Case:
    return loads_case(text)


def test_unquoted_dotted_keys_mean_the_same() -> None:
    quoted = spec_of({"times": [1.0], "before": {"wall.top.zeta": "0 mV"},
                      "drive": {"wall.bottom.zeta": {"kind": "ramp", "start": 0, "end": "-10 mV", "duration": 1}}})
    nested = spec_of({"times": [1.0], "before": {"wall": {"top": {"zeta": "0 mV"}}},
                      "drive": {"wall": {"bottom": {"zeta": {"kind": "ramp", "start": 0, "end": "-10 mV",
                                                             "duration": 1}}}}})
    assert quoted.before_overrides == nested.before_overrides == {"wall.top.zeta": 0.0}
    assert quoted.drives == nested.drives


def test_before_uses_the_sweep_meaning_of_a_path() -> None:
    spec = spec_of({"times": [1.0], "before": {"electrolyte.concentration": "10 mM", "model": "dh"}})
    before = before_case(load_case_text(CASE), spec)
    assert [ion.concentration for ion in before.electrolyte.ions] == pytest.approx([10.0, 10.0])
    assert before.model == "dh"


@pytest.mark.parametrize(("transient", "message"), [
    ({}, "transient.times: missing"),
    ({"times": [1.0], "drives": {}}, r"unknown key 'transient.drives' \(did you mean 'transient.drive'\?\)"),
    ({"times": {"start": 1, "stop": 2}}, "transient.times.count: missing"),
    ({"times": {"start": 1, "stop": 2, "count": 1}}, "transient.times.count: 1 is not a number of times"),
    ({"times": {"start": 1, "stop": 2, "count": True}}, "transient.times.count: True is not a number"),
    ({"times": {"start": 1, "stop": 2, "count": 2.0}}, "transient.times.count: 2.0 is not a number"),
    ({"times": {"start": 0, "stop": 2, "count": 3}}, "transient.times.start: 0 is not after the step"),
    ({"times": {"start": "2 s", "stop": "1 s", "count": 3}}, "transient.times.stop: '1 s' is not after start"),
    ({"times": {"start": 1, "stop": 2, "count": 3, "spacing": "lin"}}, "transient.times.spacing: 'lin' is not"),
    ({"times": {"start": 1, "stop": 2, "count": 3, "points": 3}}, "unknown key 'transient.times.points'"),
    ({"times": {"start": "1 mV", "stop": 2, "count": 3}}, "transient.times.start: '1 mV' has units of volt"),
    ({"times": []}, "transient.times: \\[\\] is not a list of times"),
    ({"times": ["2 ns", "1 ns"]}, r"transient.times\[1\]: '1 ns' is not after the time before it"),
    ({"times": [0.0, 1.0]}, r"transient.times\[0\]: 0.0 is not after the step"),
    ({"times": [1.0, 2.0], "profile_times": ["3 s"]}, r"transient.profile_times\[0\]: 3 s is after the last time"),
    ({"times": [1.0], "before": {"wall.zeeta": 0}}, "transient.before: \"wall.zeeta\" is not a path known here "
                                                    "\\(did you mean 'wall.zeta'\\?\\)"),
    ({"times": [1.0], "before": {"wall.zeta": 0, "wall.top.zeta": 0}}, "transient.before: \"wall.zeta\" and "
                                                                        "\"wall.top.zeta\" both set the same input"),
    ({"times": [1.0], "before": {"field": "1 mV"}}, 'transient.before."field": \'1 mV\' has units of volt'),
    ({"times": [1.0], "before": {"model": 1}}, 'transient.before."model": 1 is not a word'),
    ({"times": [1.0], "before": "field"}, "transient.before: 'field' is not a table"),
    ({"times": [1.0], "drive": {"wall.zeeta": {"kind": "sine"}}}, "transient.drive: \"wall.zeeta\" is not a path"),
    ({"times": [1.0], "drive": {"field": {"kind": "sine", "amplitude": 1}}},
     'transient.drive."field".frequency: missing'),
    ({"times": [1.0], "drive": {"field": {"kind": "table", "csv": "a.csv", "unit": "mV"}}},
     'transient.drive."field".unit: given beside csv'),
    ({"times": [1.0], "drive": {"field": {"kind": "sine", "csv": "a.csv"}}},
     'transient.drive."field".kind: \'sine\' with csv'),
    ({"times": [1.0], "drive": {"field": {"csv": 3}}}, 'transient.drive."field".csv: 3 is not a file name'),
    ({"times": [1.0], "drive": {"field": {"kind": "table", "csv": "absent.csv"}}},
     'transient.drive."field".csv: .*absent.csv: drive table file not found'),
])
def test_refusals_name_the_key(transient, message) -> None:
    with pytest.raises(InputError, match=message):
        spec_of(transient)


def test_errors_name_the_file(tmp_path) -> None:
    path = write(tmp_path, CASE)
    with pytest.raises(InputError, match=f"^{re.escape(str(path))}: missing section \\[transient\\]"):
        read_transient_spec(path)
    path = write(tmp_path, CASE + '\n[transeint]\ntimes = ["1 us"]\n')
    with pytest.raises(InputError, match=r"unknown key 'transeint' \(did you mean 'transient'\?\)"):
        read_transient_spec(path)
    with pytest.raises(InputError, match="did you mean 'transient'"):
        load_case(path)  # the case reader still refuses a misspelt section
    path = write(tmp_path, CASE + '\n[transient]\ntimes = ["1 us"]\n[transient.drive.field]\nkind = "table"\n'
                 'csv = "bad.csv"\n')
    write(tmp_path, "0, 1\n1, x\n", "bad.csv")
    with pytest.raises(InputError, match=f"^{re.escape(str(path))}: transient.drive.\"field\".csv: .*bad.csv: line 2"):
        read_transient_spec(path)


def test_before_case_refuses_a_case_that_is_not_valid() -> None:
    tube = load_case_text(CASE.replace('kind = "slit"\nheight', 'kind = "capillary"\nradius'))
    spec = spec_of({"times": [1.0], "before": {"wall.top.zeta": 0}})
    with pytest.raises(InputError, match=r"transient.before: the case before the step is not valid: .*one wall"):
        before_case(tube, spec)
    spec = spec_of({"times": [1.0], "before": {"wall.zeta": "1 V"}})
    with pytest.raises(InputError, match=r"transient.before: the case before the step is not valid: wall.zeta"):
        before_case(load_case_text(CASE), spec)


def test_spec_times_are_arrays_of_seconds() -> None:
    spec = spec_of({"times": {"start": "1 ns", "stop": "1 ms", "count": 7}})
    assert isinstance(spec.times, np.ndarray) and np.all(np.diff(spec.times) > 0)
    assert spec.times[3] == pytest.approx(1e-6, rel=1e-12)  # the middle of 7 log-spaced times from 1 ns to 1 ms
