"""Walls: fixed potential or charge, charge regulation by acid-base sites, Stern layer, gate, slip.

Every object is a frozen dataclass, SI after construction; strings with units are parsed once, here.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass
from numbers import Integral, Real
from typing import Literal

import numpy as np

from edl_solver.errors import InputError
from edl_solver.inputs.frozen import assign as _set
from edl_solver.inputs.units import to_positive_si, to_si

#: Most protonation states one kind of site may have (up to three acid-base steps).
MAX_SITE_STATES = 4
#: Largest charge number |q| of a site state (as for ions: the domain the solver promises).
MAX_SITE_CHARGE = 3


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
        if not isinstance(self.name, str) or not self.name.isprintable():
            # the name labels every message about the site: a line break in it would split those messages
            raise InputError(f"site.name: {self.name!r} is not a name, expected a printable string like 'silanol'")
        label = f"site {self.name}"
        _set(self, "density", to_positive_si(self.density, "1/m^2", f"{label}.density",
                                        "a positive site density in 1/m^2 (or '8 nm^-2')"))
        if isinstance(self.pK, (Real, str)):
            pks = (self.pK,)
        elif _is_sequence(self.pK):
            pks = tuple(self.pK)
        else:
            raise InputError(f"{label}.pK: {self.pK!r} is not a number or a list of numbers, expected a pK like 7.5 "
                             "or one per step like (4.0, 9.0)")
        pks = tuple(to_si(pk, "dimensionless", f"{label}.pK") for pk in pks)
        charges = tuple(self.charges) if _is_sequence(self.charges) else None
        if charges is None or not all(isinstance(q, Integral) and not isinstance(q, bool) for q in charges) \
                or len(charges) != len(pks) + 1 or not 2 <= len(charges) <= MAX_SITE_STATES \
                or any(b != a - 1 for a, b in itertools.pairwise(charges)):
            raise InputError(f"{label}.charges: {self.charges!r} does not fit pK {self.pK!r}, expected one more "
                             f"integer charge than pKs (at most {MAX_SITE_STATES} states), each step one lower, "
                             "e.g. (0, -1)")
        if max(abs(q) for q in charges) > MAX_SITE_CHARGE:
            raise InputError(f"{label}.charges: {self.charges!r} is out of range, expected charge numbers of at most "
                             f"{MAX_SITE_CHARGE} in magnitude, e.g. (0, -1)")
        _set(self, "pK", pks[0] if len(pks) == 1 else pks)
        _set(self, "charges", tuple(int(q) for q in charges))

    @property
    def pks(self) -> tuple[float, ...]:
        """The pK of every step, as a tuple."""
        return self.pK if isinstance(self.pK, tuple) else (self.pK,)


def _is_sequence(value: object) -> bool:
    """A tuple, list or one-dimensional array (of pKs or charges)."""
    return isinstance(value, (tuple, list)) or (isinstance(value, np.ndarray) and value.ndim == 1)


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
