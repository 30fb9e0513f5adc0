"""The bulk (reservoir) electrolyte: ions with valence, concentration, diffusivity and size.

Every object is a frozen dataclass, SI after construction; strings with units are parsed once, here.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import lru_cache
from numbers import Integral, Real

import numpy as np

from edl_solver.constants import AVOGADRO, ELEMENTARY_CHARGE
from edl_solver.errors import InputError
from edl_solver.inputs.frozen import assign as _set
from edl_solver.inputs.ion_temperature import diffusivity_ratio
from edl_solver.inputs.ions import lookup_ion
from edl_solver.inputs.solvent import Solvent
from edl_solver.inputs.units import to_positive_si, to_si

#: Ionic product of water at 25 degC, pK_w = 14 (common practice; its temperature dependence is neglected).
WATER_PK = 14.0

#: Largest charge number |z| of an ion: the domain the solver promises (README, "valences up to 3").
MAX_VALENCE = 3

#: Relative imbalance of the bulk charge accepted as neutral: sum z c <= this * sum |z| c.
NEUTRALITY_TOLERANCE = 1e-6


@dataclass(frozen=True)
class Ion:
    """One ionic species of the electrolyte.

    Parameters
    ----------
    name : str
        Label of the ion; names in the built-in table (``edl_solver.inputs.ions``) fill in ``valence`` and
        ``diffusivity`` when they are not given.
    valence : int, optional
        Charge number z (nonzero integer, |z| <= MAX_VALENCE = 3).
    concentration : float or str
        Bulk (reservoir) concentration, mol/m^3 (1 mol/m^3 = 1 mM), or a string such as "1 mM".
    diffusivity : float or str, optional
        Diffusion coefficient, m^2/s; sets the ion's mobility through Nernst-Einstein, D/(kT).
    diameter : float or str, optional
        Ion (hydrated) diameter, m, for the steric model (``Case(model="steric")``).
    temperature_dependence : bool, optional
        Whether ``diffusivity`` is the value at 25 degC and follows the case temperature
        (``inputs.ion_temperature``: tabulated limiting conductivities where known, else Walden's rule D ~ T/eta).
        By default True for a diffusivity taken from the table and False for a given one, which is then used
        as given at every temperature. ``diffusivity_at`` gives the value used.
    """

    name: str
    valence: int | None = None
    concentration: float | str | None = None
    diffusivity: float | str | None = None
    diameter: float | str | None = None
    temperature_dependence: bool | None = None

    def __post_init__(self) -> None:
        if not isinstance(self.name, str) or not self.name.strip() or not self.name.isprintable():
            # the name labels every message about the ion: a line break in it would split those messages
            raise InputError(f"ion.name: {self.name!r} is not a name, expected a non-empty printable string like 'K+'")
        label = f"ion {self.name}"
        follows = self.diffusivity is None if self.temperature_dependence is None else self.temperature_dependence
        if not isinstance(follows, (bool, np.bool_)):  # "no" or 1 would count as true
            raise InputError(f"{label}.temperature_dependence: {self.temperature_dependence!r} is not True or "
                             "False, expected a boolean")
        _set(self, "temperature_dependence", bool(follows))
        known = None
        if self.valence is None or self.diffusivity is None:
            known = lookup_ion(self.name)
        _set(self, "valence", known.valence if self.valence is None else _charge_number(self.valence, label))
        if self.concentration is None:
            raise InputError(f"{label}.concentration: missing, expected a bulk concentration like '1 mM'")
        _set(self, "concentration", to_positive_si(self.concentration, "mol/m^3", f"{label}.concentration",
                                              "a positive concentration in mol/m^3 (or '1 mM')"))
        diffusivity = known.diffusivity if self.diffusivity is None else self.diffusivity
        _set(self, "diffusivity", to_positive_si(diffusivity, "m^2/s", f"{label}.diffusivity",
                                            "a positive diffusivity in m^2/s"))
        if self.diameter is not None:
            _set(self, "diameter", to_positive_si(self.diameter, "m", f"{label}.diameter", "a positive diameter in m"))

    def diffusivity_at(self, temperature: float) -> float:
        """The diffusivity used at ``temperature`` (K), m^2/s: ``diffusivity`` itself without a temperature
        dependence or at 25 degC, else scaled from 25 degC (``inputs.ion_temperature.diffusivity_ratio``)."""
        if not self.temperature_dependence:
            return self.diffusivity
        return self.diffusivity * diffusivity_ratio(self.name, float(temperature))


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
        if not isinstance(self.water_ions, (bool, np.bool_)):  # "no" or 1 would count as true
            raise InputError(f"electrolyte.water_ions: {self.water_ions!r} is not True or False, expected a boolean")
        if self.pH is not None:
            ph = to_si(self.pH, "dimensionless", "electrolyte.pH")
            if not -1.0 <= ph <= 15.0:
                raise InputError(f"electrolyte.pH: {self.pH!r} is out of range, expected a pH between -1 and 15")
            _set(self, "pH", ph)
            if self.water_ions:
                ions = _with_water_ions(ions, ph)
        elif self.water_ions:
            raise InputError("electrolyte.water_ions: True without a pH, expected electrolyte.pH as well")
        _set(self, "water_ions", bool(self.water_ions))
        _check_each_ion_once(ions)
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

    def diffusivities(self, temperature: float) -> tuple[float, ...]:
        """The diffusivities of the ions at ``temperature`` (K), m^2/s, as the solver uses them
        (``Ion.diffusivity_at``)."""
        return tuple(ion.diffusivity_at(temperature) for ion in self.ions)

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


def _charge_number(value: object, label: str) -> int:
    """``value`` as a charge number: a nonzero integer (a whole float or a numpy number will do) of at most
    ``MAX_VALENCE`` in magnitude."""
    if isinstance(value, bool) or not isinstance(value, Real):
        whole = False
    else:  # an int may be too large for a float; a float must be finite to be whole
        whole = isinstance(value, Integral) or (math.isfinite(value) and float(value).is_integer())
    if not whole or value == 0:
        raise InputError(f"{label}.valence: {value!r} is not a charge number, expected a nonzero integer")
    if abs(value) > MAX_VALENCE:
        raise InputError(f"{label}.valence: {value!r} is out of range, expected a nonzero integer of at most "
                         f"{MAX_VALENCE} in magnitude (the solver's domain)")
    return int(value)


def _check_each_ion_once(ions: tuple[Ion, ...]) -> None:
    """Refuse an ion given twice, under its own name or another spelling of it ("K+" and "k+", "SO4--" and
    "SO4 2-")."""
    seen: dict[str, str] = {}
    for ion in ions:
        key = _identity(ion.name)
        if key in seen:
            also = "" if seen[key] == ion.name else f" (as {seen[key]!r} and {ion.name!r})"
            raise InputError(f"electrolyte.ions: {ion.name!r} is given twice{also}, expected each ion once")
        seen[key] = ion.name


@lru_cache(maxsize=256)
def _identity(name: str) -> str:
    """What makes two ion names one ion: the table's name for it, else the name without case or spaces."""
    try:
        return lookup_ion(name).name
    except InputError:  # an ion outside the table (cached: the miss words a "did you mean" hint)
        return "".join(name.split()).casefold()


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
                         diffusivity=i.diffusivity, diameter=i.diameter,
                         temperature_dependence=i.temperature_dependence) if i is partner else i for i in ions)
    return (*balanced, Ion(name="H+", concentration=proton), Ion(name="OH-", concentration=hydroxide))
