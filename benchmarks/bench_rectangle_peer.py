"""One rectangle solve at 1e-6 against the same problem in scikit-fem: time and DOFs per kappa h and aspect ratio.

Run: python benchmarks/bench_rectangle_peer.py [--repeats N] [--ladder] [--json PATH]
(needs the optional extra `bench`: pip install -e .[bench]; the edl side needs edl_solver.model.rectangle).

Cases: a square and 1:5 and 1:20 rectangles at kappa h = 1, 10, 100 (h = half the short side), 1:1 salt,
Debye-Hueckel (zeta = -1 kT/e, linear, so any zeta) and Poisson-Boltzmann (zeta = -4 kT/e). The figure compared is
the mean EO velocity <u> in units of eps kT E / (e eta). References: DH, the single series of
benchmarks/rectangle_reference.py (to ~1e-15); PB, the peer's own finest solutions (48 and 24 cells across the
short half side, Richardson-extrapolated at fourth order, the order the DH ladder shows). The peer (see
benchmarks/rectangle_fem.py) refines along a ladder of meshes and stops at the coarsest whose <u> is within 1e-6
relative of the reference; its time there is the median of --repeats warm solves (mesh, assembly, Newton,
both Stokes solves, the means; imports and the first call excluded).
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

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))

from rectangle_fem import solve_rectangle
from rectangle_reference import mean_eo_velocity_dh, mean_pressure_flow

ASPECTS = (1.0, 5.0, 20.0)
KAPPA_H = (1.0, 10.0, 100.0)
ZETA = {"dh": -1.0, "pb": -4.0}
LADDER = (3, 4, 5, 6, 7, 8, 10, 12, 14, 16, 20, 24, 28, 32, 40, 48)
TARGET = 1e-6
HALF_SHORT_SIDE = 10e-9  # m: h for the edl side (the figures are dimensionless; any h gives the same <u>)
THERMAL_VOLTAGE = 1.380649e-23 * 298.15 / 1.602176634e-19  # kT/e at 298.15 K, V


def edl_available() -> bool:
    """Whether the edl rectangle solver is in this checkout."""
    try:
        return importlib.util.find_spec("edl_solver.model.rectangle") is not None
    except ModuleNotFoundError:
        return False


def edl_mean_eo(aspect: float, kappa_h: float, zeta: float, model: str, accuracy: float) -> float:
    """The edl solver's mean EO velocity for one case, in units of eps kT E / (e eta).

    Calls ``edl_solver.model.rectangle.solve_rectangle_section(width, height, debye_length, valences,
    concentrations, model, zeta, accuracy=accuracy)`` with width = aspect * height, height = 2 h (h = 10 nm), the
    Debye length h / kappa_h, a 1:1 salt, model "dh" or "pb" and zeta in kT/e, and reads the extrapolated
    ``mean_velocity_eo`` (dimensionless, as here).
    """
    from edl_solver.model import rectangle

    height = 2.0 * HALF_SHORT_SIDE
    out = rectangle.solve_rectangle_section(aspect * height, height, HALF_SHORT_SIDE / kappa_h, (1, -1), (1.0, 1.0),
                                            model, zeta, accuracy=accuracy)
    return float(out.mean_velocity_eo)


def timed(call, repeats: int) -> float:
    """Median wall time of `repeats` calls, after one call that is not counted."""
    call()
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        call()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def reference(aspect: float, kappa_h: float, model: str) -> tuple[float, float]:
    """The reference mean EO velocity (see the module docstring) and an estimate of its own relative error.

    For PB the estimate is the Richardson correction itself (the finest solution's distance from the
    extrapolation), an upper bound of the extrapolation's error where the fourth order holds; for DH, 1e-15.
    """
    if model == "dh":
        return mean_eo_velocity_dh(kappa_h, aspect, 1.0, ZETA["dh"]), 1e-15
    fine = solve_rectangle(aspect, kappa_h, ZETA["pb"], "pb", 48).mean_eo
    half = solve_rectangle(aspect, kappa_h, ZETA["pb"], "pb", 24).mean_eo
    extrapolated = fine + (fine - half) / 15.0
    return extrapolated, abs(fine - extrapolated) / abs(extrapolated)


def peer_case(aspect: float, kappa_h: float, model: str, repeats: int, show_ladder: bool) -> dict:
    """Climb the ladder to the coarsest mesh at 1e-6 and time the solve there."""
    ref, ref_error = reference(aspect, kappa_h, model)
    for cells in LADDER:
        result = solve_rectangle(aspect, kappa_h, ZETA[model], model, cells)
        error = abs(result.mean_eo - ref) / abs(ref)
        if show_ladder:
            print(f"    {model} 1:{aspect:g} kh={kappa_h:g} cells={cells:3d} dofs={result.dofs:6d} "
                  f"rel.err={error:.2e} |<u>-<psi-zeta>|={abs(result.mean_eo - result.mean_psi_minus_zeta):.1e}")
        if error <= TARGET:
            break
    else:
        raise RuntimeError(f"peer did not reach {TARGET} on the ladder for {model} 1:{aspect:g} kh={kappa_h:g}")
    seconds = timed(lambda: solve_rectangle(aspect, kappa_h, ZETA[model], model, cells), repeats)
    pressure = mean_pressure_flow(aspect, 1.0)
    return {"model": model, "aspect": aspect, "kappa_h": kappa_h, "reference": ref, "reference_error": ref_error,
            "peer_mean_eo": result.mean_eo, "peer_error": error,
            "peer_pressure_error": abs(result.mean_pressure - pressure) / pressure, "cells": cells,
            "dofs": result.dofs, "newton": result.newton_iterations,
            "peer_s": seconds}


def edl_case(row: dict, repeats: int) -> None:
    """Add the edl solver's time, error and the ratio to a row."""
    args = (row["aspect"], row["kappa_h"], ZETA[row["model"]], row["model"], TARGET)
    value = edl_mean_eo(*args)
    row["edl_error"] = abs(value - row["reference"]) / abs(row["reference"])
    row["edl_s"] = timed(lambda: edl_mean_eo(*args), repeats)
    row["ratio"] = row["peer_s"] / row["edl_s"]


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=5, help="timed warm solves per case (median)")
    parser.add_argument("--ladder", action="store_true", help="print the error at every mesh of the ladder")
    parser.add_argument("--json", help="write all figures to this JSON file")
    args = parser.parse_args(argv)
    with_edl = edl_available()
    print(f"python {platform.python_version()}, {platform.machine()}, {os.cpu_count()} cpus; target {TARGET:g}")
    rows = []
    header = (f"{'model':5} {'W:H':>5} {'kh':>5} {'cells':>5} {'DOFs':>7} {'peer err':>9} {'peer ms':>9} "
              f"{'ref err':>8} {'<u_p> err':>9}")
    print(header + (f" {'edl err':>9} {'edl ms':>9} {'ratio':>7}" if with_edl else ""))
    for model in ("dh", "pb"):
        for aspect in ASPECTS:
            for kappa_h in KAPPA_H:
                row = peer_case(aspect, kappa_h, model, args.repeats, args.ladder)
                line = (f"{model:5} {f'1:{aspect:g}':>5} {kappa_h:5g} {row['cells']:5d} {row['dofs']:7d} "
                        f"{row['peer_error']:9.1e} {1e3 * row['peer_s']:9.1f} {row['reference_error']:8.0e} "
                        f"{row['peer_pressure_error']:9.1e}")
                if with_edl:
                    edl_case(row, args.repeats)
                    line += f" {row['edl_error']:9.1e} {1e3 * row['edl_s']:9.2f} {row['ratio']:7.1f}"
                print(line, flush=True)
                rows.append(row)
    if not with_edl:
        print("edl side not available: edl_solver.model.rectangle is not in this checkout (peer figures only)")
    total = sum(r["peer_s"] for r in rows)
    print(f"peer total {total:.2f} s over {len(rows)} cases; geometric mean "
          f"{1e3 * math.exp(statistics.fmean(math.log(r['peer_s']) for r in rows)):.1f} ms")
    if args.json:
        with open(args.json, "w", encoding="utf-8") as handle:
            json.dump({"rows": rows, "edl": with_edl, "machine": platform.platform()}, handle, indent=1)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
