"""Silica nanoslit across a pH series: zeta, wall charge, eo_ratio and the thin-layer verdict.

A 50 nm slit between two silica walls (``Wall.silica()``: silanol sites SiOH = SiO- + H+ with pK 7.5 at
8 per nm^2, behind a Stern layer of 2.9 F/m^2) in KCl at 0.1, 1 and 10 mM, from pH 3 to pH 10. H+ and OH-
are counted as ions (``water_ions=True``: the pH is set with HCl or KOH), which matters at the ends of
the series, where they rival the salt. As the pH rises the silanols dissociate and the walls charge up;
in dilute salt the double layers fill the slit and the thin-layer slip model over-predicts the
electroosmotic flow.

Run from the repository (after ``pip install -e .``)::

    python examples/silica_ph_series.py                         # the table
    python examples/silica_ph_series.py --figure silica_ph.png  # and a figure of zeta and eo_ratio
"""

from __future__ import annotations

import argparse
import os
import sys
from collections.abc import Sequence
from dataclasses import dataclass

import edl_solver as edl
from edl_solver.errors import InputError

#: Salt concentrations, mM (= mol/m^3), and the pH values of the series.
CONCENTRATIONS = (0.1, 1.0, 10.0)
PH_VALUES = (3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0)
HEIGHT = "50 nm"


@dataclass(frozen=True)
class Point:
    """One case of the series and what the table shows of its result (SI)."""

    concentration: float  # mol/m^3
    pH: float
    zeta: float  # V
    charge_density: float  # C/m^2
    eo_ratio: float  # full / thin-layer mean EO velocity
    error: float  # (thin-layer - full) / full EO flow rate
    tolerance: float


def silica_case(concentration: float, pH: float) -> edl.Case:
    """The 50 nm silica slit in KCl at ``concentration`` (mol/m^3) and ``pH``."""
    electrolyte = edl.Electrolyte.from_ions({"K+": concentration, "Cl-": concentration}, pH=pH, water_ions=True)
    return edl.Case(geometry=edl.Slit(height=HEIGHT), electrolyte=electrolyte, wall=edl.Wall.silica(),
                    field="1 kV/m")


def series(concentrations: Sequence[float] = CONCENTRATIONS, ph_values: Sequence[float] = PH_VALUES
           ) -> list[Point]:
    """Solve every (concentration, pH) of the series, concentration by concentration."""
    points = []
    for concentration in concentrations:
        for ph in ph_values:
            result = edl.solve(silica_case(concentration, ph))
            s = result.summary
            points.append(Point(concentration, ph, s["zeta"], s["wall_charge_density"], s["eo_ratio"],
                                s["thin_layer_flow_rate_error"], result.case.tolerance))
    return points


def table(points: Sequence[Point]) -> str:
    """The series as a plain-text table, one line per case."""
    lines = [f"{'KCl (mM)':>8}  {'pH':>4}  {'zeta (mV)':>9}  {'sigma (mC/m^2)':>14}  {'eo_ratio':>8}  "
             "thin-layer slip model",
             "-" * 76]
    for p in points:
        valid = abs(p.error) <= p.tolerance
        verdict = f"{'valid' if valid else 'not valid'} at {p.tolerance:.0%} (flow error {p.error:+.1%})"
        lines.append(f"{p.concentration:8.3g}  {p.pH:4.1f}  {p.zeta * 1e3:9.2f}  {p.charge_density * 1e3:14.3f}  "
                     f"{p.eo_ratio:8.4f}  {verdict}")
    return "\n".join(lines)


def figure(points: Sequence[Point], path: str | os.PathLike[str]) -> None:
    """Save a PNG of zeta and eo_ratio against pH, one line per salt concentration."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    from edl_solver.io.files import atomic_output

    fig = Figure(figsize=(6.0, 6.5), dpi=100, layout="constrained")
    FigureCanvasAgg(fig)
    zeta_axes, ratio_axes = fig.subplots(2, 1, sharex=True)
    for n, concentration in enumerate(sorted({p.concentration for p in points})):
        line = [p for p in points if p.concentration == concentration]
        style = {"color": f"C{n}", "marker": "o", "label": f"{concentration:g} mM KCl"}
        zeta_axes.plot([p.pH for p in line], [p.zeta * 1e3 for p in line], **style)
        ratio_axes.plot([p.pH for p in line], [p.eo_ratio for p in line], **style)
    ratio_axes.axhline(1.0, color="0.5", lw=0.8, ls="--", label="thin-layer slip model")
    zeta_axes.set_ylabel("zeta (mV)")
    ratio_axes.set_ylabel("eo_ratio\n(full / thin-layer mean EO velocity)")
    ratio_axes.set_xlabel("pH")
    ratio_axes.legend(fontsize="small")
    for axes in (zeta_axes, ratio_axes):
        axes.grid(True, lw=0.4, alpha=0.5)
    zeta_axes.set_title(f"Silica slit H = {HEIGHT}: silanol pK 7.5, 8 nm⁻², Stern 2.9 F/m²", fontsize="medium")
    with atomic_output(path) as temporary:
        fig.savefig(temporary, format="png")


def main(argv: Sequence[str] | None = None) -> int:
    """Print the table; save the figure when ``--figure PATH`` is given. Returns the exit status."""
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--figure", metavar="PATH", help="also save a PNG of zeta and eo_ratio against pH")
    args = parser.parse_args(argv)
    points = series()
    print(table(points))
    if args.figure:
        try:
            figure(points, args.figure)
        except InputError as error:
            print(f"silica_ph_series: --figure: {error}", file=sys.stderr)
            return 2
        print(f"figure: {args.figure}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
