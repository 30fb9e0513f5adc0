"""``edl transport``: a case solved as ``edl solve`` does, then what a lab measures on a channel - the
electroosmotic pump curve, the conductance against salt concentration and, for a channel of a given length
between two reservoirs, its I-V curve, membrane potential and osmotic power.

Everything is checked before the first solve (the case, the flags against each other, the output paths);
the files are written last, each atomically. The printed lines are in :mod:`edl_solver.cli.transport_text`.
"""

from __future__ import annotations

import argparse
from pathlib import Path
from typing import Any

from edl_solver.cli.case_flags import CASE_VALUE_FLAGS, add_case_flags, case_from_args
from edl_solver.cli.exit_codes import EXIT_OK, EXIT_WRITE_FAILED, fail
from edl_solver.cli.output_files import OUTPUT_FLAGS, add_output_flags, writable
from edl_solver.cli.transport_channel import apply_channel_section, channel_section, make_channel
from edl_solver.cli.transport_outputs import add_channel_outputs
from edl_solver.cli.transport_rectification import FLAGS as RECTIFICATION_FLAGS
from edl_solver.cli.transport_rectification import (
    add_rectification_flags,
    rectification_dataset,
    rectification_lines,
    rectification_plan,
    write_rectification_figure,
)
from edl_solver.cli.transport_text import channel_lines, conductance_lines, flags_line

__all__ = ["VALUE_FLAGS", "add_transport_command", "run_transport_command"]

#: Flags of ``edl transport`` that take a value.
VALUE_FLAGS = CASE_VALUE_FLAGS | frozenset(OUTPUT_FLAGS) | frozenset(
    {"--length", "--pump-figure", "--conductance", "--conductance-figure", "--iv", "--left", "--right",
     "--iv-figure", "--size", "--width", "--channels", "--voltage", "--pressure-difference", "--access-resistance"}
) | RECTIFICATION_FLAGS

_EPILOG = """\
examples:
  edl transport case.toml                                  # the report, with its transport block
  edl transport case.toml --length 10um --pump-figure pump.png
  edl transport case.toml --conductance 0.001mM:100mM:30 --conductance-figure conductance.png
  edl transport case.toml --length 5um --left 1mM --right 10mM --iv -150mV:150mV:31 \\
      --iv-figure iv.png -o channel.h5
  edl transport --slit 1um --ion K+=1mM --ion Cl-=1mM --zeta -50mV --length 1cm --width 100um \\
      --channels 20 --voltage 100V --pressure-difference 100mbar --access-resistance on   # a device
  edl transport --slit 20nm --ion K+=1mM --ion Cl-=1mM --charge-density -5mC/m^2 --length 2um \\
      --left 0.1mM --right 1mM                             # membrane potential and osmotic power

why a command of its own: 'edl solve' answers for one cross-section (one solve, milliseconds);
'edl transport' answers for a whole channel as a lab measures it - a length, two reservoirs, curves
over voltage or concentration - which takes from tens to hundreds of solves. Its case flags and
report are those of 'edl solve'.

--length L makes a finite channel: its conductance and, with --left C and --right C (the
reservoirs' concentrations of the first ion; both or neither, default the case's), its membrane
potential, short-circuit current, maximum osmotic power and efficiency. --iv V1:V2:N adds its I-V
curve at N voltages V(right) - V(left), evenly spaced. --conductance C1:C2:N solves the section at
N concentrations, evenly spaced in log (per unit length, or of the channel with --length).
--size A:B makes the channel tapered: radius (capillary) or height (slit) A at x = 0 and B at x = L,
linear between (a cone); --rectification prints |I(+V)/I(-V)| at the positive voltages of --iv:
  edl transport --capillary 5nm --ion K+=10mM --ion Cl-=10mM --charge-density -20mC/m^2 --length 1um \\
      --size 5nm:40nm --iv -500mV:500mV:11 --rectification --iv-figure cone.png
A case file's [channel] section gives the same channel (its keys: length, left, right, size as a pair,
a table or a CSV file, iv = { start, stop, count }, rectification, access_resistance, width, points,
size_points, wall_points, concentration_span, wall_profile, [[channel.wall_segments]]; see
examples/conical_pore.toml); each flag given replaces its key (--length length, --left left, --right
right, --size size, --iv iv, --width width, --access-resistance access_resistance, --rectification
turns rectification on):
  edl transport examples/conical_pore.toml -o pore.h5 --iv-figure pore.png
--rectification-curve C1:C2:N: the ratio against concentration, both reservoirs at each c, at
--rectification-voltage V (default the largest |V| of --iv); --rectification-figure PNG draws it.
A device: --width W (of each slit), --channels N (in parallel), --voltage V and --pressure-difference
DP (e.g. 10V, 100mbar, -1bar; both as V(right) - V(left), p(right) - p(left)) print its flow rate in
uL/min or nL/min, current and conductance, its pump curve and stall pressure at V and the streaming
potential at DP (needs --length). --access-resistance on adds each end's access resistance: 1/(4 K a)
for a capillary (Hall 1975), (ln(8W/H) - 1)/(pi K W) for a slit of width W.
-o OUT.h5 holds the result (as 'edl solve' writes it, with its group "transport"), the group
"conductance" with --conductance and the group "channel" with --length:
  xarray.open_dataset("OUT.h5", engine="h5netcdf", group="channel")
"""


def add_transport_command(commands: Any) -> None:
    """Add ``transport`` to the sub-parsers ``commands`` (its ``run`` is :func:`run_transport_command`)."""
    transport = commands.add_parser(
        "transport", help="transport coefficients, conductance curve and a finite channel between reservoirs",
        allow_abbrev=False, formatter_class=argparse.RawDescriptionHelpFormatter, epilog=_EPILOG,
        description="Solve a case as 'edl solve' does, then what a lab measures on a channel: the\n"
                    "electroosmotic pump curve, the conductance against salt concentration and, for a channel\n"
                    "of a given length between two reservoirs, its I-V curve, membrane potential and osmotic\n"
                    "power. Prints the report and writes the figures and the result file asked for.")
    transport.add_argument("case", nargs="?", metavar="CASE.toml", help="case file (see 'edl demo --print-case')")
    add_output_flags(transport, result_default=None, figure_default=None)
    channel = transport.add_argument_group("finite channel")
    channel.add_argument("--length", metavar="L", help="channel length, e.g. 10um")
    channel.add_argument("--left", metavar="C", help="salt concentration of the left reservoir (x = 0), e.g. 1mM "
                                                     "(of the first ion; needs --right and --length)")
    channel.add_argument("--right", metavar="C", help="salt concentration of the right reservoir (x = L), e.g. 10mM")
    channel.add_argument("--iv", metavar="V1:V2:N", help="I-V curve at N voltages V(right) - V(left) from V1 to V2, "
                                                         "e.g. -150mV:150mV:31 (needs --length)")
    channel.add_argument("--iv-figure", metavar="PNG", help="write a figure of the I-V curve (needs --iv)")
    channel.add_argument("--size", metavar="A:B", help="a tapered channel: its radius (capillary) or height (slit) "
                                                       "A at x = 0 and B at x = L, linear between, e.g. 5nm:40nm "
                                                       "(needs --length)")
    channel.add_argument("--rectification", action="store_true",
                         help="print |I(+V)/I(-V)| at the positive voltages of --iv (needs --iv)")
    add_rectification_flags(channel)
    _add_device_flags(transport)
    curves = transport.add_argument_group("pump curve and conductance curve")
    curves.add_argument("--pump-figure", metavar="PNG",
                        help="write the linear EO pump curve at the case's field, full and thin-layer model "
                             "(back pressure over --length, or per unit length)")
    curves.add_argument("--conductance", metavar="C1:C2:N",
                        help="conductance at N salt concentrations from C1 to C2, evenly spaced in log, e.g. "
                             "0.001mM:100mM:30")
    curves.add_argument("--conductance-figure", metavar="PNG",
                        help="write the conductance curve, log-log, with the bulk line and the counter-ion plateau "
                             "(needs --conductance)")
    add_case_flags(transport)
    transport.set_defaults(run=run_transport_command)


def _add_device_flags(transport: Any) -> None:
    device = transport.add_argument_group("device: channels in parallel, applied voltage and pressure (need --length)")
    device.add_argument("--width", metavar="W", help="width of each slit, e.g. 100um (at least ten heights; slits "
                                                     "only): device values in uL/min, A, S instead of per metre")
    device.add_argument("--channels", metavar="N", help="number of identical channels in parallel (default 1)")
    device.add_argument("--voltage", metavar="V", help="applied voltage V(right) - V(left), e.g. 100V: the device's "
                                                       "flow, current, pump curve and stall pressure")
    device.add_argument("--pressure-difference", metavar="DP",
                        help="pressure difference p(right) - p(left), e.g. 100mbar or -1bar: the flow it drives and "
                             "the streaming potential")
    device.add_argument("--access-resistance", choices=("on", "off"), default=None,
                        help="add each end's access resistance in series (capillary: Hall 1975; slit: needs "
                             "--width); default off")


def _device_plan(args: argparse.Namespace, case: Any, plan: dict[str, Any], file_keys: frozenset[str]) -> None:
    """The device flags, checked: plan["device"] = (channels, voltage, dp) when any is given; plan["width"]. A
    width or access resistance from the case file's [channel] (``file_keys``) is the channel's, not a device's."""
    from edl_solver.errors import InputError
    from edl_solver.inputs.units import to_si

    given = {flag: value for flag, value in (("--width", args.width), ("--channels", args.channels),
                                             ("--voltage", args.voltage),
                                             ("--pressure-difference", args.pressure_difference))
             if value is not None and flag.strip("-") not in file_keys}
    if args.access_resistance == "on" and "access_resistance" not in file_keys:
        given.setdefault("--access-resistance", "on")
    plan["device"], plan["width"] = None, None
    if not given:
        if args.width is not None:  # the file's, checked there (Channel checks it against the heights)
            plan["width"] = _positive(args.width, "--width", "m", "a slit width, e.g. 100um")
        return
    first = next(iter(given))
    if plan["length"] is None:
        raise InputError(f"{first}: needs --length, the length of the channels, expected e.g. --length 1cm")
    slit = case.geometry.kind == "slit"
    if args.width is not None:
        if not slit:
            raise InputError(f"--width: {args.width!r} for a {case.geometry.kind}, expected no --width (a width "
                             "belongs to a slit)")
        plan["width"] = _positive(args.width, "--width", "m", "a slit width, e.g. 100um")
        from edl_solver.channel.access import SLIT_MIN_ASPECT

        if plan["width"] < SLIT_MIN_ASPECT * case.geometry.height:
            raise InputError(f"--width: {args.width!r} is less than {SLIT_MIN_ASPECT:g} times the slit height, "
                             f"expected at least {SLIT_MIN_ASPECT * case.geometry.height:.4g} m (the per-width "
                             "section assumes W >> H)")
    elif slit:
        raise InputError(f"{first}: a slit device needs --width, the width of each slit, expected e.g. --width 100um")
    count = (args.channels or "1").strip()
    if not count.isdigit() or int(count) < 1:
        raise InputError(f"--channels: {args.channels!r} is not allowed, expected a whole number of channels, "
                         "at least 1")
    voltage = to_si(args.voltage, "V", "--voltage") if args.voltage is not None else 0.0
    dp = to_si(args.pressure_difference, "Pa", "--pressure-difference") if args.pressure_difference is not None \
        else 0.0
    plan["device"] = (int(count), voltage, dp)


#: Most points of an I-V or conductance curve (each one or more solves).
_MOST_POINTS = 1000


def _parse_range(text: str, flag: str, unit: str, log: bool) -> list[float]:
    """``FROM:TO:N`` -> N values (SI) from FROM to TO, evenly spaced (in log when ``log``)."""
    import numpy as np

    from edl_solver.errors import InputError
    from edl_solver.inputs.units import to_si

    example = "0.001mM:100mM:30" if log else "-150mV:150mV:31"
    parts = text.split(":")
    if len(parts) != 3 or not all(part.strip() for part in parts):
        raise InputError(f"{flag}: {text!r} is not FROM:TO:N, expected e.g. {flag} {example}")
    low, high = (to_si(part.strip(), unit, f"{flag} {name}") for part, name in zip(parts[:2], ("FROM", "TO")))
    count = parts[2].strip()
    if not count.isdigit() or not 2 <= int(count) <= _MOST_POINTS:
        raise InputError(f"{flag}: N {count!r} is not allowed, expected a whole number from 2 to {_MOST_POINTS}")
    if low == high:
        raise InputError(f"{flag}: FROM and TO are both {parts[0].strip()!r}, expected two different values")
    if log:
        if not (low > 0.0 and high > 0.0):
            raise InputError(f"{flag}: {text!r} has a concentration that is not positive, expected FROM and TO "
                             "above zero")
        return [float(v) for v in np.geomspace(low, high, int(count))]
    return [float(v) for v in np.linspace(low, high, int(count))]


def _positive(value: str, flag: str, unit: str, what: str) -> float:
    from edl_solver.inputs.units import to_positive_si

    return to_positive_si(value, unit, flag, what)


def _transport_plan(args: argparse.Namespace, case: Any, file_keys: frozenset[str] = frozenset()) -> dict[str, Any]:
    """Check the transport flags against each other and the case; nothing is solved or written yet. ``file_keys``:
    the flags set from the case file's [channel] (``transport_channel.apply_channel_section``)."""
    from edl_solver.channel.conductance import cases_at
    from edl_solver.errors import InputError

    plan: dict[str, Any] = {"length": None, "reservoirs": None, "voltages": None, "concentrations": None}
    for flag, value, needs, needed in (("--conductance-figure", args.conductance_figure, "--conductance",
                                        args.conductance), ("--iv-figure", args.iv_figure, "--iv", args.iv)):
        if value is not None and needed is None:
            raise InputError(f"{flag}: needs {needs} too, expected e.g. {needs} "
                             f"{'0.001mM:100mM:30' if needs == '--conductance' else '-150mV:150mV:31'}")
    if (args.left is None) != (args.right is None):
        given, missing = ("--left", "--right") if args.left is not None else ("--right", "--left")
        raise InputError(f"{given}: given without {missing}, expected both reservoir concentrations (or neither, "
                         "for reservoirs at the case's concentration)")
    if args.length is None:
        for flag, value in (("--left", args.left), ("--iv", args.iv), ("--size", args.size)):
            if value is not None:
                raise InputError(f"{flag}: needs --length, the length of the channel, expected e.g. --length 10um")
    else:
        plan["length"] = _positive(args.length, "--length", "m", "a channel length, e.g. 10um")
        first = case.electrolyte.ions[0].concentration
        plan["reservoirs"] = (first, first) if args.left is None else (
            _positive(args.left, "--left", "mol/m^3", "a concentration, e.g. 1mM"),
            _positive(args.right, "--right", "mol/m^3", "a concentration, e.g. 10mM"))
        cases_at(case, list(plan["reservoirs"]))  # an electrolyte that cannot be scaled fails here, not later
    plan["size"] = _size_pair(args.size, case) if args.size is not None else None
    plan["varies"] = plan["size"] is not None or "size" in file_keys  # along x: a shape from the flag or the file
    if args.iv is not None:
        plan["voltages"] = _parse_range(args.iv, "--iv", "V", log=False)
    plan["rectification"] = _rectification_voltages(args.rectification, plan["voltages"])
    plan["rectification_curve"] = rectification_plan(args, plan)
    if args.conductance is not None:
        plan["concentrations"] = _parse_range(args.conductance, "--conductance", "mol/m^3", log=True)
        cases_at(case, plan["concentrations"][:1])
    _device_plan(args, case, plan, file_keys)
    if args.pump_figure is not None and case.field == 0.0:
        raise InputError("--pump-figure: the case has no field, expected --field E (e.g. --field 10kV/m) or a "
                         "field in the case file")
    return plan


def _size_pair(text: str, case: Any) -> tuple[float, float]:
    """``A:B`` -> the sizes (m) at x = 0 and x = L, checked as ``Channel(size=...)`` checks them."""
    from edl_solver.channel.shape import make_shape
    from edl_solver.errors import InputError

    parts = text.split(":")
    if len(parts) != 2 or not all(part.strip() for part in parts):
        raise InputError(f"--size: {text!r} is not A:B, expected the size at x = 0 and at x = L, e.g. --size 5nm:40nm")
    try:
        shape = make_shape(tuple(part.strip() for part in parts), 1.0, case.geometry.kind)
    except InputError as error:
        raise InputError(f"--size: {text!r} is not allowed ({error}), expected two positive sizes, e.g. "
                         "--size 5nm:40nm") from None
    return shape.ends


def _rectification_voltages(asked: bool, voltages: list[float] | None) -> list[float] | None:
    """The positive voltages of --iv at which --rectification is asked; None when it is not."""
    from edl_solver.errors import InputError

    if not asked:
        return None
    positive = [v for v in voltages or [] if v > 0.0]
    if not positive:
        raise InputError("--rectification: needs --iv with positive voltages, expected e.g. --iv -150mV:150mV:31")
    return positive


def _transport_outputs(args: argparse.Namespace) -> dict[str, Path]:
    """The output files, each checked to be writable and all different, before any solve."""
    from edl_solver.errors import InputError

    outputs: dict[str, Path] = {}
    seen: dict[Path, str] = {}
    for what, flag, value in (("result", "-o", args.output), ("figure", "--figure", args.figure),
                              ("pump curve", "--pump-figure", args.pump_figure),
                              ("conductance curve", "--conductance-figure", args.conductance_figure),
                              ("I-V curve", "--iv-figure", args.iv_figure),
                              ("rectification curve", "--rectification-figure", args.rectification_figure)):
        if value is None:
            continue
        path = writable(flag, value)
        if path.resolve() in seen:
            raise InputError(f"{flag}: {value!r} is also the file of {seen[path.resolve()]}, expected another "
                             "file name")
        seen[path.resolve()] = flag
        outputs[what] = path
    return outputs


def run_transport_command(args: argparse.Namespace) -> int:
    """Check everything, solve, compute the curves, write the files (each atomically), print."""
    from edl_solver import pipeline as solver
    from edl_solver.errors import ConvergenceError

    case = case_from_args(args)
    section = channel_section(args, case)  # the case file's [channel]: each flag given replaces its key
    extra, file_keys = apply_channel_section(args, section)
    varies = {"size"} if extra.keys() & {"size", "wall_segments", "wall_profile"} else set()
    plan = _transport_plan(args, case, file_keys | varies)
    spec = make_channel(args, case, plan, extra, section is not None)
    outputs = _transport_outputs(args)
    result = solver.solve(case)
    curve = channel = device_text = rectification = None
    if plan["concentrations"] is not None:
        from edl_solver.channel.conductance import conductance_curve

        curve = conductance_curve(case, plan["concentrations"], plan["length"],
                                  progress=False if args.quiet else None)
        if not (curve["status"].values == 0).any():
            raise ConvergenceError(f"--conductance: none of the {curve['status'].size} solves converged (the "
                                   f"first: {curve['message'].values[0]})")
    if spec is not None:
        from edl_solver.channel.conductance import channel_characteristics

        channel = channel_characteristics(spec, plan["voltages"])
        _add_taper(channel, spec, plan["rectification"])
        add_channel_outputs(channel, spec)
        rectification = rectification_dataset(spec, plan["rectification_curve"])
        if plan["device"] is not None:
            from edl_solver.channel.device import Device
            from edl_solver.channel.device_text import device_lines

            count, voltage, dp = plan["device"]
            device_text = device_lines(Device(spec, count), voltage, dp)
    written: list[tuple[str, Path]] = []
    failure = None
    try:
        if "result" in outputs:
            written.append(("result", _write_transport_file(outputs["result"], result, curve, channel,
                                                            rectification)))
        written += _write_transport_figures(outputs, result, curve, channel, plan["length"])
        written += write_rectification_figure(outputs, rectification)
    except OSError as exc:
        failure = f"cannot write {exc.filename or 'the output'}: {exc.strerror or exc}"
    if not args.quiet:
        print(result.report())
        if curve is not None:
            print(conductance_lines(curve))
        if channel is not None:
            print(channel_lines(channel, result))
        if rectification is not None:
            print(rectification_lines(rectification))
        if device_text is not None:
            print(device_text)
        if curve is None and channel is None and device_text is None:
            print(flags_line())
        for what, path in written:
            print(f"wrote the {what} to {Path(path).resolve()}")
    return fail(failure, EXIT_WRITE_FAILED) if failure else EXIT_OK


def _add_taper(data: Any, spec: Any, voltages: list[float] | None) -> None:
    """The shape of a tapered channel into ``data``'s attributes and, with --rectification, the variable
    ``rectification`` |I(+V)/I(-V)| over ``voltage_magnitude`` (solved at +V and -V)."""
    from edl_solver.channel.rectification import rectification_ratio
    from edl_solver.channel.taper_outputs import shape_attrs

    data.attrs.update(shape_attrs(spec))
    if voltages is not None:
        data["rectification"] = (("voltage_magnitude",), rectification_ratio(spec, voltages),
                                 {"units": "1", "long_name": "rectification |I(+V)/I(-V)|"})
        data["voltage_magnitude"] = (("voltage_magnitude",), voltages, {"units": "V", "long_name": "|V(L) - V(0)|"})


def _write_transport_file(path: Path, result: Any, curve: Any, channel: Any, rectification: Any = None) -> Path:
    """The Result, then the groups "conductance", "channel" and "rectification", all in one temporary file
    renamed at the end: the final name never holds a file without its groups."""
    from edl_solver.io.files import atomic_output
    from edl_solver.io.hdf5 import write_result

    try:
        with atomic_output(path) as temporary:
            write_result(result, temporary)
            for group, data in (("conductance", curve), ("channel", channel), ("rectification", rectification)):
                if data is not None:
                    data.to_netcdf(temporary, group=group, mode="a", engine="h5netcdf")
    except OSError as exc:  # name the file the user asked for, not the temporary one
        raise OSError(exc.errno, exc.strerror or str(exc), str(path)) from exc
    return path


def _write_transport_figures(outputs: dict[str, Path], result: Any, curve: Any, channel: Any,
                             length: float | None) -> list[tuple[str, Path]]:
    written = []
    if "figure" in outputs:
        from edl_solver.plot import profiles as plotting

        written.append(("figure", plotting.profile_figure(result, outputs["figure"])))
    if not {"pump curve", "conductance curve", "I-V curve"} & outputs.keys():
        return written
    from edl_solver.plot import transport as transport_plots

    if "pump curve" in outputs:
        written.append(("pump curve", transport_plots.pump_curve_figure(result, outputs["pump curve"], length)))
    if "conductance curve" in outputs:
        written.append(("conductance curve", transport_plots.conductance_figure(curve, outputs["conductance curve"])))
    if "I-V curve" in outputs:
        written.append(("I-V curve", transport_plots.iv_figure(channel, outputs["I-V curve"])))
    return written
