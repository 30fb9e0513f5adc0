"""Table of common ions: valence and limiting diffusion coefficient in water at 25 °C.

Diffusivities are the infinite-dilution values of the CRC Handbook of Chemistry and Physics,
table "Ionic conductivity and diffusion at infinite dilution", entered FROM MEMORY, not re-read.
They are consistent with the limiting molar conductivities of the same table through the
Nernst–Einstein relation :math:`\\lambda_i = z_i^2 F^2 D_i / (R T)`; the tests check that.

Names are canonical formulas with the charge appended: ``"K+"``, ``"Mg2+"``, ``"Cl-"``, and a
space before a multi-unit charge on polyatomic ions, ``"SO4 2-"``. :func:`lookup_ion` also
accepts common spellings (``"SO4--"``, ``"SO4^2-"``, ``"SO42-"``, ``"SO4(2-)"``, ``"Mg++"``,
``"Mg^2+"``, ``"Cl⁻"``, ``"Cl−"``) and ignores case when that is unambiguous.
"""

from __future__ import annotations

import difflib
import re
from dataclasses import dataclass

from edl_solver.errors import InputError

__all__ = ["IonData", "ion_names", "lookup_ion"]


@dataclass(frozen=True)
class IonData:
    """An ion species of the table.

    Attributes
    ----------
    name : str
        Canonical name, e.g. ``"SO4 2-"``.
    valence : int
        Charge number :math:`z` (signed).
    diffusivity : float
        Limiting diffusion coefficient at 25 °C in m^2/s.
    """

    name: str
    valence: int
    diffusivity: float


# formula, valence, D / (1e-9 m^2/s); CRC Handbook, infinite dilution, 25 °C (from memory).
_TABLE: tuple[tuple[str, int, float], ...] = (
    ("H", 1, 9.311),
    ("Li", 1, 1.029),
    ("Na", 1, 1.334),
    ("K", 1, 1.957),
    ("Rb", 1, 2.072),
    ("Cs", 1, 2.056),
    ("NH4", 1, 1.957),
    ("Mg", 2, 0.706),
    ("Ca", 2, 0.792),
    ("Sr", 2, 0.791),
    ("Ba", 2, 0.847),
    ("La", 3, 0.619),
    ("OH", -1, 5.273),
    ("F", -1, 1.475),
    ("Cl", -1, 2.032),
    ("Br", -1, 2.080),
    ("I", -1, 2.045),
    ("NO3", -1, 1.902),
    ("HCO3", -1, 1.185),
    ("CH3COO", -1, 1.089),
    ("SO4", -2, 1.065),
    ("CO3", -2, 0.923),
)


def _canonical_name(formula: str, valence: int) -> str:
    """``K+``, ``Mg2+``, ``NO3-``; a space separates subscript digits from the charge (``SO4 2-``)."""
    sign = "+" if valence > 0 else "-"
    if abs(valence) == 1:
        return f"{formula}{sign}"
    separator = " " if formula[-1].isdigit() else ""
    return f"{formula}{separator}{abs(valence)}{sign}"


_IONS: dict[tuple[str, int], IonData] = {
    # Scale via the decimal string so that 0.923 becomes exactly 9.23e-10, not 9.230000000000001e-10.
    (formula, z): IonData(_canonical_name(formula, z), z, float(f"{d}e-9"))
    for formula, z, d in _TABLE
}
_BY_NAME: dict[str, IonData] = {ion.name: ion for ion in _IONS.values()}

_TRANSLATE = str.maketrans(
    {
        "\u2212": "-",  # minus sign
        "\u2013": "-",  # en dash
        "\u207a": "+",  # superscript plus
        "\u207b": "-",  # superscript minus
        "\u00b9": "1",
        "\u00b2": "2",
        "\u00b3": "3",
        **{chr(0x2070 + d): str(d) for d in (0, 4, 5, 6, 7, 8, 9)},  # superscript digits
        **{chr(0x2080 + d): str(d) for d in range(10)},  # subscript digits, as in "SO₄²⁻"
    }
)
# Charge written as repeated signs ("SO4--", "Mg++") or digits then sign; an explicit
# separator (space, "^", "(") makes every trailing digit part of the charge.
_REPEATED = re.compile(r"^(?P<formula>[A-Za-z0-9]+?)\s*(?P<signs>\+{2,}|-{2,})$")
_SEPARATED = re.compile(r"^(?P<formula>[A-Za-z0-9]+?)\s*(?:\s|\^|\()\s*(?P<n>\d*)\s*(?P<sign>[+-])\)?$")
_SIGN_FIRST = re.compile(r"^(?P<formula>[A-Za-z0-9]+?)\s*[\^(]?\s*(?P<sign>[+-])\s*(?P<n>\d+)\)?$")
_JOINED = re.compile(r"^(?P<stem>[A-Za-z0-9]*?[A-Za-z])(?P<digits>\d*)(?P<sign>[+-])$")


def _candidates(text: str) -> list[tuple[str, int]]:
    """All (formula, valence) readings of ``text``; ``SO42-`` reads as SO4 2- or SO 42- etc."""
    if m := _REPEATED.match(text):
        sign = 1 if m["signs"][0] == "+" else -1
        return [(m["formula"], sign * len(m["signs"]))]
    if m := _SEPARATED.match(text):
        sign = 1 if m["sign"] == "+" else -1
        return [(m["formula"], sign * int(m["n"] or 1))]
    if m := _SIGN_FIRST.match(text):
        sign = 1 if m["sign"] == "+" else -1
        return [(m["formula"], sign * int(m["n"]))]
    if m := _JOINED.match(text):
        sign = 1 if m["sign"] == "+" else -1
        digits = m["digits"]
        # Any split of the trailing digits between subscript and charge: "SO42-" -> SO4 2-.
        return [(m["stem"] + digits[:k], sign * int(digits[k:] or 1)) for k in range(len(digits) + 1)]
    return []


def _resolve(text: str) -> IonData | None:
    """Find the ion spelled by ``text``: exact first, then case-insensitive if unambiguous."""
    candidates = [c for c in _candidates(text) if c[1] != 0]
    exact = {_IONS[c] for c in candidates if c in _IONS}
    if len(exact) == 1:
        return exact.pop()
    if exact:
        return None  # ambiguous spelling; the caller asks for the canonical name
    folded = {(formula.lower(), z) for formula, z in candidates}
    loose = {ion for (formula, z), ion in _IONS.items() if (formula.lower(), z) in folded}
    return loose.pop() if len(loose) == 1 else None


def ion_names() -> list[str]:
    """Return the canonical names of all ions in the table, in table order."""
    return list(_BY_NAME)


def lookup_ion(name: str, *, field: str = "ion") -> IonData:
    """Return valence and limiting diffusivity of the ion called ``name``.

    Parameters
    ----------
    name : str
        Canonical name (``"K+"``, ``"SO4 2-"``) or a common spelling of it (``"SO4--"``,
        ``"Mg^2+"``, ``"cl-"``).
    field : str, optional
        Name of the input, used in error messages.

    Returns
    -------
    IonData
        Canonical name, valence and diffusivity (m^2/s, 25 °C, CRC Handbook, from memory).

    Raises
    ------
    InputError
        If ``name`` is not a string or names no ion of the table (with a "did you mean" hint).
    """
    if not isinstance(name, str):
        raise InputError(f"{field}: {name!r} has type {type(name).__name__}, expected an ion name such as 'K+'")
    if (ion := _BY_NAME.get(name)) is not None:
        return ion
    text = name.translate(_TRANSLATE).strip()
    if (ion := _BY_NAME.get(text) or _resolve(text)) is not None:
        return ion
    raise InputError(f"{field}: {name!r} is not in the ion table{_suggestion(text)}; "
                     "give valence and diffusivity explicitly")


def _suggestion(text: str) -> str:
    """A ``" (did you mean 'K+'?)"`` hint for a misspelt name, or ``""``."""
    names = ion_names()
    by_folded = {n.lower(): n for n in names}
    match = difflib.get_close_matches(text.lower(), list(by_folded), n=1, cutoff=0.6)
    return f" (did you mean {by_folded[match[0]]!r}?)" if match else ""
