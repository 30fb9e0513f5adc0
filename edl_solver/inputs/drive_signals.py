"""The arithmetic of time-dependent drives (``inputs.drives``): SI signals as piecewise-linear points.

A square wave, a ramp and a table are each a list of (time, value) points, linear between them, held at the
first value before the first time and at the last value after the last; a time listed twice is a jump (the
left value, then the right one). Values at a jump are the right value (the signal has switched at that time).
Everything here takes and returns SI floats and numpy arrays; the checks of the inputs are in ``drives``.
"""

from __future__ import annotations

import math

import numpy as np

from edl_solver.errors import InputError

__all__ = ["MAX_PERIODS", "breakpoints", "check_end", "clip", "evaluate", "ramp_points", "square_points",
           "square_value"]

#: Most periods of a square wave that ``square_points`` writes out (each is four points).
MAX_PERIODS = 1_000_000
#: Relative difference of two slopes below which a point is no kink (round-off of collinear points).
_SLOPE_NOISE = 1e-12


def evaluate(times: np.ndarray, values: np.ndarray, t: np.ndarray) -> np.ndarray:
    """The piecewise-linear signal of the points at the times ``t`` (right-continuous at jumps)."""
    t = np.asarray(t, dtype=float)
    last = times.size - 1
    after = np.searchsorted(times, t, side="right")  # the first point strictly later than t
    lo, hi = np.clip(after - 1, 0, last), np.clip(after, 0, last)
    t0, t1, v0, v1 = times[lo], times[hi], values[lo], values[hi]
    span = t1 - t0
    weight = np.divide(t - t0, span, out=np.zeros_like(t, dtype=float), where=span > 0)
    return v0 + weight * (v1 - v0)


def check_end(t_end: float) -> None:
    """Refuse an end time that is not a finite number > 0 (s)."""
    if isinstance(t_end, bool) or not isinstance(t_end, (int, float, np.integer, np.floating)) \
            or not math.isfinite(t_end) or not t_end > 0:
        raise InputError(f"t_end: {t_end!r} is not a time after the step, expected a finite time in s > 0")


def clip(times: np.ndarray, values: np.ndarray, t_end: float) -> tuple[np.ndarray, np.ndarray]:
    """The points from 0 to ``t_end``: from (0, the value just after 0) to (t_end, the value there); a jump at
    ``t_end`` itself is kept (both of its values)."""
    check_end(t_end)
    keep = (times > 0.0) & (times <= t_end)
    start = evaluate(times, values, np.array([0.0]))
    out_t = np.concatenate(([0.0], times[keep]))
    out_v = np.concatenate((start, values[keep]))
    if out_t[-1] < t_end:
        out_t = np.append(out_t, t_end)
        out_v = np.append(out_v, evaluate(times, values, np.array([t_end])))
    return out_t, out_v


def breakpoints(times: np.ndarray, values: np.ndarray, t_end: float) -> np.ndarray:
    """The sorted times in (0, t_end] where the signal jumps or its slope changes."""
    unique, first = np.unique(times, return_index=True)
    last = np.append(first[1:] - 1, times.size - 1)
    left, right = values[first], values[last]
    slope = (left[1:] - right[:-1]) / np.diff(unique) if unique.size > 1 else np.zeros(0)
    before, after = np.append(0.0, slope), np.append(slope, 0.0)  # held outside the points
    scale = np.maximum(np.abs(before), np.abs(after))
    kink = np.abs(after - before) > _SLOPE_NOISE * scale
    jump = left != right
    chosen = (jump | kink) & (unique > 0.0) & (unique <= t_end)
    return unique[chosen]


def ramp_points(start: float, end: float, duration: float, delay: float) -> tuple[np.ndarray, np.ndarray]:
    """``start`` until ``delay``, linear to ``end`` over ``duration``, then ``end``."""
    times = [0.0, delay, delay + duration] if delay > 0.0 else [0.0, duration]
    values = [start, start, end] if delay > 0.0 else [start, end]
    return np.array(times), np.array(values)


def _square_edges(frequency: float, duty: float, delay: float, k: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The rising and falling edges of periods ``k`` (one expression, shared by the points and the values, so
    that a time at an edge is on the same side of it in both)."""
    return delay + k / frequency, delay + (k + duty) / frequency


def square_points(offset: float, amplitude: float, frequency: float, duty: float, delay: float,
                  t_end: float, where: str) -> tuple[np.ndarray, np.ndarray]:
    """The edges of a square wave from 0 to past ``t_end``: ``offset`` before ``delay``, then ``offset +
    amplitude`` for the first ``duty`` of each period and ``offset - amplitude`` for the rest."""
    periods = math.floor(max(t_end - delay, 0.0) * frequency) + 1
    if periods > MAX_PERIODS:
        raise InputError(f"{where}: a square wave of {frequency:.4g} Hz has {periods} periods up to {t_end:.4g} s, "
                         f"expected at most {MAX_PERIODS} (a shorter run or a lower frequency)")
    k = np.arange(periods, dtype=float)
    rise, fall = _square_edges(frequency, duty, delay, k)
    high, low = offset + amplitude, offset - amplitude
    times = np.repeat(np.stack((rise, fall), axis=1).ravel(), 2)
    values = np.tile([low, high, high, low], periods)
    values[0] = offset  # before the first rising edge: the offset (dropped when the wave starts at 0)
    if delay == 0.0:
        times, values = times[1:], values[1:]
    else:
        times, values = np.append(0.0, times), np.append(offset, values)
    return times, values


def square_value(offset: float, amplitude: float, frequency: float, duty: float, delay: float,
                 t: np.ndarray) -> np.ndarray:
    """The square wave of ``square_points`` at the times ``t``, from its period (any number of periods)."""
    t = np.asarray(t, dtype=float)
    k = np.floor((t - delay) * frequency)
    rise, _ = _square_edges(frequency, duty, delay, k)
    k = np.where(t < rise, k - 1.0, k)  # round-off of the floor, so that rise <= t < the next rise
    k = np.where(t >= _square_edges(frequency, duty, delay, k + 1.0)[0], k + 1.0, k)
    _, fall = _square_edges(frequency, duty, delay, k)
    wave = np.where(t < fall, offset + amplitude, offset - amplitude)
    return np.where(t < delay, offset, wave)
