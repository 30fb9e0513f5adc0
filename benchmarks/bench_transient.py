"""A charging transient at 1e-6, side by side: edl.transient against FiPy and scipy's solve_ivp (issue 14).

Run: python benchmarks/bench_transient.py [--quick] [--fipy-budget S] [--no-fipy] [--check-reference] [--json PATH]
(FiPy is in the optional extra `bench`: pip install -e .[bench]; without it that peer is skipped).

Problem (benchmarks/transient_peers.py): charging of a slit between blocking electrodes stepped to -+V/2 (Bazant,
Thornton & Ajdari 2004), kL = 10 and 50, V = 0.1 and 4 kT/e; the figure compared is the charge of the top
electrode at 50 log-spaced times from 1e-3 RC times to 3 diffusion times, relative max error over the series
against the converged reference (solve_ivp BDF at rtol 1e-12 on three grids, Richardson-extrapolated). Each peer
climbs a ladder of settings; the cheapest that meets 1e-6 is timed again (median of --repeats). edl_solver is
called as ``edl.transient(case, times, before=rest)["wall_charge_density"]`` with Numerics(accuracy=1e-6),
warmed up once; if the call raises, its row says "not available" and why.
"""

from __future__ import annotations

import argparse
import importlib.util
import json
import math
import os
import platform
import statistics
import sys
import time
from collections.abc import Callable

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))

import transient_peers as tp

TARGET = 1e-6
#: solve_ivp: the tolerances tried; the grid is predicted from the error at PILOT_INTERVALS (second order).
RTOLS = (1e-6, 1e-7, 1e-8, 1e-9, 1e-10)
PILOT_INTERVALS = 400
#: FiPy: (cells, steps per decade), each rung halving the cell size and the step.
FIPY_LADDER = ((50, 5), (100, 10), (200, 20), (400, 40), (800, 80))


def relative_error(series: np.ndarray, ref: np.ndarray) -> float:
    return float(np.max(np.abs(series / ref - 1.0)))


def timed(call: Callable[[], np.ndarray]) -> tuple[np.ndarray, float]:
    start = time.perf_counter()
    out = call()
    return out, time.perf_counter() - start


def median_time(call: Callable[[], object], repeats: int) -> float:
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        call()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def even(value: float) -> int:
    return 2 * math.ceil(value / 2.0)


def ivp_ladder(problem: tp.Problem, ref: np.ndarray, repeats: int) -> dict:
    """Per rtol: the grid predicted to meet TARGET from the pilot's error (x1.1 until met, at most 4 tries, and
    stopping once the error no longer falls: the time integration's floor); the cheapest passing run re-timed."""
    tries = []
    series, seconds = timed(lambda: tp.solve_ivp_peer(problem, PILOT_INTERVALS, min(RTOLS)))
    pilot_error = relative_error(series, ref)
    tries.append({"intervals": PILOT_INTERVALS, "rtol": min(RTOLS), "error": pilot_error, "seconds": seconds})
    for rtol in RTOLS:
        n = even(PILOT_INTERVALS * math.sqrt(pilot_error / (0.9 * TARGET)))
        last = math.inf
        for _ in range(4):
            series, seconds = timed(lambda n=n, rtol=rtol: tp.solve_ivp_peer(problem, n, rtol))
            error = relative_error(series, ref)
            tries.append({"intervals": n, "rtol": rtol, "error": error, "seconds": seconds})
            if error <= TARGET or error > 0.8 * last:
                break
            last, n = error, even(1.1 * n * math.sqrt(error / TARGET))
    passing = [t for t in tries if t["error"] <= TARGET]
    best = min(passing, key=lambda t: t["seconds"]) if passing else None
    if best is not None:
        best = dict(best, seconds=median_time(lambda: tp.solve_ivp_peer(problem, best["intervals"], best["rtol"]),
                                              repeats))
    return {"tries": tries, "best": best}


def fipy_ladder(problem: tp.Problem, ref: np.ndarray, budget: float) -> dict:
    """Rungs of FIPY_LADDER while the next one's predicted cost (the last one's x the last cost ratio, x3 after
    the first) fits the budget left. Then the cost at TARGET, extrapolated from the last rung by the scheme's
    orders: second order in the cell size and the step, so the error falls 4x per rung, while the cost grows
    2x per rung (twice the steps) times the growth of the cost per sweep measured between the last two rungs."""
    rungs, spent = [], 0.0
    for cells, steps in FIPY_LADDER:
        if rungs:
            growth = rungs[-1]["seconds"] / rungs[-2]["seconds"] if len(rungs) > 1 else 3.0
            if spent + rungs[-1]["seconds"] * growth > budget:
                break
        stats: dict[str, int] = {}
        try:
            series, seconds = timed(lambda c=cells, s=steps, st=stats: tp.fipy_peer(problem, c, s, stats=st))
        except RuntimeError as exc:
            rungs.append({"cells": cells, "steps_per_decade": steps, "failed": str(exc)})
            break
        spent += seconds
        rungs.append({"cells": cells, "steps_per_decade": steps, "error": relative_error(series, ref),
                      "seconds": seconds, **stats})
        if rungs[-1]["error"] <= TARGET:
            break
    done = [r for r in rungs if "error" in r]
    out = {"rungs": rungs, "extrapolated_seconds": None, "extra_rungs": None}
    if len(done) >= 2 and done[-1]["error"] > TARGET:
        a, b = done[-2], done[-1]
        per_sweep = max(1.0, (b["seconds"] / b["sweeps"]) / (a["seconds"] / a["sweeps"]))
        extra = math.log(b["error"] / TARGET) / math.log(4.0)
        out["extra_rungs"] = extra
        out["extrapolated_seconds"] = b["seconds"] * (2.0 * per_sweep) ** extra
    return out


#: edl.transient: the accuracies tried; 1e-6 is the setting the issue asks for, the looser ones find the cheapest
#: setting that still meets 1e-6 against the reference (as the peers' ladders do).
EDL_ACCURACIES = (1e-6, 3e-6, 1e-5, 3e-5)


def edl_side(problem: tp.Problem, ref: np.ndarray, repeats: int) -> dict:
    """edl.transient's top-wall charge in units of eps kT/(e L): error and median warm time at each accuracy, the
    one asked for (1e-6) and the cheapest meeting 1e-6; or why not."""
    try:
        import dataclasses

        import edl_solver as edl

        si = tp.si_cases(problem)

        def call(accuracy: float) -> np.ndarray:
            case = dataclasses.replace(si.case, numerics=edl.Numerics(accuracy=accuracy))
            charge = edl.transient(case, si.times, before=si.rest)["wall_charge_density"]
            if "wall" in charge.dims:
                charge = charge.sel(wall="top")
            return np.asarray(charge.values, dtype=float) / si.sigma_unit

        series = call(TARGET)  # warm-up (compilation, caches)
    except Exception as exc:  # any failure is reported, not raised
        return {"available": False, "reason": f"{type(exc).__name__}: {str(exc).splitlines()[0][:160]}"}
    tries = []
    for accuracy in EDL_ACCURACIES:
        series = call(accuracy)
        tries.append({"accuracy": accuracy, "error": relative_error(series, ref),
                      "seconds": median_time(lambda a=accuracy: call(a), repeats)})
    asked = tries[0]
    meeting = [t for t in tries if t["error"] <= TARGET]
    best = min(meeting, key=lambda t: t["seconds"]) if meeting else None
    return {"available": True, "error": asked["error"], "seconds": asked["seconds"], "tries": tries, "best": best,
            "sign_flipped": bool(relative_error(-series, ref) < relative_error(series, ref))}


def check_reference(problem: tp.Problem, ref: np.ndarray) -> dict:
    """The reference against one finer grid triple at the same rtol, the same grids at rtol x10, and (a V = 1e-4
    problem with the same kL) the linear-limit Laplace solution."""
    grids = tuple(2 * n for n in tp.REFERENCE_INTERVALS)
    finer, _ = tp.reference(problem, grids)
    looser, _ = tp.reference(problem, rtol=10 * tp.REFERENCE_RTOL)
    small = tp.Problem(problem.kappa_l, 1e-4)
    linear, _ = tp.reference(small)
    return {"vs_finer_grids": relative_error(ref, finer), "vs_rtol_x10": relative_error(ref, looser),
            "linear_limit_vs_laplace": relative_error(linear, tp.linear_sigma(small))}


def run_problem(problem: tp.Problem, args: argparse.Namespace, with_fipy: bool) -> dict:
    (ref, estimate), ref_seconds = timed(lambda: tp.reference(problem))
    row = {"problem": problem.label, "kappa_l": problem.kappa_l, "voltage": problem.voltage,
           "reference": {"seconds": ref_seconds, "estimate": float(np.max(estimate)),
                         "sigma_first": float(ref[0]), "sigma_last": float(ref[-1])}}
    if args.check_reference:
        row["reference"]["checks"] = check_reference(problem, ref)
    row["edl"] = edl_side(problem, ref, args.repeats)
    row["solve_ivp"] = ivp_ladder(problem, ref, args.repeats)
    if with_fipy:
        row["fipy"] = fipy_ladder(problem, ref, args.fipy_budget)
    return row


def ratio_text(peer_seconds: float | None, edl: dict) -> str:
    if peer_seconds is None or not edl.get("available"):
        return "-"
    return f"{peer_seconds / edl['seconds']:.1f}x"


def print_row(row: dict) -> None:
    ref, edl, ivp = row["reference"], row["edl"], row["solve_ivp"]
    print(f"\n== {row['problem']}: reference {ref['seconds']:.1f} s, estimate {ref['estimate']:.1e}, "
          f"sigma {ref['sigma_first']:.6g} -> {ref['sigma_last']:.6g} (eps kT/(e L))", flush=True)
    for name, value in ref.get("checks", {}).items():
        print(f"   reference check {name}: {value:.1e}")
    for t in ivp["tries"]:
        print(f"   solve_ivp n = {t['intervals']:5d} rtol {t['rtol']:.0e}: error {t['error']:.2e}, "
              f"{t['seconds']:.3f} s")
    for r in row.get("fipy", {}).get("rungs", []):
        if "failed" in r:
            print(f"   fipy cells {r['cells']:4d}, {r['steps_per_decade']:3d} steps/decade: failed ({r['failed']})")
            continue
        print(f"   fipy cells {r['cells']:4d}, {r['steps_per_decade']:3d} steps/decade ({r['steps']} steps, "
              f"{r['sweeps']} sweeps): error {r['error']:.2e}, {r['seconds']:.2f} s")
    best = ivp["best"]
    print("   solve_ivp at 1e-6: " + (f"n = {best['intervals']}, rtol {best['rtol']:.0e}, error {best['error']:.2e}, "
                                       f"{best['seconds']:.3f} s (median)" if best else "not reached"))
    if "fipy" in row:
        fipy = row["fipy"]
        if fipy["rungs"] and fipy["rungs"][-1].get("error", math.inf) <= TARGET:
            print(f"   fipy at 1e-6: {fipy['rungs'][-1]['seconds']:.1f} s")
        elif fipy["extrapolated_seconds"] is not None:
            print(f"   fipy at 1e-6: not reached; {fipy['extra_rungs']:.1f} more rungs, extrapolated "
                  f"{fipy['extrapolated_seconds']:.3g} s")
    if edl["available"]:
        flip = " (sign flipped against sigma = dpsi/dx(top))" if edl["sign_flipped"] else ""
        for t in edl["tries"]:
            print(f"   edl.transient accuracy {t['accuracy']:.0e}: error {t['error']:.2e}, {t['seconds']:.4f} s")
        print(f"   edl.transient at accuracy 1e-6: error {edl['error']:.2e}, {edl['seconds']:.4f} s (median){flip}; "
              f"ratio solve_ivp/edl {ratio_text(best and best['seconds'], edl)}, fipy/edl "
              f"{ratio_text(row.get('fipy', {}).get('extrapolated_seconds'), edl)} (extrapolated)")
        cheapest = edl["best"]
        if cheapest is not None:
            print(f"   edl.transient cheapest meeting 1e-6: accuracy {cheapest['accuracy']:.0e}, error "
                  f"{cheapest['error']:.2e}, {cheapest['seconds']:.4f} s; ratio solve_ivp/edl "
                  f"{ratio_text(best and best['seconds'], cheapest | {'available': True})}")
    else:
        print(f"   edl.transient: not available ({edl['reason']})")


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="kL = 10 only, FiPy budget 30 s")
    parser.add_argument("--fipy-budget", type=float, default=60.0, help="FiPy seconds per problem (default 60)")
    parser.add_argument("--no-fipy", action="store_true")
    parser.add_argument("--check-reference", action="store_true", help="finer grids, looser rtol, Laplace")
    parser.add_argument("--repeats", type=int, default=3)
    parser.add_argument("--json", help="write every figure here")
    args = parser.parse_args(argv)
    with_fipy = not args.no_fipy and importlib.util.find_spec("fipy") is not None
    if not args.no_fipy and not with_fipy:
        print("FiPy not installed (pip install -e .[bench]): its peer is skipped")
    if args.quick:
        args.fipy_budget = min(args.fipy_budget, 30.0)
    problems = [p for p in tp.PROBLEMS if not args.quick or p.kappa_l == 10.0]
    print(f"target {TARGET:g} relative max error over {tp.N_TIMES} times; {platform.machine()}, "
          f"Python {platform.python_version()}, numpy {np.__version__}, os.getloadavg {os.getloadavg()[0]:.2f}")
    rows = []
    for problem in problems:
        rows.append(run_problem(problem, args, with_fipy))
        print_row(rows[-1])
    if args.json:
        with open(args.json, "w") as handle:
            json.dump({"target": TARGET, "machine": platform.platform(), "rows": rows}, handle, indent=1)


if __name__ == "__main__":
    main()
