"""Random rectangles through ``edl.solve`` (issue 13): counts solves, refusals and crashes, prints each failure.

Not part of the suite (a few minutes per 300 cases). ``python stress/rectangle_domain_run.py SEED COUNT``.
Sizes 3 nm to 3 um, aspect ratios W/H from 0.03 to 30, 1:1 salt from 0.01 to 300 mM, models PB, DH and steric
(0.6 nm ions), walls of fixed zeta, fixed charge or silica (regulated), one wall for all four or a different pair
half of the time. Inputs the case refuses (InputError: the domain's edge, two different fixed potentials) are
counted apart.
"""

from __future__ import annotations

import collections
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import edl_solver as edl


def _wall(rng: np.random.Generator, kind: int) -> edl.Wall:
    if kind == 0:
        return edl.Wall(zeta=rng.uniform(-0.3, 0.3))
    if kind == 1:
        return edl.Wall(charge_density=rng.uniform(-0.2, 0.2))
    return edl.Wall.silica()


def _case(rng: np.random.Generator) -> edl.Case:
    height = 10 ** rng.uniform(-8.5, -5.5)
    width = height * 10 ** rng.uniform(-1.5, 1.5)
    concentration = 10 ** rng.uniform(-2, 2.5)
    model = ("pb", "dh", "steric")[rng.integers(3)]
    kinds = rng.integers(3, size=2)
    pair = rng.random() < 0.5
    diameter = "0.6 nm" if model == "steric" else None
    ions = [edl.Ion(name, concentration=concentration, diameter=diameter) for name in ("K+", "Cl-")]
    electrolyte = edl.Electrolyte(ions, pH=rng.uniform(3, 10)) if 2 in kinds else edl.Electrolyte(ions)
    wall = (_wall(rng, kinds[0]), _wall(rng, kinds[1])) if pair else _wall(rng, kinds[0])
    return edl.Case(edl.Rectangle(width=width, height=height), electrolyte, wall, field=1e4, model=model)


def main(seed: int, count: int) -> None:
    rng = np.random.default_rng(seed)
    counts: collections.Counter[str] = collections.Counter()
    refused: collections.Counter[str] = collections.Counter()
    start = time.time()
    for _ in range(count):
        try:
            case = _case(rng)
        except edl.InputError as error:
            refused[str(error).split(":")[0]] += 1
            continue
        try:
            summary = edl.solve(case).summary  # building the summary runs its checks too
            counts["solved" if np.isfinite(summary["mean_velocity_eo"]) else "NaN"] += 1
        except edl.ConvergenceError as error:
            counts["ConvergenceError"] += 1
            print("FAIL", str(error)[:400])
        except Exception as error:  # a crash is what this run looks for
            counts["crash"] += 1
            print("CRASH", type(error).__name__, error, case.describe())
    print(dict(counts), f"{time.time() - start:.0f} s; refused inputs:", dict(refused))


if __name__ == "__main__":
    main(int(sys.argv[1]), int(sys.argv[2]))
