"""Random run through the promised domain (issue 10): counts results, refusals by class, crashes and silent NaN.

Not part of the suite (it takes minutes). ``python stress/domain_run.py SEED COUNT [--workers N]``.
"""

from __future__ import annotations

import argparse
import collections
import math
import multiprocessing
import re
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import edl_solver as edl
from edl_solver.errors import ConvergenceError
from tests.model.domain_sampler import sample

#: Full-model values that must be finite, or NaN with a note naming them.
CHECKED = ("zeta", "wall_charge_density", "centre_potential", "flow_rate_eo", "flow_rate_pressure",
           "conduction_current", "current_per_field", "charge_balance", "reciprocity_residual",
           "figure_of_merit", "max_efficiency", "efficiency_at_max_power", "electroviscous_ratio")


def _classify(message: str) -> str:
    """The refusal class: the message with its numbers and case description stripped."""
    reason = message.split(":", 1)[-1] if "):" in message else message
    reason = re.sub(r"[-+]?\d[\d.eE+-]*", "#", reason)
    return reason.strip()[:140]


def _one(args: tuple[int, int]) -> tuple[str, str, str]:
    seed, index = args
    rng = np.random.default_rng([seed, index])
    case = sample(rng)
    try:
        result = edl.solve(case)
        summary = result.summary
    except ConvergenceError as error:
        return "refused", _classify(str(error)), case.describe() + " model=" + case.model
    except Exception as error:
        return "crash", f"{type(error).__name__}: {error}"[:200], case.describe() + " model=" + case.model
    notes = " ".join(result.warnings)
    silent = [key for key in CHECKED if not np.all(np.isfinite(summary[key])) and key not in notes]
    if silent:
        return "silent_nan", ",".join(silent), case.describe() + " model=" + case.model
    return "ok", "", ""


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("seed", type=int)
    parser.add_argument("count", type=int)
    parser.add_argument("--workers", type=int, default=2)
    parser.add_argument("--examples", type=int, default=2)
    args = parser.parse_args()
    jobs = [(args.seed, i) for i in range(args.count)]
    with multiprocessing.Pool(args.workers) as pool:
        outcomes = pool.map(_one, jobs, chunksize=20)
    totals = collections.Counter(kind for kind, _, _ in outcomes)
    print(dict(totals))
    classes: dict[tuple[str, str], list[str]] = collections.defaultdict(list)
    for kind, reason, case in outcomes:
        if kind != "ok":
            classes[(kind, reason)].append(case)
    for (kind, reason), found in sorted(classes.items(), key=lambda item: -len(item[1])):
        print(f"{len(found):6d} {kind}: {reason}")
        for case in found[: args.examples]:
            print("         e.g.", case)
    sys.exit(1 if totals.get("crash") or totals.get("silent_nan") else 0)


if __name__ == "__main__":
    math.isfinite(0.0)
    main()
