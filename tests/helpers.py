"""Plain helpers shared by test modules in several folders (fixtures live in conftest.py).

Tests call these directly, so they are functions and constants, imported as ``from tests.helpers import ...``.
"""

from __future__ import annotations

import contextlib
import io
import struct
from pathlib import Path

import edl_solver as edl
from edl_solver.constants import GAS_CONSTANT

#: The repository root (examples/, notebooks/, the package).
ROOT = Path(__file__).resolve().parents[1]
#: The eight bytes every PNG file starts with (PNG specification, section 5.2).
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
#: Water at 25 degC with round handbook values (eps_r 78.4, eta 0.89 mPa s; from memory).
SOLVENT = edl.Solvent(temperature=298.15, relative_permittivity=78.4, viscosity=0.89e-3)
#: R T at 25 degC, J/mol.
RT = GAS_CONSTANT * 298.15
#: 1 mM KCl with the table's diffusivities.
KCL = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})

#: A 100 nm slit of -10 mC/m^2 in 1 mM KCl: the base case of the map command's tests.
CHARGED_SLIT_TOML = """\
[geometry]
kind = "slit"
height = "100 nm"

[electrolyte]
ions = { "K+" = "1 mM", "Cl-" = "1 mM" }

[wall]
charge_density = "-10 mC/m^2"
"""

#: The base case of the sweep files (a slit with both drives) ...
SWEEP_BASE_TOML = """\
field = "1 kV/m"
pressure_gradient = "-1 bar/mm"

[geometry]
kind = "slit"
height = "20 nm"

[electrolyte]
ions = { "K+" = "1 mM", "Cl-" = "1 mM" }

[wall]
zeta = "-40 mV"
"""

#: ... and a sweep of it over three axes, two of them zipped (3 x 4 = 12 cases).
SWEEP_TOML = SWEEP_BASE_TOML + """
[sweep]
zip = [["geometry.height", "electrolyte.concentration"]]

[sweep.axes]
"geometry.height" = { log = ["5 nm", "500 nm"], points = 3 }
"wall.zeta" = { linear = ["-150 mV", "-10 mV"], points = 4 }
"electrolyte.concentration" = ["0.1 mM", "1 mM", "10 mM"]
"""


def run(argv: list[str]) -> tuple[int, str, str]:
    """Exit code, stdout and stderr of ``edl ARGV``."""
    from edl_solver.cli import main  # here, so that modules needing only the constants do not load the CLI

    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(argv)
    return code, out.getvalue(), err.getvalue()


def write(folder: Path, text: str, name: str = "case.toml") -> Path:
    """``text`` written to ``folder/name`` (UTF-8); the path."""
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path


def write_sweep(folder: Path, text: str, name: str = "design.toml") -> Path:
    """A sweep file: ``text`` written to ``folder/name``; the path."""
    return write(folder, text, name)


def assert_png(path: Path) -> None:
    """A PNG of a drawn figure: the signature, an IHDR chunk of at least 500 x 400 pixels, and more than 20 kB."""
    header = path.read_bytes()[:24]
    assert header[:8] == PNG_SIGNATURE and header[12:16] == b"IHDR"
    width, height = struct.unpack(">II", header[16:24])
    assert width > 500 and height > 400
    assert path.stat().st_size > 20_000  # lines, markers and text, not an empty canvas


def kcl(millimolar: float = 1.0) -> edl.Electrolyte:
    """KCl at ``millimolar`` mM (mol/m^3) with the table's diffusivities."""
    return edl.Electrolyte.from_ions({"K+": millimolar, "Cl-": millimolar})


def case_of(geometry: object, wall: object, **kwargs: object) -> edl.Case:
    """A case of 1 mM KCl in water at 25 degC (SOLVENT) in ``geometry`` with ``wall``."""
    return edl.Case(geometry=geometry, electrolyte=KCL, wall=wall, solvent=SOLVENT, **kwargs)
