"""The compiled step from a packed case to the dimensionless section problem (``kernels.prepare``): the scales
and the problem against values computed by hand from their definitions, with CODATA constants from
``scipy.constants``."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import constants as sc

import edl_solver as edl
from edl_solver.kernels import layout as lay
from edl_solver.kernels import prepare
from edl_solver.model import packing

T = 298.15
WATER = edl.Solvent(temperature=T, relative_permittivity=78.4, viscosity=0.89e-3)
EPS = 78.4 * sc.epsilon_0
VT = sc.k * T / sc.e
KCL = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})


def vector(geometry, wall=None, electrolyte=KCL, **kw) -> np.ndarray:
    wall = edl.Wall(zeta=-2 * VT) if wall is None else wall
    return packing.case_vector(edl.Case(geometry=geometry, electrolyte=electrolyte, wall=wall, solvent=WATER, **kw))


def test_debye_length_of_millimolar_kcl() -> None:
    # lambda_D = 0.304 nm / sqrt(I / M): 9.6 nm at 1 mM (Israelachvili, Intermolecular and Surface Forces)
    scales = prepare.scales(vector(edl.Slit(height="100 nm")))
    assert scales[lay.S_DEBYE_LENGTH] == pytest.approx(0.304e-9 / math.sqrt(1e-3), rel=5e-3)
    # and its definition sqrt(eps kT / (2 e^2 N_A c)) exactly (Debye & Hueckel 1923)
    assert scales[lay.S_DEBYE_LENGTH] == pytest.approx(math.sqrt(EPS * sc.k * T / (2 * sc.e**2 * sc.N_A * 1.0)),
                                                       rel=1e-13)


def test_scales_of_a_slit_and_a_capillary() -> None:
    # kT/e = 25.693 mV at 298.15 K (CODATA via scipy.constants); the other units from their definitions
    # (see model.scaling: charge eps kT/(e L), EO velocity eps kT/(e eta), pressure velocity L^2/eta)
    length = 50e-9
    for geometry, area, section in ((edl.Slit(height=2 * length), 2 * length, 2 * length),
                                    (edl.Capillary(radius=length), 2 * math.pi * length**2, math.pi * length**2)):
        s = prepare.scales(vector(geometry))
        assert s[lay.S_THERMAL_VOLTAGE] == pytest.approx(25.693e-3, abs=1e-6)
        assert s[lay.S_LENGTH] == length
        assert s[lay.S_CHARGE_DENSITY] == pytest.approx(EPS * VT / length, rel=1e-13)
        assert s[lay.S_VOLUME_CHARGE] == pytest.approx(sc.e * sc.N_A * 2.0, rel=1e-13)  # e N_A sum z^2 c
        assert s[lay.S_EO_VELOCITY] == pytest.approx(EPS * VT / 0.89e-3, rel=1e-13)
        assert s[lay.S_PRESSURE_VELOCITY] == pytest.approx(length**2 / 0.89e-3, rel=1e-13)
        assert s[lay.S_AREA] == pytest.approx(area, rel=1e-15)  # sum over the half section -> whole section
        assert s[lay.S_SECTION_AREA] == pytest.approx(section, rel=1e-15)
        assert s[lay.S_SECTION_AREA] == pytest.approx(geometry.area, rel=1e-15)


def test_species_weights_of_an_asymmetric_salt() -> None:
    # w_k = z_k c_k / sum z^2 c: electroneutrality gives sum w = 0 and the definition sum w z = 1, the two
    # facts the linearised (Debye-Hueckel) charge rho = -psi rests on (Debye & Hueckel 1923; common practice)
    salt = edl.Electrolyte.from_ions({"Ca2+": "1 mM", "Cl-": "2 mM"})
    ions = prepare.species(vector(edl.Slit(height="40 nm"), electrolyte=salt))
    assert list(ions[:, lay.SPECIES_VALENCE]) == [2.0, -1.0]
    assert ions[:, lay.SPECIES_WEIGHT] == pytest.approx([2.0 / 6.0, -2.0 / 6.0], rel=1e-15)
    assert np.sum(ions[:, lay.SPECIES_WEIGHT] * ions[:, lay.SPECIES_VALENCE]) == pytest.approx(1.0, rel=1e-15)
    assert not ions[:, lay.SPECIES_PACKING].any()  # point ions


def test_steric_packing_parameter() -> None:
    # nu = c N_A d^3, the volume fraction of ions on a lattice of cell d^3 (Kilic, Bazant & Ajdari 2007,
    # Phys. Rev. E 75, 021502)
    salt = edl.Electrolyte([edl.Ion(name=name, concentration="100 mM", diameter="0.7 nm") for name in ("K+", "Cl-")])
    ions = prepare.species(vector(edl.Slit(height="40 nm"), electrolyte=salt, model="steric"))
    assert ions[:, lay.SPECIES_PACKING] == pytest.approx([100.0 * sc.N_A * 0.7e-9**3] * 2, rel=1e-14)


def test_section_problem_of_a_symmetric_slit_with_slip() -> None:
    # The half section: a symmetry plane (no charge, no shear) at the centre, the wall at the other end with
    # sigma_hat = sigma e L / (eps kT) (model.scaling) and Navier slip u = -b du/dn as 1 / b_hat (Navier 1823)
    length, sigma, slip = 20e-9, -0.01, 2e-9
    wall = edl.Wall(charge_density=sigma, slip_length=slip)
    p = vector(edl.Slit(height=2 * length), wall=wall, numerics=edl.Numerics(accuracy=1e-7, intervals=64))
    inputs = prepare.section_inputs(p)
    problem = inputs.problem
    assert problem.half and problem.metric == lay.PLANAR and problem.model == lay.PB
    assert problem.kappa2 == pytest.approx((length / inputs.scales[lay.S_DEBYE_LENGTH]) ** 2, rel=1e-14)
    assert problem.walls[0, lay.W_TYPE] == lay.FLUX and problem.walls[0, lay.W_VALUE] == 0.0
    assert problem.walls[1, lay.W_TYPE] == lay.FLUX
    assert problem.walls[1, lay.W_VALUE] == pytest.approx(sigma * sc.e * length / (EPS * sc.k * T), rel=1e-13)
    assert problem.flow_walls[0, lay.FLOW_CODE] == lay.FLUX
    assert problem.flow_walls[1, lay.FLOW_CODE] == lay.ROBIN
    assert problem.flow_walls[1, lay.FLOW_VALUE] == pytest.approx(length / slip, rel=1e-14)
    # the start of the solve: the isolated wall's potential in kT/e; a negative wall's counter-ion is K+
    assert problem.wall_potential_guess[1] == pytest.approx(inputs.isolated[1, lay.ISO_ZETA] / VT, rel=1e-13)
    assert problem.counter_valence[1] == 1.0
    assert tuple(prepare.controls(p)) == (1e-7, 64, edl.Numerics().max_intervals, edl.Numerics().max_iterations)


def test_section_problem_of_an_asymmetric_slit_and_a_capillary() -> None:
    # A full slit section keeps both walls (psi_hat = zeta e / kT, no slip: zero velocity); a capillary is
    # the half section from the axis. The viscoelectric coefficient enters as f (kT / (e L))^2 (Lyklema &
    # Overbeek 1961, J. Colloid Sci. 16, 501: eta = eta_0 (1 + f E^2))
    walls = (edl.Wall(zeta=-3 * VT), edl.Wall(zeta=1 * VT))
    problem = prepare.section_inputs(vector(edl.Slit(height="30 nm"), wall=walls)).problem
    assert not problem.half
    assert (problem.walls[0, lay.W_TYPE], problem.walls[1, lay.W_TYPE]) == (lay.POTENTIAL, lay.POTENTIAL)
    assert problem.walls[:, lay.W_VALUE] == pytest.approx([-3.0, 1.0], rel=1e-13)
    assert list(problem.flow_walls[:, lay.FLOW_CODE]) == [lay.POTENTIAL, lay.POTENTIAL]
    assert not problem.flow_walls[:, lay.FLOW_VALUE].any()
    salt = edl.Electrolyte.from_ions({"Ca2+": "1 mM", "Cl-": "2 mM"})
    viscous = edl.Solvent(temperature=T, relative_permittivity=78.4, viscosity=0.89e-3,
                          viscoelectric_coefficient=1e-15)
    case = edl.Case(geometry=edl.Capillary(radius="10 nm"), electrolyte=salt, wall=edl.Wall(zeta=2 * VT),
                    solvent=viscous)
    problem = prepare.section_inputs(packing.case_vector(case)).problem
    assert problem.half and problem.metric == lay.AXISYMMETRIC
    assert problem.visco == pytest.approx(1e-15 * (VT / 10e-9) ** 2, rel=1e-13)
    assert problem.counter_valence[1] == 1.0  # a positive wall's counter-ion is Cl-
    negative = edl.Case(geometry=edl.Capillary(radius="10 nm"), electrolyte=salt, wall=edl.Wall(zeta=-2 * VT))
    assert prepare.section_inputs(packing.case_vector(negative)).problem.counter_valence[1] == 2.0  # Ca2+


def test_python_scales_read_the_scales_vector_in_its_order() -> None:
    # project design: model.scaling.Scales is built from the S_* vector by position
    from edl_solver.model.scaling import Scales

    order = ("S_THERMAL_VOLTAGE", "S_LENGTH", "S_DEBYE_LENGTH", "S_CHARGE_DENSITY", "S_VOLUME_CHARGE", "S_EO_VELOCITY",
             "S_PRESSURE_VELOCITY", "S_AREA", "S_SECTION_AREA")
    assert [getattr(lay, name) for name in order] == list(range(len(Scales._fields))) == list(range(lay.SCALE_SIZE))
