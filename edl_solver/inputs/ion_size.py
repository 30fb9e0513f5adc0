"""What a finite ion size implies on its own, before any solve: the close-packing limit of the lattice gas.

The steric (lattice-gas) model of finite ion size caps the total ion concentration at one ion per cube of
side d. Reports, figures and checks of the inputs state this ceiling; it depends on the ion diameter alone.
"""

from __future__ import annotations

from edl_solver.constants import AVOGADRO

__all__ = ["close_packing"]


def close_packing(diameter: float) -> float:
    """Largest total ion concentration of the lattice-gas (steric) model, c_max = 1/(N_A d^3), mol/m^3
    (Kilic, Bazant & Ajdari 2007, Phys. Rev. E 75, 021502).

    Parameters
    ----------
    diameter : float
        Common ion diameter d, m.

    Returns
    -------
    float
        c_max, mol/m^3.
    """
    return 1.0 / (AVOGADRO * diameter**3)
