"""Cost of a 100-point I-V curve of a channel that varies along x, after its tabulation, against the same solve
without a table.

Run from the repository root::

    python benchmarks/bench_taper.py                # five channels, 100-point I-V curves (~1-2 min)
    python benchmarks/bench_taper.py --points 200 --repeat 5 --json out.json
    python benchmarks/bench_taper.py --only cone --points 5 --repeat 1 --samples 2    # a quick look

Not a timed test: it prints a table. For each channel (``channels``: the example ``examples/conical_pore.toml``
read through its [channel] section, a 5 -> 40 nm cone, a tapered slit, a bipolar capillary and a capillary with a
linear wall profile) it measures, warm and in one process:

* the tabulation ``channel.tabulate`` (median of ``--tables``; its cross-section solves from the ``ChannelTable``);
* a ``--points``-point I-V curve ``channel.current_voltage`` on the table (median of ``--repeat``);
* the whole job from the Channel: tabulate + I-V curve (median of 2);
* THE PEER, the same along-x solve without a table: each evaluation of the local relations
  (``TaperPath._matrices``, after its cache of the last two) replaced by direct cross-section solves. It is
  estimated by counting: one extra, untimed I-V curve with ``_matrices`` instrumented counts the (c, size) points
  evaluated, times the mean time of one ``edl.solve`` (the unit: median of ``--solve-repeat`` runs at each of
  ``--samples`` points drawn at random from those evaluated, so from the channel's own range of c, size and wall).
  The peer is also run for real on one I-V point (at half the largest voltage, from the linear start, as
  ``TaperPath.solve`` does): a ``DirectRelations`` object with ``_matrices``'s call signature that builds the case
  the table solves at each (c, size, wall) and solves it, plugged into a copy of the channel's ``TaperPath``. Its
  measured time is printed beside its own count times the unit (how well the count predicts it), and its current
  beside the table's (how far the interpolation moves the answer).

Timings are wall clock (``time.perf_counter``), garbage collector off in the timed loops; noisy on a shared
machine: read the ratios within one run.
"""

from __future__ import annotations

import argparse
import copy
import dataclasses
import gc
import json
import os
import platform
import statistics
import sys
import time
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))  # run from a checkout without installing

import edl_solver as edl  # noqa: E402
from edl_solver import channel as ch  # noqa: E402
from edl_solver.channel.relations import reduce_matrices  # noqa: E402
from edl_solver.channel.taper_path import TaperPath  # noqa: E402
from edl_solver.errors import ConvergenceError, InputError  # noqa: E402

SOLVENT = edl.Solvent(temperature=298.15, relative_permittivity=78.4, viscosity=0.89e-3)
EXAMPLE = ROOT / "examples" / "conical_pore.toml"
#: Target of issue 15: a 100-point I-V curve in under a second after the tabulation.
TARGET_S = 1.0


def kcl(millimolar: float) -> edl.Electrolyte:
    return edl.Electrolyte.from_ions({"K+": millimolar, "Cl-": millimolar})


def example_channel() -> tuple[ch.Channel, float]:
    """The channel of ``examples/conical_pore.toml`` as ``edl transport`` builds it, and its largest |voltage|."""
    from edl_solver.inputs.casefile import load_case
    from edl_solver.inputs.channel_spec import read_channel_spec

    case = load_case(EXAMPLE)
    spec = read_channel_spec(EXAMPLE, case)
    return ch.Channel(case, **spec.channel_kwargs(case)), max(abs(v) for v in spec.voltages)


def channels() -> dict[str, tuple[ch.Channel, float]]:
    """Name -> (channel, largest |voltage| of its I-V curve, V): ranges where every point converges on the
    channel's own table (the bipolar and profile channels deplete strongly in reverse: their table spans 1000x
    each way, so that no point leaves it and current_voltage does not tabulate again)."""
    def capillary(radius: str, millimolar: float, sigma: str) -> edl.Case:
        return edl.Case(geometry=edl.Capillary(radius=radius), electrolyte=kcl(millimolar),
                        wall=edl.Wall(charge_density=sigma), solvent=SOLVENT)

    slit = edl.Case(geometry=edl.Slit(height="10 nm"), electrolyte=kcl(1.0),
                    wall=edl.Wall(charge_density="-10 mC/m^2"), solvent=SOLVENT)
    segments = [("1 um", edl.Wall(charge_density="-20 mC/m^2")), ("2 um", edl.Wall(charge_density="20 mC/m^2"))]
    profile = {"position": [0.0, 2e-6], "value": ["-20 mC/m^2", "18 mC/m^2"]}
    return {
        "example conical_pore.toml: cone 10->200 nm, -10 mC/m^2, KCl 1 mM, 5 um, access": example_channel(),
        "cone 5->40 nm, -20 mC/m^2, KCl 10 mM, 2 um": (ch.Channel(
            capillary("5 nm", 10.0, "-20 mC/m^2"), "2 um", 10.0, 10.0, size=("5 nm", "40 nm")), 1.0),
        "tapered slit 10->100 nm, -10 mC/m^2, KCl 1 mM, 5 um": (ch.Channel(
            slit, "5 um", 1.0, 1.0, size=("10 nm", "100 nm")), 1.0),
        "bipolar capillary 10 nm, -20|+20 mC/m^2, KCl 1 mM, 2 um": (ch.Channel(
            capillary("10 nm", 1.0, "-20 mC/m^2"), "2 um", 1.0, 1.0, wall_segments=segments,
            concentration_span=1000.0), 0.3),
        "wall profile capillary 10 nm, -20->+18 mC/m^2, KCl 1 mM, 2 um": (ch.Channel(
            capillary("10 nm", 1.0, "-20 mC/m^2"), "2 um", 1.0, 1.0, wall_profile=profile,
            concentration_span=1000.0), 0.3),
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


@contextmanager
def counting() -> Iterator[list[tuple[np.ndarray, np.ndarray, int | None]]]:
    """Record every call of ``TaperPath._matrices`` (u, xi, segment) while inside: the points at which the local
    relations are evaluated (after ``_blocks``'s cache, so each would be one direct solve for the peer)."""
    calls: list[tuple[np.ndarray, np.ndarray, int | None]] = []
    original = TaperPath._matrices

    def recorded(self: TaperPath, u: np.ndarray, xi: np.ndarray, segment: int | None = None) -> np.ndarray:
        calls.append((np.array(u, dtype=float), np.array(xi, dtype=float), segment))
        return original(self, u, xi, segment)

    TaperPath._matrices = recorded
    try:
        yield calls
    finally:
        TaperPath._matrices = original


class DirectRelations:
    """The peer's local relations: ``TaperPath._matrices``'s signature, each point a direct cross-section solve.

    The case at (c = e^u, size at xi, wall at xi) is the wall's case (the segment's wall, or the profile's value at
    xi) with every ion scaled with the first, as the sweep path "electrolyte.concentration" scales them, and the
    size replaced, by ``dataclasses.replace`` (~20-60 us; the table's way, through the case file's mapping and the
    sweep paths, costs ~0.15-0.3 ms a point, several solves' worth, and would slow the peer for nothing).
    """

    def __init__(self, path: TaperPath):
        from edl_solver.channel.taper_table import _wall_cases

        self.path, self.channel = path, path.channel
        self.walls = _wall_cases(self.channel)
        self.solves, self.failures = 0, 0

    def case_at(self, u: float, xi: float, segment: int | None = None) -> edl.Case:
        """The cross-section's case at ln c = u and xi (``segment``: of a piecewise wall, by default xi's)."""
        path = self.path
        if path.profile is not None:
            case = self.channel.wall_profile.case_at(self.channel.case, float(np.interp(xi, *path.wall_rows)))
        elif len(path.splines) > 1:
            k = segment if segment is not None else int(np.searchsorted(path.bounds[1:-1], xi, side="left"))
            case = self.walls[path.tables[k]]
        else:
            case = self.walls[0]
        electrolyte = case.electrolyte
        ratio = float(np.exp(u)) / electrolyte.ions[0].concentration
        ions = tuple(dataclasses.replace(ion, concentration=ion.concentration * ratio) for ion in electrolyte.ions)
        geometry = dataclasses.replace(case.geometry, **{case.geometry.size_name: float(np.interp(
            xi, path.xi_rows, path.sizes))})
        return dataclasses.replace(case, geometry=geometry, electrolyte=dataclasses.replace(electrolyte, ions=ions))

    def __call__(self, u: np.ndarray, xi: np.ndarray, segment: int | None = None) -> np.ndarray:
        """Reduced matrices at the points (u_k, xi_k); NaN where a solve fails (solve_bvp then fails the point).
        u is clipped to the table's range as ``TaperPath._matrices`` clips it (solve_bvp's Newton steps may try any
        salt; a solution outside the range is refused afterwards alike), so that both solve the same problem."""
        out = []
        for uk, xk in zip(np.clip(np.ravel(u), *self.path.spline.u_range), np.ravel(xi)):
            self.solves += 1
            try:
                out.append(edl.solve(self.case_at(uk, xk, segment)).ion_response_matrix)
            except (ConvergenceError, InputError):
                self.failures += 1
                out.append(np.full_like(out[0] if out else np.eye(len(self.channel.case.electrolyte.ions) + 1),
                                        np.nan))
        return reduce_matrices(np.array(out), self.path.basis)


def solve_unit(table: Any, calls: list[tuple[np.ndarray, np.ndarray, int | None]], samples: int, repeat: int,
               seed: int) -> list[float]:
    """Median time of one warm ``edl.solve`` at each of ``samples`` points drawn at random from those evaluated
    (cases built beforehand, as ``bench_channel``'s unit), s."""
    u = np.concatenate([c[0] for c in calls])
    xi = np.concatenate([c[1] for c in calls])
    segment = np.concatenate([np.full(len(c[0]), -1 if c[2] is None else c[2]) for c in calls])
    direct = DirectRelations(table._path)
    picks = np.random.default_rng(seed).choice(len(u), size=min(samples, len(u)), replace=False)
    out = []
    for k in picks:
        case = direct.case_at(u[k], xi[k], None if segment[k] < 0 else int(segment[k]))
        edl.solve(case)  # the first solve of a new case reads nothing from a cache: warm it
        out.append(statistics.median(timed(lambda case=case: edl.solve(case), repeat)[0]))
    return out


def peer_point(table: Any, voltage: float, unit: float) -> dict[str, Any]:
    """One I-V point solved for real without the table (``DirectRelations`` in a copy of the table's path) and
    with it, each from the linear start: times, points evaluated, currents."""
    path = table._path
    with counting() as calls:
        table_times, on_table = timed(lambda: path.solve(0.0, voltage, None), 1)
    peer = copy.copy(path)
    peer._last = []
    direct = DirectRelations(path)
    peer._matrices = direct
    peer_times, direct_point = timed(lambda: peer.solve(0.0, voltage, None), 1)
    estimate = direct.solves * unit
    return {"voltage": voltage, "table_point_s": table_times[0],
            "table_point_evaluated": sum(len(c[0]) for c in calls), "peer_point_s": peer_times[0],
            "peer_point_solves": direct.solves, "peer_point_failed_solves": direct.failures,
            "peer_point_estimate_s": estimate, "peer_measured_over_estimate": peer_times[0] / estimate,
            "table_current": on_table.current, "peer_current": direct_point.current,
            "current_difference": abs(direct_point.current / on_table.current - 1.0),
            "peer_point_status": direct_point.status, "table_point_status": on_table.status}


def measure(channel: ch.Channel, largest: float, args: argparse.Namespace) -> dict[str, Any]:
    """The figures of one channel (see the module docstring)."""
    voltages = np.linspace(-largest, largest, args.points)
    table_times, table = timed(lambda: ch.tabulate(channel), args.tables)
    curve_times, curve = timed(lambda: ch.current_voltage(table, voltages), args.repeat)
    whole_times, _ = timed(lambda: ch.current_voltage(ch.tabulate(channel), voltages), 2)
    with counting() as calls:  # untimed: the instrumented curve
        ch.current_voltage(table, voltages)
    evaluated = sum(len(c[0]) for c in calls)
    units = solve_unit(table, calls, args.samples, args.solve_repeat, args.seed)
    unit = statistics.mean(units)
    tabulate_s, iv_s = statistics.median(table_times), statistics.median(curve_times)
    figures = {
        "tabulate_s": tabulate_s, "table_seconds_attr": table.seconds, "table_solves": table.solves,
        "table_shape": [len(table.sizes), len(table.concentrations)], "iv_s": iv_s, "iv_min_s": min(curve_times),
        "iv_max_s": max(curve_times), "whole_s": statistics.median(whole_times),
        "solve_s": unit, "solve_min_s": min(units), "solve_max_s": max(units),
        "points_evaluated": evaluated, "matrices_calls": len(calls),
        "peer_estimate_s": evaluated * unit,
        "interpolation_error": table.interpolation_error,
        "potential_interpolation_error": table.potential_interpolation_error,
        "failed_points": int(curve.status.values.sum()),
        "table_span": channel.concentration_span, "curve_span": float(curve.attrs.get("concentration_span", np.nan)),
        "rectification_at_largest": abs(float(curve.current.values[-1] / curve.current.values[0])),
        "under_target": iv_s < TARGET_S,
    }
    figures["ratio_peer_over_table_and_iv"] = figures["peer_estimate_s"] / (tabulate_s + iv_s)
    figures["ratio_peer_over_iv"] = figures["peer_estimate_s"] / iv_s
    figures["iv_per_solve"] = iv_s / unit
    if args.peer:
        figures.update(peer_point(table, 0.5 * largest, unit))
    return figures


def print_row(name: str, f: dict[str, Any]) -> None:
    print(f"{name[:70]:70s} {1e3 * f['solve_s']:6.3f} {f['tabulate_s']:6.2f} {f['table_solves']:6d} "
          f"{f['iv_s']:6.2f} {f['points_evaluated']:8d} {f['peer_estimate_s']:8.1f} "
          f"{f['ratio_peer_over_table_and_iv']:7.1f} {f['interpolation_error']:8.1e} {f['failed_points']:4d} "
          f"{'yes' if f['under_target'] else 'NO':>4s}")
    if "peer_point_s" in f:
        print(f"{'':6s}peer run for real at {f['voltage']:+.3g} V: {f['peer_point_s']:.2f} s for "
              f"{f['peer_point_solves']} solves ({f['peer_point_failed_solves']} failed); count x unit "
              f"{f['peer_point_estimate_s']:.2f} s (measured/estimate {f['peer_measured_over_estimate']:.2f}); "
              f"on the table {1e3 * f['table_point_s']:.0f} ms, {f['table_point_evaluated']} points; current "
              f"differs by {f['current_difference']:.1e} ({f['peer_point_status']})")


def main(argv: list[str] | None = None) -> dict[str, Any]:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=100, help="voltages of the I-V curve (default 100)")
    parser.add_argument("--repeat", type=int, default=3, help="timed I-V curves per channel (default 3)")
    parser.add_argument("--tables", type=int, default=3, help="timed tabulations per channel (default 3)")
    parser.add_argument("--samples", type=int, default=12, help="points at which the unit solve is timed")
    parser.add_argument("--solve-repeat", type=int, default=7, help="timed solves at each of those points")
    parser.add_argument("--seed", type=int, default=20261204, help="seed of the drawn points")
    parser.add_argument("--no-peer", dest="peer", action="store_false", help="skip the peer's real I-V point")
    parser.add_argument("--only", default="", help="only the channels whose name contains this text")
    parser.add_argument("--json", type=Path, help="write the figures here")
    args = parser.parse_args(argv)

    import xarray  # noqa: F401 - imported before timing (current_voltage returns a Dataset)

    chosen = {name: value for name, value in channels().items() if args.only in name}
    for channel, largest in chosen.values():  # compile / load the kernels, fill the caches
        ch.current_voltage(ch.tabulate(channel), np.linspace(-largest, largest, 5))
    load = os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")
    print(f"{args.points}-point I-V curves, {time.strftime('%Y-%m-%d %H:%M UTC', time.gmtime())}, "
          f"1-min load average {load:.2f} before")
    print(f"{'channel':70s} {'solve':>6s} {'table':>6s} {'solves':>6s} {'I-V':>6s} {'points':>8s} {'peer':>8s} "
          f"{'ratio':>7s} {'interp':>8s} {'fail':>4s} {'<1s':>4s}")
    print(f"{'':70s} {'ms':>6s} {'s':>6s} {'':>6s} {'s':>6s} {'evaluated':>8s} {'est. s':>8s} "
          f"{'peer/':>7s}")
    results = {}
    for name, (channel, largest) in chosen.items():
        results[name] = f = measure(channel, largest, args)
        f["largest_voltage"] = largest
        print_row(name, f)
    machine = {"python": platform.python_version(), "numpy": np.__version__, "machine": platform.machine(),
               "system": platform.system(), "cpus": os.cpu_count(), "edl_solver": edl.__version__,
               "load_before": load, "load_after": os.getloadavg()[0] if hasattr(os, "getloadavg") else None,
               "date": time.strftime("%Y-%m-%dT%H:%M:%SZ", time.gmtime())}
    print("ratio = peer estimate / (tabulate + I-V); <1s: the I-V curve after the table under a second (issue 15)")
    print("machine:", machine)
    if args.json:
        args.json.write_text(json.dumps({"machine": machine, "results": results}, indent=2, default=float))
    return results


if __name__ == "__main__":
    main()
