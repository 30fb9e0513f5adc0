"""Solvent properties: temperature, dielectric constant, viscosity and density, with water correlations."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from edl_solver.constants import BOLTZMANN, ELEMENTARY_CHARGE, VACUUM_PERMITTIVITY, ZERO_CELSIUS
from edl_solver.errors import InputError
from edl_solver.inputs.units import to_positive_si, to_si

__all__ = ["Solvent", "Water", "default_density", "water_density", "water_relative_permittivity", "water_viscosity"]

_T_MIN = ZERO_CELSIUS  # 0 °C
_T_MAX = ZERO_CELSIUS + 100.0  # 100 °C
_ETA_20 = 1.0016e-3  # Pa s, IAPWS 2008 at 20 °C and 0.1 MPa (from memory)


def _celsius_in_range(temperature: Any, field: str, correlation: str) -> float:
    """Convert ``temperature`` (K or string) to °C, checking the 0–100 °C validity range."""
    kelvin = to_si(temperature, "K", field)
    if not _T_MIN <= kelvin <= _T_MAX:
        given = f"{temperature!r} ({kelvin:g} K)" if isinstance(temperature, str) else f"{kelvin:g} K"
        raise InputError(
            f"{field}: {given} is outside the range of the {correlation} correlation, "
            f"expected {_T_MIN:g} K to {_T_MAX:g} K (0-100 degC)"
        )
    return kelvin - ZERO_CELSIUS


def water_relative_permittivity(temperature: float | str, *, field: str = "temperature") -> float:
    """Static relative permittivity of liquid water at atmospheric pressure.

    .. math:: \\varepsilon_r(t) = 87.740 - 0.40008\\,t + 9.398\\times10^{-4}\\,t^2
              - 1.410\\times10^{-6}\\,t^3, \\qquad t \\text{ in °C}

    Malmberg & Maryott (1956), J. Res. Natl. Bur. Stand. 56, 1; fitted to 0–100 °C.

    Parameters
    ----------
    temperature : float or str
        Temperature in K, or a string with units such as ``"25 degC"``.
    field : str, optional
        Name of the input, used in error messages.

    Returns
    -------
    float
        Relative permittivity (78.30 at 25 °C).

    Raises
    ------
    InputError
        If the temperature is outside 273.15–373.15 K.
    """
    t = _celsius_in_range(temperature, field, "Malmberg-Maryott permittivity")
    return 87.740 - 0.40008 * t + 9.398e-4 * t**2 - 1.410e-6 * t**3


def water_viscosity(temperature: float | str, *, field: str = "temperature") -> float:
    """Dynamic viscosity of liquid water at atmospheric pressure, in Pa s.

    .. math:: \\log_{10}\\frac{\\eta(t)}{\\eta_{20}} = \\frac{20 - t}{t + 96}
              \\left[1.2378 - 1.303\\times10^{-3}(20 - t) + 3.06\\times10^{-6}(20 - t)^2
              + 2.55\\times10^{-8}(20 - t)^3\\right], \\qquad t \\text{ in °C}

    Kestin, Sokolov & Wakeham (1978), J. Phys. Chem. Ref. Data 7, 941 (coefficients from
    memory), with :math:`\\eta_{20} = 1.0016` mPa s, the IAPWS 2008 value at 20 °C and 0.1 MPa
    (Huber et al. 2009, J. Phys. Chem. Ref. Data 38, 101; from memory). Used here for 0–100 °C,
    where it agrees with IAPWS 2008 to about 0.2 %. The shorter three-term variant
    ``[1.2364 - 1.37e-3 (20 - t) + 5.7e-6 (20 - t)^2]`` was rejected: it is 1.2 % low at 80 °C.

    Parameters
    ----------
    temperature : float or str
        Temperature in K, or a string with units such as ``"25 degC"``.
    field : str, optional
        Name of the input, used in error messages.

    Returns
    -------
    float
        Viscosity in Pa s (8.90e-4 at 25 °C).

    Raises
    ------
    InputError
        If the temperature is outside 273.15–373.15 K.
    """
    d = 20.0 - _celsius_in_range(temperature, field, "Kestin-Sokolov-Wakeham viscosity")
    bracket = 1.2378 - 1.303e-3 * d + 3.06e-6 * d**2 + 2.55e-8 * d**3
    return _ETA_20 * 10.0 ** (d / (116.0 - d) * bracket)  # t + 96 == 116 - d


def water_density(temperature: float | str, *, field: str = "temperature") -> float:
    """Density of liquid water at atmospheric pressure, in kg/m^3.

    rho(t) = (999.83952 + 16.945176 t - 7.9870401e-3 t^2 - 46.170461e-6 t^3 + 105.56302e-9 t^4
    - 280.54253e-12 t^5) / (1 + 16.879850e-3 t), t in °C.

    Kell (1975), J. Chem. Eng. Data 20, 97 (coefficients from memory), fitted to 0-150 °C; used here for 0-100 °C
    like the other water correlations.

    Parameters
    ----------
    temperature : float or str
        Temperature in K, or a string with units such as ``"25 degC"``.
    field : str, optional
        Name of the input, used in error messages.

    Returns
    -------
    float
        Density in kg/m^3 (997.05 at 25 °C, 999.97 at 4 °C).

    Raises
    ------
    InputError
        If the temperature is outside 273.15–373.15 K.
    """
    t = _celsius_in_range(temperature, field, "Kell density")
    numerator = (999.83952 + 16.945176 * t - 7.9870401e-3 * t**2 - 46.170461e-6 * t**3 + 105.56302e-9 * t**4
                 - 280.54253e-12 * t**5)
    return numerator / (1.0 + 16.879850e-3 * t)


def default_density(temperature: float) -> float | None:
    """A solvent's density when none is given: water's at ``temperature`` (K) where its correlation holds
    (``water_density``, 0-100 °C), else None."""
    return water_density(temperature) if _T_MIN <= temperature <= _T_MAX else None


@dataclass(frozen=True)
class Solvent:
    """A continuum solvent: temperature, dielectric constant and viscosity.

    Parameters
    ----------
    temperature : float or str
        Temperature in K, or a string with units (``"25 degC"``).
    relative_permittivity : float or str
        Static relative permittivity :math:`\\varepsilon_r` (dimensionless).
    viscosity : float or str
        Dynamic viscosity in Pa s, or a string with units (``"0.89 mPa*s"``).
    name : str, optional
        Label for reports.
    viscoelectric_coefficient : float or str, optional
        f in eta = eta_0 (1 + f |E|^2), m^2/V^2 (viscoelectric effect, Lyklema & Overbeek 1961); 0 (the
        default) switches it off.
    density : float or str, optional
        Mass density in kg/m^3 (or ``"0.997 g/cm^3"``); only unsteady flow needs it. By default that of water at
        the solvent's temperature (``water_density``), or None outside 0-100 °C, where no correlation is used.

    Raises
    ------
    InputError
        If a value has wrong units or is not strictly positive.

    Notes
    -----
    Values are stored as SI floats; strings are converted once, at construction.
    """

    temperature: float
    relative_permittivity: float
    viscosity: float
    name: str = "custom"
    viscoelectric_coefficient: float = 0.0
    density: float | None = None

    def __post_init__(self) -> None:
        converted = {
            "temperature": to_positive_si(self.temperature, "K", "solvent.temperature", "a temperature > 0 K"),
            "relative_permittivity": to_positive_si(
                self.relative_permittivity, "dimensionless", "solvent.relative_permittivity",
                "a relative permittivity > 0",
            ),
            "viscosity": to_positive_si(self.viscosity, "Pa*s", "solvent.viscosity", "a viscosity > 0 Pa*s"),
        }
        converted["viscoelectric_coefficient"] = to_si(self.viscoelectric_coefficient, "m^2/V^2",
                                                       "solvent.viscoelectric_coefficient")
        if converted["viscoelectric_coefficient"] < 0.0:
            raise InputError(f"solvent.viscoelectric_coefficient: {self.viscoelectric_coefficient!r} is negative, "
                             "expected f >= 0 m^2/V^2")
        if self.density is not None:
            converted["density"] = to_positive_si(self.density, "kg/m^3", "solvent.density", "a density > 0 kg/m^3")
        else:
            converted["density"] = default_density(converted["temperature"])
        for key, number in converted.items():
            object.__setattr__(self, key, number)  # frozen dataclass: bypass the read-only guard
        if not isinstance(self.name, str):
            raise InputError(f"solvent.name: {self.name!r} has type {type(self.name).__name__}, expected a str")

    @property
    def permittivity(self) -> float:
        """Absolute permittivity :math:`\\varepsilon = \\varepsilon_r \\varepsilon_0` in F/m."""
        return self.relative_permittivity * VACUUM_PERMITTIVITY

    @property
    def thermal_voltage(self) -> float:
        """Thermal voltage :math:`k_B T / e` in V (25.693 mV at 298.15 K)."""
        return BOLTZMANN * self.temperature / ELEMENTARY_CHARGE


def Water(  # capitalised: reads as a constructor in the public API, edl.Water(temperature=...)
    temperature: float | str = 298.15,
    relative_permittivity: float | str | None = None,
    viscosity: float | str | None = None,
    viscoelectric: bool | float | str = False,
    density: float | str | None = None,
) -> Solvent:
    """Liquid water at ``temperature`` and atmospheric pressure.

    Permittivity from :func:`water_relative_permittivity` (Malmberg & Maryott 1956) and viscosity
    from :func:`water_viscosity` (Kestin et al. 1978), unless overridden.

    Parameters
    ----------
    temperature : float or str, optional
        Temperature in K or a string with units; 0–100 °C unless both properties are given.
    relative_permittivity : float or str, optional
        Overrides the correlation.
    viscosity : float or str, optional
        Overrides the correlation; Pa s or a string with units.
    viscoelectric : bool, float or str, optional
        The viscoelectric effect: True takes water's coefficient ``WATER_VISCOELECTRIC_COEFFICIENT``, a
        number (m^2/V^2) or string sets it; False (the default) leaves it off.
    density : float or str, optional
        Overrides :func:`water_density` (Kell 1975); kg/m^3 or a string with units.

    Returns
    -------
    Solvent
        With ``name="water"``.

    Raises
    ------
    InputError
        If the temperature is outside 0–100 °C where a correlation is needed, or a value is invalid.
    """
    kelvin = to_positive_si(temperature, "K", "water.temperature", "a temperature > 0 K")
    if relative_permittivity is None:
        relative_permittivity = water_relative_permittivity(temperature, field="water.temperature")
    if viscosity is None:
        viscosity = water_viscosity(temperature, field="water.temperature")
    if viscoelectric is True:
        coefficient: float | str = WATER_VISCOELECTRIC_COEFFICIENT
    elif viscoelectric is False:
        coefficient = 0.0
    else:
        coefficient = viscoelectric
    return Solvent(kelvin, relative_permittivity, viscosity, name="water", viscoelectric_coefficient=coefficient,
                   density=density)


#: Viscoelectric coefficient of water, m^2/V^2: f ~ 1.0e-15 (Lyklema & Overbeek 1961, J. Colloid Sci. 16,
#: 501; from memory).
WATER_VISCOELECTRIC_COEFFICIENT = 1.0e-15
