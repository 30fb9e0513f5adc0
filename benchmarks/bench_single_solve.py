"""Warm single-solve and 1,000-case benchmark of edl_solver, raced against scipy's solve_bvp.

Run from the repository root::

    python benchmarks/bench_single_solve.py            # 1,000 slit cases, 100 of them raced
    python benchmarks/bench_single_solve.py --quick    # 100 cases, 30 raced: a smoke run
    python benchmarks/bench_single_solve.py --cases 200 --bvp-sample 200 --json out.json

Not a timed test: it prints a table and (with ``--json``) saves the figures. What it does:

* Cases: symmetric slits, 1:1 electrolyte (1 mM KCl in water), fixed-zeta walls, a reproducible spread
  (``--seed``) of kappa*h (half-height over the Debye length) log-uniform in [0.1, 100] and zeta
  uniform in [-8, -0.5] kT/e.
* Reference: the first integral of psi'' = sinh psi (Burgreen & Nakache 1964, J. Phys. Chem. 68, 1084)
  evaluated with scipy's ``quad`` to ~1e-14 (epsrel 1e-13; checked below against a second quadrature at a looser
  tolerance, and against the mpmath reference of tests/reference_solutions.py where importable).
* edl_solver: (a) one warm solve repeated (and once more reading every field of its Result: the summary
  dict, profiles, verdict, message and validity notes are built on first access), (b) ``edl.solve`` on
  every case (the full public path: equilibrium, flow, currents, thin-layer comparison, identity checks;
  the Result's presentation deferred), (c) the kernel path ``equilibrium.solve_section`` only; errors of
  the wall charge, centre and mean potentials.
* Peer: ``scipy.integrate.solve_bvp`` on the same dimensionless BVP with analytic Jacobians, a
  wall-clustered initial mesh and a Gouy-Chapman initial guess, its ``tol`` tuned (a ladder) to the
  loosest value at which it is as accurate as edl_solver on the raced sample; then timed.
* Capillaries: Debye-Hueckel cases (|zeta| <= 0.05 kT/e, model "dh") against the closed form
  psi = zeta I0(kappa r)/I0(kappa a) (Rice & Whitehead 1965, J. Phys. Chem. 69, 4017), and PB
  capillaries timed (no reference).

Timings are wall-clock (``time.perf_counter``) with the garbage collector off during timed loops, on
whatever machine runs this; they are noisy, and only the ratios within one run mean much.
"""

from __future__ import annotations

import argparse
import gc
import hashlib
import itertools
import json
import math
import os
import platform
import statistics
import sys
import time
import warnings
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import scipy
from scipy import integrate, optimize, special

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))  # run from a checkout without installing

import numba  # noqa: E402

import edl_solver as edl  # noqa: E402
from edl_solver.kernels import layout as _layout  # noqa: E402
from edl_solver.model import equilibrium, scaling  # noqa: E402

#: Target figures: one warm edl.solve at least 40 times faster than solve_bvp at equal accuracy (issue 9),
#: within 200 us (issue 2).
TARGET_RATIO = 40.0
TARGET_WARM_US = 200.0
#: edl_solver's default accuracy (relative, on summary values); --accuracy changes it.
ACCURACY = edl.Numerics().accuracy
#: solve_bvp tolerances tried, loosest first.
BVP_TOLS = (1e-3, 3e-4, 1e-4, 3e-5, 1e-5, 3e-6, 1e-6, 3e-7, 1e-7, 3e-8, 1e-8, 1e-9, 1e-10)
BVP_MAX_NODES = 100_000
CONCENTRATION = 1.0  # mol/m^3 (1 mM) of each ion
QUANTITIES = ("wall_charge", "centre", "mean")
QUANTITY_LABELS = {
    "wall_charge": "wall charge (rel.)",
    "centre": "centre potential (rel. zeta)",
    "mean": "mean potential (rel.)",
}


# ------------------------------------------------------------------------------------------------
# Cases
# ------------------------------------------------------------------------------------------------

def electrolyte() -> edl.Electrolyte:
    return edl.Electrolyte([
        edl.Ion(name="K+", valence=1, concentration=CONCENTRATION, diffusivity=1.957e-9),
        edl.Ion(name="Cl-", valence=-1, concentration=CONCENTRATION, diffusivity=2.032e-9),
    ])


SOLVENT = edl.Solvent(temperature=298.15, relative_permittivity=78.4, viscosity=0.89e-3)
THERMAL_VOLTAGE = SOLVENT.thermal_voltage
DEBYE_LENGTH = electrolyte().debye_length(SOLVENT)
#: Wall charge per unit sigma_hat when sigma_hat is measured in Debye units: eps kT / (e lambda_D).
CHARGE_UNIT = SOLVENT.permittivity * THERMAL_VOLTAGE / DEBYE_LENGTH


def slit_case(kappa_h: float, zeta: float, model: str = "pb", accuracy: float = ACCURACY) -> edl.Case:
    """Symmetric slit of half-height kappa_h Debye lengths, wall potential zeta (kT/e)."""
    return edl.Case(geometry=edl.Slit(height=2.0 * kappa_h * DEBYE_LENGTH), electrolyte=electrolyte(),
                    wall=edl.Wall(zeta=zeta * THERMAL_VOLTAGE), solvent=SOLVENT, field=1e4,
                    pressure_gradient=-1e5, model=model, numerics=edl.Numerics(accuracy=accuracy))


def capillary_case(kappa_a: float, zeta: float, model: str, accuracy: float = ACCURACY) -> edl.Case:
    """Capillary of radius kappa_a Debye lengths, wall potential zeta (kT/e)."""
    return edl.Case(geometry=edl.Capillary(radius=kappa_a * DEBYE_LENGTH), electrolyte=electrolyte(),
                    wall=edl.Wall(zeta=zeta * THERMAL_VOLTAGE), solvent=SOLVENT, field=1e4,
                    pressure_gradient=-1e5, model=model, numerics=edl.Numerics(accuracy=accuracy))


def spread(n: int, seed: int, zeta_range: tuple[float, float]) -> tuple[np.ndarray, np.ndarray]:
    """kappa*L log-uniform in [0.1, 100] and zeta uniform in ``zeta_range`` (kT/e)."""
    rng = np.random.default_rng(seed)
    kappa_l = 10.0 ** rng.uniform(-1.0, 2.0, n)
    zeta = rng.uniform(zeta_range[0], zeta_range[1], n)
    return kappa_l, zeta


# ------------------------------------------------------------------------------------------------
# Reference: symmetric PB slit through the first integral (Burgreen & Nakache 1964)
# ------------------------------------------------------------------------------------------------
#
# Dimensionless: psi = e phi/kT, x in Debye lengths from the mid-plane, 0 <= x <= h; for zeta > 0
# (the sign is restored at the end; results are odd in zeta)
#     psi'^2 = 2 (cosh psi - cosh psi_m),   h = int_{psi_m}^{zeta} dpsi / psi'.
# With cosh a - cosh b = 2 sinh((a+b)/2) sinh((a-b)/2) and the substitution psi = psi_m + t^2 the
# endpoint singularity goes; t = sqrt(2 psi_m) sinh(u/2) on top of that, i.e. psi = psi_m cosh u,
# makes the integrand
#     dx/du = 1 / sqrt(sinhc(psi_m cosh^2(u/2)) sinhc(psi_m sinh^2(u/2))),   sinhc z = sinh(z)/z,
# which is exactly 1 in the Debye-Hueckel limit and stays smooth when psi_m ~ 1e-43 (kappa h = 100),
# where the plain t form has a near-singular peak of width sqrt(psi_m). The plain t form is kept as
# the independent check (``reference_t``), with breakpoints that resolve that peak.

def _sinhc(z: float) -> float:
    return 1.0 + z * z / 6.0 if z < 1e-4 else math.sinh(z) / z


def _dx_du(u: float, psi_m: float) -> float:
    c, s = math.cosh(0.5 * u), math.sinh(0.5 * u)
    return 1.0 / math.sqrt(_sinhc(psi_m * c * c) * _sinhc(psi_m * s * s))


def _psi_dx_du(u: float, psi_m: float) -> float:
    return psi_m * math.cosh(u) * _dx_du(u, psi_m)


def _u_wall(zeta: float, psi_m: float) -> float:
    """u at the wall: psi_m cosh u = zeta, written without cancellation near psi_m -> zeta."""
    return 2.0 * math.asinh(math.sqrt(max(0.5 * (zeta - psi_m) / psi_m, 0.0)))


def _quad(f, a: float, b: float, args: tuple, tol: float, points=None) -> float:
    value, _ = integrate.quad(f, a, b, args=args, epsabs=0.0, epsrel=tol, limit=500, points=points)
    return value


def _half_height_u(psi_m: float, zeta: float, tol: float) -> float:
    return _quad(_dx_du, 0.0, _u_wall(zeta, psi_m), (psi_m,), tol)


def _dx_dt(t: float, psi_m: float) -> float:
    # 2t dt / sqrt(4 sinh(psi_m + t^2/2) sinh(t^2/2)), with t/sqrt(sinh(t^2/2)) = sqrt(2/sinhc(t^2/2))
    q = 0.5 * t * t
    return math.sqrt(2.0 / (math.sinh(psi_m + q) * _sinhc(q)))


def _psi_dx_dt(t: float, psi_m: float) -> float:
    return (psi_m + t * t) * _dx_dt(t, psi_m)


def _t_points(psi_m: float, t_wall: float) -> list[float]:
    """Breakpoints for the t form: geometric from the peak width sqrt(psi_m) to the wall."""
    width = math.sqrt(psi_m)
    points = []
    while width < t_wall and len(points) < 60:
        points.append(width)
        width *= 4.0
    return points or None


def _half_height_t(psi_m: float, zeta: float, tol: float) -> float:
    t_wall = math.sqrt(max(zeta - psi_m, 0.0))
    return _quad(_dx_dt, 0.0, t_wall, (psi_m,), tol, _t_points(psi_m, t_wall))


def _mid_plane(h: float, zeta: float, tol: float, half_height) -> float:
    """psi_m > 0 with half_height(psi_m) = h, found in log psi_m (h falls monotonically with psi_m)."""
    gamma = math.tanh(0.25 * zeta)
    guess = min(8.0 * math.atanh(gamma * math.exp(-h)), 0.5 * zeta)  # superposed Gouy-Chapman layers
    def excess(y):
        return half_height(math.exp(y), zeta, tol) - h
    lo, hi = math.log(guess), math.log(zeta)
    while excess(lo) < 0.0:
        lo -= 2.0
    y = optimize.brentq(excess, lo, hi, xtol=1e-15, rtol=4.0 * np.finfo(float).eps)
    return math.exp(y)


@dataclass(frozen=True)
class Reference:
    centre: float  # psi_m (kT/e)
    wall_charge: float  # sigma_hat = dpsi/dn at the wall, Debye units
    mean: float  # (1/h) int_0^h psi dx (kT/e)


def reference(h: float, zeta: float, tol: float = 1e-13, form: str = "u") -> Reference:
    """Symmetric PB slit of half-height h (Debye lengths), wall potential zeta (kT/e)."""
    sign, z = math.copysign(1.0, zeta), abs(zeta)
    if form == "u":
        psi_m = _mid_plane(h, z, tol, _half_height_u)
        integral = _quad(_psi_dx_du, 0.0, _u_wall(z, psi_m), (psi_m,), tol)
    else:
        psi_m = _mid_plane(h, z, tol, _half_height_t)
        t_wall = math.sqrt(z - psi_m)
        integral = _quad(_psi_dx_dt, 0.0, t_wall, (psi_m,), tol, _t_points(psi_m, t_wall))
    sigma = 2.0 * math.sqrt(math.sinh(0.5 * (z + psi_m)) * math.sinh(0.5 * (z - psi_m)))
    return Reference(sign * psi_m, sign * sigma, sign * integral / h)


def errors(centre: np.ndarray, wall_charge: np.ndarray, mean: np.ndarray, zeta: np.ndarray,
           refs: list[Reference]) -> dict[str, np.ndarray]:
    """Relative errors against the reference (centre potential relative to zeta)."""
    rc = np.array([r.centre for r in refs])
    rs = np.array([r.wall_charge for r in refs])
    rm = np.array([r.mean for r in refs])
    return {"wall_charge": np.abs(wall_charge - rs) / np.abs(rs),
            "centre": np.abs(centre - rc) / np.abs(zeta),
            "mean": np.abs(mean - rm) / np.abs(rm)}


def mpmath_check(cases: list[tuple[float, float]]) -> float | None:
    """Largest relative difference of the quad reference from tests/reference_solutions.pb_slit (an
    mpmath reference written independently of this file); None when it cannot be imported."""
    try:
        sys.path.insert(0, str(ROOT / "tests"))
        import reference_solutions as rs
    except Exception:  # optional cross-check only
        return None
    worst = 0.0
    for h, zeta in cases:
        ours, theirs = reference(h, zeta), rs.pb_slit(zeta, h)
        worst = max(worst, abs(ours.centre - float(theirs.centre)) / abs(zeta),
                    abs(ours.wall_charge / float(theirs.wall_charge) - 1.0),
                    abs(ours.mean / float(theirs.mean_potential) - 1.0))
    return worst


# ------------------------------------------------------------------------------------------------
# The peer: scipy.integrate.solve_bvp on psi'' = sinh psi, psi'(0) = 0, psi(h) = zeta
# ------------------------------------------------------------------------------------------------

_BC_JAC = (np.array([[0.0, 1.0], [0.0, 0.0]]), np.array([[0.0, 0.0], [1.0, 0.0]]))


def _bvp_fun(x, y):
    return np.vstack((y[1], np.sinh(y[0])))


def _bvp_fun_jac(x, y):
    jac = np.zeros((2, 2, x.size))
    jac[0, 1] = 1.0
    jac[1, 0] = np.cosh(y[0])
    return jac


def _gouy_chapman(d: np.ndarray, zeta: float) -> tuple[np.ndarray, np.ndarray]:
    """Single-wall profile 4 artanh(tanh(zeta/4) e^-d) and its derivative in d."""
    e = math.tanh(0.25 * zeta) * np.exp(-d)
    return 4.0 * np.arctanh(e), -4.0 * e / (1.0 - e * e)


def bvp_solve(h: float, zeta: float, tol: float, intervals: int = 24):
    """solve_bvp on the half channel; returns (status, psi_m, sigma_hat, mean, nodes).

    Initial mesh: tanh-clustered at the wall on the innermost Gouy-Chapman scale
    min(1, 2 exp(-|zeta|/2)); initial guess: the wall's Gouy-Chapman layer plus its mirror image,
    shifted to meet psi(h) = zeta and with psi'(0) = 0 (-> uniform zeta as h -> 0).
    The mean is the exact integral of solve_bvp's own cubic Hermite interpolant.
    """
    inner = min(1.0, 2.0 * math.exp(-0.5 * abs(zeta)))
    beta = max(0.5 * math.log1p(2.0 * h / inner), 1e-3)
    x = h * np.tanh(beta * np.linspace(0.0, 1.0, intervals + 1)) / math.tanh(beta)
    wall, dwall = _gouy_chapman(h - x, zeta)
    mirror, dmirror = _gouy_chapman(h + x, zeta)
    shift, _ = _gouy_chapman(np.array([2.0 * h]), zeta)
    y = np.vstack((wall + mirror - shift[0], -dwall + dmirror))
    zeta_bc = zeta

    def bc(ya, yb):
        return np.array([ya[1], yb[0] - zeta_bc])

    def bc_jac(ya, yb):
        return _BC_JAC

    sol = integrate.solve_bvp(_bvp_fun, bc, x, y, fun_jac=_bvp_fun_jac, bc_jac=bc_jac, tol=tol,
                              max_nodes=BVP_MAX_NODES)
    xs, psi, dpsi = sol.x, sol.y[0], sol.y[1]
    dx = np.diff(xs)
    integral = np.sum(0.5 * dx * (psi[:-1] + psi[1:]) + dx * dx / 12.0 * (dpsi[:-1] - dpsi[1:]))
    return sol.status, psi[0], dpsi[-1], integral / h, xs.size


# ------------------------------------------------------------------------------------------------
# Timing helpers
# ------------------------------------------------------------------------------------------------

class NoGC:
    """Garbage collector off inside a timed block (as timeit does)."""

    def __enter__(self):
        self.enabled = gc.isenabled()
        gc.disable()

    def __exit__(self, *exc):
        if self.enabled:
            gc.enable()


def repeat_median(fn, repeats: int) -> tuple[float, float]:
    """Median and minimum wall time of ``fn()`` over ``repeats`` calls, s."""
    times = []
    with NoGC():
        for _ in range(repeats):
            t0 = time.perf_counter()
            fn()
            times.append(time.perf_counter() - t0)
    return statistics.median(times), min(times)


def slit_summary_values(summary: dict) -> tuple[float, float, float]:
    """(psi_m, sigma_hat in Debye units, mean psi) from an edl Result summary."""
    return (summary["centre_potential"] / THERMAL_VOLTAGE, summary["wall_charge_density"] / CHARGE_UNIT,
            summary["mean_potential"] / THERMAL_VOLTAGE)


def read_every_field(result: edl.Result) -> None:
    """Read the parts of a Result that are built on first access (``results.result.Deferred``)."""
    result.summary, result.profiles, result.verdict, result.message, result.warnings  # noqa: B018


def section_values(section, kappa_l: float) -> tuple[float, float, float]:
    """(psi_m, sigma_hat in Debye units, mean psi) from a half-section kernel solution."""
    i = section.integrals
    return i[_layout.I_PSI_CENTRE], i[_layout.I_FLUX_RIGHT] / kappa_l, i[_layout.I_PSI]


def err_stats(err: dict[str, np.ndarray]) -> dict[str, dict[str, float]]:
    return {q: {"max": float(np.max(e)), "median": float(np.median(e))} for q, e in err.items()}


def fmt_us(seconds: float) -> str:
    return f"{seconds * 1e6:9.1f}"


# ------------------------------------------------------------------------------------------------
# The run
# ------------------------------------------------------------------------------------------------

def source_digest() -> str:
    """Short SHA-256 of the package's Python sources: names the state of the tree that was measured."""
    digest = hashlib.sha256()
    for path in sorted((ROOT / "edl_solver").rglob("*.py")):
        digest.update(path.relative_to(ROOT).as_posix().encode())
        digest.update(path.read_bytes())
    return digest.hexdigest()[:12]


def machine() -> dict[str, str]:
    cpu = platform.processor() or platform.machine()
    try:
        with open("/proc/cpuinfo", encoding="utf-8") as fh:
            for line in fh:
                if line.startswith("model name"):
                    cpu = line.split(":", 1)[1].strip()
                    break
    except OSError:
        pass
    return {"platform": platform.platform(), "cpu": cpu, "cpu_count": str(os.cpu_count()),
            "python": platform.python_version(), "numpy": np.__version__, "scipy": scipy.__version__,
            "numba": numba.__version__, "edl_solver": f"{edl.__version__} (sources {source_digest()})"}


def worst_of(err: dict[str, np.ndarray]) -> np.ndarray:
    """Per case, the largest of the three relative errors."""
    return np.max(np.vstack([err[q] for q in QUANTITIES]), axis=0)


def per_case_blocks(fns, indices, repeats: int) -> np.ndarray:
    """Wall times of several solvers on each case, s, shape (solver, repeat, case): per case, each
    solver ``repeats`` times in a row, then the next solver. Going case by case makes a change of load
    on the machine hit all solvers alike; the repeats in a row keep each solver's code and data warm
    in the CPU caches, as in a loop of its own (calling edl.solve right after a solve_bvp call costs
    it ~90 us more, measured, which would be a cache effect, not the solver)."""
    times = np.empty((len(fns), repeats, len(indices)))
    with NoGC():
        for j, i in enumerate(indices):
            for f, fn in enumerate(fns):
                for r in range(repeats):
                    t0 = time.perf_counter()
                    fn(i)
                    times[f, r, j] = time.perf_counter() - t0
    return times


def bvp_ladder(kappa_h, zeta, refs, sample, tols, strict: dict[str, float]) -> list[dict]:
    """solve_bvp on the sample at each tol, loosest first, until every quantity's max error is at or
    below ``strict``: status counts, nodes, errors and (one-shot) times."""
    ladder = []
    sample_refs = [refs[i] for i in sample]
    for tol in tols:
        times, res = np.empty(sample.size), []
        with warnings.catch_warnings(), NoGC():
            warnings.simplefilter("ignore")
            for j, i in enumerate(sample):
                t0 = time.perf_counter()
                res.append(bvp_solve(kappa_h[i], zeta[i], tol))
                times[j] = time.perf_counter() - t0
        status = np.array([r[0] for r in res])
        vals = np.array([r[1:4] for r in res])
        err = errors(vals[:, 0], vals[:, 1], vals[:, 2], zeta[sample], sample_refs)
        err = {q: np.where(status == 0, e, np.inf) for q, e in err.items()}  # a failed solve counts as wrong
        ladder.append({"tol": tol, "status_counts": {int(s): int(np.sum(status == s)) for s in np.unique(status)},
                       "max_nodes_used": int(max(r[4] for r in res)), "errors": err_stats(err),
                       "worst": float(np.max(worst_of(err))), "mean_s": float(np.mean(times))})
        if all(ladder[-1]["errors"][q]["max"] <= strict[q] for q in QUANTITIES):
            break
    return ladder


def main(argv: list[str] | None = None) -> dict:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--cases", type=int, default=None, help="slit cases in the loop (default 1000)")
    parser.add_argument("--quick", action="store_true", help="100 cases, 30 raced, fewer repeats")
    parser.add_argument("--bvp-sample", type=int, default=None,
                        help="cases raced against solve_bvp (default 100, --quick 30)")
    parser.add_argument("--bvp-tol", type=float, default=None, help="skip the tol ladder, race at this tol")
    parser.add_argument("--accuracy", type=float, default=ACCURACY,
                        help=f"edl_solver's Numerics(accuracy=...) (default {ACCURACY:g})")
    parser.add_argument("--seed", type=int, default=20261202)
    parser.add_argument("--json", type=Path, default=None, help="also write the figures here")
    args = parser.parse_args(argv)
    n_cases = args.cases or (100 if args.quick else 1000)
    n_bvp = min(n_cases, args.bvp_sample or (30 if args.quick else 100))
    n_cap = min(n_cases, 100 if args.quick else 300)
    repeats = 50 if args.quick else 300
    passes = 1 if args.quick else 3
    rounds = 3 if args.quick else 5
    accuracy = args.accuracy
    out: dict = {"machine": machine(), "cases": n_cases, "bvp_sample": n_bvp, "seed": args.seed,
                 "accuracy": accuracy, "load_average_start": os.getloadavg()}
    started = time.perf_counter()

    print("edl_solver single-solve benchmark vs scipy.integrate.solve_bvp")
    for key, value in out["machine"].items():
        print(f"  {key:11s} {value}")
    print(f"  cases       {n_cases} symmetric slits, 1:1 (1 mM), kappa*h log-uniform [0.1, 100], "
          f"zeta uniform [-8, -0.5] kT/e, seed {args.seed}; edl accuracy {accuracy:g}")

    # -- cases and reference ----------------------------------------------------------------------
    kappa_h, zeta = spread(n_cases, args.seed, (-8.0, -0.5))
    t0 = time.perf_counter()
    cases = [slit_case(k, z, accuracy=accuracy) for k, z in zip(kappa_h, zeta)]
    build_time = (time.perf_counter() - t0) / n_cases
    t0 = time.perf_counter()
    refs = [reference(k, z) for k, z in zip(kappa_h, zeta)]
    ref_time = (time.perf_counter() - t0) / n_cases
    # Check of the reference: the plain t form, other breakpoints, 1000 x looser quadrature tolerance.
    checks = [reference(k, z, tol=1e-10, form="t") for k, z in zip(kappa_h, zeta)]
    ref_check = float(np.max(worst_of(errors(
        np.array([c.centre for c in checks]), np.array([c.wall_charge for c in checks]),
        np.array([c.mean for c in checks]), zeta, refs))))
    corners = [(0.1, -8.0), (0.1, -0.5), (1.0, -4.0), (100.0, -8.0), (100.0, -0.5)]
    mp_check = mpmath_check(corners)
    out["reference"] = {"time_per_case_s": ref_time, "t_form_tol1e-10_max_diff": ref_check,
                        "mpmath_max_diff": mp_check}
    print(f"\nReference (quad, u form, epsrel 1e-13): {ref_time * 1e3:.2f} ms/case; max difference from "
          f"the t form at epsrel 1e-10: {ref_check:.1e}"
          + ("" if mp_check is None else
             f"; from the mpmath reference (tests/reference_solutions.py, {len(corners)} corner cases): "
             f"{mp_check:.1e}"))

    # -- warm-up (compile or cache load, kept out of every timing) --------------------------------
    t0 = time.perf_counter()
    edl.solve(cases[0])
    first_call = time.perf_counter() - t0
    for c in (slit_case(0.1, -8.0), slit_case(100.0, -8.0), slit_case(3.0, -0.5, "dh"),
              capillary_case(1.0, -0.02, "dh"), capillary_case(10.0, -4.0, "pb")):
        edl.solve(c)
    bvp_solve(1.0, -4.0, 1e-6)
    out["first_call_s"] = first_call
    print(f"First edl.solve in this process (numba compile or cache load): {first_call:.2f} s "
          "(excluded from all timings)")

    # -- (a) one warm solve, repeated -------------------------------------------------------------
    single = slit_case(1.0, -4.0, accuracy=accuracy)
    problem = scaling.prepare(single).problem
    single_median, single_min = repeat_median(lambda: edl.solve(single), repeats)
    kernel_median, kernel_min = repeat_median(lambda: equilibrium.solve_section(problem, accuracy), repeats)
    read_median, read_min = repeat_median(lambda: read_every_field(edl.solve(single)), repeats)
    corner_rows = []
    for k, z in [(0.1, -0.5), (0.1, -8.0), (10.0, -0.5), (10.0, -8.0), (100.0, -0.5), (100.0, -8.0)]:
        c = slit_case(k, z, accuracy=accuracy)
        corner_rows.append((k, z, repeat_median(lambda c=c: edl.solve(c), max(20, repeats // 6))[0]))
    out["single"] = {"kappa_h": 1.0, "zeta": -4.0, "repeats": repeats, "solve_median_s": single_median,
                     "solve_min_s": single_min, "kernel_median_s": kernel_median, "kernel_min_s": kernel_min,
                     "solve_read_median_s": read_median, "solve_read_min_s": read_min,
                     "corners": [{"kappa_h": k, "zeta": z, "solve_median_s": m} for k, z, m in corner_rows]}

    # -- (b) the loop through edl.solve -----------------------------------------------------------
    # Each pass solves every case once; the per-case time is the median over the passes and the loop
    # time the median pass (other processes on a small machine show up as slow passes).
    pass_times, pass_case = [], np.empty((passes, n_cases))
    values = np.full((n_cases, 3), np.nan)
    estimates = np.full(n_cases, np.nan)
    nodes = np.zeros(n_cases, dtype=int)
    failures = {}
    for k in range(passes):
        with NoGC():
            t_pass = time.perf_counter()
            for i, c in enumerate(cases):
                t0 = time.perf_counter()
                try:
                    r = edl.solve(c)
                except edl.ConvergenceError as exc:
                    pass_case[k, i] = time.perf_counter() - t0
                    failures[i] = str(exc)
                    continue
                pass_case[k, i] = time.perf_counter() - t0
                if k == 0:
                    values[i] = slit_summary_values(r.summary)
                    estimates[i] = r.summary["error_estimate"]
                    nodes[i] = r.profiles.coordinate.size // 2 + 1  # mirrored half section
            pass_times.append(time.perf_counter() - t_pass)
    per_case = np.median(pass_case, axis=0)
    t_loop = statistics.median(pass_times)
    failures = sorted(failures.items())
    ok = np.isfinite(values[:, 0])
    edl_err = errors(values[:, 0], values[:, 1], values[:, 2], zeta, refs)

    # -- (c) the kernel path only (problems built outside the timer) ------------------------------
    problems = [scaling.prepare(c).problem for c in cases]
    kernel_pass, kernel_times = np.empty((passes, n_cases)), []
    kvalues = np.full((n_cases, 3), np.nan)
    for k in range(passes):
        with NoGC():
            t_pass = time.perf_counter()
            for i, p in enumerate(problems):
                t0 = time.perf_counter()
                try:
                    s = equilibrium.solve_section(p, accuracy)
                except edl.ConvergenceError:
                    kernel_pass[k, i] = time.perf_counter() - t0
                    continue
                kernel_pass[k, i] = time.perf_counter() - t0
                kvalues[i] = section_values(s, kappa_h[i])
            kernel_times.append(time.perf_counter() - t_pass)
    kernel_case = np.median(kernel_pass, axis=0)
    t_kernel = statistics.median(kernel_times)
    kernel_err = errors(kvalues[:, 0], kvalues[:, 1], kvalues[:, 2], zeta, refs)

    # -- the race: same cases, all warm; solve_bvp's tol from a ladder ---------------------------
    sample = np.flatnonzero(ok[:n_bvp])  # the cases are in random order already
    edl_sample_err = {q: e[sample] for q, e in edl_err.items()}
    level = float(np.max(worst_of(edl_sample_err)))  # edl's worst error of any quantity on the sample
    strict = {q: float(np.max(e)) for q, e in edl_sample_err.items()}
    ladder = bvp_ladder(kappa_h, zeta, refs, sample, (args.bvp_tol,) if args.bvp_tol else BVP_TOLS,
                        strict)
    matching = [row for row in ladder if row["worst"] <= level]
    chosen = matching[0] if matching else ladder[-1]
    strict_rows = [row for row in ladder if all(row["errors"][q]["max"] <= strict[q] for q in QUANTITIES)]
    tol = chosen["tol"]
    # The race proper: per case and solver ``rounds`` solves in a row; per case and solver the median
    # (what a user sees on a shared machine) and the minimum (the cost of the code).
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        race = per_case_blocks(
            # edl.solve reads its summary (built on first read), as solve_bvp's side computes its three values
            (lambda i: edl.solve(cases[i]).summary, lambda i: equilibrium.solve_section(problems[i], accuracy),
             lambda i: bvp_solve(kappa_h[i], zeta[i], tol)), sample, rounds)
    t_edl, t_ker, t_bvp = np.median(race, axis=1)
    m_edl, m_ker, m_bvp = np.min(race, axis=1)
    ratio_total = float(np.sum(t_bvp) / np.sum(t_edl))
    ratio_case = float(np.median(t_bvp / t_edl))
    ratio_kernel = float(np.sum(t_bvp) / np.sum(t_ker))
    ratio_case_kernel = float(np.median(t_bvp / t_ker))
    ratio_min = float(np.sum(m_bvp) / np.sum(m_edl))
    ratio_min_kernel = float(np.sum(m_bvp) / np.sum(m_ker))
    edl_sample_mean = float(np.mean(t_edl))

    # -- capillaries ----------------------------------------------------------------------------
    kappa_a, zeta_cap = spread(n_cap, args.seed + 1, (-0.05, -0.005))
    cap_cases = [capillary_case(k, z, "dh", accuracy) for k, z in zip(kappa_a, zeta_cap)]
    cap_times = np.empty(n_cap)
    cap_vals = np.empty((n_cap, 3))
    with NoGC():
        for i, c in enumerate(cap_cases):
            t0 = time.perf_counter()
            r = edl.solve(c)
            cap_times[i] = time.perf_counter() - t0
            cap_vals[i] = slit_summary_values(r.summary)  # same keys and units
    i1_i0 = special.ive(1, kappa_a) / special.ive(0, kappa_a)  # I1/I0 without overflow
    cap_refs = [Reference(z * math.exp(-k) / special.ive(0, k), z * q, 2.0 * z * q / k)
                for k, z, q in zip(kappa_a, zeta_cap, i1_i0)]
    cap_err = errors(cap_vals[:, 0], cap_vals[:, 1], cap_vals[:, 2], zeta_cap, cap_refs)
    kappa_p, zeta_p = spread(n_cap, args.seed + 2, (-8.0, -0.5))
    pb_caps = [capillary_case(k, z, "pb", accuracy) for k, z in zip(kappa_p, zeta_p)]
    cap_pb_times = np.empty(n_cap)
    with NoGC():
        for i, c in enumerate(pb_caps):
            t0 = time.perf_counter()
            edl.solve(c)
            cap_pb_times[i] = time.perf_counter() - t0

    out.update({
        "loop": {"mean_s": t_loop / n_cases, "median_s": float(np.median(per_case)),
                 "best_pass_mean_s": min(pass_times) / n_cases,
                 "p95_s": float(np.percentile(per_case, 95)), "max_s": float(np.max(per_case)),
                 "over_200us": int(np.sum(per_case > TARGET_WARM_US * 1e-6)), "case_build_s": build_time,
                 "failures": len(failures), "errors": err_stats({q: e[ok] for q, e in edl_err.items()})},
        "kernel_loop": {"mean_s": t_kernel / n_cases, "median_s": float(np.median(kernel_case)),
                        "best_pass_mean_s": min(kernel_times) / n_cases,
                        "errors": err_stats({q: e[np.isfinite(e)] for q, e in kernel_err.items()})},
        "bvp": {"tol": tol, "level": level, "ladder": ladder,
                "strict_tol": strict_rows[0]["tol"] if strict_rows else None,
                "sample_mean_s": float(np.mean(t_bvp)), "sample_median_s": float(np.median(t_bvp)),
                "errors": chosen["errors"], "status_counts": chosen["status_counts"]},
        "race": {"cases": int(sample.size), "edl_mean_s": edl_sample_mean, "kernel_mean_s": float(np.mean(t_ker)),
                 "bvp_mean_s": float(np.mean(t_bvp)), "ratio_total": ratio_total, "ratio_median_per_case": ratio_case,
                 "ratio_total_kernel": ratio_kernel, "ratio_median_per_case_kernel": ratio_case_kernel,
                 "rounds": rounds, "edl_mean_of_minima_s": float(np.mean(m_edl)),
                 "kernel_mean_of_minima_s": float(np.mean(m_ker)), "bvp_mean_of_minima_s": float(np.mean(m_bvp)),
                 "ratio_minima": ratio_min, "ratio_minima_kernel": ratio_min_kernel},
        "capillary_dh": {"cases": n_cap, "mean_s": float(np.mean(cap_times)),
                         "median_s": float(np.median(cap_times)), "errors": err_stats(cap_err)},
        "capillary_pb": {"cases": n_cap, "mean_s": float(np.mean(cap_pb_times)),
                         "median_s": float(np.median(cap_pb_times))},
    })

    # -- report -----------------------------------------------------------------------------------
    def verdict(ok_):
        return "met" if ok_ else "MISSED"

    print(f"\n(a) Warm single solve, kappa*h = 1, zeta = -4 kT/e, median (min) of {repeats}:")
    print(f"    edl.solve                {fmt_us(single_median)} us ({single_min * 1e6:.1f})   "
          f"target <= {TARGET_WARM_US:.0f} us: {verdict(single_median <= TARGET_WARM_US * 1e-6)}")
    print(f"    kernel (solve_section)   {fmt_us(kernel_median)} us ({kernel_min * 1e6:.1f})")
    print(f"    edl.solve, every field read {fmt_us(read_median)[3:]} us ({read_min * 1e6:.1f})   (summary, "
          "profiles, verdict, message, warnings: built on first read)")
    print("    edl.solve elsewhere (median): "
          + ",  ".join(f"kh={k:g} z={z:g}: {m * 1e6:.0f} us" for k, z, m in corner_rows))

    print(f"\n(b) edl.solve over {n_cases} cases, {passes} pass(es), median per case and median pass "
          f"(Case objects built beforehand, {build_time * 1e6:.0f} us each, not counted):")
    print(f"    mean {fmt_us(t_loop / n_cases)} us   median {fmt_us(np.median(per_case))} us   "
          f"p95 {fmt_us(np.percentile(per_case, 95))} us   max {fmt_us(np.max(per_case))} us   "
          f"> {TARGET_WARM_US:.0f} us: {int(np.sum(per_case > TARGET_WARM_US * 1e-6))}/{n_cases}   "
          f"total {t_loop:.3f} s; best pass {min(pass_times) / n_cases * 1e6:.1f} us/solve")
    print(f"(c) kernel (equilibrium.solve_section) over the same {n_cases}, same way:")
    print(f"    mean {fmt_us(t_kernel / n_cases)} us   median {fmt_us(np.median(kernel_case))} us   "
          f"p95 {fmt_us(np.percentile(kernel_case, 95))} us   max {fmt_us(np.max(kernel_case))} us   "
          f"best pass {min(kernel_times) / n_cases * 1e6:.1f} us/solve")
    if failures:
        print(f"    FAILURES: {len(failures)}")
        for i, msg in failures[:5]:
            print(f"      kappa*h = {kappa_h[i]:.4g}, zeta = {zeta[i]:.4g}: {msg[:150]}")

    print(f"\nsolve_bvp tol ladder on the {sample.size} raced cases (one-shot times, ratio to edl.solve's "
          f"{edl_sample_mean * 1e6:.0f} us/solve in the race below; edl's worst error on them, any quantity: "
          f"{level:.1e}):")
    print(f"    {'tol':>6s} {'status':>9s} {'nodes':>6s} {'us/solve':>9s} {'ratio':>6s}  "
          + " ".join(f"{q + ' max/med':>21s}" for q in QUANTITIES))
    for row in ladder:
        counts = ",".join(f"{k}:{v}" for k, v in row["status_counts"].items())
        print(f"    {row['tol']:6.0e} {counts:>9s} {row['max_nodes_used']:6d} {row['mean_s'] * 1e6:9.0f} "
              f"{row['mean_s'] / edl_sample_mean:6.1f}  "
              + " ".join(f"{row['errors'][q]['max']:11.1e}/{row['errors'][q]['median']:8.1e} " for q in QUANTITIES)
              + ("  <- equal accuracy" if row is chosen and matching else ("  <- raced" if row is chosen else "")))
    print("    (status 0 = converged; 1 = max_nodes exceeded; 2 = singular Jacobian; 3 = tol not reached)")
    if not matching:
        print("    NO tol on the ladder reached edl_solver's worst error; raced at the tightest")
    print(f"    equal accuracy (solve_bvp's worst error <= edl's): tol {tol:.0e}; every quantity's max at or "
          f"below edl's: tol {strict_rows[0]['tol']:.0e}" if strict_rows else "    no tol matches every quantity")

    print(f"\nRace on {sample.size} cases (same cases, all warm; per case each solver {rounds} times in a row), "
          f"solve_bvp at tol {tol:.0e}:")
    print(f"    {'us/solve':24s} {'mean of medians':>16s} {'median':>10s} {'mean of minima':>15s}")
    for label, t, m in (("edl.solve", t_edl, m_edl), ("edl kernel only", t_ker, m_ker),
                        (f"solve_bvp tol {tol:.0e}", t_bvp, m_bvp)):
        print(f"    {label:24s} {fmt_us(np.mean(t)):>16s} {fmt_us(np.median(t)):>10s} {fmt_us(np.mean(m)):>15s}")
    print(f"    speed ratio solve_bvp / edl.solve: {ratio_total:5.1f}x (total)  {ratio_case:5.1f}x (median per "
          f"case)  {ratio_min:5.1f}x (minima)   target >= {TARGET_RATIO:.0f}x: {verdict(ratio_total >= TARGET_RATIO)}")
    print(f"    speed ratio solve_bvp / kernel:    {ratio_kernel:5.1f}x (total)  {ratio_case_kernel:5.1f}x "
          f"(median per case)  {ratio_min_kernel:5.1f}x (minima)")

    print("\nErrors against the reference, max / median:")
    print(f"    {'':30s} {'edl.solve':>19s} {'kernel':>19s} {f'solve_bvp {tol:.0e}':>19s}")
    for q in QUANTITIES:
        cells = [out["loop"]["errors"][q], out["kernel_loop"]["errors"][q], chosen["errors"][q]]
        print(f"    {QUANTITY_LABELS[q]:30s} " + " ".join(f"{c['max']:9.1e}/{c['median']:8.1e} " for c in cells))
    print(f"    (edl and kernel over all {int(ok.sum())} cases, solve_bvp over the {sample.size} raced ones)")

    worst = worst_of(edl_err)
    over = np.flatnonzero(ok & (worst > accuracy))
    print(f"\nedl.solve cases with an error above its accuracy {accuracy:g}: {over.size}/{n_cases}")
    for i in over[np.argsort(-worst[over])][:8]:
        print(f"    kappa*h = {kappa_h[i]:8.4g}  zeta = {zeta[i]:7.3f}  error {worst[i]:.2e} "
              f"({max(QUANTITIES, key=lambda q: edl_err[q][i])}), own estimate {estimates[i]:.1e}, {nodes[i]} nodes")
    out["loop"]["over_accuracy"] = [{"kappa_h": float(kappa_h[i]), "zeta": float(zeta[i]),
                                     "error": float(worst[i]), "estimate": float(estimates[i])} for i in over]
    beyond = np.flatnonzero(ok & (worst > estimates))
    print(f"edl's own error estimate vs its actual worst error: actual/estimate median "
          f"{np.median(worst[ok] / estimates[ok]):.2g}; actual above the estimate in {beyond.size}/{n_cases} cases")
    if beyond.size:
        i = beyond[np.argmax(worst[beyond])]
        print(f"    the largest of those: kh={kappa_h[i]:.4g} z={zeta[i]:.3f}: error {worst[i]:.1e}, "
              f"estimate {estimates[i]:.1e}")
    out["loop"]["error_above_estimate"] = int(beyond.size)
    top = np.argsort(-np.where(ok, worst, -1.0))[:3]
    print("edl.solve largest errors: " + ",  ".join(
        f"kh={kappa_h[i]:.4g} z={zeta[i]:.3f}: {worst[i]:.1e} ({max(QUANTITIES, key=lambda q: edl_err[q][i])}, "
        f"estimate {estimates[i]:.1e}, {nodes[i]} nodes)" for i in top))
    slow = np.argsort(-per_case)[:5]
    print("edl.solve slowest in the loop: " + ",  ".join(
        f"kh={kappa_h[i]:.3g} z={zeta[i]:.2f}: {per_case[i] * 1e6:.0f} us" for i in slow))
    finest = sorted(set(nodes[ok].tolist()))
    print("edl.solve by finest grid: " + ",  ".join(
        f"{n} nodes: {np.sum(nodes == n)} cases, median {np.median(per_case[nodes == n]) * 1e6:.0f} us"
        for n in finest))
    bins = [0.1, 1.0, 10.0, 100.0 + 1e-9]
    print("edl.solve median by kappa*h: " + ",  ".join(
        f"[{lo:g}, {hi:.0f}): {np.median(per_case[(kappa_h >= lo) & (kappa_h < hi)]) * 1e6:.0f} us"
        for lo, hi in itertools.pairwise(bins)))
    out["loop"]["by_nodes"] = {int(n): {"cases": int(np.sum(nodes == n)),
                                        "median_s": float(np.median(per_case[nodes == n]))} for n in finest}

    ce = out["capillary_dh"]["errors"]
    print(f"\nCapillaries, {n_cap} cases each, kappa*a log-uniform [0.1, 100], edl.solve:")
    print(f"    DH, zeta in [-0.05, -0.005] kT/e, vs zeta I0(kr)/I0(ka): mean {fmt_us(np.mean(cap_times))} us, "
          f"median {fmt_us(np.median(cap_times))} us")
    print("        errors max/median: " + ",  ".join(
        f"{QUANTITY_LABELS[q]} {ce[q]['max']:.1e}/{ce[q]['median']:.1e}" for q in QUANTITIES))
    print(f"    PB, zeta in [-8, -0.5] kT/e (timing only):                mean {fmt_us(np.mean(cap_pb_times))} us, "
          f"median {fmt_us(np.median(cap_pb_times))} us")

    out["wall_time_s"] = time.perf_counter() - started
    out["load_average_end"] = os.getloadavg()
    load = out["load_average_start"][0]
    print(f"\nTotal benchmark wall time {out['wall_time_s']:.1f} s; 1-min load average {load:.2f} at the start, "
          f"{out['load_average_end'][0]:.2f} at the end on {os.cpu_count()} CPUs (this run "
          "counts for ~1; more means other work shared the machine); timings are noisy, compare ratios within one run")
    if args.json:
        args.json.write_text(json.dumps(out, indent=2, default=float))
        print(f"Figures written to {args.json}")
    return out


if __name__ == "__main__":
    main()
