"""The load definitions a model file can hold (its optional ``loads`` key): plain data, validated.

Three loads the trade uses for fixtures, racks and mounts, all as motion of the base (every anchor
together) in one direction:

- :class:`RandomVibration`: an acceleration spectral density (ASD) as a breakpoint table, g^2/Hz
  against Hz, straight lines between breakpoints on log-log axes (common practice for test
  specifications).
- :class:`ShockPulse`: a base acceleration pulse of a standard shape (half-sine, terminal-peak
  sawtooth, trapezoid) with its peak in g and its duration in s.
- :class:`DesignSpectrum`: a design response spectrum, pseudo-acceleration in g against frequency
  in Hz or period in s (straight lines between points on log-log axes).

:class:`Loads` groups them with the direction of the base motion and the Q of the shock response
spectrum. Constructing any of them validates it; a bad value raises :class:`ModelError` with a
one-line message naming the table, the row and the field, and ``path`` giving where it sits in
the model file.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from .errors import ModelError, is_number, shown

#: standard acceleration of gravity, m/s^2 (the g of g RMS and g^2/Hz)
G0 = 9.80665
PULSE_SHAPES = ("half-sine", "sawtooth", "trapezoid")
SPECTRUM_ABSCISSAS = ("frequency", "period")
LOAD_DIRECTIONS = ("x", "y")
#: the most breakpoints a table may have
MAX_POINTS = 10000
_LO, _HI = 1e-12, 1e12


def _value(owner: str, name: str, value, unit: str, path, lo=_LO, hi=_HI) -> float:
    """A positive finite number within [lo, hi]; a ModelError naming ``owner`` and ``name``."""
    if not is_number(value):
        raise ModelError(f"{owner}: {name} must be a number, got {shown(value)}", path)
    v = float(value)
    if not math.isfinite(v) or v <= 0:
        raise ModelError(f"{owner}: {name} must be positive, got {shown(value)} {unit}", path)
    if not lo <= v <= hi:
        raise ModelError(f"{owner}: {name} must be between {lo:g} and {hi:g} {unit}, got"
                         f" {v:g} {unit}", path)
    return v


def _table(owner: str, points, x_name: str, x_unit: str, y_name: str, y_unit: str,
           path=("points",), increasing: bool = True) -> tuple[tuple[float, float], ...]:
    """Rows ``(x, y)``: at least two, x positive and strictly increasing, y positive."""
    if isinstance(points, (str, bytes, dict)) or not hasattr(points, "__iter__"):
        raise ModelError(f"{owner}: the table must be a list of [{x_name}, {y_name}] rows, got"
                         f" {shown(points)}", path)
    rows = list(points)
    if len(rows) < 2:
        raise ModelError(f"{owner}: the table needs at least two rows, got {len(rows)}", path)
    if len(rows) > MAX_POINTS:
        raise ModelError(f"{owner}: the table may have at most {MAX_POINTS} rows, got"
                         f" {len(rows)}", path)
    out = []
    for i, row in enumerate(rows):
        where = f"{owner}: row {i + 1}"
        if isinstance(row, (str, bytes, dict)) or not hasattr(row, "__len__") or len(row) != 2:
            raise ModelError(f"{where}: a row holds two numbers [{x_name}, {y_name}], got"
                             f" {shown(row)}", path + (i,))
        x = _value(where, x_name, row[0], x_unit, path + (i, 0))
        y = _value(where, y_name, row[1], y_unit, path + (i, 1))
        if out and increasing and x <= out[-1][0]:
            raise ModelError(f"{where}: {x_name} must be above row {i}'s ({out[-1][0]:g}"
                             f" {x_unit}), got {x:g} {x_unit}", path + (i, 0))
        out.append((x, y))
    return tuple(out)


@dataclass(frozen=True)
class RandomVibration:
    """Random base vibration: an acceleration spectral density as a breakpoint table.

    points : ((frequency Hz, ASD g^2/Hz), ...) frequencies strictly increasing; log-log
        straight lines between breakpoints, zero outside the table's range.
    """

    points: tuple[tuple[float, float], ...]

    def __post_init__(self):
        object.__setattr__(self, "points", _table(
            "acceleration spectral density", self.points, "frequency", "Hz", "ASD", "g^2/Hz"))


@dataclass(frozen=True)
class ShockPulse:
    """A base acceleration pulse.

    shape : "half-sine", "sawtooth" (terminal peak: a straight rise to the peak, then an instant
        drop) or "trapezoid" (straight rise over ``rise_s``, flat, straight fall over ``fall_s``).
    peak_g : peak acceleration in g (> 0).   duration_s : the whole pulse in s.
    rise_s, fall_s : trapezoid only, s; rise + fall must not exceed the duration.
    """

    shape: str
    peak_g: float
    duration_s: float
    rise_s: float = 0.0
    fall_s: float = 0.0

    def __post_init__(self):
        if not isinstance(self.shape, str) or self.shape not in PULSE_SHAPES:
            raise ModelError(f"shock pulse: shape must be one of {', '.join(PULSE_SHAPES)}, got"
                             f" {shown(self.shape)}", ("shape",))
        object.__setattr__(self, "peak_g", _value("shock pulse", "peak", self.peak_g, "g",
                                                  ("peak_g",), 1e-9, 1e7))
        object.__setattr__(self, "duration_s", _value("shock pulse", "duration",
                                                      self.duration_s, "s", ("duration_s",),
                                                      1e-7, 1e3))
        if self.shape == "trapezoid":
            for name in ("rise_s", "fall_s"):
                object.__setattr__(self, name, _value(
                    "shock pulse", name.replace("_s", " time"), getattr(self, name), "s",
                    (name,), 1e-9, 1e3))
            if self.rise_s + self.fall_s > self.duration_s * (1 + 1e-12):
                raise ModelError(f"shock pulse: rise time + fall time ({self.rise_s:g} s +"
                                 f" {self.fall_s:g} s) must not exceed the duration"
                                 f" ({self.duration_s:g} s)", ("rise_s",))
        elif self.rise_s or self.fall_s:
            raise ModelError(f"shock pulse: rise and fall times belong to a trapezoid only, not"
                             f" a {self.shape}", ("rise_s",))

    def segments(self):
        """The pulse as pieces ``(t_start, t_end, kind, a_start, a_end)`` in s and g; ``kind``
        "sine" (a half-sine arch from 0 through ``a_start`` = peak and back to 0) or "line"."""
        T, P = self.duration_s, self.peak_g
        if self.shape == "half-sine":
            return ((0.0, T, "sine", P, 0.0),)
        if self.shape == "sawtooth":
            return ((0.0, T, "line", 0.0, P),)
        r, f = self.rise_s, self.fall_s
        pieces = [(0.0, r, "line", 0.0, P), (r, T - f, "line", P, P), (T - f, T, "line", P, 0.0)]
        return tuple(p for p in pieces if p[1] - p[0] > 1e-12 * T)

    def acceleration_g(self, t):
        """The pulse's acceleration in g at times ``t`` (s), array-like; zero outside it."""
        import numpy as np

        t = np.asarray(t, float)
        out = np.zeros_like(t)
        for t0, t1, kind, a0, a1 in self.segments():
            inside = (t >= t0) & (t <= t1)
            if kind == "sine":
                out = np.where(inside, a0 * np.sin(np.pi * (t - t0) / (t1 - t0)), out)
            else:
                out = np.where(inside, a0 + (a1 - a0) * (t - t0) / (t1 - t0), out)
        return out


@dataclass(frozen=True)
class DesignSpectrum:
    """A design response spectrum: pseudo-acceleration in g against frequency or period.

    abscissa : "frequency" (Hz) or "period" (s): what the first column of ``points`` holds.
    points : ((frequency Hz or period s, pseudo-acceleration g), ...), first column strictly
        increasing; log-log straight lines between points, the end values held beyond them.
    """

    abscissa: str
    points: tuple[tuple[float, float], ...]

    def __post_init__(self):
        if not isinstance(self.abscissa, str) or self.abscissa not in SPECTRUM_ABSCISSAS:
            raise ModelError(f"design spectrum: abscissa must be one of"
                             f" {', '.join(SPECTRUM_ABSCISSAS)}, got {shown(self.abscissa)}",
                             ("abscissa",))
        x_name, x_unit = ("frequency", "Hz") if self.abscissa == "frequency" else ("period", "s")
        object.__setattr__(self, "points", _table("design spectrum", self.points, x_name,
                                                  x_unit, "pseudo-acceleration", "g"))


@dataclass(frozen=True)
class Loads:
    """The loads defined with a model (the file's ``loads`` key).

    direction : direction of the base motion, "x" or "y".
    random, shock, spectrum : each optional (None when not defined).
    srs_q : Q (= 1 / (2 zeta)) of the shock response spectrum, 10 by common practice.
    """

    direction: str = "x"
    random: RandomVibration | None = None
    shock: ShockPulse | None = None
    spectrum: DesignSpectrum | None = None
    srs_q: float = 10.0

    def __post_init__(self):
        if not isinstance(self.direction, str) or self.direction not in LOAD_DIRECTIONS:
            raise ModelError(f"loads: direction must be one of {', '.join(LOAD_DIRECTIONS)}, got"
                             f" {shown(self.direction)}", ("direction",))
        for name, cls in (("random", RandomVibration), ("shock", ShockPulse),
                          ("spectrum", DesignSpectrum)):
            value = getattr(self, name)
            if value is not None and type(value) is not cls:
                raise ModelError(f"loads: {name} must be a {cls.__name__} or None, got"
                                 f" {shown(value)}", (name,))
        object.__setattr__(self, "srs_q", _value("loads", "srs_q (Q of the shock response"
                                                 " spectrum)", self.srs_q, "", ("srs_q",),
                                                 0.5, 1000))

    @property
    def empty(self) -> bool:
        return self.random is None and self.shock is None and self.spectrum is None


__all__ = ["G0", "DesignSpectrum", "Loads", "RandomVibration", "ShockPulse", "PULSE_SHAPES",
           "SPECTRUM_ABSCISSAS", "LOAD_DIRECTIONS"]
