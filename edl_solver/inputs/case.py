"""The immutable description of one cross-section problem, in SI floats.

Every public object here is a frozen dataclass that validates and converts its inputs once, when it
is built: numbers are SI, strings with units ("1 mM", "50 nm", "-50 mV") are parsed at this edge and
stored as SI floats, and a bad value raises ``InputError`` naming the field and the value at once.
Variants are made with ``dataclasses.replace``.

Conventions (see the README): reservoir potential 0 and reservoir (bulk) concentrations; slit of full
height H with y from 0 (bottom wall) to H (top wall), quantities per unit width; capillary of radius a
with r from 0 (axis) to a; the field E > 0 points along +x, the axial direction.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from dataclasses import field as _field
from typing import Literal

from edl_solver.constants import AVOGADRO, ELEMENTARY_CHARGE
from edl_solver.errors import InputError
from edl_solver.inputs.ions import lookup_ion
from edl_solver.inputs.solvent import Solvent, Water
from edl_solver.inputs.units import to_positive_si, to_si

Model = Literal["pb", "dh", "steric"]
MODELS: tuple[str, ...] = ("pb", "dh", "steric")

#: Ionic product of water at 25 degC, pK_w = 14 (common practice; its temperature dependence is neglected).
WATER_PK = 14.0
#: Most protonation states one kind of site may have (up to three acid-base steps).
MAX_SITE_STATES = 4

#: Relative imbalance of the bulk charge accepted as neutral: sum z c <= this * sum |z| c.
NEUTRALITY_TOLERANCE = 1e-6


def _set(obj: object, name: str, value: object) -> None:
    object.__setattr__(obj, name, value)


@dataclass(frozen=True)
class Ion:
    """One ionic species of the electrolyte.

    Parameters
    ----------
    name : str
        Label of the ion; names in the built-in table (``edl_solver.inputs.ions``) fill in ``valence`` and
        ``diffusivity`` when they are not given.
    valence : int, optional
        Charge number z (nonzero integer).
    concentration : float or str
        Bulk (reservoir) concentration, mol/m^3 (1 mol/m^3 = 1 mM), or a string such as "1 mM".
    diffusivity : float or str, optional
        Diffusion coefficient, m^2/s; sets the ion's mobility through Nernst-Einstein, D/(kT).
    diameter : float or str, optional
        Ion (hydrated) diameter, m, for the steric model (``Case(model="steric")``).
    """

    name: str
    valence: int | None = None
    concentration: float | str | None = None
    diffusivity: float | str | None = None
    diameter: float | str | None = None

    def __post_init__(self) -> None:
        if not isinstance(self.name, str) or not self.name.strip():
            raise InputError(f"ion.name: {self.name!r} is not a name, expected a non-empty string like 'K+'")
        label = f"ion {self.name}"
        known = None
        if self.valence is None or self.diffusivity is None:
            known = lookup_ion(self.name)
        valence = known.valence if self.valence is None else self.valence
        if isinstance(valence, bool) or not isinstance(valence, (int, float)) or valence != int(valence) \
                or valence == 0:
            raise InputError(f"{label}.valence: {self.valence!r} is not a charge number, "
                             "expected a nonzero integer")
        _set(self, "valence", int(valence))
        if self.concentration is None:
            raise InputError(f"{label}.concentration: missing, expected a bulk concentration like '1 mM'")
        _set(self, "concentration", to_positive_si(self.concentration, "mol/m^3", f"{label}.concentration",
                                              "a positive concentration in mol/m^3 (or '1 mM')"))
        diffusivity = known.diffusivity if self.diffusivity is None else self.diffusivity
        _set(self, "diffusivity", to_positive_si(diffusivity, "m^2/s", f"{label}.diffusivity",
                                            "a positive diffusivity in m^2/s"))
        if self.diameter is not None:
            _set(self, "diameter", to_positive_si(self.diameter, "m", f"{label}.diameter", "a positive diameter in m"))


@dataclass(frozen=True)
class Electrolyte:
    """The bulk (reservoir) electrolyte: any number of ions, electroneutral.

    Parameters
    ----------
    ions : sequence of Ion
        At least one cation and one anion; sum_i z_i c_i = 0 within ``NEUTRALITY_TOLERANCE``.
    pH : float, optional
        Bulk pH, for walls whose charge regulates by proton exchange. Without H+ among the ions the protons
        only set the wall chemistry (their contribution to the ionic strength is neglected); with
        ``water_ions=True`` H+ and OH- are added as ions (see below).
    water_ions : bool
        Add H+ (10^-pH M) and OH- (10^(pH - 14) M) to the ions; their net charge is balanced by the most
        concentrated monovalent counter-ion already present (as if the pH had been set with that ion's
        acid or base, e.g. HCl or KOH in KCl).
    """

    ions: tuple[Ion, ...]
    pH: float | None = None
    water_ions: bool = False

    def __post_init__(self) -> None:
        ions = tuple(self.ions) if isinstance(self.ions, Sequence) and not isinstance(self.ions, str) \
            else None
        if not ions or not all(isinstance(ion, Ion) for ion in ions):
            raise InputError(f"electrolyte.ions: {self.ions!r} is not a list of Ion, expected at least "
                             "one cation and one anion")
        if self.pH is not None:
            ph = to_si(self.pH, "dimensionless", "electrolyte.pH")
            if not -1.0 <= ph <= 15.0:
                raise InputError(f"electrolyte.pH: {self.pH!r} is out of range, expected a pH between -1 and 15")
            _set(self, "pH", ph)
            if self.water_ions:
                ions = _with_water_ions(ions, ph)
        elif self.water_ions:
            raise InputError("electrolyte.water_ions: True without a pH, expected electrolyte.pH as well")
        names = [ion.name for ion in ions]
        for name in names:
            if names.count(name) > 1:
                raise InputError(f"electrolyte.ions: {name!r} is given twice, expected each ion once")
        net = sum(ion.valence * ion.concentration for ion in ions)
        total = sum(abs(ion.valence) * ion.concentration for ion in ions)
        if abs(net) > NEUTRALITY_TOLERANCE * total:
            raise InputError(f"electrolyte: bulk charge sum(z*c) = {net:.6g} mol/m^3 is not neutral, "
                             "expected cation and anion charges to balance")
        _set(self, "ions", ions)

    @classmethod
    def from_ions(cls, concentrations: Mapping[str, float | str], pH: float | None = None,
                  water_ions: bool = False) -> Electrolyte:
        """Electrolyte from table ions and their concentrations, e.g. ``{"K+": "1 mM", "Cl-": "1 mM"}``."""
        if not isinstance(concentrations, Mapping) or not concentrations:
            raise InputError(f"electrolyte: {concentrations!r} is not a mapping of ion names to "
                             "concentrations, expected e.g. {'K+': '1 mM', 'Cl-': '1 mM'}")
        return cls(tuple(Ion(name=name, concentration=c) for name, c in concentrations.items()), pH=pH,
                   water_ions=water_ions)

    @property
    def proton_concentration(self) -> float | None:
        """Bulk H+ concentration, mol/m^3: the H+ ion's if present, else from the pH (None if neither)."""
        for ion in self.ions:
            if ion.name == "H+":
                return ion.concentration
        return None if self.pH is None else 1000.0 * 10.0 ** (-self.pH)

    @property
    def ionic_strength(self) -> float:
        """Ionic strength I = (1/2) sum z_i^2 c_i, mol/m^3."""
        return 0.5 * sum(ion.valence**2 * ion.concentration for ion in self.ions)

    def debye_length(self, solvent: Solvent) -> float:
        """Debye length lambda_D = sqrt(eps kT / (e^2 N_A sum z_i^2 c_i)), m (e.g. Israelachvili,
        Intermolecular and Surface Forces)."""
        return math.sqrt(solvent.permittivity * solvent.thermal_voltage
                         / (ELEMENTARY_CHARGE * AVOGADRO * 2.0 * self.ionic_strength))


def _with_water_ions(ions: tuple[Ion, ...], ph: float) -> tuple[Ion, ...]:
    """Add H+ and OH- at the pH and balance their net charge with the main monovalent counter-ion."""
    if any(ion.name in ("H+", "OH-") for ion in ions):
        raise InputError("electrolyte.water_ions: H+ or OH- is already among the ions, expected either the "
                         "ions or water_ions=True")
    proton = 1000.0 * 10.0 ** (-ph)
    hydroxide = 1000.0 * 10.0 ** (ph - WATER_PK)
    excess = proton - hydroxide  # net positive charge brought in, mol/m^3
    sign = -1 if excess > 0 else 1  # balanced by an anion (acid added) or a cation (base added)
    candidates = [ion for ion in ions if ion.valence == sign]
    if not candidates:
        raise InputError(f"electrolyte.water_ions: no monovalent {'anion' if sign < 0 else 'cation'} to balance "
                         "the pH, expected one among the ions")
    partner = max(candidates, key=lambda ion: ion.concentration)
    balanced = tuple(Ion(name=i.name, valence=i.valence, concentration=i.concentration + abs(excess),
                         diffusivity=i.diffusivity, diameter=i.diameter) if i is partner else i for i in ions)
    return (*balanced, Ion(name="H+", concentration=proton), Ion(name="OH-", concentration=hydroxide))


@dataclass(frozen=True)
class Slit:
    """Planar slit of full height H between two parallel walls (quantities per unit width).

    Parameters
    ----------
    height : float or str
        Full wall-to-wall height H, m (or "50 nm").
    """

    height: float | str

    def __post_init__(self) -> None:
        _set(self, "height", to_positive_si(self.height, "m", "geometry.height", "a positive height in m"))

    @property
    def half_size(self) -> float:
        """Half-height h = H/2, m: the length unit of the slit's dimensionless problem."""
        return 0.5 * self.height


@dataclass(frozen=True)
class Capillary:
    """Cylindrical capillary of radius a (axisymmetric).

    Parameters
    ----------
    radius : float or str
        Radius a, m (or "20 nm").
    """

    radius: float | str

    def __post_init__(self) -> None:
        _set(self, "radius", to_positive_si(self.radius, "m", "geometry.radius", "a positive radius in m"))

    @property
    def half_size(self) -> float:
        """Radius a, m: the length unit of the capillary's dimensionless problem."""
        return self.radius


Geometry = Slit | Capillary


@dataclass(frozen=True)
class Site:
    """One kind of acid-base surface site of a charge-regulating wall.

    Each step releases a proton: state k -> state k+1 + H+ with constant K_{k+1} = 10^-pK_{k+1}; the
    fraction of sites in each state follows the mass-action law with the proton concentration at the
    charge plane, [H+]_0 = [H+]_bulk exp(-e psi_0 / kT) (Boltzmann).

    Parameters
    ----------
    density : float or str
        Sites per unit area, 1/m^2 (or "8 nm^-2").
    pK : float or sequence of float
        pK of each deprotonation step (one for an acid or a base, two for an amphoteric site).
    charges : sequence of int
        Charge numbers of the states, most protonated first, one more than the pKs, each step one lower:
        (0, -1) acidic (silanol SiOH / SiO-), (1, 0) basic (amine NH3+ / NH2), (1, 0, -1) amphoteric.
    name : str
        Label.
    """

    density: float | str
    pK: float | tuple[float, ...]
    charges: tuple[int, ...] = (0, -1)
    name: str = "site"

    def __post_init__(self) -> None:
        label = f"site {self.name}"
        _set(self, "density", to_positive_si(self.density, "1/m^2", f"{label}.density",
                                        "a positive site density in 1/m^2 (or '8 nm^-2')"))
        pks = (self.pK,) if isinstance(self.pK, (int, float, str)) else tuple(self.pK)
        pks = tuple(to_si(pk, "dimensionless", f"{label}.pK") for pk in pks)
        charges = tuple(self.charges)
        if not all(isinstance(q, int) and not isinstance(q, bool) for q in charges) \
                or len(charges) != len(pks) + 1 or not 2 <= len(charges) <= MAX_SITE_STATES \
                or any(b != a - 1 for a, b in itertools.pairwise(charges)):
            raise InputError(f"{label}.charges: {self.charges!r} does not fit pK {self.pK!r}, expected one more "
                             f"integer charge than pKs (at most {MAX_SITE_STATES} states), each step one lower, "
                             "e.g. (0, -1)")
        _set(self, "pK", pks[0] if len(pks) == 1 else pks)
        _set(self, "charges", charges)

    @property
    def pks(self) -> tuple[float, ...]:
        """The pK of every step, as a tuple."""
        return self.pK if isinstance(self.pK, tuple) else (self.pK,)


@dataclass(frozen=True)
class Wall:
    """Electrical (and hydrodynamic) condition of one wall.

    Parameters
    ----------
    zeta : float or str, optional
        Fixed wall (zeta) potential relative to the reservoir, V (or "-50 mV").
    charge_density : float or str, optional
        Fixed surface charge density sigma = eps dphi/dn (n pointing from the liquid into the wall, so sigma
        and zeta share their sign), C/m^2 (or "-2 mC/m^2"); with sites or a gate, the fixed part of it.
    sites : sequence of Site
        Acid-base sites whose charge regulates with pH and potential (needs ``Electrolyte(pH=...)``).
    stern_capacitance : float or str, optional
        Capacitance per area of a Stern layer between the charge plane and the diffuse layer, F/m^2:
        psi_0 - zeta = sigma / C_S.
    gate_voltage, gate_capacitance : float or str, optional
        A gate electrode behind a dielectric of capacitance C_g (F/m^2) at voltage V_g (V, against the
        reservoir): it adds sigma_gate = C_g (V_g - psi_0) to the wall charge.
    slip_length : float or str
        Navier slip length b, m: u = b du/dn at the wall (0, the default: no slip).

    A wall fixes either its potential (``zeta``) or its charge (any of ``charge_density``, ``sites``,
    gate); ``stern_capacitance`` applies to charged walls.
    """

    zeta: float | str | None = None
    charge_density: float | str | None = None
    sites: tuple[Site, ...] = ()
    stern_capacitance: float | str | None = None
    gate_voltage: float | str | None = None
    gate_capacitance: float | str | None = None
    slip_length: float | str = 0.0

    def __post_init__(self) -> None:
        sites = tuple(self.sites) if isinstance(self.sites, (tuple, list)) else None
        if sites is None or not all(isinstance(site, Site) for site in sites):
            raise InputError(f"wall.sites: {self.sites!r} is not a list of Site, expected e.g. "
                             "(Site(density='8 nm^-2', pK=7.5),)")
        if len(sites) > 4:
            raise InputError(f"wall.sites: {len(sites)} kinds of site given, expected at most 4")
        _set(self, "sites", sites)
        gate = (self.gate_voltage is not None, self.gate_capacitance is not None)
        if gate[0] != gate[1]:
            raise InputError(f"wall: gate_voltage={self.gate_voltage!r} and gate_capacitance="
                             f"{self.gate_capacitance!r}, expected both or neither")
        charged = self.charge_density is not None or bool(sites) or gate[0]
        if self.zeta is not None and self.charge_density is not None:
            raise InputError(f"wall: both of zeta={self.zeta!r} and charge_density={self.charge_density!r} given, "
                             "expected exactly one")
        if self.zeta is not None and (charged or self.stern_capacitance is not None):
            raise InputError("wall: zeta fixes the potential, but sites, a gate or a Stern capacitance were given "
                             "too, expected a charged wall (no zeta) for those")
        if self.zeta is None and not charged:
            raise InputError(f"wall: neither of zeta={self.zeta!r} and charge_density={self.charge_density!r} "
                             "given, expected exactly one (or sites, or a gate)")
        if self.zeta is not None:
            _set(self, "zeta", to_si(self.zeta, "V", "wall.zeta"))
        if self.charge_density is not None:
            _set(self, "charge_density", to_si(self.charge_density, "C/m^2", "wall.charge_density"))
        if self.stern_capacitance is not None:
            _set(self, "stern_capacitance", to_positive_si(self.stern_capacitance, "F/m^2", "wall.stern_capacitance",
                                                      "a positive capacitance in F/m^2"))
        if gate[0]:
            _set(self, "gate_voltage", to_si(self.gate_voltage, "V", "wall.gate_voltage"))
            _set(self, "gate_capacitance", to_positive_si(self.gate_capacitance, "F/m^2", "wall.gate_capacitance",
                                                     "a positive capacitance in F/m^2"))
        slip = to_si(self.slip_length, "m", "wall.slip_length")
        if slip < 0.0:
            raise InputError(f"wall.slip_length: {self.slip_length!r} is negative, expected a slip length >= 0 m")
        _set(self, "slip_length", slip)

    @property
    def kind(self) -> Literal["potential", "charge", "regulated"]:
        """What the wall fixes: its potential, its charge, or a charge that depends on its potential."""
        if self.zeta is not None:
            return "potential"
        if self.sites or self.gate_voltage is not None or self.stern_capacitance is not None:
            return "regulated"
        return "charge"

    @property
    def fixed_charge(self) -> float:
        """The fixed part of the wall charge, C/m^2 (0 when none)."""
        return self.charge_density or 0.0

    @classmethod
    def silica(cls, slip_length: float | str = 0.0) -> Wall:
        """Silica (glass) wall with one kind of silanol site, SiOH = SiO- + H+: pK 7.5, 8 sites/nm^2 and a
        Stern capacitance of 2.9 F/m^2 (Behrens & Grier 2001, J. Chem. Phys. 115, 6716; from memory)."""
        return cls(sites=(Site(density="8 nm^-2", pK=7.5, charges=(0, -1), name="silanol"),),
                   stern_capacitance=2.9, slip_length=slip_length)


@dataclass(frozen=True)
class Numerics:
    """Numerical controls (defaults meet the stated accuracy; change them only to trade speed).

    Parameters
    ----------
    accuracy : float
        Target relative error of every summary value (vanishing values: relative to the wall value).
        The grid is refined until the Richardson error estimate is below it.
    intervals : int, optional
        Grid cells between the centre and a wall on the finest grid (a multiple of 8); by default
        chosen from the stiffness of the layer and refined as needed.
    max_iterations : int
        Newton iteration limit per grid.
    max_intervals : int
        Refinement stops here; a case that still misses ``accuracy`` raises ``ConvergenceError``.
    """

    accuracy: float = 1e-6
    intervals: int | None = None
    max_iterations: int = 200
    max_intervals: int = 4096

    def __post_init__(self) -> None:
        accuracy = to_si(self.accuracy, "dimensionless", "numerics.accuracy")
        if not 1e-13 <= accuracy < 1.0:
            raise InputError(f"numerics.accuracy: {self.accuracy!r} is out of range, expected 1e-13 <= "
                             "accuracy < 1")
        _set(self, "accuracy", accuracy)
        if self.intervals is not None and (isinstance(self.intervals, bool) or not isinstance(
                self.intervals, int) or self.intervals < 8 or self.intervals % 8):
            raise InputError(f"numerics.intervals: {self.intervals!r} is not allowed, expected a "
                             "multiple of 8, at least 8")
        for name in ("max_iterations", "max_intervals"):
            value = getattr(self, name)
            if isinstance(value, bool) or not isinstance(value, int) or value < 1:
                raise InputError(f"numerics.{name}: {value!r} is not allowed, expected a positive integer")


@dataclass(frozen=True)
class Case:
    """One cross-section problem: geometry, electrolyte, walls, solvent, drives, model and numerics.

    Parameters
    ----------
    geometry : Slit or Capillary
    electrolyte : Electrolyte
    wall : Wall or (Wall, Wall)
        One wall condition for every wall, or a (bottom, top) pair for a slit.
    solvent : Solvent
        Defaults to water at 25 degC (``Water()``).
    field : float or str
        Axial electric field E along +x, V/m (or "10 kV/m").
    pressure_gradient : float or str
        Axial pressure gradient dp/dx, Pa/m (or "-1 bar/mm"); negative drives flow along +x.
    model : {"pb", "dh"}
        Nonlinear Poisson-Boltzmann or its linearisation (Debye-Hueckel).
    tolerance : float or str
        Relative error up to which the thin-layer slip model is called valid (default 5 %).
    numerics : Numerics
    """

    geometry: Geometry
    electrolyte: Electrolyte
    wall: Wall | tuple[Wall, Wall]
    solvent: Solvent = _field(default_factory=Water)
    field: float | str = 0.0
    pressure_gradient: float | str = 0.0
    model: Model = "pb"
    tolerance: float | str = 0.05
    numerics: Numerics = _field(default_factory=Numerics)

    def __post_init__(self) -> None:
        if not isinstance(self.geometry, (Slit, Capillary)):
            raise InputError(f"geometry: {self.geometry!r} is not a geometry, expected Slit(height=...) or "
                             "Capillary(radius=...)")
        if not isinstance(self.electrolyte, Electrolyte):
            raise InputError(f"electrolyte: {self.electrolyte!r} is not an Electrolyte, expected "
                             "Electrolyte([...]) or Electrolyte.from_ions({...})")
        if isinstance(self.wall, (tuple, list)):
            if isinstance(self.geometry, Capillary):
                raise InputError("wall: a (bottom, top) pair was given for a capillary, expected one Wall")
            if len(self.wall) != 2 or not all(isinstance(w, Wall) for w in self.wall):
                raise InputError(f"wall: {self.wall!r} is not a (bottom, top) pair of Wall, expected two")
            _set(self, "wall", tuple(self.wall))
        elif not isinstance(self.wall, Wall):
            raise InputError(f"wall: {self.wall!r} is not a Wall, expected Wall(zeta=...) or "
                             "Wall(charge_density=...)")
        if not isinstance(self.solvent, Solvent):
            raise InputError(f"solvent: {self.solvent!r} is not a Solvent, expected Solvent(...) or Water(...)")
        _set(self, "field", to_si(self.field, "V/m", "field"))
        _set(self, "pressure_gradient", to_si(self.pressure_gradient, "Pa/m", "pressure_gradient"))
        if self.model not in MODELS:
            raise InputError(f"model: {self.model!r} is not a model, expected one of {', '.join(MODELS)}")
        if self.model == "steric":
            diameters = {ion.diameter for ion in self.electrolyte.ions}
            if None in diameters or len(diameters) != 1:
                raise InputError(f"model: 'steric' needs one common diameter on every ion, got "
                                 f"{sorted((i.name, i.diameter) for i in self.electrolyte.ions)!r}, expected "
                                 "Ion(..., diameter=...) the same for all")
        if any(w.sites for w in self.walls) and self.electrolyte.proton_concentration is None:
            raise InputError("electrolyte.pH: missing, expected a pH (or an H+ ion) for the charge-regulating "
                             "sites of the wall")
        tolerance = to_si(self.tolerance, "dimensionless", "tolerance")
        if not 0.0 < tolerance < 1.0:
            raise InputError(f"tolerance: {self.tolerance!r} is out of range, expected a fraction "
                             "between 0 and 1 (e.g. 0.05 or '5 %')")
        _set(self, "tolerance", tolerance)
        if not isinstance(self.numerics, Numerics):
            raise InputError(f"numerics: {self.numerics!r} is not Numerics, expected Numerics(...)")

    @property
    def walls(self) -> tuple[Wall, Wall]:
        """(bottom, top) walls of a slit; (wall, wall) for a capillary."""
        return self.wall if isinstance(self.wall, tuple) else (self.wall, self.wall)

    @property
    def symmetric(self) -> bool:
        """True when one condition holds on every wall (half the section is solved)."""
        return not isinstance(self.wall, tuple) or self.wall[0] == self.wall[1]

    @property
    def debye_length(self) -> float:
        """Debye length of the bulk electrolyte, m."""
        return self.electrolyte.debye_length(self.solvent)

    def describe(self) -> str:
        """One-line description used in messages and reports."""
        g = self.geometry
        size = f"slit H = {g.height:.4g} m" if isinstance(g, Slit) else f"capillary a = {g.radius:.4g} m"
        ions = ", ".join(f"{ion.name} {ion.concentration:.4g} mol/m^3" for ion in self.electrolyte.ions)
        walls = []
        for w in (self.walls[:1] if self.symmetric else self.walls):
            if w.kind == "potential":
                walls.append(f"zeta = {w.zeta:.4g} V")
            elif w.kind == "charge":
                walls.append(f"sigma = {w.charge_density:.4g} C/m^2")
            else:
                walls.append("regulated (" + ", ".join(f"{site.name} pK {site.pK}" for site in w.sites) + ")")
        return f"{size}; {ions}; wall {' / '.join(walls)}; model {self.model}"
