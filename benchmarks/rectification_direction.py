"""The direction of ion current rectification against kappa a_tip: a table of |I(+V)/I(-V)| over the salt
concentration for negatively charged cones and tapered slits (``channel.rectification_curve``).

Run from the repository root::

    python benchmarks/rectification_direction.py                  # the table of the README (~2 min)
    python benchmarks/rectification_direction.py --tip 20 --salts KCl --lowest 1   # kappa a_tip up to ~65
    python benchmarks/rectification_direction.py --tip 50 --base 25 --length 10 --voltage 1 --charge -60 \\
        --salts KCl --kinds cone      # a larger, longer, more charged cone at 1 V
    python benchmarks/rectification_direction.py --json out.json

Not a test: it prints a table (rows: concentration, columns: channels) and, on stderr, each curve's time.
Signs as in ``channel.model``: the tip at x = 0 (left), Delta V = V(L) - V(0); a ratio below 1 means more current
when the tip's reservoir is the positive one (the cations then move from the tip to the base).

Channels: a capillary cone (``cone``, the radius) and a tapered slit (``slit``, the height) from a tip of --tip nm
at x = 0 to --base tips at x = L, --length um long; walls of --charge mC/m^2 (fixed charge, ``sigma``) or --zeta
mV (fixed zeta, ``zeta``); salts KCl-like (K+ and Cl- from the ion table), LiCl-like (Li+, slower than Cl-) and
an HCl-like model salt ("Hx": a cation of D = 9.31e-9 m^2/s, H+'s from memory; H+ itself cannot be scaled with
the concentration); each with the flow (water) and without it (the viscosity raised 1e4 times: the
electroosmotic and pressure-driven flow and the advection they carry vanish, while the ions' mobilities, set by
their diffusivities, stay). Tables of 16 concentrations and 8 sizes per channel (interpolation error < 1e-2).
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path
from typing import Any

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))  # run from a checkout without installing

import edl_solver as edl  # noqa: E402
from edl_solver.channel import Channel  # noqa: E402
from edl_solver.channel.rectification_curve import rectification_curve  # noqa: E402


def _salt(name: str) -> edl.Electrolyte:
    if name == "KCl":
        return edl.Electrolyte.from_ions({"K+": 1.0, "Cl-": 1.0})
    if name == "LiCl":
        return edl.Electrolyte.from_ions({"Li+": 1.0, "Cl-": 1.0})
    if name == "HClx":
        return edl.Electrolyte((edl.Ion("Hx", valence=1, concentration=1.0, diffusivity=9.31e-9),
                                edl.Ion("Cl-", concentration=1.0)))
    raise SystemExit(f"--salts: {name!r} is not one of KCl, LiCl, HClx")


def _channel(args: argparse.Namespace, kind: str, wall: str, salt: str, flow: bool) -> Channel:
    tip = args.tip * 1e-9
    geometry = edl.Capillary(radius=tip) if kind == "cone" else edl.Slit(height=tip)
    condition = edl.Wall(charge_density=args.charge * 1e-3) if wall == "sigma" else edl.Wall(zeta=args.zeta * 1e-3)
    solvent = edl.Solvent(temperature=298.15, relative_permittivity=78.4, viscosity=0.89e-3 * (1.0 if flow else 1e4))
    case = edl.Case(geometry=geometry, electrolyte=_salt(salt), wall=condition, solvent=solvent)
    return Channel(case, args.length * 1e-6, 1.0, 1.0, size=(tip, args.base * tip), points=16, size_points=8)


def _arguments() -> argparse.Namespace:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--quick", action="store_true", help="KCl only, 5 concentrations")
    parser.add_argument("--json", type=Path, help="write every curve's ratios as JSON")
    parser.add_argument("--tip", type=float, default=5.0, help="tip radius or height, nm (default 5)")
    parser.add_argument("--base", type=float, default=8.0, help="base over tip (default 8)")
    parser.add_argument("--length", type=float, default=1.0, help="length, um (default 1)")
    parser.add_argument("--voltage", type=float, default=0.5, help="|V|, V (default 0.5)")
    parser.add_argument("--charge", type=float, default=-20.0, help="fixed charge, mC/m^2 (default -20)")
    parser.add_argument("--zeta", type=float, default=-50.0, help="fixed zeta, mV (default -50)")
    parser.add_argument("--salts", default="KCl,LiCl,HClx", help="comma-separated, of KCl, LiCl, HClx")
    parser.add_argument("--kinds", default="cone,slit", help="comma-separated, of cone, slit")
    parser.add_argument("--walls", default="sigma,zeta", help="comma-separated, of sigma, zeta")
    parser.add_argument("--lowest", type=float, default=0.01, help="lowest concentration, mol/m^3 = mM")
    parser.add_argument("--highest", type=float, default=1000.0, help="highest concentration, mol/m^3 = mM")
    parser.add_argument("--points", type=int, default=11, help="concentrations (default 11)")
    return parser.parse_args()


def main() -> None:
    args = _arguments()
    concentrations = np.geomspace(args.lowest, args.highest, 5 if args.quick else args.points)
    salts = ("KCl",) if args.quick else tuple(args.salts.split(","))
    columns: dict[str, Any] = {}
    for kind in args.kinds.split(","):
        for wall in args.walls.split(","):
            for salt in salts:
                for flow in (True, False):
                    name = f"{kind} {wall} {salt} {'flow' if flow else 'no flow'}"
                    started = time.perf_counter()
                    curve = rectification_curve(_channel(args, kind, wall, salt, flow), concentrations, args.voltage)
                    columns[name] = curve
                    print(f"{name}: {time.perf_counter() - started:.1f} s, {int(curve['status'].sum())} failed",
                          file=sys.stderr, flush=True)
    _print(args, concentrations, columns)
    if args.json:
        args.json.write_text(json.dumps({name: {"concentration": concentrations.tolist(),
                                                "kappa_a_tip": c["kappa_a_tip"].values.tolist(),
                                                "rectification": c["rectification"].values.tolist(),
                                                "message": [str(m) for m in c["message"].values]}
                                         for name, c in columns.items()}, indent=1))


def _print(args: argparse.Namespace, concentrations: np.ndarray, columns: dict[str, Any]) -> None:
    names = list(columns)
    print(f"|I(+V)/I(-V)| at V = {args.voltage:g} V; tip {args.tip:g} nm at x = 0, base {args.base * args.tip:g} nm, "
          f"L = {args.length:g} um; sigma = {args.charge:g} mC/m^2, zeta = {args.zeta:g} mV")
    for start in range(0, len(names), 6):
        chunk = names[start:start + 6]
        print("\n  c (mM)  k a_tip " + "".join(f"{n:>24s}" for n in chunk))
        for k, c in enumerate(concentrations):
            kappa = float(columns[chunk[0]]["kappa_a_tip"].values[k])
            row = "".join(f"{float(columns[n]['rectification'].values[k]):24.4f}" for n in chunk)
            print(f"{c:8.3g} {kappa:8.3g} {row}")


if __name__ == "__main__":
    main()
