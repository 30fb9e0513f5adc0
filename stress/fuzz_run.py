"""Fuzz run of the input edge (issue 10): random malformed or out-of-domain case files through ``edl solve`` and
random constructor arguments through ``edl.Case`` + ``edl.solve``. Counts outcomes; a crash is any other
exception, a traceback, a multi-line error, an exit code other than 0, 2 or 3, a file left by a refusal, or a
NaN in a returned core value.

Not part of the suite. ``python stress/fuzz_run.py SEED COUNT``.
"""

from __future__ import annotations

import collections
import math
import random
import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import numpy as np

import edl_solver as edl
from edl_solver.errors import ConvergenceError, InputError
from tests.helpers import run

#: Values drawn for any field: nasty numbers, unit strings with arithmetic or junk, out-of-domain values.
POOL = ["nan", "inf", "-inf", "1e300", "-1e300", "0", "-0.0", "''", "' '", "true", "[]", "{}", "[[1]]",
        "'1 + 1 nm'", "'1 nm 1'", "'1 pi nm'", "'2*3 nm'", "'1e-3 mM mM'", "'5 %'", "'-50'", "'-5 V'", "-50",
        "'50 m'", "'1e-15 m'", "'0.05 nm'", "'2 m'", "'1 M'", "'0.1 uM'", "'20 mol/m^3'", "'500 K'", "'150 degC'",
        "'-10 degC'", "'25 degC'", "'-2 C/m^2'", "'-137 mC/m^2'", "'0.5 V'", "'-0.38 V'", "'x'", "'1 nm/s'",
        "'1e-9 m^2/s'", "'7.5'", "20", "-1", "4", "1.5", "'K+'", "'1 kV/m'", "'-1 bar/mm'", "'1 mV'", "1e-12",
        "'1 µm'", "'1 um'", "'3 nm^-2'", "'2.9 F/m^2'", "'steric'", "'xyz'", "'dh'", "'pb'"]
FIELDS = ["geometry.height", "electrolyte.ions.\"K+\"", "electrolyte.ions.\"Cl-\"", "electrolyte.pH", "wall.zeta",
          "field", "pressure_gradient", "model", "solvent.temperature", "numerics.accuracy",
          "numerics.max_intervals", "wall.slip_length", "tolerance"]
BASE = {"field": "'1 kV/m'", "pressure_gradient": "'-1 bar/mm'", "model": "'pb'", "geometry.kind": "'slit'",
        "geometry.height": "'20 nm'", "electrolyte.ions.\"K+\"": "'1 mM'", "electrolyte.ions.\"Cl-\"": "'1 mM'",
        "wall.zeta": "'-40 mV'"}


def _toml(values: dict[str, str]) -> str:
    """A case file with dotted keys grouped into their tables."""
    tables: dict[str, list[str]] = collections.defaultdict(list)
    for key, value in values.items():
        if key.startswith("electrolyte.ions."):
            tables["electrolyte.ions"].append(f"{key.split('.', 2)[2]} = {value}")
        elif "." in key:
            table, name = key.split(".", 1)
            tables[table].append(f"{name} = {value}")
        else:
            tables[""].append(f"{key} = {value}")
    text = "\n".join(tables.pop("", [])) + "\n"
    for table, lines in tables.items():
        text += f"\n[{table}]\n" + "\n".join(lines) + "\n"
    return text


def file_input(rng: random.Random, folder: Path) -> str:
    values = dict(BASE)
    for key in rng.sample(FIELDS, rng.randint(1, 3)):
        values[key] = rng.choice(POOL)
    case = folder / "case.toml"
    case.write_text(_toml(values))
    out = folder / "out.h5"
    out.unlink(missing_ok=True)
    code, _, err = run(["solve", str(case), "-o", str(out)])
    if code == 0:
        return "file: solved"
    if code not in (2, 3) or "Traceback" in err or err.count("\n") != 1:
        return f"CRASH file: exit {code}: {err[-300:]!r} from {values}"
    if out.exists():
        return f"CRASH file: exit {code} left {out.name}"
    return f"file: exit {code}"


def _number(rng: random.Random) -> object:
    choices = [float("nan"), float("inf"), -1.0, 0.0, 1e300, 1e-300, np.float64(2.0), np.int64(3), None, "1 mM", "x",
               10.0 ** rng.uniform(-12, 3), -10.0 ** rng.uniform(-12, 3), True, [], "1 + 1"]
    return rng.choice(choices)


def api_input(rng: random.Random) -> str:
    def pick(valid: object) -> object:
        return valid if rng.random() < 0.7 else _number(rng)

    try:
        geometry = (edl.Slit(height=pick("20 nm")) if rng.random() < 0.5 else edl.Capillary(radius=pick("10 nm")))
        ions = edl.Electrolyte.from_ions({"K+": pick("1 mM"), "Cl-": pick("1 mM")}, pH=pick(None))
        kind = rng.choice(["zeta", "charge_density", "gate_voltage"])
        valid = {"zeta": "-40 mV", "charge_density": "-5 mC/m^2", "gate_voltage": "0.1 V"}[kind]
        wall = edl.Wall(**{kind: pick(valid)})
        case = edl.Case(geometry=geometry, electrolyte=ions, wall=wall, field=pick("1 kV/m"),
                        pressure_gradient=pick(0.0), model=pick("pb"), solvent=edl.Water(temperature=pick(298.15)))
    except InputError as error:
        return "api: refused" if "\n" not in str(error) else f"CRASH api: multi-line {error}"
    except Exception as error:
        return f"CRASH api: {type(error).__name__}: {error}"
    try:
        summary = edl.solve(case).summary
    except ConvergenceError:
        return "api: not converged"
    except Exception as error:
        return f"CRASH api solve: {type(error).__name__}: {error} {case.describe()}"
    core = ("zeta", "wall_charge_density", "flow_rate_eo", "conduction_current", "charge_balance")
    if not all(math.isfinite(summary[key]) for key in core):
        return f"CRASH api: NaN in {case.describe()}"
    return "api: solved"


def main() -> None:
    seed, count = int(sys.argv[1]), int(sys.argv[2])
    rng = random.Random(seed)
    outcomes: collections.Counter[str] = collections.Counter()
    crashes = []
    with tempfile.TemporaryDirectory() as folder:
        for i in range(count):
            outcome = file_input(rng, Path(folder)) if i % 2 == 0 else api_input(rng)
            if outcome.startswith("CRASH"):
                crashes.append(outcome)
                outcome = outcome.split(":")[0]
            outcomes[outcome] += 1
    for outcome, number in sorted(outcomes.items()):
        print(f"{number:6d} {outcome}")
    for crash in crashes[:20]:
        print(crash[:400])
    sys.exit(1 if crashes else 0)


if __name__ == "__main__":
    main()
