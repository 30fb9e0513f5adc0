"""Sweep throughput on this machine: in memory against streamed to a file, and 2 single-thread Dask workers
against one thread in this process; the peak memory of a sweep streamed to a file.

Run from the repository root::

    python benchmarks/bench_sweep_stream.py                  # 40,000-case slit sweep, 5 rounds (~1-2 min)
    python benchmarks/bench_sweep_stream.py --cases 10000 --rounds 3 --no-dask
    python benchmarks/bench_sweep_stream.py --rss 100000 1000000   # peak RSS of file sweeps (child processes)

Not a timed test: it prints figures. The cases: KCl in water, fixed zeta -80 mV, field 10 kV/m, a grid of
concentrations 0.1-100 mM times slit heights 2 nm - 2 um (log-spaced), as in bench_sweep.py. Each round runs
every measurement once, side by side (a change of load on the machine hits all of them); medians over the
rounds are printed, with the 1-minute load average. The Dask figures include the client, the scheduler and
the transfers: a LocalCluster of single-thread worker processes on 127.0.0.1, started once (not timed) and
warmed with one sweep. Per core = rate / (cores x the in-process one-thread rate); CPU eff. = CPU seconds of the
in-process one-thread sweep / CPU seconds of this one (this process, the scheduler in it, and the workers):
what the per-core figure would be on cores of its own; "other cores": the CPU the rest of the machine used
meanwhile (/proc/stat), in cores.
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))  # run from a checkout without installing

import edl_solver as edl  # noqa: E402


def design(cases: int) -> tuple[edl.Case, dict[str, list[float]]]:
    """The base case and a square grid of about ``cases`` points."""
    side = max(2, round(cases ** 0.5))
    base = edl.Case(geometry=edl.Slit(height="50 nm"), wall=edl.Wall(zeta="-80 mV"), field="10 kV/m",
                    electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}))
    return base, {"electrolyte.concentration": list(np.geomspace(0.1, 100.0, side)),
                  "geometry.height": list(np.geomspace(2e-9, 2e-6, side))}


def _busy() -> float:
    """CPU seconds the whole machine has spent busy (all cores, /proc/stat)."""
    with open("/proc/stat") as stat:
        ticks = [int(v) for v in stat.readline().split()[1:]]
    return (sum(ticks) - ticks[3] - ticks[4]) / os.sysconf("SC_CLK_TCK")


def _cpu() -> float:
    usage = resource.getrusage(resource.RUSAGE_SELF)
    return usage.ru_utime + usage.ru_stime


def measured(run, client) -> tuple[float, float, float]:
    """Wall seconds of ``run()``, the CPU seconds it took (this process, where a LocalCluster's scheduler
    runs too, and the Dask workers), and the CPU seconds the rest of the machine used meanwhile."""
    workers = client.run(_cpu) if client is not None else {}
    busy, cpu, started = _busy(), _cpu(), time.perf_counter()
    run()
    wall, cpu, busy = time.perf_counter() - started, _cpu() - cpu, _busy() - busy
    if client is not None:
        cpu += sum(client.run(_cpu)[w] - workers[w] for w in workers)
    return wall, cpu, max(0.0, busy - cpu)


def rates(cases: int, rounds: int, dask_workers: int) -> None:
    base, axes = design(cases)
    n = len(axes["electrolyte.concentration"]) ** 2
    folder = Path(tempfile.mkdtemp())
    runs = {"in memory, 1 thread": lambda: edl.sweep(base, axes, progress=False),
            "to a file, 1 thread": lambda: edl.sweep(base, axes, path=folder / "s.h5", overwrite=True,
                                                     progress=False)}
    cluster = client = None
    if dask_workers:
        from distributed import Client, LocalCluster

        cluster = LocalCluster(n_workers=dask_workers, threads_per_worker=1, processes=True, host="127.0.0.1",
                               dashboard_address=None)
        client = Client(cluster)
        runs[f"Dask, {dask_workers} workers x 1 thread"] = lambda: edl.sweep(base, axes, dask=client, progress=False)
    reference = edl.sweep(base, axes, progress=False)  # warm: compiled kernels loaded
    for name, run in runs.items():  # warm, and the same values bit for bit
        result = run()
        if name.startswith("Dask"):
            import xarray as xr

            xr.testing.assert_identical(result, reference)
    times: dict[str, list[tuple[float, float, float]]] = {name: [] for name in runs}
    loads = []
    for _ in range(rounds):
        for name, run in runs.items():
            times[name].append(measured(run, client if name.startswith("Dask") else None))
        loads.append(os.getloadavg()[0])
    wall = {name: statistics.median(t[0] for t in values) for name, values in times.items()}
    cpu = {name: statistics.median(t[1] for t in values) for name, values in times.items()}
    one, one_cpu = n / wall["in memory, 1 thread"], cpu["in memory, 1 thread"]
    print(f"{n} cases, {rounds} rounds, medians; 1-min load {min(loads):.2f}-{max(loads):.2f} on "
          f"{os.cpu_count()} cores (this run included)")
    print(f"  {'':34s} {'cases/s':>9s}   {'per core':>8s}   {'CPU s':>6s}   {'CPU eff.':>8s}   other cores")
    for name, values in times.items():
        rate = n / wall[name]
        cores = dask_workers if name.startswith("Dask") else 1
        other = statistics.median(t[2] / t[0] for t in values)
        print(f"  {name:34s} {rate:9.0f}   {rate / (cores * one):8.1%}   {cpu[name]:6.2f}   "
              f"{one_cpu / cpu[name]:8.1%}   {other:5.2f}")
    if client is not None:
        client.close()
        cluster.close()


_CHILD = """
import resource, sys, tempfile, time, os
sys.path.insert(0, {root!r}); sys.path.insert(0, {bench!r})
import bench_sweep_stream as b
import edl_solver as edl
from edl_solver.sweeping.store import SweepStore
base, axes = b.design(int(sys.argv[1]))
edl.sweep(base, b.design(100)[1], progress=False)  # compiled kernels loaded
before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
finish = SweepStore.finish
streamed = []

def measured_finish(store):  # the peak while the cases were solved and written, before the file is read back
    streamed.append(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss)
    return finish(store)

SweepStore.finish = measured_finish
path = os.path.join(tempfile.mkdtemp(), "s.h5")
started = time.perf_counter()
ds = edl.sweep(base, axes, path=path, progress=False)
seconds = time.perf_counter() - started
print(before, streamed[-1], resource.getrusage(resource.RUSAGE_SELF).ru_maxrss, seconds, ds["status"].size,
      os.path.getsize(path))
"""


def peak_rss(sizes: list[int]) -> None:
    """Peak resident memory of a file sweep of each size, each in a fresh process (ru_maxrss, kB)."""
    script = _CHILD.format(root=str(ROOT), bench=str(Path(__file__).resolve().parent))
    for cases in sizes:
        out = subprocess.run([sys.executable, "-c", script, str(cases)], capture_output=True, text=True, check=True)
        before, streamed, after, seconds, n, size = out.stdout.split()
        print(f"  {int(n):8d} cases to a file: peak RSS {int(streamed) / 1024:5.0f} MiB while solving and writing, "
              f"{int(after) / 1024:5.0f} MiB with the Dataset returned (after warm-up {int(before) / 1024:4.0f} MiB); "
              f"{float(seconds):5.1f} s, file {int(size) / 2**20:4.0f} MiB")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cases", type=int, default=40_000)
    parser.add_argument("--rounds", type=int, default=5)
    parser.add_argument("--dask-workers", type=int, default=2)
    parser.add_argument("--no-dask", action="store_true")
    parser.add_argument("--rss", type=int, nargs="*", help="peak RSS of file sweeps of these sizes, then stop")
    args = parser.parse_args()
    if args.rss:
        peak_rss(args.rss)
        return
    import numba

    numba.set_num_threads(1)
    rates(args.cases, args.rounds, 0 if args.no_dask else args.dask_workers)


if __name__ == "__main__":
    main()
