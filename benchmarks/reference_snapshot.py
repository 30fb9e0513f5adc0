"""Snapshot of every summary value, response matrix and profile on a fixed set of reference cases.

Run: python benchmarks/reference_snapshot.py write SNAPSHOT.npz   (before a refactor)
     python benchmarks/reference_snapshot.py compare SNAPSHOT.npz (after it)

A refactor that moves code without changing its arithmetic must reproduce the snapshot bit for bit;
one that moves a reduction into compiled code, within 1e-14 relative. ``compare`` prints the largest
relative difference per case and exits 1 when any exceeds the tolerance (default 1e-14).
It uses only the public API, so it runs unchanged on both sides of a reorganisation.
"""

from __future__ import annotations

import argparse
import sys

import numpy as np

import edl_solver as edl


def cases() -> dict[str, edl.Case]:
    kcl = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})
    acid = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}, pH=7)
    sized = edl.Electrolyte([edl.Ion(name=n, concentration=10.0, diameter=0.7e-9) for n in ("K+", "Cl-")])
    cacl2 = edl.Electrolyte.from_ions({"Ca2+": "1 mM", "Cl-": "2 mM"})
    drive = {"field": 1e4, "pressure_gradient": -1e5}

    def slit(wall, electrolyte=kcl, height="30 nm", **kw):
        return edl.Case(geometry=edl.Slit(height=height), electrolyte=electrolyte, wall=wall, **drive, **kw)

    def capillary(wall, electrolyte=kcl, radius="15 nm", **kw):
        return edl.Case(geometry=edl.Capillary(radius=radius), electrolyte=electrolyte, wall=wall, **drive, **kw)

    return {
        "slit zeta pb": slit(edl.Wall(zeta="-80 mV")),
        "slit zeta dh": slit(edl.Wall(zeta="-20 mV"), model="dh"),
        "capillary zeta pb": capillary(edl.Wall(zeta="-80 mV")),
        "slit charge": slit(edl.Wall(charge_density="-10 mC/m^2")),
        "capillary charge": capillary(edl.Wall(charge_density="-10 mC/m^2")),
        "slit silica": slit(edl.Wall.silica(), electrolyte=acid, height="50 nm"),
        "capillary silica": capillary(edl.Wall.silica(), electrolyte=acid),
        "slit gate": slit(edl.Wall(gate_voltage="0.3 V", gate_capacitance="10 mF/m^2")),
        "slit steric": slit(edl.Wall(zeta="-300 mV"), electrolyte=sized, height="10 nm", model="steric"),
        "capillary steric": capillary(edl.Wall(zeta="-250 mV"), electrolyte=sized, model="steric"),
        "slit slip viscoelectric": slit(edl.Wall(zeta="-80 mV", slip_length="5 nm"),
                                        solvent=edl.Water(viscoelectric=True)),
        "capillary slip viscoelectric": capillary(edl.Wall(zeta="-80 mV", slip_length="5 nm"),
                                                  solvent=edl.Water(viscoelectric=True)),
        "slit asymmetric": slit((edl.Wall(zeta="-80 mV"), edl.Wall(charge_density="5 mC/m^2"))),
        "slit 2:1 salt": slit(edl.Wall(zeta="-60 mV"), electrolyte=cacl2),
        "capillary 2:1 salt": capillary(edl.Wall(charge_density="-20 mC/m^2"), electrolyte=cacl2),
    }


PROFILE_FIELDS = ("coordinate", "potential", "concentration", "charge_density", "velocity_eo",
                  "velocity_pressure", "velocity", "velocity_thin_layer", "eo_per_field")


def arrays(result: edl.Result) -> dict[str, np.ndarray]:
    out = {}
    for key, value in result.summary.items():
        out[f"summary/{key}"] = np.atleast_1d(np.asarray(value, dtype=float))
    out["response_matrix"] = np.asarray(result.response_matrix)
    out["ion_response_matrix"] = np.asarray(result.ion_response_matrix)
    for name in PROFILE_FIELDS:
        out[f"profiles/{name}"] = np.asarray(getattr(result.profiles, name))
    return out


def snapshot() -> dict[str, np.ndarray]:
    out = {}
    for label, case in cases().items():
        for key, value in arrays(edl.solve(case)).items():
            out[f"{label}|{key}"] = value
    return out


def compare(stored: dict[str, np.ndarray], fresh: dict[str, np.ndarray], tolerance: float) -> int:
    missing = sorted(set(stored) ^ set(fresh))
    if missing:
        print("keys differ:", missing[:10])
        return 1
    worst: dict[str, tuple[float, str]] = {}
    for key, old in stored.items():
        new = fresh[key]
        if old.shape != new.shape:  # a new grid: the profiles cannot be compared node by node, the rest can
            print(f"{key}: shape {old.shape} -> {new.shape} (not compared)")
            continue
        scale = np.maximum(np.abs(old), np.finfo(float).tiny)
        diff = np.abs(new - old)
        both_nan = np.isnan(old) & np.isnan(new)
        rel = np.where(both_nan, 0.0, diff / scale)
        value = float(np.nanmax(rel)) if rel.size else 0.0
        label = key.split("|")[0]
        if value >= worst.get(label, (-1.0, ""))[0]:
            worst[label] = (value, key.split("|")[1])
    status = 0
    for label, (value, key) in worst.items():
        flag = "ok" if value <= tolerance else "DIFFERS"
        print(f"{label:<32} max rel diff {value:.3g} ({key}) {flag}")
        status |= value > tolerance
    return int(status)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("action", choices=("write", "compare"))
    parser.add_argument("path")
    parser.add_argument("--tolerance", type=float, default=1e-14)
    args = parser.parse_args()
    fresh = snapshot()
    if args.action == "write":
        np.savez(args.path, **fresh)
        print(f"wrote {len(fresh)} arrays for {len(cases())} cases to {args.path}")
        return 0
    with np.load(args.path) as stored:
        return compare(dict(stored), fresh, args.tolerance)


if __name__ == "__main__":
    sys.exit(main())
