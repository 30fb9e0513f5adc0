"""Sweep throughput of edl_solver: solves per second per core over 10,000 slit and 10,000 capillary cases.

Run from the repository root::

    python benchmarks/bench_sweep.py                 # 100 x 100 grids, 3 rounds (~1.5-2 min)
    python benchmarks/bench_sweep.py --quick         # 30 x 30 grids, 1 round (~15 s)
    python benchmarks/bench_sweep.py --cases 2500 --rounds 2 --json sweep.json
    python benchmarks/bench_sweep.py --profile       # also: cProfile of the in-process sweep path

Not a timed test: it prints a table and (with ``--json``) saves the figures. What it does:

* Cases: KCl in water at 25 degC, fixed zeta = -80 mV on every wall, field 10 kV/m; a grid of
  concentrations 0.1-100 mM (log-spaced, outer axis) times sizes 2 nm - 2 um (log-spaced, inner axis):
  slit heights H, and the same values as capillary radii a. ``--cases N`` uses round(sqrt(N))^2 cases.
* Measured side by side in one process, in rounds (each round runs every measurement once, so a change
  of load on the machine hits all of them; medians over the rounds are reported), per geometry:
  (1) ``edl.sweep`` in this process (workers=1) with numba limited to 1 thread (one core), in memory and
  streamed to an HDF5 file, and in memory with 2 threads; (2) ``edl.sweep(workers=2)`` (local processes
  of one thread each, including their start, which is also timed on its own); (3) a Python loop of
  ``edl.Case(...)`` + ``edl.solve`` over a seeded sample of the grid (default 1,000 cases), build and solve
  timed apart; (4) the compiled batch ``_batch.solve_cases`` alone (packed case vectors built with
  ``packing.case_vector`` outside the timer), with 1 and 2 threads.
* Peer: ``scipy.integrate.solve_bvp`` on a sample of slit cases with 0.1 <= kappa*h <= 100 (where the
  first-integral reference of bench_single_solve.py is computable and validated), with that script's
  formulation (analytic Jacobians, wall-clustered mesh, Gouy-Chapman guess) and its tol ladder: the
  loosest tol at which solve_bvp's worst error (wall charge, centre and mean potential, against the
  reference; a failed status counts as infinite) is at or below the sweep's worst error on the same
  cases ("same accuracy"). Then a race on those cases: per case each of edl.solve, the single-case
  kernel (equilibrium.solve_section) and solve_bvp ``rounds`` times in a row.
* Checks: the sweep's values equal the loop's on the sample (every summary key, relative difference
  <= 1e-10; statuses 0), and so do the batch's summaries.
* Machine: the 2-process speed-up of a pure-Python loop is measured at the start and at the end (how many
  cores were actually free), next to the 1-minute load average; and for every timed block, the CPU the
  rest of the machine used meanwhile ("other", in cores, from /proc/stat).

Timings are wall-clock (``time.perf_counter``) with the garbage collector off in this process during timed
blocks (as in bench_single_solve.py); they are noisy, and only the ratios within one run mean much.
"""

from __future__ import annotations

import argparse
import concurrent.futures as cf
import cProfile
import json
import math
import multiprocessing
import os
import pstats
import statistics
import sys
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))  # run from a checkout without installing
sys.path.insert(0, str(Path(__file__).resolve().parent))  # bench_single_solve: the solve_bvp peer

import bench_single_solve as single  # noqa: E402
import numba  # noqa: E402

import edl_solver as edl  # noqa: E402
from edl_solver.kernels import batch as _batch  # noqa: E402
from edl_solver.kernels import layout as _layout  # noqa: E402
from edl_solver.model import (  # noqa: E402
    equilibrium,
    packing,
    scaling,
)
from edl_solver.pipeline import summary_dict  # noqa: E402

#: Target of the issue: slit cross-section solves per second per core at default accuracy, including
#: EO flow and currents.
TARGET_PER_CORE = 20_000.0
ZETA = -0.080  # V
FIELD = 1e4  # V/m
CONCENTRATIONS = (0.1, 100.0)  # mol/m^3 (= mM), log-spaced
SIZES = (2e-9, 2e-6)  # m: slit height H, capillary radius a; log-spaced
EQUAL_TOLERANCE = 1e-10  # sweep vs loop, relative
GEOMETRIES = ("slit", "capillary")


# ------------------------------------------------------------------------------------------------
# Cases
# ------------------------------------------------------------------------------------------------

def make_case(geometry: str, concentration: float, size: float) -> edl.Case:
    """One case of the grid, built directly (not through the sweep's case builder)."""
    shape = edl.Slit(height=size) if geometry == "slit" else edl.Capillary(radius=size)
    return edl.Case(geometry=shape, electrolyte=edl.Electrolyte.from_ions({"K+": concentration, "Cl-": concentration}),
                    wall=edl.Wall(zeta=ZETA), field=FIELD)


def size_path(geometry: str) -> str:
    return "geometry.height" if geometry == "slit" else "geometry.radius"


class Grid:
    """The sweep's grid for one geometry: concentration (outer) x size (inner), flat index k = i*n + j."""

    def __init__(self, geometry: str, side: int):
        self.geometry = geometry
        self.concentrations = np.geomspace(*CONCENTRATIONS, side)
        self.sizes = np.geomspace(*SIZES, side)
        self.shape = (side, side)
        self.size = side * side
        self.base = make_case(geometry, 1.0, 1e-7)
        self.axes = {"electrolyte.concentration": self.concentrations, size_path(geometry): self.sizes}

    def index(self, k: int) -> tuple[int, int]:
        return divmod(int(k), self.shape[1])

    def case(self, k: int) -> edl.Case:
        i, j = self.index(k)
        return make_case(self.geometry, float(self.concentrations[i]), float(self.sizes[j]))


# ------------------------------------------------------------------------------------------------
# Timed pieces
# ------------------------------------------------------------------------------------------------

NoGC = single.NoGC
_TICK = os.sysconf("SC_CLK_TCK") if hasattr(os, "sysconf") else 100


def _machine_busy() -> float:
    """CPU seconds the whole machine has spent busy (user..steal of /proc/stat), NaN off Linux."""
    try:
        with open("/proc/stat", encoding="ascii") as fh:
            v = [int(x) for x in fh.readline().split()[1:9]]
    except (OSError, ValueError):
        return math.nan
    return (sum(v) - v[3] - v[4]) / _TICK  # minus idle and iowait


def _own_cpu() -> float:
    t = os.times()  # this process's threads, and its children once they have been waited for
    return t.user + t.system + t.children_user + t.children_system


class Timed:
    """A timed block with the garbage collector off; afterwards ``seconds`` (wall) and ``other``: the CPU
    the rest of the machine used meanwhile, in cores (machine busy time minus this process and its
    finished children, over the wall time). ~0 on a quiet machine; 1 means another job held a core."""

    def __enter__(self) -> Timed:
        self._gc = NoGC()
        self._gc.__enter__()
        self._busy, self._own = _machine_busy(), _own_cpu()
        self._t0 = time.perf_counter()
        return self

    def __exit__(self, *exc) -> None:
        self.seconds = time.perf_counter() - self._t0
        busy, own = _machine_busy() - self._busy, _own_cpu() - self._own
        self._gc.__exit__(*exc)
        self.other = max(0.0, busy - own) / self.seconds if self.seconds > 0 else math.nan


def time_sweep(grid: Grid, workers: int, threads: int = 1, to_file: bool = False):
    """An edl.sweep of the whole grid; in process (workers=1) numba runs ``threads`` threads; ``to_file``
    streams to an HDF5 file in a temporary folder (and reads it back, as edl.sweep does)."""
    numba.set_num_threads(threads)
    try:
        with tempfile.TemporaryDirectory() as folder:
            path = Path(folder) / "sweep.h5" if to_file else None
            with Timed() as t:
                ds = edl.sweep(grid.base, grid.axes, workers=workers, progress=False, path=path)
    finally:
        numba.set_num_threads(numba.config.NUMBA_NUM_THREADS)
    return t, ds


def time_pool_start(grid: Grid) -> Timed:
    """A 2-case sweep with workers=2 and one row per task: the start of the local processes (spawn, imports,
    numba cache load) plus one solve each."""
    axes = {"electrolyte.concentration": grid.concentrations[:2], size_path(grid.geometry): grid.sizes[:1]}
    with Timed() as t:
        edl.sweep(grid.base, axes, workers=2, rows_per_task=1, progress=False)
    return t


def time_loop(grid: Grid, sample: np.ndarray):
    """Per case: build the Case, then edl.solve it; returns (the whole loop, build times, solve times,
    summaries)."""
    build, solve, summaries = np.empty(sample.size), np.empty(sample.size), []
    with Timed() as t:
        for n, k in enumerate(sample):
            t0 = time.perf_counter()
            case = grid.case(k)
            t1 = time.perf_counter()
            summary = edl.solve(case).summary  # read inside the timer: a Result builds its summary dict on first read
            t2 = time.perf_counter()
            build[n], solve[n] = t1 - t0, t2 - t1
            summaries.append(summary)
    return t, build, solve, summaries


class Batch:
    """Packed case vectors of a whole grid (built outside any timer) for the compiled batch."""

    def __init__(self, grid: Grid):
        self.cases = [grid.case(k) for k in range(grid.size)]
        self.vectors = np.array([packing.case_vector(c) for c in self.cases])
        self.problems = [scaling.prepare(c).problem for c in self.cases]  # for the single-case kernel race
        self.accuracy = self.cases[0].numerics.accuracy
        n = grid.size
        self.summaries = np.empty((n, _layout.SUMMARY_SIZE))
        self.status = np.zeros(n, dtype=np.int64)
        self.iterations = np.zeros(n, dtype=np.int64)

    def run(self, threads: int, count: int | None = None) -> Timed:
        numba.set_num_threads(threads)
        self.status[:] = -1
        n = count or len(self.cases)
        with Timed() as t:
            _batch.solve_cases(self.vectors[:n], self.summaries[:n], self.status[:n], self.iterations[:n])
        numba.set_num_threads(numba.config.NUMBA_NUM_THREADS)
        return t


def _spin(n: int) -> int:
    """Pure-Python arithmetic: a CPU probe independent of numpy and numba."""
    s = 0
    for i in range(n):
        s += i * i % 7
    return s


def free_cores(n: int = 3_000_000) -> float:
    """2-process speed-up of ``_spin`` (2.0 on two idle cores, ~1 when another job holds one core)."""
    context = multiprocessing.get_context("spawn")
    with cf.ProcessPoolExecutor(2, mp_context=context) as pool:
        list(pool.map(_spin, [1000, 1000]))  # start both processes first
        t0 = time.perf_counter()
        _spin(n)
        one = time.perf_counter() - t0
        t0 = time.perf_counter()
        list(pool.map(_spin, [n, n]))
        two = time.perf_counter() - t0
    return 2.0 * one / two


# ------------------------------------------------------------------------------------------------
# Checks
# ------------------------------------------------------------------------------------------------

def sweep_vs_loop(ds, grid: Grid, sample: np.ndarray, summaries: list[dict]) -> tuple[float, str, int]:
    """Largest relative difference between the sweep's values and the loop's, over every summary key of
    the sampled cases (NaN equal to NaN); the key where it occurs; sweep cases with status != 0."""
    worst, where = 0.0, ""
    for k, summary in zip(sample, summaries):
        i, j = grid.index(k)
        for key, value in summary.items():
            if isinstance(value, tuple):
                value = value[1]
            a, b = float(ds[key].values[i, j]), float(value)
            if a == b or (math.isnan(a) and math.isnan(b)):
                continue
            diff = abs(a - b) / max(abs(a), abs(b)) if math.isfinite(a) and math.isfinite(b) else math.inf
            if diff > worst:
                worst, where = diff, key
    bad = int(np.sum(ds["status"].values != 0))
    return worst, where, bad


def batch_vs_loop(batch: Batch, sample: np.ndarray, summaries: list[dict]) -> float:
    """Largest relative difference between the batch's summaries and the loop's (edl.solve) on the sample."""
    worst = 0.0
    for k, expected in zip(sample, summaries):
        got = summary_dict(batch.summaries[k], batch.cases[k])
        for key, value in expected.items():
            a, b = np.atleast_1d(got[key]).astype(float), np.atleast_1d(value).astype(float)
            same = (a == b) | (np.isnan(a) & np.isnan(b))
            if not same.all():
                worst = max(worst, float(np.max(np.abs(a - b)[~same] / np.maximum(np.abs(a), np.abs(b))[~same])))
    return worst


# ------------------------------------------------------------------------------------------------
# The peer on a sample of slit cases
# ------------------------------------------------------------------------------------------------

def dimensionless(case: edl.Case) -> tuple[float, float, float, float]:
    """(kappa*h, zeta in kT/e, kT/e in V, wall-charge unit eps kT/(e lambda_D) in C/m^2) of a slit case."""
    vt = case.solvent.thermal_voltage
    debye = case.debye_length
    return (case.geometry.half_size / debye, ZETA / vt, vt, case.solvent.permittivity * vt / debye)


def bvp_peer(grid: Grid, ds, batch: Batch, n_bvp: int, rounds: int, seed: int) -> dict:
    cases_all = [grid.case(k) for k in range(grid.size)]
    dims = np.array([dimensionless(c) for c in cases_all])
    eligible = np.flatnonzero((dims[:, 0] >= 0.1) & (dims[:, 0] <= 100.0))
    rng = np.random.default_rng(seed + 7)
    sample = np.sort(rng.choice(eligible, size=min(n_bvp, eligible.size), replace=False))
    kappa_h, zeta = dims[:, 0], dims[:, 1]
    refs_all: list = [None] * grid.size
    t0 = time.perf_counter()
    for k in sample:
        refs_all[k] = single.reference(kappa_h[k], zeta[k])
    t_ref = time.perf_counter() - t0
    idx = [grid.index(k) for k in sample]
    values = {key: np.array([float(ds[key].values[i, j]) for i, j in idx])
              for key in ("centre_potential", "wall_charge_density", "mean_potential")}
    refs = [refs_all[k] for k in sample]
    sweep_err = single.errors(values["centre_potential"] / dims[sample, 2],
                              values["wall_charge_density"] / dims[sample, 3],
                              values["mean_potential"] / dims[sample, 2], zeta[sample], refs)
    level = float(np.max(single.worst_of(sweep_err)))
    strict = {q: float(np.max(e)) for q, e in sweep_err.items()}
    ladder = single.bvp_ladder(kappa_h, zeta, refs_all, sample, single.BVP_TOLS, strict)
    matching = [row for row in ladder if row["worst"] <= level]
    chosen = matching[0] if matching else ladder[-1]
    tol = chosen["tol"]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        race = single.per_case_blocks(
            (lambda k: edl.solve(cases_all[k]),
             lambda k: equilibrium.solve_section(batch.problems[k], batch.accuracy),
             lambda k: single.bvp_solve(kappa_h[k], zeta[k], tol)), sample, rounds)
    t_edl, t_ker, t_bvp = np.median(race, axis=1)
    return {"cases": int(sample.size), "eligible": int(eligible.size), "reference_s": t_ref,
            "kappa_h_range": [float(kappa_h[sample].min()), float(kappa_h[sample].max())],
            "sweep_errors": single.err_stats(sweep_err), "sweep_worst": level,
            "ladder": ladder, "tol": tol, "matched": bool(matching),
            "bvp_errors": chosen["errors"], "bvp_status": chosen["status_counts"],
            "race_edl_mean_s": float(np.mean(t_edl)), "race_kernel_mean_s": float(np.mean(t_ker)),
            "race_bvp_mean_s": float(np.mean(t_bvp)),
            "race_ratio_edl": float(np.sum(t_bvp) / np.sum(t_edl)),
            "race_ratio_kernel": float(np.sum(t_bvp) / np.sum(t_ker)), "rounds": rounds}


# ------------------------------------------------------------------------------------------------
# The run
# ------------------------------------------------------------------------------------------------

def profile_sweep(grid: Grid, rows: int) -> None:
    """cProfile of an in-process sweep over ``rows`` concentrations: the top costs, cumulative and own."""
    axes = dict(grid.axes)
    axes["electrolyte.concentration"] = grid.concentrations[:rows]
    profiler = cProfile.Profile()
    profiler.enable()
    edl.sweep(grid.base, axes, progress=False)
    profiler.disable()
    stats = pstats.Stats(profiler, stream=sys.stdout)
    print(f"\ncProfile of edl.sweep over {rows * grid.shape[1]} {grid.geometry} cases (in process; the "
          "profiler inflates Python-heavy code):")
    stats.sort_stats("cumulative").print_stats(25)
    stats.sort_stats("tottime").print_stats(12)


def rate(n: int, seconds: float) -> float:
    return n / seconds if seconds > 0 else math.nan  # nan: the process start took longer than the sweep


def main(argv: list[str] | None = None) -> dict:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--cases", type=int, default=None, help="cases per geometry (default 10000; a square grid)")
    parser.add_argument("--quick", action="store_true", help="900 cases, 200 in the loop, 20 raced, 1 round")
    parser.add_argument("--rounds", type=int, default=None, help="rounds of every measurement (default 3)")
    parser.add_argument("--loop-sample", type=int, default=None, help="cases in the edl.solve loop (default 1000)")
    parser.add_argument("--bvp-sample", type=int, default=None, help="slit cases raced against solve_bvp (100)")
    parser.add_argument("--seed", type=int, default=20261202)
    parser.add_argument("--profile", action="store_true", help="also profile the in-process sweep (cProfile)")
    parser.add_argument("--json", type=Path, default=None, help="also write the figures here")
    args = parser.parse_args(argv)
    n_cases = args.cases or (900 if args.quick else 10_000)
    rounds = args.rounds or (1 if args.quick else 3)
    n_loop = args.loop_sample or (200 if args.quick else 1000)
    n_bvp = args.bvp_sample or (20 if args.quick else 100)
    side = max(2, round(math.sqrt(n_cases)))
    started = time.perf_counter()
    out: dict = {"machine": single.machine(), "load_average_start": os.getloadavg(), "rounds": rounds}
    print("Machine: " + ", ".join(f"{k} {v}" for k, v in out["machine"].items()))

    grids = {g: Grid(g, side) for g in GEOMETRIES}
    rng = np.random.default_rng(args.seed)
    sample = np.sort(rng.choice(side * side, size=min(n_loop, side * side), replace=False))

    # -- warm-up: numba compile or cache load, imports of the sweep path; batch arrays --------------------
    t0 = time.perf_counter()
    batches = {}
    for g, grid in grids.items():
        edl.solve(grid.case(0))
        edl.sweep(grid.base, {size_path(g): grid.sizes[:3]}, progress=False)
        batches[g] = Batch(grid)
        batches[g].run(1, 2)
    out["warm_up_s"] = time.perf_counter() - t0
    out["free_cores_start"] = free_cores()
    print(f"Warm-up (compile or cache load, batch arrays) {out['warm_up_s']:.1f} s; threading layer "
          f"{numba.threading_layer()}; 2-process speed-up of a pure-Python loop now: "
          f"{out['free_cores_start']:.2f}x; 1-min load average {out['load_average_start'][0]:.2f}")
    print(f"{side} x {side} = {side * side} cases per geometry; {rounds} round(s); loop sample {sample.size}")

    keys = ("sweep1", "sweep1file", "sweep1t2", "sweep2", "pool_start", "kernel1", "kernel2", "loop", "loop_build",
            "loop_solve")
    times = {g: {k: [] for k in keys} for g in GEOMETRIES}
    other = {g: {k: [] for k in keys[:8]} for g in GEOMETRIES}  # the rest of the machine's load, cores

    def record(g: str, key: str, timed: Timed) -> None:
        times[g][key].append(timed.seconds)
        other[g][key].append(timed.other)

    loop_case: dict[str, np.ndarray] = {}
    datasets, summaries, loads = {}, {}, []
    kernel_status, kernel_iters = {}, {}
    for r in range(rounds):
        for g, grid in grids.items():
            timed, datasets[g] = time_sweep(grid, 1)
            record(g, "sweep1", timed)
            timed, _ = time_sweep(grid, 1, to_file=True)
            record(g, "sweep1file", timed)
            timed, _ = time_sweep(grid, 1, threads=2)
            record(g, "sweep1t2", timed)
            record(g, "pool_start", time_pool_start(grid))
            timed, _ = time_sweep(grid, 2)
            record(g, "sweep2", timed)
            batch = batches[g]
            record(g, "kernel2", batch.run(2))
            record(g, "kernel1", batch.run(1))
            kernel_status[g] = np.bincount(batch.status, minlength=4).tolist()
            kernel_iters[g] = float(np.mean(batch.iterations))
            timed, build, solve, summaries[g] = time_loop(grid, sample)
            record(g, "loop", timed)
            times[g]["loop_build"].append(float(np.sum(build)))
            times[g]["loop_solve"].append(float(np.sum(solve)))
            loop_case[g] = solve if r == 0 else np.minimum(loop_case[g], solve)
        loads.append(os.getloadavg()[0])
        print(f"  round {r + 1}/{rounds} done at {time.perf_counter() - started:.0f} s, 1-min load {loads[-1]:.2f}")
    out["load_after_rounds"] = loads

    # -- checks -----------------------------------------------------------------------------------------
    checks = {}
    for g, grid in grids.items():
        worst, key, bad = sweep_vs_loop(datasets[g], grid, sample, summaries[g])
        checks[g] = {"sweep_vs_loop_max_rel": worst, "sweep_vs_loop_key": key, "sweep_failed": bad,
                     "batch_vs_loop_max_rel": batch_vs_loop(batches[g], sample, summaries[g]),
                     "kernel_status_counts": kernel_status[g], "kernel_iterations_mean": kernel_iters[g]}
    out["checks"] = checks

    # -- the peer ---------------------------------------------------------------------------------------
    peer = bvp_peer(grids["slit"], datasets["slit"], batches["slit"], n_bvp, 3 if args.quick else 5, args.seed)
    out["bvp"] = peer
    out["free_cores_end"] = free_cores()
    out["load_average_end"] = os.getloadavg()

    # -- figures ----------------------------------------------------------------------------------------
    n = side * side
    figs = {}
    for g in GEOMETRIES:
        med = {k: statistics.median(v) for k, v in times[g].items()}
        f = {
            "sweep1_per_core": rate(n, med["sweep1"]),
            "sweep1file_per_core": rate(n, med["sweep1file"]),
            "sweep1t2_total": rate(n, med["sweep1t2"]),
            "sweep2_total": rate(n, med["sweep2"]),
            "pool_start_s": med["pool_start"],
            "sweep2_steady_total": rate(n, med["sweep2"] - med["pool_start"]),
            "loop_per_core": rate(sample.size, med["loop_build"] + med["loop_solve"]),
            "loop_solve_only_per_core": rate(sample.size, med["loop_solve"]),
            "loop_build_mean_s": med["loop_build"] / sample.size,
            "loop_solve_mean_s": med["loop_solve"] / sample.size,
            "loop_solve_median_s": float(np.median(loop_case[g])),
            "kernel1_per_core": rate(n, med["kernel1"]),
            "kernel2_total": rate(n, med["kernel2"]),
            "seconds": med,
            "all_seconds": times[g],
        }
        f["sweep2_per_core"] = f["sweep2_total"] / 2.0
        f["sweep1t2_per_core"] = f["sweep1t2_total"] / 2.0
        f["sweep2_steady_per_core"] = f["sweep2_steady_total"] / 2.0
        f["kernel2_per_core"] = f["kernel2_total"] / 2.0
        figs[g] = f
    out["figures"] = figs
    bvp_rate = 1.0 / peer["race_bvp_mean_s"]
    out["bvp_per_core"] = bvp_rate

    # -- report -----------------------------------------------------------------------------------------
    # rows: label, figure key, (time key, cases, cores) for the best round and the other load
    loop_total = {g: [b + v for b, v in zip(times[g]["loop_build"], times[g]["loop_solve"])] for g in GEOMETRIES}
    rows = [("(1) edl.sweep, in process, 1 thread", "sweep1_per_core", ("sweep1", n, 1)),
            ("    the same, streamed to an HDF5 file", "sweep1file_per_core", ("sweep1file", n, 1)),
            ("    edl.sweep, in process, 2 threads: total", "sweep1t2_total", ("sweep1t2", n, 1)),
            ("                                per core", "sweep1t2_per_core", ("sweep1t2", n, 2)),
            ("(2) edl.sweep, workers=2: total", "sweep2_total", ("sweep2", n, 1)),
            ("                          per core", "sweep2_per_core", ("sweep2", n, 2)),
            ("    ... minus the process start (estimate)", "sweep2_steady_per_core", None),
            ("(3) loop: edl.Case + edl.solve (1 core)", "loop_per_core", ("loop", sample.size, 1)),
            ("    loop: edl.solve only, Cases prebuilt", "loop_solve_only_per_core", ("loop_solve", sample.size, 1)),
            ("(4) compiled batch, 1 thread", "kernel1_per_core", ("kernel1", n, 1)),
            ("    compiled batch, 2 threads: total", "kernel2_total", ("kernel2", n, 1)),
            ("                               per core", "kernel2_per_core", ("kernel2", n, 2))]

    def cells(g: str, key: str, spec) -> str:
        if spec is None:
            return f"{figs[g][key]:9,.0f} {'':>9s} {'':>9s}"
        tkey, count, cores = spec
        seconds = loop_total[g] if tkey == "loop" else times[g][tkey]
        load = other[g]["loop" if tkey == "loop_solve" else tkey]
        return f"{figs[g][key]:9,.0f} {count / min(seconds) / cores:9,.0f} {np.median(load):4.2f}/{max(load):4.2f}"

    print(f"\nSolves per second (per core = total / cores used; median and best of {rounds} round(s); 'other': "
          "CPU the rest of the machine used meanwhile, in cores, median/max over the rounds; the sweep and loop "
          "produce every summary value, the compiled batch too but no Dataset):")
    print(f"    {'':44s} {'slit: median':>13s} {'best':>9s} {'other':>9s}   {'capillary: median':>17s} {'best':>9s} "
          f"{'other':>9s}")
    for label, key, spec in rows:
        print(f"    {label:44s}   " + "       ".join(cells(g, key, spec) for g in GEOMETRIES))
    out["other_load_cores"] = other
    label = f"(5) solve_bvp, tol {peer['tol']:.0e}, {peer['cases']} slit cases"
    print(f"    {label:44s} {bvp_rate:10,.0f}")
    print("    process start of workers=2 (2-case sweep): " + ", ".join(
        f"{g} {figs[g]['pool_start_s']:.2f} s" for g in GEOMETRIES))
    print("    loop per case, mean build / solve, median solve (us): " + ", ".join(
        f"{g} {figs[g]['loop_build_mean_s'] * 1e6:.0f} / {figs[g]['loop_solve_mean_s'] * 1e6:.0f}, "
        f"{figs[g]['loop_solve_median_s'] * 1e6:.0f}" for g in GEOMETRIES))

    s = figs["slit"]
    print("\nRatios (slit; capillary in brackets):")
    per_geometry = [
        ("sweep (1 core) / loop (Case + solve)", "sweep1_per_core", "loop_per_core"),
        ("sweep (1 core) / loop (solve only)", "sweep1_per_core", "loop_solve_only_per_core"),
        ("sweep in process 2 threads / 1 thread (total)", "sweep1t2_total", "sweep1_per_core"),
        ("sweep workers=2 / workers=1 (total)", "sweep2_total", "sweep1_per_core"),
        ("... minus the process start (estimate)", "sweep2_steady_total", "sweep1_per_core"),
        ("kernel 2 threads / 1 thread (total)", "kernel2_total", "kernel1_per_core"),
        ("kernel (1 thread) / sweep (1 core)", "kernel1_per_core", "sweep1_per_core")]
    for label, top, bottom in per_geometry:
        slit_ratio, cap_ratio = (figs[g][top] / figs[g][bottom] for g in GEOMETRIES)
        print(f"    {label:44s} {slit_ratio:6.2f}x  [{cap_ratio:6.2f}x]")
    print(f"    sweep (1 core) / solve_bvp                   {s['sweep1_per_core'] / bvp_rate:6.2f}x")
    print(f"    sweep workers=2 per core / solve_bvp         {s['sweep2_per_core'] / bvp_rate:6.2f}x")
    print(f"    loop (Case + solve) / solve_bvp              {s['loop_per_core'] / bvp_rate:6.2f}x")
    print(f"    kernel 1 thread / solve_bvp                  {s['kernel1_per_core'] / bvp_rate:6.2f}x")
    print(f"    kernel 2 threads per core / solve_bvp        {s['kernel2_per_core'] / bvp_rate:6.2f}x")
    low, high = (dimensionless(grids["slit"].case(k))[0] for k in (0, side * side - 1))
    print(f"    (the sweep and kernel rates are over the whole grid, kappa*h {low:.2g}-{high:.0f}; solve_bvp's over "
          "its sample)")

    print(f"\nsolve_bvp on {peer['cases']} slit cases of the grid with 0.1 <= kappa*h <= 100 ({peer['eligible']} "
          f"eligible; kappa*h {peer['kappa_h_range'][0]:.3g}-{peer['kappa_h_range'][1]:.3g}); reference "
          f"{peer['reference_s'] / peer['cases'] * 1e3:.2f} ms/case:")
    print("    sweep's errors, max/median: " + ", ".join(
        f"{single.QUANTITY_LABELS[q]} {e['max']:.1e}/{e['median']:.1e}" for q, e in peer["sweep_errors"].items()))
    for row in peer["ladder"]:
        counts = ",".join(f"{k}:{v}" for k, v in row["status_counts"].items())
        print(f"    tol {row['tol']:6.0e}  status {counts:>7s}  worst {row['worst']:.1e}  "
              f"{row['mean_s'] * 1e6:7.0f} us/solve  max nodes {row['max_nodes_used']}"
              + ("   <- same accuracy (raced)" if row["tol"] == peer["tol"] else ""))
    if not peer["matched"]:
        print("    NO tol on the ladder reached the sweep's worst error; raced at the tightest tried")
    print(f"    race on the same cases (per case each solver {peer['rounds']}x in a row; mean of per-case medians): "
          f"edl.solve {peer['race_edl_mean_s'] * 1e6:.0f} us, kernel (solve_section) "
          f"{peer['race_kernel_mean_s'] * 1e6:.0f} us, solve_bvp {peer['race_bvp_mean_s'] * 1e6:.0f} us")
    print(f"    ratios solve_bvp / edl.solve {peer['race_ratio_edl']:.1f}x, solve_bvp / kernel "
          f"{peer['race_ratio_kernel']:.1f}x (same cases)")

    print("\nChecks:")
    for g in GEOMETRIES:
        c = checks[g]
        ok = c["sweep_vs_loop_max_rel"] <= EQUAL_TOLERANCE and c["sweep_failed"] == 0
        print(f"    {g}: sweep vs loop on {sample.size} cases, max relative difference over every summary key "
              f"{c['sweep_vs_loop_max_rel']:.1e}{' (' + c['sweep_vs_loop_key'] + ')' if c['sweep_vs_loop_key'] else ''}"
              f" -> {'equal' if ok else 'DIFFERENT'} (<= {EQUAL_TOLERANCE:g}); sweep failures {c['sweep_failed']}")
        print(f"    {g}: compiled batch status counts (converged, Newton failed, accuracy missed, identity "
              f"failed) {c['kernel_status_counts']}; Newton iterations per case {c['kernel_iterations_mean']:.2f}; "
              f"vs the loop: max relative difference {c['batch_vs_loop_max_rel']:.1e}")

    sweep_best = max(s["sweep1_per_core"], s["sweep1t2_per_core"], s["sweep2_per_core"])
    kernel_best = max(s["kernel1_per_core"], s["kernel2_per_core"])
    out["target"] = {"per_core": TARGET_PER_CORE, "sweep_best_per_core": sweep_best,
                     "kernel_best_per_core": kernel_best, "met_by_sweep": sweep_best >= TARGET_PER_CORE,
                     "met_by_kernel": kernel_best >= TARGET_PER_CORE}
    print(f"\nTarget >= {TARGET_PER_CORE:,.0f} slit solves/s per core: public edl.sweep path "
          f"{sweep_best:,.0f}/s -> {'met' if sweep_best >= TARGET_PER_CORE else 'MISSED'}; batch kernel "
          f"{kernel_best:,.0f}/s -> {'met' if kernel_best >= TARGET_PER_CORE else 'MISSED'}")

    if args.profile:
        profile_sweep(grids["slit"], max(1, min(side, 2000 // side)))

    out["wall_time_s"] = time.perf_counter() - started
    print(f"\nTotal wall time {out['wall_time_s']:.0f} s on {os.cpu_count()} CPUs; 1-min load average "
          f"{out['load_average_start'][0]:.2f} at the start, {out['load_average_end'][0]:.2f} at the end (this "
          f"run counts for 1-2); 2-process speed-up of a pure-Python loop {out['free_cores_start']:.2f}x at the "
          f"start, {out['free_cores_end']:.2f}x at the end. Timings are noisy: compare ratios within one run.")
    if args.json:
        args.json.write_text(json.dumps(out, indent=2, default=float))
        print(f"Figures written to {args.json}")
    return out


if __name__ == "__main__":
    main()
