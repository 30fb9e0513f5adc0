"""Inputs outside the promised domain (README: |zeta| up to 15 kT/e, kappa*size 0.01 to 1000) are refused when the
case is built, in one line naming the field, the value and the limit, instead of reaching the solver."""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest

import edl_solver as edl
from edl_solver.constants import AVOGADRO, BOLTZMANN, ELEMENTARY_CHARGE
from edl_solver.errors import InputError
from tests.helpers import run, write

KCL = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})
DILUTE = edl.Electrolyte.from_ions({"K+": "1 uM", "Cl-": "1 uM"})  # Debye length 304 nm
CACL2 = edl.Electrolyte.from_ions({"Ca2+": "1 mM", "Cl-": "2 mM"})
SLIT = edl.Slit(height="20 nm")


def case(geometry: edl.Slit | edl.Capillary = SLIT, wall: edl.Wall | tuple[edl.Wall, edl.Wall] | None = None,
         electrolyte: edl.Electrolyte = KCL, **kwargs: object) -> edl.Case:
    return edl.Case(geometry=geometry, electrolyte=electrolyte, wall=wall or edl.Wall(zeta="-50 mV"), **kwargs)


def refused(build, *parts: str) -> str:
    """The one-line message of the InputError ``build()`` raises; it holds every one of ``parts``."""
    with pytest.raises(InputError) as info:
        build()
    message = str(info.value)
    assert "\n" not in message, message
    for part in parts:
        assert part in message, f"{part!r} not in {message!r}"
    return message


def thermal_voltage(kelvin: float) -> float:
    return BOLTZMANN * kelvin / ELEMENTARY_CHARGE


# -- sizes: 0.1 nm to 1 m ------------------------------------------------------------------------------


@pytest.mark.parametrize(("build", "parts"), [
    (lambda: edl.Slit(height=50), ["geometry.height", "50", "1 m"]),  # the 50 m slit
    (lambda: edl.Slit(height="2 m"), ["geometry.height", "'2 m'", "1 m"]),
    (lambda: edl.Slit(height=1e-15), ["geometry.height", "1e-15", "0.1 nm"]),  # the NaN values
    (lambda: edl.Slit(height="50 pm"), ["geometry.height", "'50 pm'", "5e-11 m", "0.1 nm"]),
    (lambda: edl.Capillary(radius=np.float64(1e-12)), ["geometry.radius", "1e-12", "0.1 nm"]),
    (lambda: edl.Capillary(radius="1.5 m"), ["geometry.radius", "'1.5 m'", "1 m"]),
])
def test_sizes_outside_a_tenth_of_a_nanometre_to_a_metre_are_refused(build, parts) -> None:
    refused(build, *parts)


@pytest.mark.parametrize(("size", "si"), [(1e-10, 1e-10), (1.0, 1.0), ("0.1 nm", 1e-10), ("1 m", 1.0),
                                          (np.float32(5e-9), 5e-9)])
def test_sizes_at_the_limits_are_kept(size, si: float) -> None:
    assert edl.Slit(height=size).height == pytest.approx(si, rel=1e-7)
    assert edl.Capillary(radius=size).radius == pytest.approx(si, rel=1e-7)


# -- kappa times the half-size: 1e-3 to 1e4 ---------------------------------------------------------------


def test_a_wide_slit_in_strong_salt_is_refused_naming_size_kappa_h_and_limits() -> None:
    strong = edl.Electrolyte.from_ions({"K+": "1 M", "Cl-": "1 M"})  # Debye length 0.30 nm
    message = refused(lambda: case(edl.Slit(height="100 um"), electrolyte=strong),
                      "geometry.height", "0.0001 m", "kappa*h", "from 0.001 to 10000")
    assert "kappa*h = 1.64" in message  # 50 um / 0.304 nm


def test_a_narrow_capillary_in_dilute_salt_is_refused() -> None:
    refused(lambda: case(edl.Capillary(radius="0.2 nm"), electrolyte=DILUTE), "geometry.radius", "2e-10 m",
            "kappa*a", "0.001")


@pytest.mark.parametrize(("kappa_size", "electrolyte"), [(1e-3 * (1 + 1e-12), DILUTE), (0.01, DILUTE),
                                                         (1000.0, KCL), (1e4 * (1 - 1e-12), KCL)])
@pytest.mark.parametrize("shape", ["slit", "capillary"])
def test_kappa_size_inside_the_limits_is_kept(kappa_size: float, electrolyte, shape: str) -> None:
    debye = electrolyte.debye_length(edl.Water())
    geometry = edl.Slit(height=2 * kappa_size * debye) if shape == "slit" else edl.Capillary(kappa_size * debye)
    assert case(geometry, electrolyte=electrolyte).geometry == geometry


@pytest.mark.parametrize(("kappa_size", "electrolyte"), [(0.999e-3, DILUTE), (1.001e4, KCL)])
def test_kappa_size_just_outside_is_refused(kappa_size: float, electrolyte) -> None:
    debye = electrolyte.debye_length(edl.Water())
    refused(lambda: case(edl.Slit(height=2 * kappa_size * debye), electrolyte=electrolyte),
            "geometry.height", "kappa*h")


@pytest.mark.parametrize("electrolyte", [KCL, edl.Electrolyte.from_ions({"K+": "0.1 mM", "Cl-": "0.1 mM"}, pH=3.5,
                                                                        water_ions=True), CACL2])
def test_the_edge_measures_kappa_h_as_the_solver_does(electrolyte: edl.Electrolyte) -> None:
    from edl_solver.inputs.domain import kappa_size

    built = case(edl.Slit(height="30 nm"), electrolyte=electrolyte, solvent=edl.Water("60 degC"))
    summary = edl.solve(built).summary
    assert kappa_size(built) == pytest.approx(summary["kappa_h"], rel=1e-12, abs=0.0)
    assert built.debye_length == pytest.approx(summary["debye_length"], rel=1e-12, abs=0.0)


# -- a given potential: |zeta| <= 15 kT/e at the case temperature ---------------------------------------------


@pytest.mark.parametrize(("zeta", "shown"), [(-50, "-50 V"), ("-5 V", "-5 V"), (np.float64(0.5), "0.5 V"),
                                             (-0.4, "-0.4 V")])
def test_a_zeta_beyond_15_kT_per_e_is_refused_with_the_limit_in_volts(zeta, shown: str) -> None:
    refused(lambda: case(wall=edl.Wall(zeta=zeta)), "wall.zeta", shown, "15 kT/e", "0.3854 V", "298.15 K")


def test_the_zeta_limit_follows_the_temperature() -> None:
    # -0.40 V is 15.6 kT/e at 25 degC but 13.1 kT/e at 80 degC
    refused(lambda: case(wall=edl.Wall(zeta=-0.40)), "wall.zeta")
    case(wall=edl.Wall(zeta=-0.40), solvent=edl.Water("80 degC"))


@pytest.mark.parametrize("model", ["pb", "dh"])
def test_the_zeta_limit_itself_is_kept(model: str) -> None:
    limit = 15 * thermal_voltage(298.15)
    case(wall=edl.Wall(zeta=-limit), model=model)
    case(wall=edl.Wall(zeta=limit * (1 + 1e-12)), model=model)
    refused(lambda: case(wall=edl.Wall(zeta=limit * 1.0001), model=model), "wall.zeta")


def test_the_top_wall_of_a_slit_is_named() -> None:
    refused(lambda: case(wall=(edl.Wall(zeta="-50 mV"), edl.Wall(zeta="-1 V"))), "wall.top.zeta", "-1 V")
    refused(lambda: case(wall=(edl.Wall(zeta="1 V"), edl.Wall(zeta="-1 mV"))), "wall.bottom.zeta", "1 V")


# -- a given charge: refused when its isolated wall would be beyond 15 kT/e --------------------------------------


def grahame_limit(electrolyte: edl.Electrolyte, kelvin: float, sign: float) -> float:
    """Charge density at zeta = sign * 15 kT/e of a wall alone in the electrolyte, nonlinear Poisson-Boltzmann:
    sigma = sign sqrt(2 eps kT N_A sum_i c_i (exp(-z_i e zeta / kT) - 1)) (Grahame 1947, Chem. Rev. 41, 441;
    from memory)."""
    solvent = edl.Water(kelvin)
    total = sum(ion.concentration * math.expm1(-ion.valence * sign * 15.0) for ion in electrolyte.ions)
    return sign * math.sqrt(2 * solvent.permittivity * BOLTZMANN * kelvin * AVOGADRO * total)


def test_the_symmetric_salt_limit_is_gouy_chapman() -> None:
    # z:z salt: sigma = sqrt(8 eps kT n) sinh(z e zeta / 2kT) (Gouy-Chapman, from memory); 1 mM KCl: 3.35 C/m^2
    solvent = edl.Water()
    n = 1.0 * AVOGADRO
    expected = math.sqrt(8 * solvent.permittivity * BOLTZMANN * 298.15 * n) * math.sinh(7.5)
    assert grahame_limit(KCL, 298.15, 1.0) == pytest.approx(expected, rel=1e-12)
    assert expected == pytest.approx(3.35, rel=0.01)


@pytest.mark.parametrize("model", ["pb", "dh", "steric"])
@pytest.mark.parametrize("electrolyte", [KCL, CACL2], ids=["KCl", "CaCl2"])
@pytest.mark.parametrize("sign", [-1.0, 1.0])
def test_a_charge_beyond_the_grahame_charge_at_15_kT_per_e_is_refused(model: str, electrolyte, sign: float) -> None:
    if model == "steric":
        electrolyte = edl.Electrolyte([edl.Ion(i.name, concentration=i.concentration, diameter="0.3 nm")
                                       for i in electrolyte.ions])
    limit = grahame_limit(electrolyte, 298.15, sign)
    case(wall=edl.Wall(charge_density=0.999 * limit), electrolyte=electrolyte, model=model)
    message = refused(lambda: case(wall=edl.Wall(charge_density=1.001 * limit), electrolyte=electrolyte, model=model),
                      "wall.charge_density", f"{1.001 * limit:.4g} C/m^2", f"{abs(limit):.4g} C/m^2", "15 kT/e")
    assert "Poisson-Boltzmann" in message


def test_the_charge_limit_holds_with_a_stern_layer_and_names_the_top_wall() -> None:
    top = edl.Wall(charge_density=-5.0, stern_capacitance=1.0)
    refused(lambda: case(wall=(edl.Wall(zeta=-0.05), top)), "wall.top.charge_density", "-5 C/m^2")
    refused(lambda: case(wall=edl.Wall(charge_density=np.float64(-5.0))), "wall.charge_density", "-5 C/m^2")


def test_a_gate_that_would_charge_its_wall_beyond_15_kT_per_e_is_refused() -> None:
    # 20 V behind 1 F/m^2 puts up to 20 C/m^2 on the wall (limit 3.35 C/m^2 at 1 mM KCl); 1 V behind 10 mF/m^2,
    # at most 0.01 C/m^2, holds the wall at a few kT/e and stays a valid case.
    refused(lambda: case(wall=edl.Wall(gate_voltage=20.0, gate_capacitance=1.0)), "wall.gate_voltage", "20 V",
            "15 kT/e")
    refused(lambda: case(wall=edl.Wall(gate_voltage="-20 V", gate_capacitance=1.0, stern_capacitance=5.0)),
            "wall.gate_voltage", "-20 V")
    case(wall=edl.Wall(gate_voltage="1 V", gate_capacitance="10 mF/m^2"))
    case(wall=edl.Wall(gate_voltage="0.3 V", gate_capacitance="1e6 F/m^2"))  # |V_g| <= 15 kT/e: zeta below it


def test_regulated_walls_are_not_checked() -> None:
    acid = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"}, pH=7)
    case(wall=edl.Wall(sites=(edl.Site(density="1000 nm^-2", pK=2.0),)), electrolyte=acid)


# -- the same refusals through sweeps, case files and flags -----------------------------------------------------


@pytest.mark.parametrize(("axes", "parts"), [
    ({"geometry.height": ["20 nm", 1e-12]}, ["axes['geometry.height']", "1e-12", "0.1 nm"]),
    ({"wall.zeta": ["-50 mV", "-5 V"]}, ["axes['wall.zeta']", "wall.zeta: -5 V", "15 kT/e"]),
])
def test_sweep_axes_are_checked_before_any_case_is_solved(axes, parts, tmp_path: Path) -> None:
    out = tmp_path / "sweep.h5"
    refused(lambda: edl.sweep(case(field="1 kV/m"), axes, path=out), *parts)
    assert not out.exists()


CASE_TOML = """\
field = "1 kV/m"

[geometry]
kind = "slit"
height = "20 nm"

[electrolyte]
ions = { "K+" = "1 mM", "Cl-" = "1 mM" }

[wall]
zeta = "-30 mV"
"""


@pytest.mark.parametrize(("old", "new", "parts"), [
    ('zeta = "-30 mV"', "zeta = -50", ["case.toml: wall.zeta: -50 V", "15 kT/e"]),
    ('zeta = "-30 mV"', 'zeta = "-5 V"', ["case.toml: wall.zeta: -5 V", "15 kT/e"]),
    ('height = "20 nm"', "height = 50", ["case.toml: geometry.height: 50", "1 m"]),
    ('zeta = "-30 mV"', "charge_density = -10", ["case.toml: wall.charge_density: -10 C/m^2", "15 kT/e"]),
])
def test_edl_solve_refuses_a_case_file_outside_the_domain(tmp_path: Path, old: str, new: str, parts) -> None:
    path = write(tmp_path, CASE_TOML.replace(old, new))
    out = tmp_path / "out.h5"
    code, stdout, err = run(["solve", str(path), "-o", str(out)])
    assert code == 2 and stdout == ""
    assert err.startswith("edl: error: ") and err.count("\n") == 1 and "Traceback" not in err, err
    for part in parts:
        assert part in err, err
    assert not out.exists()


@pytest.mark.parametrize(("flags", "parts"), [
    (["--slit", "50m"], ["--slit: '50m'", "1 m"]),
    (["--zeta", "-5V"], ["--zeta: -5 V", "15 kT/e"]),
    (["--top-zeta", "1V"], ["--top-zeta: 1 V", "15 kT/e"]),
])
def test_edl_solve_blames_the_flag_that_leaves_the_domain(tmp_path: Path, flags: list[str], parts) -> None:
    path = write(tmp_path, CASE_TOML)
    code, _, err = run(["solve", str(path), *flags, "-o", str(tmp_path / "out.h5")])
    assert code == 2 and err.count("\n") == 1 and "Traceback" not in err, err
    for part in parts:
        assert part in err, err
    assert "case.toml" not in err
