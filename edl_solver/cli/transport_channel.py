"""The finite channel of ``edl transport CASE.toml``: the case file's [channel] section (``inputs.channel_spec``)
and the flags, merged.

The rule: each flag replaces its key of [channel], one key at a time - ``--length`` length, ``--left`` left,
``--right`` right, ``--size`` size, ``--iv`` iv, ``--width`` width, ``--access-resistance`` access_resistance,
``--rectification`` rectification (a flag that can only turn it on). A key without a flag (``points``,
``size_points``, ``wall_points``, ``concentration_span``, ``wall_segments``, ``wall_profile``) comes from the file
alone. A file value is checked as its flag's value is, and everything before the first solve; an error in the
channel the file makes names the file. The file's ``width`` and ``access_resistance`` belong to the channel: unlike
their flags, they do not ask for the device block (``--channels``, ``--voltage``, ``--pressure-difference`` do).
"""

from __future__ import annotations

import argparse
from typing import Any

__all__ = ["apply_channel_section", "channel_section", "make_channel"]


def channel_section(args: argparse.Namespace, case: Any) -> Any:
    """The ``ChannelSpec`` of the case file's [channel] section, None without a case file or without the section.

    Raises
    ------
    InputError
        From ``inputs.channel_spec`` (naming the file and the dotted key).
    """
    from edl_solver.inputs.casefile import read_mapping
    from edl_solver.inputs.channel_spec import read_channel_spec

    if args.case is None or "channel" not in read_mapping(args.case):
        return None
    return read_channel_spec(args.case, case)


def apply_channel_section(args: argparse.Namespace, spec: Any) -> tuple[dict[str, Any], frozenset[str]]:
    """Set each flag not given from the file's key (as text its flag reads); the ``Channel`` keywords without a
    flag and the flags so set.

    Returns
    -------
    extra : dict
        ``points``, ``size_points``, ``wall_segments``, ``wall_profile`` where the file gives them, and ``size``
        where the file gives it and ``--size`` does not; {} without a section.
    file_keys : frozenset of str
        The destinations in ``args`` set from the file ("width", "access_resistance", ...).
    """
    if spec is None:
        return {}, frozenset()
    texts = {"length": _text(spec.length, "m"), "left": _text(spec.left, "mol/m^3"),
             "right": _text(spec.right, "mol/m^3"), "width": _text(spec.width, "m"),
             "iv": None if spec.voltages is None else
             f"{spec.voltages[0]!r} V:{spec.voltages[-1]!r} V:{len(spec.voltages)}",
             "access_resistance": None if spec.access_resistance is None else
             ("on" if spec.access_resistance else "off")}
    file_keys = set()
    for name, text in texts.items():
        if getattr(args, name) is None and text is not None:
            setattr(args, name, text)
            file_keys.add(name)
    if spec.rectification and not args.rectification:
        if args.iv is None:
            from edl_solver.errors import InputError

            raise InputError(f"{args.case}: channel.rectification: true without an I-V curve, expected channel.iv "
                             "(or --iv) with positive voltages, e.g. iv = { start = \"-1 V\", stop = \"1 V\", "
                             "count = 41 }")
        args.rectification = True
        file_keys.add("rectification")
    extra = {key: getattr(spec, key) for key in ("points", "size_points", "wall_points", "concentration_span",
                                                 "wall_segments", "wall_profile") if getattr(spec, key) is not None}
    if args.size is None and spec.size is not None:
        extra["size"] = spec.size
    return extra, frozenset(file_keys)


def _text(value: float | None, unit: str) -> str | None:
    """An SI value as text a flag reads back exactly (repr keeps every digit)."""
    return None if value is None else f"{value!r} {unit}"


def make_channel(args: argparse.Namespace, case: Any, plan: dict[str, Any], extra: dict[str, Any],
                 from_file: bool) -> Any:
    """The ``Channel`` of the plan (the flags, merged with the file) and the file's keys without a flag; None
    without a length. Built before the first solve, so that its checks come first; ``from_file``: the case file
    has a [channel] section.

    Raises
    ------
    InputError
        The channel's own message, after the case file's name where the file gave part of the channel.
    """
    from edl_solver.channel.model import Channel
    from edl_solver.errors import InputError

    if plan["length"] is None:
        return None
    kwargs = {"size": plan["size"], **extra}
    try:
        return Channel(case, plan["length"], *plan["reservoirs"], access_resistance=args.access_resistance == "on",
                       width=plan["width"], **kwargs)
    except InputError as exc:
        if from_file:
            raise InputError(f"{args.case}: {exc}") from None
        raise
