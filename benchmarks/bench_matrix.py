"""Cost of the linear-response matrix on top of the equilibrium solve, measured side by side in one run.

Run: python benchmarks/bench_matrix.py

Every edl.solve computes the matrix. Its cost has two parts: in the compiled kernel, one Stokes solve per
ion and the ion-by-ion integrals on every grid level; in the compiled summary (``_summary.summarize``), the
matrix assembly, the 3 x 3 reduction, the lab quantities and the thin-layer matrix. The first is measured
as the kernel time spent in those Stokes solves and sums (timed on the finest grid and scaled by the
levels' node counts), the second as the whole compiled summary (an upper bound: it also computes the flow
rates, currents and the thin-layer comparison); the ratio reported is solve / (solve - matrix parts), i.e.
the cost of the matrix relative to the same solve without it (target <= 1.5).
"""

from __future__ import annotations

import numpy as np
from bench_models import timed
from numba import njit  # the same median-of-5 timer (this folder is on sys.path when run as a script)

import edl_solver as edl
from edl_solver.kernels import fv1d as _kernels
from edl_solver.kernels import layout as _layout
from edl_solver.kernels import summary as _summary
from edl_solver.model import equilibrium, scaling


@njit
def _summaries(p, inputs, solved, slip, deviation, out, repeats):
    # the summary called from compiled code, as a solve calls it: no boxing of its records at a Python boundary
    for _ in range(repeats):
        _summary.summarize(p, inputs, solved, slip, deviation, out)


def main() -> None:
    print(f"{'case':<34} {'solve us':>9} {'summary us':>11} {'matrix, kernel us':>18} {'ratio':>6}")
    for label, case in {
        "slit 50 nm, KCl 1 mM, -50 mV": edl.Case(geometry=edl.Slit(height="50 nm"), wall=edl.Wall(zeta="-50 mV"),
                                                 electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})),
        "capillary 10 nm, CaCl2, -5 mC/m^2": edl.Case(
            geometry=edl.Capillary(radius="10 nm"), wall=edl.Wall(charge_density="-5 mC/m^2"),
            electrolyte=edl.Electrolyte.from_ions({"Ca2+": "1 mM", "Cl-": "2 mM"})),
    }.items():
        edl.solve(case)
        full = timed(lambda c=case: edl.solve(c), 300)
        prepared = scaling.prepare(case)
        problem = prepared.problem
        section = equilibrium.solve_section(problem, case.numerics.accuracy)
        values = np.empty(_layout.SUMMARY_SIZE)
        slip = _summary.thin_slip(prepared.vector, prepared.isolated_array)
        arguments = (prepared.vector, prepared.inputs, section.solved, slip, 0.0, values)
        _summaries(*arguments, 1)
        python = timed(lambda a=arguments: _summaries(*a, 100), 30) / 100
        # kernel part: one Stokes solve per ion on each level (levels have n, n/2, n/4, n/8 intervals)
        g = section.grid
        n = g.x.size
        link, volume = g.link, g.volume
        flows = np.array([[_layout.FLUX if problem.half else _layout.POTENTIAL, 0.0], [_layout.POTENTIAL, 0.0]])
        rhs, u = -np.ones(n), np.empty(n)
        ones_link, ones_wall = np.ones(n - 1), np.ones(2)
        operator = _kernels.stokes_operator(link, ones_link, ones_wall, flows)
        arguments = (operator, volume, rhs, -1.0, flows, u)
        stokes = timed(lambda a=arguments: _kernels.stokes_solve(*a), 3000)
        kernel = stokes * problem.ions.shape[0] * (1 + 0.5 + 0.25 + 0.125) * 1.5  # x1.5 for the ion integrals
        print(f"{label:<34} {full:9.1f} {python:11.1f} {kernel:18.1f} {full / (full - python - kernel):6.2f}")


if __name__ == "__main__":
    main()
