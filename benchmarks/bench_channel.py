"""Cost of a 100-point I-V curve of a finite channel, against one cross-section solve.

Run from the repository root::

    python benchmarks/bench_channel.py              # four channels, 100-point I-V curves
    python benchmarks/bench_channel.py --points 200 --repeat 7 --json out.json

Not a timed test: it prints a table. For each channel it measures, in the same process and warm (numba
compiled, xarray imported):

* one cross-section solve ``edl.solve`` of the channel's case (median of ``--solves`` runs): the unit;
* the precomputation ``channel.tabulate`` (the table of cross-section solves plus the midpoint checks);
* a ``--points``-point I-V curve ``channel.current_voltage`` on the table (median of ``--repeat`` runs);
* the whole job from a fresh Channel: tabulate + I-V curve.

and prints the times and their ratios to one cross-section solve, with the table's interpolation error,
the largest quadrature-error estimate and the number of failed points. Timings are wall clock
(``time.perf_counter``), garbage collector off in the timed loops; noisy on a shared machine: read the
ratios within one run.
"""

from __future__ import annotations

import argparse
import gc
import json
import platform
import statistics
import sys
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))  # run from a checkout without installing

import edl_solver as edl  # noqa: E402
from edl_solver import channel as ch  # noqa: E402
from edl_solver.channel.model import cases_at  # noqa: E402

SOLVENT = edl.Solvent(temperature=298.15, relative_permittivity=78.4, viscosity=0.89e-3)


def kcl(millimolar: float) -> edl.Electrolyte:
    return edl.Electrolyte.from_ions({"K+": millimolar, "Cl-": millimolar})


def channels() -> dict[str, tuple[ch.Channel, float]]:
    """Name -> (channel, largest |voltage| of its I-V curve, V)."""
    return {
        "selective slit 2 nm, -50 mC/m^2, KCl 0.1|1 mM, 1 um": (ch.Channel(
            edl.Case(geometry=edl.Slit(height="2 nm"), electrolyte=kcl(1.0),
                     wall=edl.Wall(charge_density="-50 mC/m^2"), solvent=SOLVENT), "1 um", 0.1, 1.0), 1.0),
        "slit 100 nm, zeta -50 mV, KCl 1|100 mM, 10 um": (ch.Channel(
            edl.Case(geometry=edl.Slit(height="100 nm"), electrolyte=kcl(1.0), wall=edl.Wall(zeta="-50 mV"),
                     solvent=SOLVENT), "10 um", 1.0, 100.0), 2.0),
        "capillary 10 nm, -20 mC/m^2, KCl 100|1 mM, 5 um": (ch.Channel(
            edl.Case(geometry=edl.Capillary(radius="10 nm"), electrolyte=kcl(1.0),
                     wall=edl.Wall(charge_density="-20 mC/m^2"), solvent=SOLVENT), "5 um", 100.0, 1.0), 1.0),
        "equal reservoirs: slit 20 nm, -5 mC/m^2, KCl 1|1 mM, 10 um": (ch.Channel(
            edl.Case(geometry=edl.Slit(height="20 nm"), electrolyte=kcl(1.0),
                     wall=edl.Wall(charge_density="-5 mC/m^2"), solvent=SOLVENT), "10 um", 1.0, 1.0), 1.0),
    }


def timed(function: Callable[[], Any], repeat: int) -> tuple[list[float], Any]:
    """Wall-clock times of ``repeat`` calls (garbage collector off) and the last result."""
    times, result = [], None
    gc.disable()
    try:
        for _ in range(repeat):
            start = time.perf_counter()
            result = function()
            times.append(time.perf_counter() - start)
    finally:
        gc.enable()
    return times, result


def measure(channel: ch.Channel, largest: float, points: int, repeat: int, solves: int) -> dict[str, Any]:
    voltages = np.linspace(-largest, largest, points)
    at_right = cases_at(channel.case, np.array([channel.right_concentration]))[0]
    solve_times, _ = timed(lambda: edl.solve(at_right), solves)
    table_times, table = timed(lambda: ch.tabulate(channel), 3)
    curve_times, curve = timed(lambda: ch.current_voltage(table, voltages), repeat)
    whole_times, _ = timed(lambda: ch.current_voltage(ch.tabulate(channel), voltages), 3)
    solve = statistics.median(solve_times)
    figures = {
        "solve_s": solve,
        "tabulate_s": statistics.median(table_times),
        "iv_s": statistics.median(curve_times),
        "iv_min_s": min(curve_times),
        "whole_s": statistics.median(whole_times),
        "table_solves": table.solves,
        "interpolation_error": table.interpolation_error,
        "potential_interpolation_error": table.potential_interpolation_error,
        "max_quadrature_error": float(np.nanmax(curve.quadrature_error.values)),
        "failed_points": int(curve.status.values.sum()),
        "newton_iterations": int(curve.iterations.values.sum()),
    }
    figures["iv_per_solve"] = figures["iv_s"] / solve
    figures["whole_per_solve"] = figures["whole_s"] / solve
    return figures


def main(argv: list[str] | None = None) -> dict[str, Any]:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=100, help="voltages of the I-V curve")
    parser.add_argument("--repeat", type=int, default=5, help="timed I-V curves per channel")
    parser.add_argument("--solves", type=int, default=30, help="timed cross-section solves per channel")
    parser.add_argument("--json", type=Path, help="write the figures here")
    args = parser.parse_args(argv)

    import xarray  # noqa: F401 - imported before timing (current_voltage returns a Dataset)

    warm = channels()
    for channel, largest in warm.values():  # compile / load the kernels, fill the caches
        ch.current_voltage(ch.tabulate(channel), np.linspace(-largest, largest, 5))
    results = {}
    print(f"{args.points}-point I-V curves; times in ms (median); ratios to one cross-section solve")
    header = (f"{'channel':58s} {'solve':>7s} {'table':>7s} {'I-V':>7s} {'I-V/solve':>9s} {'all':>7s} "
              f"{'all/solve':>9s} {'interp':>8s} {'quad':>8s} {'fail':>4s}")
    print(header)
    for name, (channel, largest) in warm.items():
        f = measure(channel, largest, args.points, args.repeat, args.solves)
        results[name] = f
        print(f"{name:58s} {1e3 * f['solve_s']:7.3f} {1e3 * f['tabulate_s']:7.1f} {1e3 * f['iv_s']:7.1f} "
              f"{f['iv_per_solve']:9.0f} {1e3 * f['whole_s']:7.1f} {f['whole_per_solve']:9.0f} "
              f"{f['interpolation_error']:8.1e} {f['max_quadrature_error']:8.1e} {f['failed_points']:4d}")
    machine = {"python": platform.python_version(), "numpy": np.__version__, "machine": platform.machine(),
               "system": platform.system(), "edl_solver": edl.__version__}
    print("machine:", machine)
    if args.json:
        args.json.write_text(json.dumps({"machine": machine, "results": results}, indent=2))
    return results


if __name__ == "__main__":
    main()
