"""A seeded random sampler of the domain the README promises the solver converges in.

README ("Converges for |zeta| up to 15 kT/e, kappa h from 0.01 to 1000 and valences up to 3"), with the ranges of
the inputs section: 1 uM to 1 M, slit and capillary, every wall and ion model, 0-100 degC, sizes (half-height or
radius) within the 0.1 nm - 1 m that inputs accept. A fixed-charge wall gets
the charge that Grahame's relation (Grahame 1947, from memory) gives for a sampled |zeta| <= 15 kT/e in the
nonlinear Poisson-Boltzmann picture, so that the case is inside the domain whatever the model.
"""

from __future__ import annotations

import math

import numpy as np

import edl_solver as edl
from edl_solver.constants import AVOGADRO, BOLTZMANN, ELEMENTARY_CHARGE, VACUUM_PERMITTIVITY

MODELS = ("pb", "dh", "steric")
WALL_KINDS = ("potential", "charge", "regulated")


def _salt(rng: np.random.Generator, model: str) -> tuple[edl.Ion, ...]:
    """A z+:z- salt (valences 1-3), sometimes with a second 1:1 salt, 1 uM-1 M in ionic strength."""
    zp, zm = int(rng.integers(1, 4)), int(rng.integers(1, 4))
    salt = 10.0 ** rng.uniform(-3.0, 3.0)  # mol/m^3 of the formula unit zm cations... scaled below
    diameter = float(rng.uniform(0.3e-9, 0.7e-9)) if model == "steric" else None
    # zm cations of charge zp and zp anions of charge zm per formula unit: neutral
    ions = [edl.Ion("A", zp, salt * zm, 1e-9, diameter), edl.Ion("B", -zm, salt * zp, 1.5e-9, diameter)]
    strength = 0.5 * (salt * zm * zp**2 + salt * zp * zm**2)
    scale = 10.0 ** rng.uniform(-3.0, 3.0) / strength  # ionic strength log-uniform in 1 uM - 1 M
    return tuple(edl.Ion(i.name, i.valence, i.concentration * scale, i.diffusivity, diameter) for i in ions)


def grahame_charge(ions: tuple[edl.Ion, ...], zeta: float, permittivity: float, temperature: float) -> float:
    """Charge density (C/m^2) of a flat Poisson-Boltzmann layer at wall potential ``zeta`` (units of kT/e):
    sigma = sign(zeta) sqrt(2 eps kT N_A sum_i c_i (exp(-z_i zeta) - 1)) (Grahame 1947, from memory)."""
    kt = BOLTZMANN * temperature
    total = sum(ion.concentration * math.expm1(-ion.valence * zeta) for ion in ions)
    return math.copysign(math.sqrt(2.0 * permittivity * kt * AVOGADRO * total), zeta)


def _wall(rng: np.random.Generator, kind: str, ions, eps: float, temperature: float, vt: float) -> edl.Wall:
    zeta = float(rng.uniform(-15.0, 15.0))
    slip = float(rng.choice([0.0, 10.0 ** rng.uniform(-10, -8)]))
    if kind == "potential":
        return edl.Wall(zeta=zeta * vt, slip_length=slip)
    if kind == "charge":
        # Grahame's charge grows as exp(z |zeta| / 2): keep it below 1 C/m^2 (6 e/nm^2, beyond any real wall)
        while abs(grahame_charge(ions, zeta, eps, temperature)) > 1.0:
            zeta *= 0.5
        stern = float(10.0 ** rng.uniform(-1, 1)) if rng.random() < 0.3 else None
        return edl.Wall(charge_density=grahame_charge(ions, zeta, eps, temperature), stern_capacitance=stern,
                        slip_length=slip)
    site = edl.Site(density=float(10.0 ** rng.uniform(17, 19)), pK=float(rng.uniform(3, 10)), charges=(0, -1))
    return edl.Wall(sites=(site,), stern_capacitance=float(10.0 ** rng.uniform(-1, 1)), slip_length=slip)


def sample(rng: np.random.Generator) -> edl.Case:
    """One random case of the promised domain."""
    model = str(rng.choice(MODELS))
    kind = str(rng.choice(WALL_KINDS))
    temperature = 273.15 + float(rng.uniform(0.0, 100.0))
    solvent = edl.Water(temperature=temperature)
    ions = _salt(rng, model)
    electrolyte = edl.Electrolyte(ions, pH=float(rng.uniform(3, 10)) if kind == "regulated" else None)
    eps = solvent.relative_permittivity * VACUUM_PERMITTIVITY
    kt = BOLTZMANN * temperature
    vt = kt / ELEMENTARY_CHARGE
    debye = math.sqrt(eps * kt / (ELEMENTARY_CHARGE**2 * AVOGADRO * sum(i.valence**2 * i.concentration
                                                                          for i in ions)))
    # kappa times half-height or radius in 0.01-1000, the size itself within 0.1 nm - 1 m (refused outside)
    low, high = math.log10(max(0.01, 1e-10 / debye)), math.log10(min(1000.0, 1.0 / debye))
    size = debye * 10.0 ** rng.uniform(low, high)
    geometry = edl.Slit(height=2.0 * size) if rng.random() < 0.5 else edl.Capillary(radius=size)
    wall = _wall(rng, kind, ions, eps, temperature, vt)
    return edl.Case(geometry=geometry, electrolyte=electrolyte, wall=wall, solvent=solvent, field=1e3,
                    pressure_gradient=-1e5, model=model)


def cases(seed: int, count: int) -> list[edl.Case]:
    """``count`` cases from the seed."""
    rng = np.random.default_rng(seed)
    return [sample(rng) for _ in range(count)]
