"""What a solve returns: profiles across the section, the summary and the solver's status.

A solve checks everything that can fail (convergence, the discrete identities) before it returns; the parts
of its Result that only present the solution (the profiles in SI, the summary as a dict, the verdict, the
message and the validity notes) are then built on first access (``Deferred``), since most callers read only
some of them and building them all costs about twice the compiled solve.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, fields
from pathlib import Path
from typing import Any

import numpy as np

from edl_solver.inputs.case import Case
from edl_solver.results.profiles import Profiles

_NO_DEFAULT = object()


class Deferred:
    """A field value of a Result still to be built: ``build(result)`` runs on the first access, once.

    Parameters
    ----------
    build : callable
        Takes the Result (so that one deferred field may read another) and returns the value.
    """

    __slots__ = ("build",)

    def __init__(self, build: Callable[[Result], Any]) -> None:
        self.build = build

    def __repr__(self) -> str:
        return f"Deferred({self.build!r})"


class _DeferredField:
    """A dataclass field that accepts a ``Deferred`` in place of its value and builds it on first access.

    The value is kept in the instance dict under ``_<name>``; the dataclass machinery (``__init__``,
    ``replace``, ``__eq__``, ``__repr__``) sees a plain field, since it reads and writes it by its name.
    """

    def __init__(self, default: Any = _NO_DEFAULT) -> None:
        self.default = default

    def __set_name__(self, owner: type, name: str) -> None:
        self.slot = "_" + name

    def __get__(self, result: Result | None, owner: type | None = None) -> Any:
        if result is None:  # the dataclass asks for the default
            if self.default is _NO_DEFAULT:
                raise AttributeError(self.slot[1:])
            return self.default
        value = result.__dict__[self.slot]
        if type(value) is Deferred:
            value = value.build(result)
            result.__dict__[self.slot] = value
        return value

    def __set__(self, result: Result, value: Any) -> None:
        # reached only from __init__ (object.__setattr__); the frozen __setattr__ refuses users first
        result.__dict__[self.slot] = value


@dataclass(frozen=True)
class Result:
    """The outcome of ``solve``.

    Attributes
    ----------
    case : Case
        The inputs, SI.
    profiles : Profiles
    summary : dict
        SI values keyed as in ``SUMMARY_UNITS``; for a slit with two different walls, ``zeta``,
        ``wall_charge_density``, ``hs_velocity`` and ``thin_layer_zeta`` are (bottom, top) pairs.
    verdict : str
        The thin-layer model's validity in plain words, at ``case.tolerance``.
    status : str
        "converged" (a single solve raises instead of returning anything else).
    message : str
    iterations : int
        Newton iterations over all grids.
    residual : float
        Max row-scaled residual of the finest grid, kT/e.
    warnings : tuple of str
        Notes on the physical validity of the model for this case.
    response_matrix : ndarray, optional
        3 x 3 linear-response matrix of (volume flow, current, salt flux) against (solvent force X_P = -dp/dx
        + RT sum c_i d ln c/dx, field E, salt force X_s), per unit length; see ``kernels.response.reduced_matrix``.
    ion_response_matrix : ndarray, optional
        The same resolved per ion, (1 + n) x (1 + n); see ``kernels.response.ion_response_matrix``.
    slit_comparison : dict, optional
        A rectangle only: the slit of the same height with the top and bottom walls (no side walls), its values
        for the rectangle's width W (``pipeline.slit_beside``); None for a slit or capillary.

    Notes
    -----
    ``profiles``, ``summary``, ``verdict``, ``message`` and ``warnings`` may be given as ``Deferred``
    (``solve`` does): they are built on first access and kept. Copies (``dataclasses.replace``, ``copy``,
    pickle) hold the built values.
    """

    case: Case
    profiles: Profiles = _DeferredField()
    summary: dict[str, Any] = _DeferredField()
    verdict: str = _DeferredField()
    status: str = "converged"
    message: str = _DeferredField("")
    iterations: int = 0
    residual: float = 0.0
    warnings: tuple[str, ...] = _DeferredField(())
    response_matrix: np.ndarray | None = None
    ion_response_matrix: np.ndarray | None = None
    slit_comparison: dict[str, float] | None = _DeferredField(None)

    @classmethod
    def converged(cls, case: Case, profiles: Profiles | Deferred, summary: dict[str, Any] | Deferred,
                  verdict: str | Deferred, message: str | Deferred, iterations: int, residual: float,
                  warnings: tuple[str, ...] | Deferred, response_matrix: np.ndarray,
                  ion_response_matrix: np.ndarray, slit_comparison: dict[str, float] | Deferred | None = None
                  ) -> Result:
        """The Result of a converged solve, the same as ``Result(..., status="converged", ...)``.

        Put together without the dataclass ``__init__``, whose eleven frozen assignments cost a warm solve
        ~1 us (3 %); ``tests/results/test_deferred_result.py`` checks that it fills every field.
        """
        result = object.__new__(cls)
        result.__dict__.update(case=case, _profiles=profiles, _summary=summary, _verdict=verdict,
                               status="converged", _message=message, iterations=iterations, residual=residual,
                               _warnings=warnings, response_matrix=response_matrix,
                               ion_response_matrix=ion_response_matrix, _slit_comparison=slit_comparison)
        return result

    def __getstate__(self) -> dict[str, Any]:
        # copies and pickles carry built values, never the builders (closures over the solver's arrays)
        state = dict(self.__dict__)
        for field in fields(self):
            slot = "_" + field.name
            if slot in state:
                state[slot] = getattr(self, field.name)
        return state

    def to_hdf5(self, path: str | Path) -> Path:
        """Write the result to an HDF5 (netCDF-4) file atomically; see ``edl_solver.io.hdf5``."""
        from edl_solver.io import hdf5 as io

        return io.write_result(self, path)

    def report(self) -> str:
        """A short plain-text report: inputs, Debye length, kappa h, summary and verdict."""
        from edl_solver.report import text as report

        return report.text(self)
