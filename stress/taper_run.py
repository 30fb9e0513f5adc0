"""Stress run of the channels that vary along x (issue 15): random valid tapered, bipolar and profiled channels
through ``current_voltage`` with checks on every converged point, and random malformed [channel] sections and
flags through ``edl transport``.

Not part of the suite (it takes minutes). ``python stress/taper_run.py SEED COUNT [MALFORMED]``: COUNT valid
channels, then MALFORMED (default COUNT) malformed inputs.

Valid part: a capillary or a slit whose size is a pair (tip 2-50 nm, base 1-20 times the tip, either way round), a
table or a callable (hourglass, constriction); a wall of fixed charge (-80..+80 mC/m^2, sometimes 0), of fixed zeta,
a regulated silica wall, two or three ``wall_segments`` or a ``wall_profile``; KCl, LiCl or CaCl2; reservoirs equal
or 1-100 times apart; access resistance on or off; an I-V curve of 5-11 points within +-0.05..2 V. Each point must
either converge or fail with a one-line message; a converged point must be finite, its concentration profile must
meet the reservoirs, its potential start at -R_left I and rise by the channel voltage. Physical checks (each from
the equations' symmetry, common practice): an uncharged wall between equal reservoirs is ohmic (and a cone matches
L/(K pi a b), a tapered slit L ln(h2/h1)/(K (h2 - h1)), from memory); the mirror channel x -> L - x with the
reservoirs swapped gives I(-V) = -I(V); with equal diffusivities of a 1:1 salt, flipping the wall's charge and the
voltage gives -I.

Malformed part: a [channel] section with one to three keys replaced by junk, or a junk flag, through
``edl transport``: exit 0 (a valid draw), or 2 (3 for a solve that fails) with one line on stderr, no traceback
and no output file left behind.
"""

from __future__ import annotations

import collections
import dataclasses
import math
import random
import re
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import edl_solver as edl
from edl_solver.channel import Channel, current_voltage
from edl_solver.channel.model import table_of
from edl_solver.errors import ConvergenceError, InputError

SALTS = {"KCl": ("K+", "Cl-", 1), "LiCl": ("Li+", "Cl-", 1), "CaCl2": ("Ca++", "Cl-", 2)}
#: Relative tolerance of the symmetry checks: the tables' interpolation error is ~1e-4, the collocation's 1e-4.
SYMMETRY_TOL = 2e-3


@dataclasses.dataclass
class Draw:
    """A random channel and what was drawn for it (a reproducer)."""

    channel: Channel
    voltages: np.ndarray
    text: str
    flags: dict[str, Any]


def _salt(c: float, name: str, equal_d: bool, ph: float | None) -> edl.Electrolyte:
    cation, anion, z = SALTS[name]
    d = {"diffusivity": 2e-9} if equal_d else {}
    return edl.Electrolyte(ions=[edl.Ion(cation, concentration=c, **d), edl.Ion(anion, concentration=z * c, **d)],
                           pH=ph)


def _size(rng: random.Random, length: float, tip: float, base: float) -> tuple[Any, str]:
    kind = rng.choice(["pair", "pair", "table", "hourglass", "constriction"])
    if kind == "pair":
        pair = (tip, base) if rng.random() < 0.5 else (base, tip)
        return pair, f"size={pair!r}"
    if kind == "table":
        n = rng.randint(3, 5)
        x = [0.0, *sorted(rng.uniform(0.05, 0.95) * length for _ in range(n - 2)), length]
        s = [rng.uniform(tip, base) for _ in range(n)]
        s[rng.randrange(n)] = tip
        return {"position": x, "size": s}, f"size={{'position': {x!r}, 'size': {s!r}}}"
    if kind == "hourglass":
        return (lambda x: tip + (base - tip) * np.abs(2.0 * x / length - 1.0)), \
            f"size=lambda x: {tip!r} + ({base!r} - {tip!r}) * np.abs(2 * x / {length!r} - 1)"
    return (lambda x: base - (base - tip) * np.exp(-((x / length - 0.5) / 0.1) ** 2)), \
        f"size=lambda x: {base!r} - ({base!r} - {tip!r}) * np.exp(-((x / {length!r} - 0.5) / 0.1) ** 2)"


def _wall(rng: random.Random, length: float, flip: bool) -> tuple[edl.Wall, dict[str, Any], str, bool]:
    """(the case's wall, Channel kwargs, description, uncharged)."""
    kind = rng.choice(["charge", "charge", "zeta", "silica", "segments", "profile"])
    if flip:
        kind = rng.choice(["charge", "zeta", "segments", "profile"])
    if kind == "charge":
        sigma = 0.0 if rng.random() < 0.15 else rng.uniform(-0.08, 0.08)
        return edl.Wall(charge_density=sigma), {}, f"Wall(charge_density={sigma!r})", sigma == 0.0
    if kind == "zeta":
        zeta = 0.0 if rng.random() < 0.15 else rng.uniform(-0.1, 0.1)
        return edl.Wall(zeta=zeta), {}, f"Wall(zeta={zeta!r})", zeta == 0.0
    if kind == "silica":
        return edl.Wall.silica(), {}, "Wall.silica()", False
    if kind == "segments":
        n = rng.randint(2, 3)
        ends = [*sorted(rng.uniform(0.1, 0.9) * length for _ in range(n - 1)), length]
        sigmas = [rng.uniform(-0.08, 0.08) for _ in range(n)]
        segments = [(e, edl.Wall(charge_density=s)) for e, s in zip(ends, sigmas)]
        text = "wall_segments=" + repr([(e, f"Wall(charge_density={s!r})") for e, s in zip(ends, sigmas)])
        return segments[0][1], {"wall_segments": segments}, text, False
    n = rng.randint(2, 5)
    x = [0.0, *sorted(rng.uniform(0.05, 0.95) * length for _ in range(n - 2)), length]
    values = [rng.uniform(-0.08, 0.08) for _ in range(n)]
    return edl.Wall(charge_density=values[0]), {"wall_profile": {"position": x, "value": values}}, \
        f"Wall(charge_density=...), wall_profile={{'position': {x!r}, 'value': {values!r}}}", False


def sample(rng: random.Random) -> Draw:
    """A random valid channel and its I-V voltages (refusals of the draw itself are InputErrors)."""
    length = 10 ** rng.uniform(math.log10(0.5e-6), math.log10(10e-6))
    tip = 10 ** rng.uniform(math.log10(2e-9), math.log10(50e-9))
    base = tip * rng.uniform(1.0, 20.0)
    flip = rng.random() < 0.15
    salt_name = "KCl" if flip else rng.choice(list(SALTS))
    c_left = 10 ** rng.uniform(-1, 2)
    c_right = c_left if rng.random() < 0.4 else c_left * 10 ** rng.uniform(-2, 2)
    size, size_text = _size(rng, length, tip, base)
    wall, wall_kwargs, wall_text, uncharged = _wall(rng, length, flip)
    slit = rng.random() < 0.5
    ph = rng.uniform(4.0, 9.0) if wall.sites else None  # a regulated wall needs the pH
    geometry = edl.Slit(height=tip) if slit else edl.Capillary(radius=tip)
    case = edl.Case(geometry=geometry, electrolyte=_salt(c_left, salt_name, flip, ph), wall=wall)
    access = rng.random() < 0.5
    width = max(1e-6, 20 * base) if slit and access else None
    channel = Channel(case, length=length, left_concentration=c_left, right_concentration=c_right,
                      access_resistance=access, width=width, size=size, **wall_kwargs)
    vmax = rng.uniform(0.05, 2.0)
    voltages = np.linspace(-vmax, vmax, rng.randint(5, 11))
    text = (f"{'Slit' if slit else 'Capillary'} tip {tip:.4g}, {salt_name}{' equal D' if flip else ''}, "
            f"L={length!r}, c=({c_left!r}, {c_right!r}), access={access}, width={width!r}, {size_text}, "
            f"{wall_text}, V=linspace(-{vmax!r}, {vmax!r}, {voltages.size})")
    return Draw(channel, voltages, text, {"uncharged": uncharged, "flip": flip, "mirror": rng.random() < 0.25,
                                           "size": size, "wall": wall_kwargs})


def _left_access(channel: Channel) -> float:
    from edl_solver.channel.taper_table import _end_access

    return _end_access(channel)[0]


def check_points(draw: Draw, data: Any) -> list[str]:
    """The defects of the converged and failed points of one curve."""
    ch, problems = draw.channel, []
    status, current = data["status"].values, data["current"].values
    r_left = _left_access(ch)
    for k, v in enumerate(data["voltage"].values):
        message = str(data["message"].values[k])
        if status[k] != 0:
            if "\n" in message or not message:
                problems.append(f"V={v:.4g}: failed with a message of {message.count(chr(10)) + 1} lines")
            continue
        c, phi = data["concentration_profile"].values[k], data["potential_profile"].values[k]
        values = [current[k], data["channel_voltage"].values[k], *c, *phi]
        if not np.all(np.isfinite(values)):
            problems.append(f"V={v:.4g}: status 0 with NaN/inf")
            continue
        if not (math.isclose(c[0], ch.left_concentration, rel_tol=1e-6)
                and math.isclose(c[-1], ch.right_concentration, rel_tol=1e-6)):
            problems.append(f"V={v:.4g}: c ends {c[0]:.6g}, {c[-1]:.6g} not the reservoirs")
        if np.min(c) <= 0.0:
            problems.append(f"V={v:.4g}: c <= 0 inside")
        if not math.isclose(phi[0], -r_left * current[k], rel_tol=1e-6, abs_tol=1e-9):
            problems.append(f"V={v:.4g}: V(0) {phi[0]:.6g} != -R_left I {-r_left * current[k]:.6g}")
        if not math.isclose(phi[-1] - phi[0], data["channel_voltage"].values[k], rel_tol=1e-6, abs_tol=1e-9):
            problems.append(f"V={v:.4g}: V(L) - V(0) {phi[-1] - phi[0]:.6g} != channel voltage "
                            f"{data['channel_voltage'].values[k]:.6g}")
    return problems


def _ohmic(draw: Draw, data: Any) -> list[str]:
    """An uncharged wall between equal reservoirs: I = V / R with R the closed form plus the access."""
    from edl_solver.model.bulk import bulk_conductivity

    ch = draw.channel
    if not (draw.flags["uncharged"] and ch.equal_reservoirs) or np.any(data["status"].values != 0):
        return []
    v, current = data["voltage"].values, data["current"].values
    conductivity = bulk_conductivity(ch.case)
    x = np.linspace(0.0, ch.length, 20001)
    s = ch.size.at(x)
    area = np.pi * s**2 if ch.case.geometry.kind == "capillary" else s
    integrand = 1.0 / (conductivity * area)  # trapezoid of dx/(K A(x)) on a fine grid (exact for a pair below)
    resistance = float(np.sum(0.5 * (integrand[1:] + integrand[:-1]) * np.diff(x)))
    if isinstance(draw.flags["size"], tuple):
        a, b = draw.flags["size"]
        resistance = ch.length / (conductivity * math.pi * a * b) if ch.case.geometry.kind == "capillary" else \
            (ch.length / conductivity if a == b else ch.length * math.log(b / a) / (conductivity * (b - a)))
    expected = -v / (resistance + table_of(ch).access_resistance)  # current along +x: -dV/R
    if not np.allclose(current, expected, rtol=SYMMETRY_TOL, atol=SYMMETRY_TOL * np.max(np.abs(expected))):
        return [f"uncharged: I {current!r} != -V/R {expected!r}"]
    return []


def _mirror(draw: Draw) -> Channel:
    ch, length = draw.channel, draw.channel.length
    shape = ch.size
    size = {"position": [length - x for x in shape.positions[::-1]], "size": list(shape.sizes[::-1])}
    size["position"][0], size["position"][-1] = 0.0, length
    kwargs: dict[str, Any] = {}
    if ch.wall_segments is not None:
        ends = [length - e for e in ch.wall_segments.ends[-2::-1]] + [length]
        kwargs["wall_segments"] = list(zip(ends, ch.wall_segments.walls[::-1]))
    if ch.wall_profile is not None:
        p = ch.wall_profile
        kwargs["wall_profile"] = {"position": [0.0, *[length - x for x in p.positions[-2:0:-1]], length],
                                  "value": list(p.values[::-1])}
    return dataclasses.replace(ch, left_concentration=ch.right_concentration,
                               right_concentration=ch.left_concentration, size=size, **kwargs)


def _flipped(draw: Draw) -> Channel:
    ch = draw.channel

    def flip(wall: edl.Wall) -> edl.Wall:
        if wall.zeta is not None:
            return edl.Wall(zeta=-wall.zeta)
        return edl.Wall(charge_density=-wall.charge_density)

    kwargs: dict[str, Any] = {}
    if ch.wall_segments is not None:
        kwargs["wall_segments"] = [(e, flip(w)) for e, w in zip(ch.wall_segments.ends, ch.wall_segments.walls)]
    if ch.wall_profile is not None:
        kwargs["wall_profile"] = {"position": list(ch.wall_profile.positions),
                                  "value": [-v for v in ch.wall_profile.values]}
    case = dataclasses.replace(ch.case, wall=flip(ch.case.wall))
    return dataclasses.replace(ch, case=case, **kwargs)


def _same_negated(name: str, data: Any, other: Any) -> list[str]:
    """I(V) of ``data`` against -I(-V) of ``other`` (computed at the reversed voltages)."""
    ok = (data["status"].values == 0) & (other["status"].values[::-1] == 0)
    a, b = data["current"].values[ok], -other["current"].values[::-1][ok]
    scale = np.max(np.abs(a)) if a.size else 0.0
    if a.size and not np.allclose(a, b, rtol=SYMMETRY_TOL, atol=SYMMETRY_TOL * scale):
        return [f"{name}: I {a!r} != {b!r}"]
    return []


def symmetry_checks(draw: Draw, data: Any, outcomes: collections.Counter[str]) -> list[str]:
    problems = _ohmic(draw, data)
    if draw.flags["uncharged"] and draw.channel.equal_reservoirs:
        outcomes["checked: ohmic"] += 1
        print("  checked ohmic", flush=True)
    for name, make in (("mirror", _mirror), ("flip", _flipped)):
        if draw.flags[name]:
            outcomes[f"checked: {name}"] += 1
            print(f"  checked {name}", flush=True)
            other = current_voltage(make(draw), -draw.voltages[::-1])
            problems += _same_negated(name, data, other)
    return problems


def _classify(message: str) -> str:
    return re.sub(r"[-+]?\d[\d.eE+-]*", "#", message).strip()[:110]


def valid_part(seed: int, count: int) -> list[str]:
    outcomes: collections.Counter[str] = collections.Counter()
    defects, times = [], []
    for index in range(count):
        rng = random.Random(f"{seed}-{index}")
        try:
            draw = sample(rng)
        except InputError as exc:
            outcomes["draw refused: " + _classify(str(exc))] += 1
            continue
        start = time.perf_counter()
        try:
            data = current_voltage(draw.channel, draw.voltages)
            problems = check_points(draw, data) + symmetry_checks(draw, data, outcomes)
        except (InputError, ConvergenceError) as exc:
            outcomes[f"{type(exc).__name__}: {_classify(str(exc))}"] += 1
            print(f"{index}: {type(exc).__name__}: {str(exc)[:200]}", flush=True)
            if "\n" in str(exc):
                defects.append(f"#{index} multi-line {type(exc).__name__}: {exc!r} :: {draw.text}")
            continue
        except Exception as exc:  # a crash: what this run looks for
            outcomes[f"CRASH {type(exc).__name__}"] += 1
            defects.append(f"#{index} CRASH {type(exc).__name__}: {str(exc)[:300]} :: {draw.text}")
            continue
        seconds = time.perf_counter() - start
        times.append((seconds, index, draw.text))
        failed = int(np.sum(data["status"].values != 0))
        for k in np.flatnonzero(data["status"].values != 0):
            outcomes["point failed: " + _classify(str(data["message"].values[k]))] += 1
        outcomes["curve all converged" if not failed else "curve with failed points"] += 1
        if problems:
            outcomes["CHECK failed"] += 1
            defects.append(f"#{index} " + "; ".join(problems)[:600] + f" :: {draw.text}")
        print(f"{index}: {seconds:.1f} s, {failed} failed, {len(problems)} problems", flush=True)
    print("== valid channels ==")
    for outcome, n in outcomes.most_common():
        print(f"{n:5d}  {outcome}")
    times.sort(reverse=True)
    for seconds, index, text in times[:3]:
        print(f"slow #{index}: {seconds:.1f} s :: {text}")
    if times:
        print(f"median {np.median([t[0] for t in times]):.2f} s over {len(times)} channels")
    return defects


if __name__ == "__main__":
    from stress.taper_malformed import malformed_part

    seed, count = int(sys.argv[1]), int(sys.argv[2])
    malformed = int(sys.argv[3]) if len(sys.argv) > 3 else count
    found = valid_part(seed, count) if count else []
    with tempfile.TemporaryDirectory() as folder:
        found += malformed_part(seed, malformed, Path(folder)) if malformed else []
    for line in found:
        print(line)
    sys.exit(1 if found else 0)
