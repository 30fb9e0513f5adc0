"""Transport outputs: the conductance curve and its limits (``edl_solver.channel.conductance``), the figures
(``edl_solver.plot.transport``) and the ``edl transport`` command.

Conventions of ``edl_solver.channel.model``: x from the left reservoir (0) to the right one (L); Delta V = V(L) - V(0);
currents positive along +x; slit values per unit width.
"""

from __future__ import annotations

import contextlib
import io
import math
import re
import struct
from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import edl_solver as edl
from edl_solver.channel import model as ch
from edl_solver.channel.conductance import (
    channel_characteristics,
    conductance_curve,
    counterion_convection,
    crossover_concentration,
)
from edl_solver.cli import main
from edl_solver.constants import FARADAY, GAS_CONSTANT
from edl_solver.errors import InputError
from edl_solver.plot.transport import conductance_figure, iv_figure, pump_curve_figure

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"
SOLVENT = edl.Solvent(temperature=298.15, relative_permittivity=78.4, viscosity=0.89e-3)
RT = GAS_CONSTANT * 298.15
KCL = edl.Electrolyte.from_ions({"K+": "1 mM", "Cl-": "1 mM"})


def case_of(geometry: object, wall: object, **kwargs: object) -> edl.Case:
    return edl.Case(geometry=geometry, electrolyte=KCL, wall=wall, solvent=SOLVENT, **kwargs)


def run(argv: list[str]) -> tuple[int, str, str]:
    """Exit code, stdout and stderr of ``edl ARGV``."""
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        code = main(argv)
    return code, out.getvalue(), err.getvalue()


def assert_png(path: Path) -> None:
    header = path.read_bytes()[:24]
    assert header[:8] == PNG_SIGNATURE and header[12:16] == b"IHDR"
    width, height = struct.unpack(">II", header[16:24])
    assert width > 500 and height > 400
    assert path.stat().st_size > 20_000  # lines, markers and text, not an empty canvas


# -- the conductance curve against its limits ---------------------------------------------------------


def test_plateau_of_an_overlapped_fixed_charge_slit_is_the_counterion_conduction() -> None:
    """Counter-ions alone (c -> 0 in an overlapped channel): charge balance puts a charge -2 sigma per unit area
    of wall pair into K+, each conducting with the mobility e D/kT, so G L / W = 2 (e D_K / kT) |sigma| (derived;
    common practice). A 2 nm slit at 1 uM (kappa h = 0.003) with a weak charge, where the co-ions (~(c/c_K)^2)
    and the EO convection of the counter-ions (~sigma h kT / (3 eta e D) = 2.5e-4, see ``counterion_convection``)
    stay below 1e-3; at 1 mM the bulk dominates and the estimate fails."""
    sigma = -0.05e-3
    case = case_of(edl.Slit(height="2 nm"), edl.Wall(charge_density=sigma))
    curve = conductance_curve(case, [1e-3, 1.0])  # mol/m^3: 1 uM and 1 mM
    estimate = 2.0 * FARADAY * KCL.ions[0].diffusivity / RT * abs(sigma)
    assert float(curve["plateau_conduction"][0]) == pytest.approx(estimate, rel=1e-12)
    full = curve["conductance"].values
    assert float(curve["kappa_h"][0]) < 0.01
    assert abs(full[0] / estimate - 1.0) < 1e-3
    assert abs(full[1] / estimate - 1.0) > 1.0


@pytest.mark.parametrize("geometry", [edl.Slit(height="10 nm"), edl.Capillary(radius="5 nm")],
                         ids=["slit", "capillary"])
def test_strong_charge_plateau_needs_the_electroosmotic_convection(geometry: object) -> None:
    """At -5 mC/m^2 the counter-ions' EO convection adds 7-10 % to their conduction (Bikerman's correction to
    surface conductance); the counter-ion-only closed forms (Engström & Wennerström 1978 for the slit, the radial
    Liouville solution for the capillary; ``counterion_convection``) make the limit exact: at kappa h ~ 0.02 the
    full model agrees with conduction + convection to the co-ion share, ~1e-8."""
    curve = conductance_curve(case_of(geometry, edl.Wall(charge_density="-5 mC/m^2")), [1e-3, 10.0])
    full = curve["conductance"].values
    assert abs(full[0] / float(curve["plateau_estimate"][0]) - 1.0) < 1e-6
    assert full[0] / float(curve["plateau_conduction"][0]) - 1.0 > 0.05


def test_counterion_convection_tends_to_its_weak_charge_limits() -> None:
    """Weak charge: the counter-ions are uniform, phi is parabolic and (eps^2/eta) int |grad phi|^2 dA gives
    2 sigma^2 h / (3 eta) per unit width of a slit of half-height h, and pi sigma^2 a^2 / (2 eta) for a capillary of
    radius a (derived by hand); the first correction is of relative order h / l_GC ~ 1e-8 here."""
    sigma = -1e-6
    slit = case_of(edl.Slit(height="20 nm"), edl.Wall(charge_density=sigma))
    capillary = case_of(edl.Capillary(radius="10 nm"), edl.Wall(charge_density=sigma))
    eta = SOLVENT.viscosity
    assert counterion_convection(slit, sigma) == pytest.approx(2.0 * sigma**2 * 10e-9 / (3.0 * eta), rel=1e-6)
    assert counterion_convection(capillary, sigma) == pytest.approx(math.pi * sigma**2 * 1e-16 / (2.0 * eta),
                                                                    rel=1e-6)
    assert math.isnan(counterion_convection(case_of(edl.Slit(height="20 nm"), edl.Wall(charge_density=sigma),
                                                    model="dh"), sigma))


def test_bulk_line_of_a_wide_channel_at_high_concentration() -> None:
    """A 2 um slit at 100 mM (kappa h ~ 1000, zeta -20 mV): the double layers' share of the current (~1e-4) is
    below 1e-3, so G = K H with K = (F^2/RT) sum z^2 D c (Nernst-Einstein, common practice); at 0.01 mM
    (kappa h ~ 10) surface conduction is 2 % and the bulk line fails."""
    case = case_of(edl.Slit(height="2 um"), edl.Wall(zeta="-20 mV"))
    curve = conductance_curve(case, [0.01, 100.0])
    bulk = FARADAY**2 / RT * sum(ion.diffusivity for ion in KCL.ions) * 100.0 * 2e-6
    assert float(curve["bulk_conductance"][1]) == pytest.approx(bulk, rel=1e-12)
    full = curve["conductance"].values
    assert abs(full[1] / bulk - 1.0) < 1e-3
    assert full[0] / float(curve["bulk_conductance"][0]) - 1.0 > 1e-2
    # the bulk line is the thin-layer model's conductance
    solved = edl.solve(case)
    assert float(curve["bulk_conductance"][0]) * 100.0 / 0.01 == pytest.approx(
        solved.summary["thin_layer_conductance_per_length"] * 100.0, rel=1e-12)


def test_a_channel_length_divides_the_curve_and_sets_its_unit() -> None:
    case = case_of(edl.Capillary(radius="20 nm"), edl.Wall(zeta="-30 mV"))
    per_length = conductance_curve(case, ["0.1 mM", "1 mM", "10 mM"])
    channel = conductance_curve(case, ["0.1 mM", "1 mM", "10 mM"], length="4 um")
    assert per_length["conductance"].attrs["units"] == "S*m" and channel["conductance"].attrs["units"] == "S"
    for name in ("conductance", "bulk_conductance", "plateau_conduction", "plateau_estimate"):
        np.testing.assert_allclose(channel[name].values, per_length[name].values / 4e-6, rtol=1e-12)
    assert channel.attrs["length_m"] == pytest.approx(4e-6)
    # a fixed zeta: the wall charge, and so the counter-ion estimate, falls with the concentration
    sigma = np.abs(per_length["wall_charge_density"].values)
    assert np.all(np.diff(sigma) > 0.0)


def test_crossover_concentration_of_a_slit() -> None:
    """Where K(c) H meets 2 mu |sigma|: for KCl, c* = 2 D_K |sigma| / (F (D_K + D_Cl) H) (derived). The estimate
    adds the EO convection, a constant factor at fixed charge, which moves c* by that factor; the bulk line is
    straight and the estimate flat in log-log, so the interpolated crossing is exact."""
    sigma, height = -2e-3, 50e-9
    case = case_of(edl.Slit(height=height), edl.Wall(charge_density=sigma))
    curve = conductance_curve(case, np.geomspace(0.01, 100.0, 13))
    d_k, d_cl = (ion.diffusivity for ion in KCL.ions)
    conduction_only = 2.0 * d_k * abs(sigma) / (FARADAY * (d_k + d_cl) * height)
    factor = float(curve["plateau_estimate"][0] / curve["plateau_conduction"][0])
    assert 1.1 < factor < 1.3  # the convective share of a -2 mC/m^2, 50 nm slit
    assert crossover_concentration(curve) == pytest.approx(conduction_only * factor, rel=1e-9)


@pytest.mark.parametrize(("concentrations", "length", "field"), [
    (["1 mM"], None, "concentrations"),
    (["1 mM", "-1 mM"], None, "concentrations[1]"),
    (["1 mM", "1 mm"], None, "concentrations[1]"),
    (["1 mM", "2 mM"], "-5 um", "length"),
    (["1 mM", "2 mM"], "5 mV", "length"),
])
def test_bad_curve_inputs_raise_one_line_input_errors(concentrations: list[str], length: str | None,
                                                      field: str) -> None:
    case = case_of(edl.Slit(height="20 nm"), edl.Wall(zeta="-30 mV"))
    with pytest.raises(InputError, match=re.escape(field)) as error:
        conductance_curve(case, concentrations, length)
    assert "\n" not in str(error.value)


def test_channel_characteristics_of_an_uncharged_channel_follow_free_solution_electrodiffusion() -> None:
    """Uncharged channel, 1:1 salt: the I-V curve is Planck's electroneutral solution (``planck_current``,
    also checked in tests/test_channel.py), its zero the Henderson potential, and the power a linear source
    delivers peaks at V_oc / 2 (common practice)."""
    case = edl.Case(geometry=edl.Slit(height="50 nm"), electrolyte=edl.Electrolyte.from_ions({"Na+": 1, "Cl-": 1}),
                    wall=edl.Wall(zeta=0.0), solvent=SOLVENT)
    data = channel_characteristics(ch.Channel(case, "5 um", "1 mM", "10 mM"), np.linspace(-0.1, 0.1, 9))
    assert np.all(data["status"].values == 0)
    scale = np.max(np.abs(data["current"].values))
    assert np.max(np.abs(data["current"].values - data["bulk_current"].values)) < 1e-6 * scale
    assert float(data["membrane_potential"]) == pytest.approx(float(data["henderson_potential"]), rel=1e-6)
    assert float(data["short_circuit_current"]) == pytest.approx(float(data["current"].sel(voltage=0.0)), rel=1e-9)
    assert float(data["voltage_at_max_power"]) == pytest.approx(float(data["membrane_potential"]) / 2, rel=1e-3)
    slope = -np.polyfit(data["voltage"].values, data["current"].values, 1)[0]
    assert float(data["conductance"]) == pytest.approx(slope, rel=1e-6)
    assert data["conductance"].attrs["units"] == "S/m" and data["max_power"].attrs["units"] == "W/m"


# -- figures -------------------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def charged_slit() -> edl.Result:
    return edl.solve(case_of(edl.Slit(height="50 nm"), edl.Wall(charge_density="-2 mC/m^2"), field="10 kV/m"))


@pytest.mark.parametrize("length", [None, "10 um"])
def test_pump_curve_figure_is_a_png_and_leaves_pyplot_alone(charged_slit: edl.Result, tmp_path: Path,
                                                            length: str | None) -> None:
    import matplotlib
    import matplotlib.pyplot as plt

    figures, backend = plt.get_fignums(), matplotlib.get_backend()
    path = pump_curve_figure(charged_slit, tmp_path / "pump.png", length=length)
    assert_png(path)
    assert plt.get_fignums() == figures and matplotlib.get_backend() == backend
    assert [p.name for p in tmp_path.iterdir()] == ["pump.png"]


def test_pump_curve_of_a_capillary_and_its_refusals(tmp_path: Path) -> None:
    capillary = edl.solve(case_of(edl.Capillary(radius="25 nm"), edl.Wall(zeta="-50 mV"), field="1 kV/m"))
    assert_png(pump_curve_figure(capillary, tmp_path / "pump.png", length="5 um"))
    still = edl.solve(case_of(edl.Slit(height="50 nm"), edl.Wall(zeta="-50 mV")))
    with pytest.raises(InputError, match="no field"):
        pump_curve_figure(still, tmp_path / "still.png")
    with pytest.raises(InputError, match="length"):
        pump_curve_figure(capillary, tmp_path / "bad.png", length="-1 um")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["pump.png"]


def test_conductance_figures(tmp_path: Path) -> None:
    slit = case_of(edl.Slit(height="20 nm"), edl.Wall(charge_density="-2 mC/m^2"))
    assert_png(conductance_figure(conductance_curve(slit, np.geomspace(1e-3, 100, 9)), tmp_path / "slit.png"))
    # two different walls: the convection has no closed form (NaN), the conduction estimate stays
    pair = case_of(edl.Slit(height="20 nm"), (edl.Wall(charge_density="-2 mC/m^2"), edl.Wall(zeta="-20 mV")))
    curve = conductance_curve(pair, np.geomspace(1e-2, 10, 5), length="2 um")
    assert curve["wall_charge_density"].dims == ("concentration", "wall")
    assert np.all(np.isnan(curve["plateau_estimate"].values)) and np.all(curve["plateau_conduction"].values > 0)
    assert_png(conductance_figure(curve, tmp_path / "pair.png"))
    with pytest.raises(InputError, match="conductance curve"):
        conductance_figure(curve.drop_vars("bulk_conductance"), tmp_path / "bad.png")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["pair.png", "slit.png"]


def test_iv_figures(tmp_path: Path) -> None:
    case = case_of(edl.Slit(height="10 nm"), edl.Wall(charge_density="-5 mC/m^2"))
    data = channel_characteristics(ch.Channel(case, "2 um", "0.1 mM", "1 mM"), np.linspace(-0.1, 0.1, 11))
    assert_png(iv_figure(data, tmp_path / "iv.png"))
    # a bare current_voltage dataset (no landmarks: they are interpolated) and equal reservoirs
    bare = ch.current_voltage(ch.Channel(case, "2 um", "1 mM", "1 mM"), [-0.1, 0.0, 0.1])
    assert_png(iv_figure(bare, tmp_path / "uniform.png"))
    with pytest.raises(InputError, match="I-V curve"):
        iv_figure(data.drop_vars("current"), tmp_path / "bad.png")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["iv.png", "uniform.png"]


# -- the edl transport command ------------------------------------------------------------------------

SLIT = ["--slit", "20nm", "--ion", "K+=1mM", "--ion", "Cl-=1mM", "--charge-density", "-2mC/m^2", "--field", "10kV/m"]


@pytest.fixture(scope="module")
def full_run(tmp_path_factory: pytest.TempPathFactory) -> tuple[Path, int, str, str]:
    folder = tmp_path_factory.mktemp("transport")
    argv = ["transport", *SLIT, "--length", "5um", "--left", "0.1mM", "--right", "1mM", "--iv", "-100mV:100mV:11",
            "--iv-figure", str(folder / "iv.png"), "--conductance", "0.01mM:100mM:6", "--conductance-figure",
            str(folder / "conductance.png"), "--pump-figure", str(folder / "pump.png"), "-o", str(folder / "out.h5")]
    return (folder, *run(argv))


def test_transport_writes_the_result_with_its_groups_and_the_figures(full_run: tuple[Path, int, str, str]) -> None:
    folder, code, out, err = full_run
    assert (code, err) == (0, "")
    assert sorted(p.name for p in folder.iterdir()) == ["conductance.png", "iv.png", "out.h5", "pump.png"]
    for name in ("conductance.png", "iv.png", "pump.png"):
        assert_png(folder / name)
    path = folder / "out.h5"
    result = edl.load(path)
    assert result.summary["wall_charge_density"] == pytest.approx(-2e-3, rel=1e-9)
    with xr.open_dataset(path, engine="h5netcdf", group="conductance") as curve:
        assert curve.sizes["concentration"] == 6 and np.all(curve["status"].values == 0)
        assert curve["conductance"].attrs["units"] == "S/m"  # of the 5 um channel, per unit width
        expected = conductance_curve(result.case, np.geomspace(0.01, 100.0, 6), length="5 um")
        np.testing.assert_allclose(curve["conductance"].values, expected["conductance"].values, rtol=1e-12)
    with xr.open_dataset(path, engine="h5netcdf", group="channel") as channel:
        assert channel.sizes["voltage"] == 11 and np.all(channel["status"].values == 0)
        assert channel["current"].attrs["units"] == "A/m"
        shown = re.search(r"membrane potential V\(right\) - V\(left\) at I = 0\s+([+-]\d+\.\d+) mV", out)
        assert shown is not None, out
        assert float(shown.group(1)) * 1e-3 == pytest.approx(float(channel["membrane_potential"]), abs=1e-7)
    with xr.open_dataset(path, engine="h5netcdf", group="transport") as transport:
        assert transport["response_matrix"].shape == (3, 3)
    for text in ("Transport and energy conversion", "Conductance against salt concentration", "Finite channel",
                 "short-circuit current", "maximum osmotic power", "efficiency at maximum power", "µA/m", "nW/m"):
        assert text in out, text


def test_henderson_membrane_potential_of_an_uncharged_channel_is_printed(tmp_path: Path) -> None:
    """Uncharged channel, NaCl, left 1 mM (x = 0) | right 10 mM (x = L), no flow: electroneutrality and zero current
    make J+ = J-, with J_i = -D_i (c' + z_i c F V'/RT), so V' = -(RT/F) (D+ - D-)/(D+ + D-) (ln c)' and
    V(L) - V(0) = -(kT/e) (D+ - D-)/(D+ + D-) ln(c_R/c_L) (Henderson 1907; Planck 1890). Na+ is slower than Cl-,
    so the right (concentrated) side ends up positive: about +12.3 mV."""
    code, out, err = run(["transport", "--slit", "50nm", "--ion", "Na+=1mM", "--ion", "Cl-=1mM", "--zeta", "0mV",
                          "--temperature", "25degC", "--length", "5um", "--left", "1mM", "--right", "10mM"])
    assert (code, err) == (0, "")
    na, cl = (ion.diffusivity for ion in edl.Electrolyte.from_ions({"Na+": 1, "Cl-": 1}).ions)
    henderson = -RT / FARADAY * (na - cl) / (na + cl) * math.log(10.0)
    shown = re.search(r"membrane potential V\(right\) - V\(left\) at I = 0\s+([+-]\d+\.\d+) mV", out)
    assert shown is not None, out
    assert henderson > 0.0
    assert float(shown.group(1)) * 1e-3 == pytest.approx(henderson, rel=1e-3)
    assert list(tmp_path.iterdir()) == []  # nothing asked, nothing written


BAD = {
    "iv of one point": (["--length", "5um", "--iv", "-0.1V:0.1V:1"], ["--iv", "'1'", "from 2"]),
    "iv not a range": (["--length", "5um", "--iv", "-0.1V:0.1V"], ["--iv", "FROM:TO:N"]),
    "iv in metres": (["--length", "5um", "--iv", "1nm:2nm:3"], ["--iv FROM", "'1nm'", "electric potential"]),
    "iv without length": (["--iv", "-0.1V:0.1V:5"], ["--iv", "--length"]),
    "left without right": (["--length", "5um", "--left", "1mM"], ["--left", "without --right"]),
    "right without left": (["--length", "5um", "--right", "1mM"], ["--right", "without --left"]),
    "reservoirs without length": (["--left", "1mM", "--right", "2mM"], ["--left", "--length"]),
    "negative length": (["--length", "-5um"], ["--length", "'-5um'", "not positive"]),
    "length in volts": (["--length", "5V"], ["--length", "'5V'", "length"]),
    "negative reservoir": (["--length", "5um", "--left", "-1mM", "--right", "1mM"], ["--left", "not positive"]),
    "millimetre reservoir": (["--length", "5um", "--left", "1mm", "--right", "1mM"], ["--left", "'1mm'", "metre"]),
    "iv figure without iv": (["--length", "5um", "--iv-figure", "iv.png"], ["--iv-figure", "needs --iv"]),
    "conductance figure alone": (["--conductance-figure", "c.png"], ["--conductance-figure", "needs --conductance"]),
    "zero concentration": (["--conductance", "0mM:1mM:5"], ["--conductance", "not positive"]),
    "equal ends": (["--conductance", "1mM:1mM:5"], ["--conductance", "two different values"]),
    "same file twice": (["-o", "same.h5", "--pump-figure", "same.h5"], ["--pump-figure", "'same.h5'", "-o"]),
    "unknown flag": (["--lenght", "5um"], ["--lenght"]),
}


@pytest.mark.parametrize("name", BAD)
def test_bad_transport_inputs_exit_2_with_one_line_and_no_files(tmp_path: Path, monkeypatch: pytest.MonkeyPatch,
                                                               name: str) -> None:
    monkeypatch.chdir(tmp_path)
    flags, parts = BAD[name]
    code, out, err = run(["transport", *SLIT, *flags, "-o" if "-o" not in flags else "--figure", "result.h5"])
    assert code == 2, err
    assert err.startswith("edl: error: ") and err.count("\n") == 1 and "Traceback" not in err, err
    for part in parts:
        assert part in err, f"{part!r} not in {err!r}"
    assert out == ""
    assert list(tmp_path.iterdir()) == []


def test_pump_figure_needs_a_field(tmp_path: Path) -> None:
    code, out, err = run(["transport", *SLIT[:-2], "--pump-figure", str(tmp_path / "pump.png")])
    assert code == 2 and "--pump-figure" in err and "--field" in err and out == ""
    assert list(tmp_path.iterdir()) == []


def test_a_failed_group_write_leaves_no_file(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    """The groups go into the same temporary file as the Result: a failure there leaves neither the final file
    nor a temporary one, and exits 1 after the report."""
    def full_disk(self: xr.Dataset, *args: object, **kwargs: object) -> None:
        raise OSError(28, "No space left on device", str(args[0]))

    monkeypatch.setattr(xr.Dataset, "to_netcdf", full_disk)
    code, out, err = run(["transport", *SLIT, "--length", "2um", "-o", str(tmp_path / "out.h5")])
    assert code == 1 and "No space left on device" in err and "Finite channel" in out
    assert f"cannot write {tmp_path / 'out.h5'}:" in err  # the file asked for, not the temporary one
    assert list(tmp_path.iterdir()) == []


def test_transport_help_has_examples_and_says_why_it_is_a_command() -> None:
    code, out, err = run(["transport", "--help"])
    assert (code, err) == (0, "")
    assert out.startswith("usage: edl transport") and "examples:" in out and "why a command of its own" in out
    code, out, _ = run(["--help"])
    assert code == 0 and "transport" in out
