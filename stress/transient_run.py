"""Random transient Poisson-Nernst-Planck runs (issue 14): counts results, refusals by class, crashes, silent NaN,
inventory drift and wall time.

Not part of the suite (it takes minutes). ``python stress/transient_run.py SEED COUNT``. Each case: a slit (equal
or two walls) or a capillary, 0.1-100 mM of a 1:1 or 2:1 salt, a step of the walls between random fixed zeta,
fixed charge (moved between walls, so the section stays neutral) or gated walls, PB or DH, a field and a pressure
gradient sometimes, times from a hundredth of the Debye time to ten diffusion times.
"""

from __future__ import annotations

import collections
import re
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import edl_solver as edl
from edl_solver.errors import ConvergenceError, InputError


def _salt(rng: np.random.Generator) -> edl.Electrolyte:
    c = 10 ** rng.uniform(-1, 2)
    if rng.random() < 0.7:
        return edl.Electrolyte.from_ions({"K+": f"{c} mM", "Cl-": f"{c} mM"})
    return edl.Electrolyte.from_ions({"Ca++": f"{c} mM", "Cl-": f"{2 * c} mM"})


def _wall_pair(rng: np.random.Generator) -> tuple[object, object]:
    """(before, after) walls: zeta electrodes, gates, or fixed charges moved between the two walls."""
    kind = rng.choice(["zeta", "zeta", "gate"])
    if kind == "zeta":
        return tuple((edl.Wall(zeta=rng.uniform(-0.2, 0.2)), edl.Wall(zeta=rng.uniform(-0.2, 0.2))) for _ in range(2))
    capacitance = 10 ** rng.uniform(-2, 0)  # the gate's dielectric stays; its voltage steps
    gate = [edl.Wall(charge_density=0.0, gate_capacitance=capacitance, gate_voltage=rng.uniform(-0.3, 0.3))
            for _ in range(2)]
    electrode = edl.Wall(zeta=rng.uniform(-0.1, 0.1))
    return (electrode, gate[0]), (electrode, gate[1])


def sample(rng: np.random.Generator) -> tuple[edl.Case, edl.Case, np.ndarray]:
    salt = _salt(rng)
    model = "pb" if rng.random() < 0.8 else "dh"
    size = 10 ** rng.uniform(np.log10(3e-9), np.log10(300e-9))
    drives = {"field": rng.choice([0.0, 1e4]), "pressure_gradient": rng.choice([0.0, -1e9])}
    if rng.random() < 0.3:
        geometry = edl.Capillary(radius=size / 2)
        before_wall, after_wall = edl.Wall(zeta=rng.uniform(-0.2, 0.2)), edl.Wall(zeta=rng.uniform(-0.2, 0.2))
    else:
        geometry = edl.Slit(height=size)
        before_wall, after_wall = _wall_pair(rng)
    before = edl.Case(geometry, salt, before_wall, model=model)
    case = edl.Case(geometry, salt, after_wall, model=model, **drives)
    debye = case.debye_length**2 / 2e-9
    diffusion = geometry.half_size**2 / 2e-9
    times = np.geomspace(0.01 * min(debye, diffusion), 10 * diffusion, 20)
    return case, before, times


def _classify(message: str) -> str:
    reason = message.split(":", 1)[-1] if "):" in message else message
    return re.sub(r"[-+]?\d[\d.eE+-]*", "#", reason).strip()[:140]


def main() -> None:
    seed, count = int(sys.argv[1]), int(sys.argv[2])
    outcomes: collections.Counter = collections.Counter()
    slowest, worst_drift = (0.0, ""), 0.0
    for index in range(count):
        rng = np.random.default_rng([seed, index])
        try:
            case, before, times = sample(rng)
        except InputError as exc:
            outcomes["sample refused: " + _classify(str(exc))] += 1
            continue
        start = time.perf_counter()
        try:
            run = edl.transient(case, times, before=before)
        except (InputError, ConvergenceError) as exc:
            outcomes[f"{type(exc).__name__}: {_classify(str(exc))}"] += 1
            print(f"{index}: {type(exc).__name__}: {str(exc)[:300]}", flush=True)
            continue
        except Exception as exc:  # a crash: the point of this run
            outcomes[f"CRASH {type(exc).__name__}"] += 1
            print(f"{index}: CRASH {type(exc).__name__}: {exc} :: {case.describe()} / {before.describe()}", flush=True)
            continue
        seconds = time.perf_counter() - start
        if seconds > slowest[0]:
            slowest = (seconds, case.describe())
        values = [run[name].values for name in ("mean_velocity_eo", "wall_charge_density", "inventory", "potential")]
        if not all(np.all(np.isfinite(v)) for v in values):
            outcomes["silent NaN"] += 1
            print(f"{index}: NaN :: {case.describe()}", flush=True)
            continue
        inventory = run["inventory"].values
        worst_drift = max(worst_drift, float(np.max(np.abs(inventory / inventory[0] - 1))))
        outcomes["ok"] += 1
    for outcome, n in outcomes.most_common():
        print(f"{n:5d}  {outcome}")
    print(f"largest inventory drift {worst_drift:.2g}; slowest {slowest[0]:.1f} s: {slowest[1]}")


if __name__ == "__main__":
    main()
