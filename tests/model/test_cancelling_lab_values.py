"""The lab values that are differences of response-matrix terms meet ``Numerics(accuracy=...)`` relative to their
own size (issue 10): the diffusio-osmotic flow near the wall potential where it changes sign.

At zero current and no pressure difference the diffusio-osmotic flow is the chemiosmotic flow less the
electro-osmotic flow of the diffusion potential's field, M00 X_P + M01 E + M02 X_s (Kedem & Caplan 1965; the
response matrix of README's transport section). In 1 mM KCl at kappa h = 7.2 the two cancel near zeta = -1.61 kT/e,
and an integral accurate to 1e-8 left the flow at 1e-6 to 1e-4 of its own size with an error estimate of 2e-8.
The reference is the same scheme on a grid 16-32 times finer without error control, whose extrapolated values
agree to round-off of the terms (a convergence check, common practice); the flows, currents and potentials it is
built from are checked against an independent solution in ``test_per_value_accuracy.py``.
"""

from __future__ import annotations

import pytest

import edl_solver as edl

KCL = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})
#: The wall potential (units of kT/e) at which this slit's diffusio-osmotic flow vanishes, found by root-finding.
CROSSING = -1.6063954216332068


def _case(offset: float, **numerics: object) -> edl.Case:
    solvent = edl.Water()
    height = 2.0 * 7.2 * KCL.debye_length(solvent)
    return edl.Case(geometry=edl.Slit(height=height), electrolyte=KCL, solvent=solvent, field=1e3,
                    wall=edl.Wall(zeta=CROSSING * (1.0 + offset) * solvent.thermal_voltage),
                    numerics=edl.Numerics(**numerics))


@pytest.mark.parametrize("offset", [1e-2, 1e-3])
def test_diffusioosmotic_flow_near_its_sign_change_meets_the_accuracy(offset):
    # the flow is 1.6e-5 and 1.6e-6 of its terms here: above the vanishing threshold (1e-6), so it is measured
    # against its own size
    reference = edl.solve(_case(offset, intervals=8192)).summary["diffusioosmotic_flow"]
    result = edl.solve(_case(offset, accuracy=1e-6))
    assert result.summary["diffusioosmotic_flow"] == pytest.approx(reference, rel=1e-6, abs=0.0)
    assert result.summary["error_estimate"] <= 1e-6
