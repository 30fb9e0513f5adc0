"""The malformed part of ``stress/taper_run.py``: random junk in a [channel] section or in the tapered channel's
flags through ``edl transport``. A crash is an exit other than 0, 2 or 3, a traceback, a message of more than one
line, or an output file left by a refusal."""

from __future__ import annotations

import collections
import os
import random
import re
from pathlib import Path

from tests.helpers import run

BASE_CASE = """\
[geometry]
kind = "{kind}"
{size_key} = "5 nm"

[electrolyte]
ions = {{ "K+" = "10 mM", "Cl-" = "10 mM" }}

[wall]
charge_density = "-20 mC/m^2"
"""
BASE_CHANNEL = {"length": '"1 um"', "size": '["5 nm", "20 nm"]',
                "iv": '{ start = "-0.2 V", stop = "0.2 V", count = 3 }'}
#: Values drawn for any key: nasty numbers, junk units, wrong types, out-of-range values.
POOL = ['"nan nm"', "nan", "inf", "-inf", "1e300", "-1", "0", "''", '" "', "true", "false", "[]", "{}", "[[1]]",
        '"1 + 1 nm"', '"5 nm 5"', '"-5 nm"', '"0 nm"', '"1e-15 m"', '"2 m"', '"1 M"', '"0.1 uM"', '"1e-30 mM"',
        '"5 V"', '"x"', '"10 um"', '"1 um"', "3", "1.5", "1000000", '["5 nm"]', '["5 nm", "20 nm", "30 nm"]',
        '["5 nm", "nan nm"]', '["5 nm", "-20 nm"]', '["5 nm", 20]', '["5 mM", "20 nm"]', '["1e-12 nm", "1 m"]',
        '{ position = ["0 um", "1 um"], size = ["5 nm"] }', '{ position = ["0 um", "2 um"], size = ["5 nm", "9 nm"] }',
        '{ position = ["1 um", "0 um"], size = ["5 nm", "9 nm"] }', '{ position = "x", size = "y" }',
        '{ csv = "missing.csv" }', '{ csv = "bad.csv" }', '{ csv = "." }', '{ csv = 3 }', '{ csv = "bad.csv", x = 1 }',
        '{ start = "-1 V", stop = "1 V", count = 1 }', '{ start = "1 V", stop = "-1 V", count = 3 }',
        '{ start = "-1 V", stop = "1 V", count = 100000 }', '{ start = "nan V", stop = "1 V", count = 3 }',
        '{ start = "-1 V", stop = "1 V" }', '{ start = "-1 V", stop = "1 V", count = 3, step = 1 }',
        '{ start = "-1 mV", stop = "-0.5 mV", count = 3 }', '{ start = "-1e9 V", stop = "1e9 V", count = 3 }',
        '[{ x_end = "0.5 um", charge_density = "-20 mC/m^2" }]',
        '[{ x_end = "0.5 um", charge_density = "-20 mC/m^2" }, { x_end = "1 um", zeta = "20 mV" }]',
        '[{ x_end = "0.5 um", charge_density = "nan" }, { x_end = "1 um", charge_density = "1 C/m^2" }]',
        '[{ x_end = "2 um", charge_density = "-20 mC/m^2" }, { x_end = "1 um", charge_density = "20 mC/m^2" }]',
        '[{ charge_density = "-20 mC/m^2" }]', '[1, 2]', '[{ x_end = "1 um", colour = "red" }]',
        '{ position = ["0 um", "1 um"], value = ["-20 mC/m^2", "nan"] }',
        '{ position = ["0 um", "1 um"], value = ["-20 mV", "20 mV"] }',
        '{ position = ["0 um", "0.5 um"], value = ["-20 mC/m^2", "20 mC/m^2"] }',
        '{ position = ["0 um", "1 um"], value = ["-20 mC/m^2"] }', '{ position = [], value = [] }',
        '{ position = ["0 um", "1 um"], value = ["-9 C/m^2", "9 C/m^2"] }', '{ values = 1 }']
KEYS = ["length", "left", "right", "size", "size", "wall_segments", "wall_profile", "iv", "iv", "rectification",
        "access_resistance", "width", "points", "size_points", "colour"]
FLAG_POOL = {"--size": ["5nm", "5nm:", ":5nm", "5nm:20nm:30nm", "nan:5nm", "-5nm:5nm", "0:5nm", "5mM:5nm", "x:y",
                        "1e-20nm:5nm", "5nm:1m", "5 nm:20 nm", "", "5nm:infnm", "5nm:5nm"],
             "--iv": ["-1V:1V", "-1V:1V:1", "1V:-1V:3", "-1V:1V:x", "nanV:1V:3", "-1V:1V:0", "-1V:1V:-3", "::", "",
                      "-1e9V:1e9V:3", "-1V:1V:1000000", "-1mm:1V:3", "-infV:1V:3", "-1V:1V:3.0", "0V:0V:3"],
             "--rectification-curve": ["1mM:10mM", "1mM:10mM:1", "0mM:10mM:3", "-1mM:10mM:3", "x:y:3", "nan:1mM:3",
                                       "1mM:1e30mM:3", "1mM:10mM:1000000", "1V:10mM:3", "", "10mM:1mM:3",
                                       "1mM:infmM:3", "infmM:1mM:3", "1e-30mM:1mM:3", "1mM:10mM:3.5"],
             "--rectification-voltage": ["0V", "-1V", "nan", "x", "1e9V", "5nm", "", "0.1", "inf V", "1e-30V"]}
BAD_CSV = ["position [um], radius [nm]\n0, 5\n", "position [um], radius [nm]\n0, 5\n1, nan\n",
           "position [um], radius [mM]\n0, 5\n1, 9\n", "pos, rad\n0, 5\n1, 9\n",
           "position [um], radius [nm]\n0, 5\n0.5, -1\n1, 9\n", "position [um], radius [nm]\n0; 5; 7\n1, 9\n",
           "position [um], radius [nm]\n1, 5\n0, 9\n", "\xff\xfe", "position [um], radius [nm]\n0, 5\n2, 9\n",
           "position [um], value [mC/m^2]\n0, -20\n1, x\n", ""]


def _file(rng: random.Random, folder: Path) -> tuple[list[str], str]:
    """A case file with a [channel] section of which one to three keys are junk; argv and a description."""
    slit = rng.random() < 0.3
    text = BASE_CASE.format(kind="slit" if slit else "capillary", size_key="height" if slit else "radius")
    channel = dict(BASE_CHANNEL)
    for key in rng.sample(KEYS, rng.randint(1, 3)):
        channel[key] = rng.choice(POOL)
    (folder / "bad.csv").write_bytes(rng.choice(BAD_CSV).encode("utf-8", "surrogateescape"))
    text += "\n[channel]\n" + "\n".join(f"{k} = {v}" for k, v in channel.items() if k != "wall_segments")
    if "wall_segments" in channel:
        text += f"\nwall_segments = {channel['wall_segments']}"
    (folder / "case.toml").write_text(text + "\n", encoding="utf-8")
    return ["transport", str(folder / "case.toml")], f"[channel] {channel} (slit={slit})"


def _flags(rng: random.Random) -> tuple[list[str], str]:
    argv = ["transport", "--capillary", "5nm", "--ion", "K+=10mM", "--ion", "Cl-=10mM", "--charge-density",
            "-20mC/m^2", "--length", "1um", "--size", "5nm:20nm", "--iv", "-200mV:200mV:3"]
    for flag in rng.sample(list(FLAG_POOL), rng.randint(1, 2)):
        value = rng.choice(FLAG_POOL[flag])
        if flag in argv:
            argv[argv.index(flag) + 1] = value
        else:
            argv += [flag, value]
    return argv, " ".join(argv[1:])


def malformed_part(seed: int, count: int, folder: Path) -> list[str]:
    outcomes: collections.Counter[str] = collections.Counter()
    defects = []
    out = folder / "out.h5"
    for index in range(count):
        rng = random.Random(f"malformed-{seed}-{index}")
        argv, text = _file(rng, folder) if rng.random() < 0.7 else _flags(rng)
        out.unlink(missing_ok=True)
        code, _, err = run([*argv, "-o", str(out)])
        lines = err.strip().splitlines()
        if code == 0:
            outcomes["exit 0 (valid draw)"] += 1
            continue
        bad = code not in (2, 3) or "Traceback" in err or len(lines) != 1 or out.exists()
        last = (lines[-1] if lines else "").removeprefix("edl: error: ").replace(str(folder / "case.toml") + ": ", "")
        if os.environ.get("TAPER_VERBOSE"):
            print(f"  {code}: {last[:300]}")
        reason = re.sub(r"[-+]?\d[\d.eE+-]*", "#", last.split(":")[0])[:90]
        outcomes[("CRASH " if bad else "") + f"exit {code}: {reason}"] += 1
        if bad:
            defects.append(f"malformed #{index}: exit {code}, {len(lines)} lines, file left {out.exists()}: "
                           f"{err[-400:]!r} :: {text}")
    print("== malformed inputs ==")
    for outcome, n in outcomes.most_common():
        print(f"{n:5d}  {outcome}")
    return defects
