"""Scaling of slit sweeps over the cores of one machine: threads of the compiled batch and of ``edl.sweep``, Dask
workers, and a sweep streamed to a file against one kept in memory.

Run from the repository root::

    python benchmarks/bench_scaling.py                    # 40,000 cases, 3 rounds, threads 1, 2, 4, ... cores
    python benchmarks/bench_scaling.py --quick            # 4,900 cases, 1 round, Dask at 1, 2 and all cores
    python benchmarks/bench_scaling.py --max-threads 4 --rounds 5 --json scaling.json

Not a timed test: it prints a table (and with ``--json`` saves the figures). What it measures, in one process:

* Cases: KCl in water at 25 degC, zeta = -80 mV on both walls, field 10 kV/m; concentrations 0.1-100 mM
  (log-spaced, outer axis) times slit heights 2 nm - 2 um (log-spaced, inner axis), as in bench_sweep.py:
  thin and thick double layers, whose Newton counts and grids differ. ``--cases N`` uses round(sqrt(N))^2.
* In rounds (each round runs every in-process block once, so that a change of load hits all of them; medians
  over the rounds are reported), at 1, 2, 4, ... threads up to the cores this process may use
  (``os.sched_getaffinity``; ``--max-threads``): (1) the compiled batch ``kernels.batch.solve_cases`` alone,
  its packed case vectors built outside the timer; (2) ``edl.sweep`` in this process with numba set to that
  many threads (``numba.set_num_threads``), in memory; (3) at 1 thread and at the most threads, ``edl.sweep``
  streamed to an HDF5 file (``path=``) beside the in-memory one.
* Then a Dask ``LocalCluster`` of single-thread worker processes, grown 1, 2, 4, ... workers (``distributed``
  is imported only here; without it this part is skipped): each size gets a warm-up (every worker imports the
  package and loads the compiled kernels) and ``rounds`` timed ``edl.sweep(..., dask=client)``.
* Efficiency per core: rate / (n x the rate with one), against the batch at 1 thread for the batch, against the
  in-process sweep at 1 thread for the sweeps and the Dask workers (client and scheduler included).
* Load: for every timed block, the CPU the rest of the machine used meanwhile ("other", in cores, from
  /proc/stat minus this process and its child processes, the Dask workers among them): on a shared machine a
  block with other > 0 had fewer cores than it asked for. The machine's cores, the physical cores among them
  (hyper-threads share one) and the load average are printed first.
* The bound the cases' costs set: each 16-case chunk's CPU time on one thread, and from it the efficiency of
  contiguous equal blocks per thread (numba's ``prange``) and of chunks taken by the first free thread (the batch,
  ``kernels.schedule``) at 2, 4, ... threads: what load balance alone allows, whatever else runs on the machine.
* Checks: the batch's summaries at every thread count equal those at 1 thread bit for bit; every sweep's values
  (threads, file, Dask) equal those of the in-process sweep at 1 thread.

Timings are wall-clock (``time.perf_counter``) with the garbage collector off in this process during a block;
only ratios within one run mean much.
"""

from __future__ import annotations

import argparse
import contextlib
import gc
import json
import math
import os
import platform
import statistics
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))  # run from a checkout without installing

import numba  # noqa: E402

import edl_solver as edl  # noqa: E402
from edl_solver.kernels import batch as _batch  # noqa: E402
from edl_solver.kernels import layout as _layout  # noqa: E402
from edl_solver.model import packing  # noqa: E402

ZETA = -0.080  # V
FIELD = 1e4  # V/m
CONCENTRATIONS = (0.1, 100.0)  # mol/m^3 (= mM), log-spaced
HEIGHTS = (2e-9, 2e-6)  # m, log-spaced
_TICK = os.sysconf("SC_CLK_TCK") if hasattr(os, "sysconf") else 100


# ------------------------------------------------------------------------------------------------
# The machine and its load
# ------------------------------------------------------------------------------------------------

def cores() -> list[int]:
    """The CPUs this process may run on."""
    return sorted(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else list(range(os.cpu_count() or 1))


def physical_cores(cpus: list[int]) -> int | None:
    """Distinct physical cores among ``cpus`` (hyper-threads of one core count once); None where unknown."""
    seen = set()
    for cpu in cpus:
        topology = Path(f"/sys/devices/system/cpu/cpu{cpu}/topology")
        try:
            seen.add((topology.joinpath("physical_package_id").read_text().strip(),
                      topology.joinpath("core_id").read_text().strip()))
        except OSError:
            return None
    return len(seen)


def machine() -> dict:
    cpus = cores()
    model = ""
    with contextlib.suppress(OSError):
        model = next((line.split(":", 1)[1].strip() for line in Path("/proc/cpuinfo").read_text().splitlines()
                      if line.startswith("model name")), "")
    return {"cpus": len(cpus), "physical_cores": physical_cores(cpus), "cpu": model or platform.processor(),
            "python": platform.python_version(), "numba": numba.__version__, "numpy": np.__version__,
            "load_average": os.getloadavg()}


def _machine_busy() -> float:
    """CPU seconds the whole machine has been busy (/proc/stat, all but idle and iowait); NaN off Linux."""
    try:
        with open("/proc/stat", encoding="ascii") as fh:
            v = [int(x) for x in fh.readline().split()[1:9]]
    except (OSError, ValueError):
        return math.nan
    return (sum(v) - v[3] - v[4]) / _TICK


def _own_cpu() -> float:
    """CPU seconds of this process, its reaped children and its live descendants (Dask's workers)."""
    t = os.times()
    own = t.user + t.system + t.children_user + t.children_system
    try:
        import psutil  # a dependency of distributed; without it live children are not counted
    except ImportError:
        return own
    for child in psutil.Process().children(recursive=True):
        try:
            c = child.cpu_times()
            own += c.user + c.system
        except psutil.Error:  # it ended meanwhile
            pass
    return own


class Timed:
    """A timed block, the garbage collector off; afterwards ``seconds`` (wall) and ``other``: the CPU the rest
    of the machine used meanwhile, in cores (~0 on a quiet machine)."""

    def __enter__(self) -> Timed:
        self._gc = gc.isenabled()
        gc.disable()
        self._busy, self._own = _machine_busy(), _own_cpu()
        self._t0 = time.perf_counter()
        return self

    def __exit__(self, *exc) -> None:
        self.seconds = time.perf_counter() - self._t0
        busy, own = _machine_busy() - self._busy, _own_cpu() - self._own
        if self._gc:
            gc.enable()
        self.other = max(0.0, busy - own) / self.seconds if self.seconds > 0 else math.nan


# ------------------------------------------------------------------------------------------------
# The cases and the timed blocks
# ------------------------------------------------------------------------------------------------

def make_case(concentration: float, height: float) -> edl.Case:
    return edl.Case(geometry=edl.Slit(height=height), wall=edl.Wall(zeta=ZETA), field=FIELD,
                    electrolyte=edl.Electrolyte.from_ions({"K+": concentration, "Cl-": concentration}))


class Sweep:
    """The slit grid: the sweep's base case and axes, and the packed vectors of its cases (row-major)."""

    def __init__(self, side: int):
        self.concentrations = np.geomspace(*CONCENTRATIONS, side)
        self.heights = np.geomspace(*HEIGHTS, side)
        self.size = side * side
        self.base = make_case(1.0, 1e-7)
        self.axes = {"electrolyte.concentration": self.concentrations, "geometry.height": self.heights}
        self.vectors = np.array([packing.case_vector(make_case(c, h)) for c in self.concentrations
                                 for h in self.heights])
        self.summaries = np.empty((self.size, _layout.SUMMARY_SIZE))
        self.status = np.empty(self.size, dtype=np.int64)
        self.iterations = np.empty(self.size, dtype=np.int64)

    def batch(self, threads: int, count: int | None = None) -> Timed:
        """The compiled batch on ``threads`` threads (the first ``count`` cases)."""
        n = count or self.size
        self.summaries[:n], self.status[:n] = np.nan, -1
        before = numba.get_num_threads()
        numba.set_num_threads(threads)
        try:
            with Timed() as t:
                _batch.solve_cases(self.vectors[:n], self.summaries[:n], self.status[:n], self.iterations[:n])
        finally:
            numba.set_num_threads(before)
        return t

    def sweep(self, threads: int, path: Path | None = None, client=None, rows: int | None = None):
        """``edl.sweep`` of the grid (its first ``rows`` concentrations) in this process on ``threads`` numba
        threads, or on the Dask ``client``; streamed to ``path`` when given. Returns (Timed, Dataset)."""
        axes = dict(self.axes)
        if rows is not None:
            axes["electrolyte.concentration"] = self.concentrations[:rows]
        before = numba.get_num_threads()
        numba.set_num_threads(threads)
        try:
            with Timed() as t:
                ds = edl.sweep(self.base, axes, path=path, dask=client, progress=False)
        finally:
            numba.set_num_threads(before)
        return t, ds


def thread_counts(most: int) -> list[int]:
    """1, 2, 4, ... below ``most``, then ``most``."""
    counts = [1 << k for k in range(most.bit_length()) if 1 << k < most]
    return [*counts, most]


def same_values(a, b) -> bool:
    """Every numeric data variable of two sweep datasets equal (NaN equal to NaN)."""
    for name, var in a.data_vars.items():
        nan = var.dtype.kind in "fc"
        if var.dtype.kind in "fiuc" and not np.array_equal(var.values, b[name].values, equal_nan=nan):
            return False
    return True


def schedule_bound(sweep: Sweep, counts: list[int], chunk: int = 16) -> dict[int, tuple[float, float]]:
    """What the spread of the cases' costs alone allows: the CPU time of every ``chunk`` consecutive cases on one
    thread (``time.process_time``, so little changed by other jobs), then per thread count the efficiency
    (total / (n x longest thread)) of contiguous equal blocks (what numba's ``prange`` does) and of chunks handed
    to the first free thread (what ``kernels.schedule`` does)."""
    before = numba.get_num_threads()
    numba.set_num_threads(1)
    cost = np.empty(sweep.size // chunk)
    try:
        for c in range(cost.size):
            rows = slice(c * chunk, (c + 1) * chunk)
            t0 = time.process_time()
            _batch.solve_cases(sweep.vectors[rows], sweep.summaries[rows], sweep.status[rows], sweep.iterations[rows])
            cost[c] = time.process_time() - t0
    finally:
        numba.set_num_threads(before)
    bound = {}
    for n in counts:
        blocks = max(part.sum() for part in np.array_split(cost, n))
        finish = np.zeros(n)
        for c in cost:
            finish[np.argmin(finish)] += c
        bound[n] = (float(cost.sum() / (n * blocks)), float(cost.sum() / (n * finish.max())))
    return bound


@numba.njit(parallel=True)
def _spin(out, work):
    """Independent arithmetic per item, no memory traffic: what the cores themselves give to threads."""
    for i in numba.prange(out.size):
        x = 0.0
        for k in range(work):
            x += math.sin(x + k * 1e-3)
        out[i] = x


def machine_ceiling(counts: list[int], rounds: int) -> dict[int, float]:
    """Efficiency per core of a trivially parallel compute-bound loop at each thread count (best of the rounds):
    the ceiling the machine sets (clock boost that falls as more cores run, shared or virtual cores), against which
    the batch's efficiency is measured."""
    before = numba.get_num_threads()
    out = np.empty(16 * max(counts))
    _spin(out[:1], 10)
    rates = {}
    try:
        for n in counts:
            numba.set_num_threads(n)
            best = 0.0
            for _ in range(rounds):
                t0 = time.perf_counter()
                _spin(out, 200_000)
                best = max(best, out.size / (time.perf_counter() - t0))
            rates[n] = best
    finally:
        numba.set_num_threads(before)
    return {n: rates[n] / (n * rates[1]) for n in counts}


# ------------------------------------------------------------------------------------------------
# Dask
# ------------------------------------------------------------------------------------------------

def _warm_worker() -> int:
    """On a Dask worker: import the package and load the compiled kernels (a two-case batch)."""
    import numpy as np

    import edl_solver as edl
    from edl_solver.kernels import batch, layout
    from edl_solver.model import packing
    case = edl.Case(geometry=edl.Slit(height=1e-7), wall=edl.Wall(zeta=-0.08), field=1e4,
                    electrolyte=edl.Electrolyte.from_ions({"K+": 1.0, "Cl-": 1.0}))
    vectors = np.array([packing.case_vector(case)] * 2)
    status = np.empty(2, dtype=np.int64)
    batch.solve_cases(vectors, np.empty((2, layout.SUMMARY_SIZE)), status, np.empty(2, dtype=np.int64))
    return int(status.max())


def dask_blocks(sweep: Sweep, counts: list[int], rounds: int, reference) -> dict:
    """A LocalCluster of single-thread worker processes grown to each of ``counts``: its start, a warm-up and
    ``rounds`` timed sweeps per size. Returns the figures (empty with a note when distributed is missing)."""
    try:
        import logging

        from distributed import Client, LocalCluster
    except ImportError as exc:
        return {"skipped": f"distributed is not importable ({exc})"}
    # the workers import the package (and, when this file is imported as a module, this file) from the checkout
    os.environ["PYTHONPATH"] = os.pathsep.join(filter(None, (str(ROOT), str(Path(__file__).resolve().parent),
                                                             os.environ.get("PYTHONPATH"))))
    out: dict = {"workers": {}, "identical": True}
    t0 = time.perf_counter()
    with LocalCluster(n_workers=counts[0], threads_per_worker=1, processes=True, dashboard_address=None,
                      silence_logs=logging.ERROR) as cluster, Client(cluster) as client:
        for k in counts:
            s0 = time.perf_counter()
            cluster.scale(k)
            client.wait_for_workers(k)
            client.run(_warm_worker)
            sweep.sweep(1, client=client, rows=min(2 * k, len(sweep.concentrations)))  # the sweep path's imports
            start = (time.perf_counter() - (t0 if k == counts[0] else s0))
            times, other = [], []
            for _ in range(rounds):
                timed, ds = sweep.sweep(1, client=client)
                times.append(timed.seconds)
                other.append(timed.other)
                out["identical"] &= same_values(ds, reference)
            out["workers"][k] = {"start_s": start, "seconds": times, "other": other}
            print(f"  Dask, {k} worker(s): start and warm-up {start:.1f} s; "
                  f"{sweep.size / statistics.median(times):,.0f} cases/s", flush=True)
    return out


# ------------------------------------------------------------------------------------------------
# The run
# ------------------------------------------------------------------------------------------------

def warm_up(sweep: Sweep, folder: Path) -> float:
    t0 = time.perf_counter()
    sweep.batch(1, 4)
    sweep.batch(2 if len(cores()) > 1 else 1, 4)
    sweep.sweep(1, rows=2)
    sweep.sweep(1, path=folder / "warm.h5", rows=2)
    return time.perf_counter() - t0


def in_process_rounds(sweep: Sweep, counts: list[int], rounds: int, folder: Path) -> tuple[dict, dict, object]:
    """The in-process blocks, round after round. Returns (figures: key -> {"seconds", "other"}, checks, the
    1-thread in-memory dataset)."""
    figures: dict = {}
    checks = {"batch_identical": True, "sweep_identical": True, "batch_converged": True}
    first_batch, reference = None, None

    def record(key: str, timed: Timed) -> None:
        block = figures.setdefault(key, {"seconds": [], "other": []})
        block["seconds"].append(timed.seconds)
        block["other"].append(timed.other)

    for r in range(rounds):
        for n in counts:
            record(f"batch/{n}", sweep.batch(n))
            checks["batch_converged"] &= bool((sweep.status == _layout.CONVERGED).all())
            if first_batch is None:
                first_batch = sweep.summaries.copy()
            checks["batch_identical"] &= bool(np.array_equal(sweep.summaries, first_batch, equal_nan=True))
            timed, ds = sweep.sweep(n)
            record(f"sweep/{n}", timed)
            if reference is None:
                reference = ds
            checks["sweep_identical"] &= same_values(ds, reference)
        for n in sorted({1, counts[-1]}):
            path = folder / f"round{r}_{n}.h5"
            timed, ds = sweep.sweep(n, path=path)
            record(f"file/{n}", timed)
            checks["sweep_identical"] &= same_values(ds, reference)
            ds.close()
            path.unlink()
        line = "  ".join(f"{k} {sweep.size / v['seconds'][-1]:,.0f}/s ({v['other'][-1]:.2f})" for k, v in
                         figures.items())
        print(f"round {r + 1}: {line}", flush=True)
    return figures, checks, reference


def table(size: int, figures: dict, dask: dict, counts: list[int]) -> list[dict]:
    """Rows of the scaling table: block, n, cases/s and efficiency per core from the medians over the rounds and
    from the best round of each block (on a shared machine, the closest to an idle one), the other load
    (median)."""
    blocks = dict(figures)
    blocks.update({f"dask/{k}": v for k, v in dask.get("workers", {}).items()})
    median = {k: size / statistics.median(v["seconds"]) for k, v in blocks.items()}
    best = {k: size / min(v["seconds"]) for k, v in blocks.items()}
    labels = {"batch": "compiled batch, threads", "sweep": "edl.sweep in process, threads",
              "dask": "Dask LocalCluster, 1-thread workers", "file": "edl.sweep streamed to a file, threads"}
    rows = []
    for key, block in blocks.items():
        kind, n = key.split("/")
        n = int(n)
        # what each rate is measured against: n x the same kind at 1; the in-process sweep at 1 thread for Dask;
        # the in-memory sweep at the same threads for the file
        against = {"batch": ("batch/1", n), "sweep": ("sweep/1", n), "dask": ("sweep/1", n), "file": (f"sweep/{n}", 1)}
        base, times = against[kind]
        rows.append({"kind": kind, "block": labels[kind], "n": n, "rate": median[key],
                     "efficiency": median[key] / (times * median[base]), "best_rate": best[key],
                     "best_efficiency": best[key] / (times * best[base]), "other": statistics.median(block["other"])})
    return sorted(rows, key=lambda row: (list(labels).index(row["kind"]), row["n"]))


def print_table(rows: list[dict]) -> None:
    print(f"\n{'block':38s} {'n':>3s} {'cases/s':>9s} {'eff.':>5s} {'best/s':>9s} {'eff.':>5s} {'other':>5s}")
    for row in rows:
        print(f"{row['block']:38s} {row['n']:3d} {row['rate']:9,.0f} {row['efficiency']:5.2f} {row['best_rate']:9,.0f} "
              f"{row['best_efficiency']:5.2f} {row['other']:5.2f}")
    print("cases/s: median over the rounds; best/s: the fastest round. eff.: efficiency per core, rate / (n x rate at "
          "1) -- the batch against the batch, the sweeps and Dask against the in-process sweep at 1 thread; for the "
          "file rows, file rate / in-memory rate at the same threads. other: cores the rest of the machine used "
          "meanwhile (median over the rounds; > 0: fewer cores than asked for).")


def main(argv: list[str] | None = None) -> dict:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--cases", type=int, default=None, help="slit cases (default 40000; a square grid)")
    parser.add_argument("--rounds", type=int, default=None, help="rounds of every block (default 3)")
    parser.add_argument("--max-threads", type=int, default=None, help="most threads and Dask workers (all cores)")
    parser.add_argument("--quick", action="store_true", help="4,900 cases, 1 round, Dask at 1, 2 and most workers")
    parser.add_argument("--no-dask", action="store_true", help="skip the Dask blocks")
    parser.add_argument("--json", type=Path, default=None, help="also write the figures here")
    args = parser.parse_args(argv)
    n_cases = args.cases or (4_900 if args.quick else 40_000)
    rounds = args.rounds or (1 if args.quick else 3)
    most = max(1, min(args.max_threads or len(cores()), len(cores()), numba.config.NUMBA_NUM_THREADS))
    counts = thread_counts(most)
    dask_counts = sorted({1, min(2, most), most}) if args.quick else counts
    started = time.perf_counter()
    out: dict = {"machine": machine(), "rounds": rounds, "threads": counts}
    print("Machine: " + ", ".join(f"{k} {v}" for k, v in out["machine"].items()), flush=True)
    t0 = time.perf_counter()
    sweep = Sweep(max(2, round(math.sqrt(n_cases))))
    print(f"{sweep.size:,} slit cases packed in {time.perf_counter() - t0:.1f} s; threads {counts}; "
          f"{rounds} round(s)", flush=True)
    with tempfile.TemporaryDirectory() as folder:
        out["warm_up_s"] = warm_up(sweep, Path(folder))
        print(f"Warm-up {out['warm_up_s']:.1f} s; numba threading layer {numba.threading_layer()}", flush=True)
        figures, checks, reference = in_process_rounds(sweep, counts, rounds, Path(folder))
    dask = {"skipped": "--no-dask"} if args.no_dask else dask_blocks(sweep, dask_counts, rounds, reference)
    if "skipped" in dask:
        print(f"Dask skipped: {dask['skipped']}")
    else:
        checks["dask_identical"] = dask["identical"]
    rows = table(sweep.size, figures, dask, counts)
    print_table(rows)
    bound = schedule_bound(sweep, sorted({2, *counts[1:]}) if most > 1 else [2])
    print("Efficiency the spread of the cases' costs alone allows (CPU time of 16-case chunks on one thread): "
          + "; ".join(f"{n} threads: blocks {a:.2f}, shared chunks {b:.2f}" for n, (a, b) in bound.items()))
    ceiling = machine_ceiling(counts, rounds)
    print("Machine ceiling (a compute-bound loop, no memory traffic, best round): "
          + "; ".join(f"{n} threads {e:.2f}" for n, e in ceiling.items()))
    print("Checks: " + ", ".join(f"{k} {v}" for k, v in checks.items()))
    out.update(machine_ceiling=ceiling, cases=sweep.size, figures=figures, dask=dask, rows=rows, checks=checks,
               schedule_bound=bound, load_average_end=os.getloadavg(), total_s=time.perf_counter() - started)
    print(f"Total {out['total_s']:.0f} s; 1-min load average now {out['load_average_end'][0]:.2f}")
    if args.json:
        args.json.write_text(json.dumps(out, indent=1, default=str))
    return out


if __name__ == "__main__":
    main()
