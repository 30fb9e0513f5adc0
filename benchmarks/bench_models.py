"""Cost of the wall and ion models relative to the plain Poisson-Boltzmann solve, side by side in one run.

Run: python benchmarks/bench_models.py [--repeats N]

Each model is timed on the same slits (three heights, 1 mM KCl) with edl.solve and with the compiled
section solve alone (equilibrium.solve_section), after a warm-up that pays numba's compilation; the
figure of merit is the ratio to the plain PB case of the same height (target <= 3x).
"""

from __future__ import annotations

import argparse
import platform
import statistics
import time

import edl_solver as edl
from edl_solver.model import equilibrium, scaling


def cases() -> dict[str, list[edl.Case]]:
    salt = {"K+": "1 mM", "Cl-": "1 mM"}
    plain = edl.Electrolyte.from_ions(salt)
    acid = edl.Electrolyte.from_ions(salt, pH=7)
    sized = edl.Electrolyte([edl.Ion(name=n, concentration=1.0, diameter=0.7e-9) for n in ("K+", "Cl-")])
    heights = ("5 nm", "50 nm", "500 nm")

    def make(electrolyte: edl.Electrolyte, wall: edl.Wall, **kw: object) -> list[edl.Case]:
        return [edl.Case(geometry=edl.Slit(height=h), electrolyte=electrolyte, wall=wall, field=1e3,
                         pressure_gradient=-1e5, **kw) for h in heights]

    return {
        "plain PB, fixed zeta -80 mV": make(plain, edl.Wall(zeta="-80 mV")),
        "plain PB, fixed charge": make(plain, edl.Wall(charge_density="-10 mC/m^2")),
        "regulated silica (sites + Stern)": make(acid, edl.Wall.silica()),
        "gate electrode": make(plain, edl.Wall(gate_voltage="0.3 V", gate_capacitance="10 mF/m^2")),
        "steric (0.7 nm ions), -300 mV": make(sized, edl.Wall(zeta="-300 mV"), model="steric"),
        "plain PB, -300 mV (steric's peer)": make(plain, edl.Wall(zeta="-300 mV")),
        "slip 5 nm + viscoelectric water": make(plain, edl.Wall(zeta="-80 mV", slip_length="5 nm"),
                                                solvent=edl.Water(viscoelectric=True)),
    }


def timed(function, repeats: int) -> float:
    samples = []
    for _ in range(5):
        start = time.perf_counter()
        for _ in range(repeats):
            function()
        samples.append((time.perf_counter() - start) / repeats)
    return statistics.median(samples) * 1e6


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeats", type=int, default=100)
    args = parser.parse_args()
    groups = cases()
    for group in groups.values():
        for case in group:
            edl.solve(case)  # warm-up: compile and fill caches
    print(f"{platform.platform()}, {platform.python_version()}; median of 5 x {args.repeats} solves per case")
    print(f"{'model':<36} {'edl.solve us':>13} {'kernel us':>10} {'ratio solve':>12} {'ratio kernel':>13}")
    reference = None
    for name, group in groups.items():
        full = kernel = 0.0
        for case in group:
            problem = scaling.prepare(case).problem
            full += timed(lambda c=case: edl.solve(c), args.repeats) / len(group)
            kernel += timed(lambda p=problem, a=case.numerics.accuracy: equilibrium.solve_section(p, a),
                            args.repeats) / len(group)
        if reference is None:
            reference = (full, kernel)
        print(f"{name:<36} {full:13.1f} {kernel:10.1f} {full / reference[0]:12.2f} {kernel / reference[1]:13.2f}")


if __name__ == "__main__":
    main()
