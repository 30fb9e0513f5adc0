"""``edl demo``: the built-in demonstration case, as a TOML text a newcomer can copy and edit, solved and
written as ``edl solve`` does.

A 30 nm slit with glass-like walls (zeta -60 mV) in 0.5 mM KCl: the Debye length (13.6 nm) is close
to the half-height, the double layers overlap, and the thin-layer slip model over-predicts the
electroosmotic flow about three-fold; a scenario chosen to show why the full solution matters.
``edl demo --print-case > case.toml`` writes the text out as a starting case file.
"""

from __future__ import annotations

import argparse
import sys
from typing import Any

from edl_solver.cli.exit_codes import EXIT_OK
from edl_solver.cli.output_files import OUTPUT_FLAGS, add_output_flags, result_and_figure
from edl_solver.inputs.case import Case

__all__ = ["DEMO_FIGURE", "DEMO_RESULT", "DEMO_TOML", "VALUE_FLAGS", "add_demo_command", "demo_case",
           "run_demo_command"]

#: Flags of ``edl demo`` that take a value.
VALUE_FLAGS = frozenset(OUTPUT_FLAGS)

DEMO_RESULT = "edl_demo.h5"
DEMO_FIGURE = "edl_demo.png"

_EPILOG = f"""\
examples:
  edl demo                                   # writes {DEMO_RESULT} and {DEMO_FIGURE} here
  edl demo -o run.h5 --figure run.png
  edl demo --print-case > case.toml          # the demo as an editable case file
"""

DEMO_TOML = """\
# edl demo: a 30 nm slit with glass-like walls in 0.5 mM KCl.
# Run it with:  edl solve case.toml -o out.h5 --figure out.png
# Numbers are SI; strings carry units ("50 nm", "1 mM" = 1 mol/m^3, "-50 mV", "25 degC").

model = "pb"                    # "pb" (Poisson-Boltzmann) or "dh" (linearised, Debye-Hueckel)
field = "5 kV/m"                # axial electric field E, along +x
pressure_gradient = "-1 bar/mm" # axial dp/dx; negative pushes the liquid along +x
tolerance = "5 %"               # error up to which the thin-layer slip model is called valid

[geometry]
kind = "slit"                   # or kind = "capillary" with radius = "15 nm"
height = "30 nm"                # full wall-to-wall height

[electrolyte]
ions = { "K+" = "0.5 mM", "Cl-" = "0.5 mM" }   # ions of the built-in table, bulk concentrations
# An ion outside the table is given in full (uncomment, and balance its charge):
# [[electrolyte.ion]]
# name = "X+"
# valence = 1
# concentration = "0.1 mM"
# diffusivity = "1e-9 m^2/s"

[wall]                          # one condition for both walls; or [wall.bottom] and [wall.top]
zeta = "-60 mV"                 # or charge_density = "-3 mC/m^2"

[solvent]                       # water; permittivity and viscosity follow the temperature
temperature = "25 degC"         # relative_permittivity = 78.4 or viscosity = "0.89 mPa*s" override

[numerics]
accuracy = 1e-6                 # target relative error of the summary values
"""


def demo_case() -> Case:
    """The demonstration case: the :data:`DEMO_TOML` text parsed (one source for both)."""
    from edl_solver.inputs.casefile import loads_case

    return loads_case(DEMO_TOML, "demo")


def add_demo_command(commands: Any) -> None:
    """Add ``demo`` to the sub-parsers ``commands`` (its ``run`` is :func:`run_demo_command`)."""
    demo = commands.add_parser(
        "demo", help="solve the built-in demonstration case", allow_abbrev=False,
        formatter_class=argparse.RawDescriptionHelpFormatter, epilog=_EPILOG,
        description="Solve the built-in case (a 30 nm slit with glass-like walls in 0.5 mM KCl), print\n"
                    "the report and write the result file and the figure.")
    demo.add_argument("--print-case", action="store_true",
                      help="print the demo's case file (TOML) and stop; a starting point for your own")
    add_output_flags(demo, result_default=DEMO_RESULT, figure_default=DEMO_FIGURE)
    demo.set_defaults(run=run_demo_command)


def run_demo_command(args: argparse.Namespace) -> int:
    """Print the demo's case file (--print-case), or solve it and write its files."""
    from edl_solver.cli.solve_command import solve_and_write

    if args.print_case:
        sys.stdout.write(DEMO_TOML)
        return EXIT_OK
    return solve_and_write(demo_case(), result_and_figure(args), args.quiet)
