"""Solve time of the rectangular-section core (``edl_solver.model.rectangle``) at accuracy 1e-6.

Run from the repository root::

    python benchmarks/bench_rectangle.py
    python benchmarks/bench_rectangle.py --accuracy 1e-8 --zeta -4

Cases: a square and a 1:20 rectangle (W = 20 H) at kappa h = 1, 10, 100 (h = min(W, H)/2), 1:1 electrolyte,
nonlinear PB, the same wall potential on all four walls. Printed per case: the wall-clock time (best of
``--repeat``; ``time.perf_counter``), the cells per direction of the quarter's finest grid, Newton iterations, the
error estimate, the charge-balance and reciprocity residuals, and the mean EO velocity (units eps kT / (e eta)).

No comparison with a finite-element package (scikit-fem) yet: that is left to the session that wires the
rectangle into ``Case``. Timings are noisy on a shared machine; only ratios within one run mean much.
"""

from __future__ import annotations

import argparse
import time

from edl_solver.model.rectangle import solve_rectangle_section


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--accuracy", type=float, default=1e-6)
    parser.add_argument("--zeta", type=float, default=-2.0, help="wall potential, kT/e")
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    print(f"accuracy {args.accuracy:g}, zeta {args.zeta:g} kT/e, PB, 1:1 electrolyte")
    print(f"{'W:H':>5} {'kappa h':>8} {'time s':>8} {'cells':>6} {'Newton':>7} {'estimate':>9} {'balance':>9} "
          f"{'recipr.':>9} {'mean u_eo':>12}")
    for aspect in (1, 20):
        for kappa_h in (1.0, 10.0, 100.0):
            best = float("inf")
            for _ in range(args.repeat):
                start = time.perf_counter()
                sol = solve_rectangle_section(2.0 * aspect, 2.0, 1.0 / kappa_h, [1, -1], [1.0, 1.0], model="pb",
                                              zeta=args.zeta, accuracy=args.accuracy)
                best = min(best, time.perf_counter() - start)
            print(f"{aspect:>3}:1 {kappa_h:>8g} {best:>8.3f} {sol.intervals:>6d} {sol.iterations:>7d} "
                  f"{sol.estimate:>9.1e} {sol.charge_balance:>9.1e} {sol.reciprocity:>9.1e} "
                  f"{sol.mean_velocity_eo:>12.8f}")


if __name__ == "__main__":
    main()
