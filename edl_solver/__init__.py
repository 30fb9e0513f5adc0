"""edl_solver: the full double layer and electrokinetic flow across nanochannels, against the
thin-layer slip model.

Public API::

    import edl_solver as edl
    case = edl.Case(geometry=edl.Slit(height="50 nm"),
                    electrolyte=edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}),
                    wall=edl.Wall(zeta="-50 mV"), field="10 kV/m")
    result = edl.solve(case)
    result.summary["eo_ratio"], result.verdict
"""

# No ``from __future__ import annotations`` and private aliases for the standard modules: what this module
# defines is what ``dir(edl_solver)`` shows (see ``__dir__`` below).
import os as _os
import typing as _typing

from edl_solver.errors import ConvergenceError, InputError
from edl_solver.inputs.case import Case, Numerics
from edl_solver.inputs.drives import Drive
from edl_solver.inputs.electrolyte import Electrolyte, Ion
from edl_solver.inputs.geometry import Capillary, Rectangle, Slit
from edl_solver.inputs.solvent import Solvent, Water
from edl_solver.inputs.wall import Site, Wall
from edl_solver.results.profiles import Profiles, RectangleProfiles
from edl_solver.results.result import Result

if _typing.TYPE_CHECKING:
    from edl_solver.channel.model import Channel
    from edl_solver.fitting.result import Fit
    from edl_solver.fitting.run import fit
    from edl_solver.model.frequency import frequency_response
    from edl_solver.model.startup import transient
    from edl_solver.pipeline import solve
    from edl_solver.sweeping.run import sweep

__version__ = "0.1.0"


def load(path: str | _os.PathLike[str]) -> Result:
    """Read a result written by ``Result.to_hdf5``.

    Parameters
    ----------
    path : str or PathLike

    Returns
    -------
    Result
        Equal to the written one (its case rebuilt from the file's ``case_json``).

    Raises
    ------
    InputError
        If the file does not exist, is not an edl_solver result, or has a newer schema version.
    """
    from edl_solver.io.hdf5 import read_result_fields

    return Result(**read_result_fields(path))


def __getattr__(name: str) -> _typing.Any:
    # The solver pulls in numba and scipy (~0.5 s); it is loaded on first use so that the command line
    # and the input checks start fast.
    if name == "solve":
        from edl_solver.pipeline import solve

        globals()["solve"] = solve  # kept, so that later reads (one per solve in a loop) skip this hook
        return solve
    if name == "sweep":
        from edl_solver.sweeping.run import sweep

        return sweep
    if name == "fit":
        from edl_solver.fitting.run import fit

        return fit
    if name == "Fit":
        from edl_solver.fitting.result import Fit

        return Fit
    if name == "transient":
        from edl_solver.model.startup import transient

        return transient
    if name == "frequency_response":
        from edl_solver.model.frequency import frequency_response

        return frequency_response
    if name == "Channel":
        from edl_solver.channel.model import Channel

        return Channel
    raise AttributeError(f"module 'edl_solver' has no attribute {name!r}")


__all__ = [
    "Capillary",
    "Case",
    "Channel",
    "ConvergenceError",
    "Drive",
    "Electrolyte",
    "Fit",
    "InputError",
    "Ion",
    "Numerics",
    "Profiles",
    "Rectangle",
    "RectangleProfiles",
    "Result",
    "Site",
    "Slit",
    "Solvent",
    "Wall",
    "Water",
    "__version__",
    "fit",
    "frequency_response",
    "load",
    "solve",
    "sweep",
    "transient",
]


def __dir__() -> list[str]:
    # The public API only: not the submodules that importing it sets as attributes, nor the helpers above.
    return sorted(__all__)
