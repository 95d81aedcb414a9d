"""Waveforms of stepped (transient) sources: instantaneous values against time.

Each shape is a small frozen data object with ``value(t)`` (A or V, t in s),
registered under the name a case file uses. Values before t = 0 are 0: a
transient starts from a field-free state.

Each shape also lists its breakpoints, ``breakpoints()`` -> ((t, jump), ...):
the instants where its value (``jump`` True: the value is discontinuous there)
or its slope changes abruptly. The time march lands a step
on each and restarts its multistep formula there, which must not be applied
across a kink or a jump of its input.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

WAVEFORMS: dict[str, type] = {}


def register_waveform(name: str):
    def wrap(cls):
        cls.shape = name
        WAVEFORMS[name] = cls
        return cls

    return wrap


@register_waveform("step")
@dataclass(frozen=True)
class Step:
    """``value`` from t > 0 on."""

    value: float

    def __call__(self, t):
        return np.where(np.asarray(t) > 0, self.value, 0.0)

    def breakpoints(self):
        return ((0.0, self.value != 0),)


@register_waveform("ramp")
@dataclass(frozen=True)
class Ramp:
    """Linear rise from 0 to ``value`` over ``rise_s``, then held."""

    value: float
    rise_s: float

    def __call__(self, t):
        return self.value * np.clip(np.asarray(t) / self.rise_s, 0.0, 1.0)

    def breakpoints(self):
        return ((0.0, False), (self.rise_s, False))


@register_waveform("sine")
@dataclass(frozen=True)
class Sine:
    """``peak`` sin(2 pi f t + phase) for t > 0 (phase in degrees)."""

    peak: float
    frequency_hz: float
    phase_deg: float = 0.0

    def __call__(self, t):
        t = np.asarray(t)
        v = self.peak * np.sin(2 * math.pi * self.frequency_hz * t + math.radians(self.phase_deg))
        return np.where(t > 0, v, 0.0)

    def breakpoints(self):
        return ((0.0, self.peak * math.sin(math.radians(self.phase_deg)) != 0),)


@register_waveform("table")
@dataclass(frozen=True)
class Table:
    """Piecewise linear through ``points`` ((t, value), ...), held after the last point
    and 0 before the first. A time given twice is a vertical step: at that instant the
    later value holds already (the table is continuous from the right)."""

    points: tuple[tuple[float, float], ...]

    def __call__(self, t):
        ts, vs = (np.asarray(c, dtype=float) for c in zip(*self.points, strict=True))
        t = np.asarray(t, dtype=float)
        k = np.searchsorted(ts, t, side="right") - 1  # the last point at or before t
        lo = np.clip(k, 0, ts.size - 1)
        hi = np.clip(k + 1, 0, ts.size - 1)
        span = ts[hi] - ts[lo]
        frac = np.where(span > 0, (t - ts[lo]) / np.where(span > 0, span, 1.0), 0.0)
        v = vs[lo] + frac * (vs[hi] - vs[lo])
        return np.where(k < 0, 0.0, v)

    def breakpoints(self):
        """Every point; a time given twice, or a first point off zero, is a jump."""
        ts = [p[0] for p in self.points]
        first = (ts[0], self.points[0][1] != 0)
        return (first, *((t, ts.count(t) > 1) for t in dict.fromkeys(ts[1:])))


def from_dict(spec: dict):
    """A waveform from its SI description (``shape`` plus the shape's keys)."""
    cls = WAVEFORMS[spec["shape"]]
    keys = {k: v for k, v in spec.items() if k not in ("shape", "drive")}
    if "points" in keys:
        keys["points"] = tuple(tuple(p) for p in keys["points"])
    return cls(**keys)
