"""Peers for the transient Poisson-Nernst-Planck benchmark (issue 14): charging between blocking electrodes.

Problem (linear and nonlinear charging, Bazant, Thornton & Ajdari 2004, Phys. Rev. E 70, 021506): a slit
-L < x < L, a 1:1 salt of bulk concentration c0 and equal diffusivities D, at rest and uniform (psi = 0,
c+ = c- = c0); at t = 0 the walls step to psi(-L) = -V/2, psi(+L) = +V/2; the walls block the ions. In units of L,
L^2/D, kT/e and c0:

    dc_k/dt = d/dx (dc_k/dx + z_k c_k dpsi/dx),    d2psi/dx2 = -(kL)^2 (c+ - c-) / 2,

zero ion flux at x = +-1. The output is the charge of the top electrode sigma(t) = dpsi/dx(1) in units of
eps kT / (e L) (from V/2 at t = 0+, the bare capacitor, to about (V/2) kL coth(kL) in the linear limit), at 50
log-spaced times from 1e-3 RC times (RC time lambda_D L / D = 1/(kL)) to 3 diffusion times (L^2 / D).

Here: the problem in dimensionless and SI form (``Problem``, ``si_cases``), the method-of-lines peer on scipy's
``solve_ivp`` (``solve_ivp_peer``), its converged reference (``reference``), the FiPy peer (``fipy_peer``, needs
the optional extra ``bench``) and the linear-limit solution by Laplace transform (``linear_sigma``, to check the
discretisations). Nothing here imports edl_solver except ``si_cases``.
"""

from __future__ import annotations

import dataclasses
import math
from typing import Any

import numpy as np
import scipy.linalg
from scipy import sparse
from scipy.integrate import solve_ivp

#: Output times per series.
N_TIMES = 50


@dataclasses.dataclass(frozen=True)
class Problem:
    """One charging problem: kL (half-height over the Debye length) and the applied voltage V (kT/e)."""

    kappa_l: float
    voltage: float

    def times(self) -> np.ndarray:
        """The output times (units of L^2/D): 50 log-spaced from 1e-3 RC times to 3 diffusion times."""
        return np.logspace(math.log10(1e-3 / self.kappa_l), math.log10(3.0), N_TIMES)

    @property
    def label(self) -> str:
        return f"kL = {self.kappa_l:g}, V = {self.voltage:g} kT/e"


#: The four benchmark problems.
PROBLEMS = tuple(Problem(k, v) for k in (10.0, 50.0) for v in (0.1, 4.0))


@dataclasses.dataclass(frozen=True)
class SICases:
    """A problem in SI for ``edl.transient(case, times, before=rest)``, and its units."""

    case: Any
    rest: Any
    times: np.ndarray  # s
    sigma_unit: float  # C/m^2: eps kT / (e L), the unit of the dimensionless sigma
    time_unit: float  # s: L^2 / D


def si_cases(problem: Problem, concentration: float = 10.0, diffusivity: float = 2e-9,
             accuracy: float = 1e-6) -> SICases:
    """The problem as edl_solver cases: a 1:1 salt ("Na+", "Cl-", both of ``diffusivity`` m^2/s) of
    ``concentration`` mol/m^3 in water at 25 degC, a slit of height 2L with L = kL lambda_D (10 mM: lambda_D =
    3.04 nm, H = 60.8 nm at kL = 10, 304 nm at kL = 50); after the step the bottom wall is at zeta = -V/2 and
    the top one at +V/2 (kT/e), at rest both at zeta = 0; ``Numerics(accuracy=accuracy)``."""
    import edl_solver as edl

    ions = tuple(edl.Ion(name, valence=z, concentration=concentration, diffusivity=diffusivity)
                 for name, z in (("Na+", 1), ("Cl-", -1)))
    electrolyte = edl.Electrolyte(ions)
    solvent = edl.Water()
    half = problem.kappa_l * electrolyte.debye_length(solvent)
    kt_e = solvent.thermal_voltage
    numerics = edl.Numerics(accuracy=accuracy)
    walls = (edl.Wall(zeta=-0.5 * problem.voltage * kt_e), edl.Wall(zeta=0.5 * problem.voltage * kt_e))
    case = edl.Case(geometry=edl.Slit(height=2.0 * half), electrolyte=electrolyte, wall=walls, solvent=solvent,
                    numerics=numerics)
    rest = edl.Case(geometry=edl.Slit(height=2.0 * half), electrolyte=electrolyte, wall=edl.Wall(zeta=0.0),
                    solvent=solvent, numerics=numerics)
    time_unit = half**2 / diffusivity
    return SICases(case, rest, problem.times() * time_unit, solvent.permittivity * kt_e / half, time_unit)


# --------------------------------------------------------------------------------------------- the grid

def wall_grid(intervals: int, problem: Problem, delta: float | None = None) -> np.ndarray:
    """Nodes x_0 = -1 < ... < x_n = 1, clustered at both walls: spacing ~ sqrt(d^2 + delta^2) at distance d from
    the nearer wall (d = delta sinh(c s), s uniform), so a layer of any thickness above delta costs a fixed number
    of nodes. delta defaults to the finer of the Debye length and the diffusion length of the first output time
    (half or twice that cost 10-20 % more nodes at 1e-6, measured). ``intervals`` must be even (the centre is a
    node)."""
    if intervals % 2:
        raise ValueError(f"intervals: {intervals} is odd, expected an even number")
    if delta is None:
        delta = min(1.0 / problem.kappa_l, math.sqrt(problem.times()[0]))
    c = math.asinh(1.0 / delta)
    s = np.linspace(0.0, 1.0, intervals // 2 + 1)  # from the wall (0) to the centre (1)
    d = delta * np.sinh(c * s)
    d[-1] = 1.0
    half = 1.0 - d[::-1]  # from the centre (0) to the top wall (1)
    return np.concatenate([-half[:0:-1], half])


# ------------------------------------------------------------------- the method-of-lines peer (solve_ivp)

class MethodOfLines:
    """Vertex-centred finite volumes of the two Nernst-Planck equations, psi eliminated by the Poisson solve.

    Nodes carry c+ and c- (half control volumes at the walls, whose flux is zero); psi is fixed at the wall nodes
    and solved at the interior ones from the discrete Poisson equation (a constant tridiagonal matrix, inverted
    once: G). Face fluxes F_k = -(dc/dx + z_k cbar dpsi/dx) with cbar the mean of the two nodes. Second order on
    the smooth map of ``wall_grid``. The state is y = (c+, c-) on the nodes.
    """

    def __init__(self, problem: Problem, nodes: np.ndarray) -> None:
        self.problem = problem
        self.x = nodes
        self.d = np.diff(nodes)
        n = nodes.size
        self.volume = np.empty(n)
        self.volume[1:-1] = 0.5 * (self.d[:-1] + self.d[1:])
        self.volume[0], self.volume[-1] = 0.5 * self.d[0], 0.5 * self.d[-1]
        self.half_k2 = 0.5 * problem.kappa_l**2
        # the interior Poisson matrix A psi_int = b - (k^2/2) V rho, rho = c+ - c-
        inv = 1.0 / self.d
        main = -(inv[:-1] + inv[1:])
        self.banded = np.zeros((3, n - 2))
        self.banded[0, 1:] = inv[1:-1]
        self.banded[1] = main
        self.banded[2, :-1] = inv[1:-1]
        self.wall_rhs = np.zeros(n - 2)
        self.wall_rhs[0] = 0.5 * problem.voltage * inv[0]  # -(psi_0 / d_0) with psi_0 = -V/2
        self.wall_rhs[-1] = -0.5 * problem.voltage * inv[-1]
        dense = np.diag(main) + np.diag(inv[1:-1], 1) + np.diag(inv[1:-1], -1)
        self.green = np.linalg.inv(dense)  # for the Jacobian only
        self.y0 = np.ones(2 * n)
        self.scale = np.ones(2 * n)

    def potential(self, cp: np.ndarray, cm: np.ndarray) -> np.ndarray:
        """psi on every node (wall values included)."""
        rhs = self.wall_rhs - self.half_k2 * self.volume[1:-1] * (cp[1:-1] - cm[1:-1])
        inner = scipy.linalg.solve_banded((1, 1), self.banded, rhs, check_finite=False)
        v = 0.5 * self.problem.voltage
        return np.concatenate(([-v], inner, [v]))

    def rhs(self, t: float, y: np.ndarray) -> np.ndarray:
        n = self.x.size
        cp, cm = y[:n], y[n:]
        grad_psi = np.diff(self.potential(cp, cm)) / self.d
        out = np.empty_like(y)
        for c, z, part in ((cp, 1.0, out[:n]), (cm, -1.0, out[n:])):
            flux = -(np.diff(c) / self.d + z * 0.5 * (c[:-1] + c[1:]) * grad_psi)
            part[:] = 0.0
            part[:-1] -= flux
            part[1:] += flux
            part /= self.volume
        return out

    def jac(self, t: float, y: np.ndarray) -> np.ndarray:
        """The exact Jacobian (dense: the potential couples every node to every other)."""
        n = self.x.size
        cp, cm = y[:n], y[n:]
        psi = self.potential(cp, cm)
        grad_psi = np.diff(psi) / self.d
        inv = 1.0 / self.d
        jac = np.zeros((2 * n, 2 * n))
        # d psi_int / d c+ = -G (k^2/2) V, d psi_int / d c- = +G (k^2/2) V
        dpsi = -self.green * (self.half_k2 * self.volume[1:-1])
        rows = np.arange(n)
        for block, (c, z) in enumerate(((cp, 1.0), (cm, -1.0))):
            # flux_j = -(c_{j+1} - c_j)/d_j - z (c_j + c_{j+1})/2 grad_j; d flux_j/d c_j, d c_{j+1}, d psi_j, psi_j+1
            dfc0 = inv - 0.5 * z * grad_psi
            dfc1 = -inv - 0.5 * z * grad_psi
            cbar = 0.5 * (c[:-1] + c[1:])
            dfp0 = z * cbar * inv
            dfp1 = -z * cbar * inv
            # node i: V_i dc_i/dt = flux_{i-1} - flux_i
            local = np.zeros((n, n))
            local[rows[:-1], rows[:-1]] -= dfc0
            local[rows[:-1], rows[1:]] -= dfc1
            local[rows[1:], rows[:-1]] += dfc0
            local[rows[1:], rows[1:]] += dfc1
            dpsi_node = np.zeros((n, n))  # d(rhs_i)/d psi_m for every node m (walls' columns unused)
            dpsi_node[rows[:-1], rows[:-1]] -= dfp0
            dpsi_node[rows[:-1], rows[1:]] -= dfp1
            dpsi_node[rows[1:], rows[:-1]] += dfp0
            dpsi_node[rows[1:], rows[1:]] += dfp1
            through = dpsi_node[:, 1:-1] @ dpsi  # d rhs / d rho on the interior nodes
            r0 = block * n
            jac[r0:r0 + n, r0:r0 + n] += local
            jac[r0:r0 + n, 1:n - 1] += through
            jac[r0:r0 + n, n + 1:2 * n - 1] -= through
            jac[r0:r0 + n] /= self.volume[None, :].T
        return jac

    def sigma(self, y: np.ndarray) -> np.ndarray:
        """Charge of the top electrode, dpsi/dx(1) (Gauss over the wall's half volume), for states y (n, ...)."""
        n = self.x.size
        cp, cm = y[:n], y[n:]
        psi_top = self.potential(cp, cm)[-2] if y.ndim == 1 else \
            np.array([self.potential(cp[:, i], cm[:, i])[-2] for i in range(y.shape[1])])
        v = 0.5 * self.problem.voltage
        return (v - psi_top) / self.d[-1] - self.half_k2 * self.volume[-1] * (cp[-1] - cm[-1])


class ChargeLines:
    """The same finite volumes as ``MethodOfLines`` in variables that make the Jacobian sparse (an arrowhead).

    State y = (Q, s, e): Q_j = sum_{i <= j} rho_i V_i the charge left of face j (rho = (c+ - c-)/2, so
    psi'' = -k^2 rho), s = (c+ + c-)/2 on the nodes, e = dpsi/dx at the bottom wall. Discrete Gauss gives the face
    gradients grad_j = e - k^2 Q_j (local), charge conservation dQ_j/dt = -(charge flux through face j) (local),
    and the voltage sum_j d_j grad_j = V, differentiated in time, de/dt = -(k^2/2) sum_j d_j Fq_j: one full row
    and, through grad, one full column. With no net charge, the top electrode's charge dpsi/dx(1) equals e.
    Algebraically the discrete system of ``MethodOfLines``; the voltage is held by the integration (its drift is
    checked by ``voltage_drift``).
    """

    def __init__(self, problem: Problem, nodes: np.ndarray) -> None:
        self.problem = problem
        self.k2 = problem.kappa_l**2
        d = np.diff(nodes)
        n = nodes.size
        self.d = d
        volume = np.empty(n)
        volume[1:-1] = 0.5 * (d[:-1] + d[1:])
        volume[0], volume[-1] = 0.5 * d[0], 0.5 * d[-1]
        self.volume = volume
        m = n - 1  # faces
        # rho = Rq Q: rho_i = (Q_i - Q_{i-1}) / V_i with Q_{-1} = Q_n-1 = 0 (no net charge)
        self.rq = sparse.diags([1.0 / volume[:-1], -1.0 / volume[1:]], [0, -1], shape=(n, m), format="csr")
        self.dn = sparse.diags([-1.0 / d, 1.0 / d], [0, 1], shape=(m, n), format="csr")
        self.av = sparse.diags([0.5 * np.ones(m), 0.5 * np.ones(m)], [0, 1], shape=(m, n), format="csr")
        self.div = sparse.diags([1.0 / volume[1:], -1.0 / volume[:-1]], [-1, 0], shape=(n, m), format="csr")
        self.dnrq = (self.dn @ self.rq).tocsr()
        self.avrq = (self.av @ self.rq).tocsr()
        self.m, self.n = m, n
        self.y0 = np.concatenate([np.zeros(m), np.ones(n), [0.5 * problem.voltage]])
        # absolute tolerances: the charges are of order sigma / k^2 ~ V / (2 kL), the field of order V/2
        half_v = 0.5 * problem.voltage
        self.scale = np.concatenate([np.full(m, half_v / problem.kappa_l), np.ones(n), [half_v]])

    def _fields(self, y: np.ndarray) -> tuple[np.ndarray, ...]:
        m, n = self.m, self.n
        q, s, e = y[:m], y[m:m + n], y[-1]
        rho = self.rq @ q
        grad = e - self.k2 * q
        s_face, rho_face = self.av @ s, self.av @ rho
        flux_q = -(self.dn @ rho + s_face * grad)
        flux_s = -(self.dn @ s + rho_face * grad)
        return q, s, rho, grad, s_face, rho_face, flux_q, flux_s

    def rhs(self, t: float, y: np.ndarray) -> np.ndarray:
        *_, flux_q, flux_s = self._fields(y)
        return np.concatenate([-flux_q, self.div @ flux_s, [-0.5 * self.k2 * (self.d @ flux_q)]])

    def jac(self, t: float, y: np.ndarray) -> sparse.csc_matrix:
        _, _, _, grad, s_face, rho_face, _, _ = self._fields(y)
        g = sparse.diags(grad)
        fq_q = -self.dnrq + sparse.diags(self.k2 * s_face)
        fq_s = -(g @ self.av)
        fs_q = -(g @ self.avrq) + sparse.diags(self.k2 * rho_face)
        fs_s = -self.dn
        fq = sparse.hstack([fq_q, fq_s, -s_face[:, None]])
        fs = sparse.hstack([fs_q, fs_s, -rho_face[:, None]])
        e_row = sparse.csr_matrix(-0.5 * self.k2 * (self.d @ fq))
        return sparse.vstack([-fq, self.div @ fs, e_row], format="csc")

    def sigma(self, y: np.ndarray) -> np.ndarray:
        return y[-1]

    def voltage_drift(self, y: np.ndarray) -> np.ndarray:
        """sum_j d_j grad_j - V (zero for the exact solution of the ODE), for states y (size, times)."""
        grad = y[-1] - self.k2 * y[:self.m]
        return self.d @ grad - self.problem.voltage


FORMULATIONS = {"charge": ChargeLines, "potential": MethodOfLines}


def solve_ivp_peer(problem: Problem, intervals: int, rtol: float, method: str = "BDF",
                   delta: float | None = None, formulation: str = "charge",
                   atol_factor: float = 1e-2) -> np.ndarray:
    """sigma at ``problem.times()`` by scipy's ``solve_ivp`` on the method of lines.

    ``formulation``: "charge" (``ChargeLines``: sparse Jacobian, the default) or "potential" (``MethodOfLines``:
    psi eliminated, dense Jacobian). ``atol`` is ``atol_factor * rtol`` times each state's scale (``scale``: 1
    for concentrations, V/(2kL) for the charge variables, V/2 for the field). Raises RuntimeError when solve_ivp
    fails.
    """
    lines = FORMULATIONS[formulation](problem, wall_grid(intervals, problem, delta))
    times = problem.times()
    sol = solve_ivp(lines.rhs, (0.0, times[-1]), lines.y0, method=method, t_eval=times, rtol=rtol,
                    atol=atol_factor * rtol * lines.scale, jac=lines.jac)
    if not sol.success:
        raise RuntimeError(f"solve_ivp failed: {sol.message}")
    return lines.sigma(sol.y)


# ----------------------------------------------------------------------------------------- the reference

#: Grids and tolerance of the reference (intervals across the slit: three grids, each twice the last).
REFERENCE_INTERVALS = (800, 1600, 3200)
REFERENCE_RTOL = 1e-12


def reference(problem: Problem, intervals: tuple[int, int, int] = REFERENCE_INTERVALS,
              rtol: float = REFERENCE_RTOL) -> tuple[np.ndarray, np.ndarray]:
    """The converged sigma series: ``solve_ivp_peer`` (BDF, sparse Jacobian) on three grids n, 2n, 4n at
    ``rtol``, Richardson-extrapolated at second order (the order the grids show: the error falls 4x per halving)
    from the two finer grids.

    Returns the series and its error estimate per time (relative): its difference from the extrapolation of the
    two coarser grids. How it was checked (finer grids, tolerance, the linear limit): benchmarks/README.md.
    """
    series = [solve_ivp_peer(problem, n, rtol) for n in intervals]
    ratio = (intervals[1] / intervals[0]) ** 2
    coarser = (ratio * series[1] - series[0]) / (ratio - 1.0)
    extrapolated = (ratio * series[2] - series[1]) / (ratio - 1.0)
    return extrapolated, np.abs(extrapolated - coarser) / np.abs(extrapolated)


# ------------------------------------------------------------------------------------------ the FiPy peer

def step_times(problem: Problem, steps_per_decade: float, start_decades: float = 3.0) -> np.ndarray:
    """The FiPy peer's time levels: geometric, ``steps_per_decade`` per decade from ``start_decades`` decades
    before the first output time (one backward-Euler step from 0 to there) to the last, merged with the output
    times (a level within a fifth of a step of an output time is dropped)."""
    out = problem.times()
    first = out[0] * 10.0 ** -start_decades
    count = math.ceil(steps_per_decade * math.log10(out[-1] / first))
    levels = np.geomspace(first, out[-1], count + 1)
    ratio = 10.0 ** (1.0 / steps_per_decade)
    near = np.min(np.abs(np.log(levels[:, None] / out[None, :])), axis=1) < 0.2 * math.log(ratio)
    return np.union1d(levels[~near], out)


def fipy_peer(problem: Problem, cells: int, steps_per_decade: float, tolerance: float = 1e-9,
              max_sweeps: int = 200, stats: dict[str, int] | None = None) -> np.ndarray:
    """sigma at ``problem.times()`` from FiPy: the same equations, coupled and implicit, finite volumes on FiPy's
    cell-centred grid with the faces of ``wall_grid(cells)``.

    c+ and c- and psi are solved together (FiPy's coupled equations ``&``, its scipy LU solver at 1e-13); the
    migration term is FiPy's ``DiffusionTerm(coeff=c at the faces, var=psi)``, its coefficient zero on the walls
    (the walls block the ions; without that FiPy lets the constrained psi drive a flux through them). In time,
    variable-step BDF2 written with FiPy terms (``TransientTerm(coeff=(1 + 2w)/(1 + w))`` and the previous
    step's difference as a source, w the step ratio; FiPy's own ``TransientTerm`` alone is backward Euler), on
    the levels of ``step_times``; each step sweeps (the face coefficients lag one sweep) until the largest
    change is below ``tolerance`` (or stops falling within 1e3 times it: round-off), at most ``max_sweeps``
    (then RuntimeError); ``stats``, if given, receives the counts of steps and sweeps. sigma = dpsi/dx at the
    centre face minus the charge of the upper half (discrete Gauss, no one-sided wall difference).
    """
    import fipy

    faces = wall_grid(cells, problem)
    mesh = fipy.Grid1D(dx=np.diff(faces))
    half_k2 = 0.5 * problem.kappa_l**2
    half_v = 0.5 * problem.voltage
    cp = fipy.CellVariable(mesh=mesh, value=1.0, hasOld=True)
    # the anions as m = -c-, which obeys the same equation (it is linear in c-): FiPy makes an ImplicitSourceTerm
    # explicit where its sign would weaken the diagonal, so the Poisson coupling -c- would lag a sweep and the
    # sweeps of the linear problem converge at ~0.95 per sweep; with +m both couplings are implicit
    cm = fipy.CellVariable(mesh=mesh, value=-1.0, hasOld=True)
    psi = fipy.CellVariable(mesh=mesh, value=0.0, hasOld=True)
    psi.constrain(-half_v, mesh.facesLeft)
    psi.constrain(half_v, mesh.facesRight)
    inner = mesh.interiorFaces
    lead, lag = fipy.Variable(1.0), fipy.Variable(0.0)  # BDF2: lead (c - c_n)/dt - lag (c_n - c_n-1)/dt
    dp = fipy.CellVariable(mesh=mesh, value=0.0)  # c_n - c_n-1 of each ion
    dm = fipy.CellVariable(mesh=mesh, value=0.0)
    # migration div(c grad psi): FiPy's way, a DiffusionTerm in psi whose coefficient (c at the faces) lags one
    # sweep (Picard)
    eq_p = (fipy.TransientTerm(coeff=lead, var=cp) == fipy.DiffusionTerm(coeff=1.0, var=cp)
            + fipy.DiffusionTerm(coeff=cp.faceValue * inner, var=psi) + lag * dp)
    eq_m = (fipy.TransientTerm(coeff=lead, var=cm) == fipy.DiffusionTerm(coeff=1.0, var=cm)
            - fipy.DiffusionTerm(coeff=cm.faceValue * inner, var=psi) + lag * dm)
    eq_psi = (fipy.DiffusionTerm(coeff=1.0, var=psi) + fipy.ImplicitSourceTerm(coeff=half_k2, var=cp)
              + fipy.ImplicitSourceTerm(coeff=half_k2, var=cm) == 0.0)
    equations = eq_p & eq_m & eq_psi
    # FiPy's LU refines until the residual is below tolerance x |b|; at its default (1e-5) it skips the solve
    # altogether once a step's change is that small, and the transient freezes at the short steps
    solver = fipy.LinearLUSolver(tolerance=1e-13, criterion="RHS")
    volume = np.asarray(mesh.cellVolumes)
    upper = slice(cells // 2, cells)
    centre_face = cells // 2
    out = problem.times()
    sigma, t, dt_old, total_sweeps = [], 0.0, None, 0
    for level in step_times(problem, steps_per_decade):
        dt = level - t
        if dt_old is None:
            lead.setValue(1.0), lag.setValue(0.0)
        else:
            w = dt / dt_old
            lead.setValue((1.0 + 2.0 * w) / (1.0 + w))
            lag.setValue(w * w / (1.0 + w) / dt)
        for var in (cp, cm, psi):
            var.updateOld()
        sweeps, change, last = 0, math.inf, math.inf
        while change > tolerance:
            before = np.concatenate([np.asarray(v.value).copy() for v in (cp, cm, psi)])
            equations.sweep(dt=dt, solver=solver)
            after = np.concatenate([np.asarray(v.value) for v in (cp, cm, psi)])
            change, last, sweeps = float(np.max(np.abs(after - before))), change, sweeps + 1
            if change >= last and change < 1e3 * tolerance:
                break  # at the round-off of the step's matrix (ill-conditioned at the shortest steps)
            if sweeps == max_sweeps:
                raise RuntimeError(f"FiPy sweeps did not converge at t = {level:g} (change {change:.1e})")
        total_sweeps += sweeps
        dp.setValue(np.asarray(cp.value) - np.asarray(cp.old.value))
        dm.setValue(np.asarray(cm.value) - np.asarray(cm.old.value))
        t, dt_old = level, dt
        if np.any(np.isclose(level, out, rtol=1e-12, atol=0.0)):
            centre = float(np.asarray(psi.faceGrad.value)[0, centre_face])
            charge = half_k2 * float(np.sum((np.asarray(cp.value) + np.asarray(cm.value))[upper] * volume[upper]))
            sigma.append(centre - charge)
    if stats is not None:
        stats.update(steps=len(step_times(problem, steps_per_decade)), sweeps=total_sweeps)
    return np.asarray(sigma)


# -------------------------------------------------------------------------- the linear limit, by Laplace

def linear_sigma(problem: Problem, times: np.ndarray | None = None, digits: int = 20) -> np.ndarray:
    """sigma(t) of the linearised problem (exact for V -> 0), by numerical inversion of its Laplace transform.

    Derived here for the equations of the module docstring (the Laplace-domain route of Bazant, Thornton & Ajdari
    2004, from memory): rho = (c+ - c-)/2 obeys s rho = rho'' - k^2 rho with rho' + psi' = 0 at the walls, whence
    sigma(s) = (V / 2s) q^2 / (s + k^2 tanh(q)/q), q^2 = s + k^2 (s -> 0: (V/2) k coth k; s -> oo: V/2s).
    Inverted by mpmath's Talbot method at ``digits`` digits.
    """
    import mpmath

    times = problem.times() if times is None else times
    k2 = mpmath.mpf(problem.kappa_l) ** 2
    half_v = mpmath.mpf(problem.voltage) / 2

    def transform(s: Any) -> Any:
        q = mpmath.sqrt(s + k2)
        return half_v / s * q**2 / (s + k2 * mpmath.tanh(q) / q)

    with mpmath.workdps(digits):
        return np.array([float(mpmath.invertlaplace(transform, float(t), method="talbot")) for t in times])
