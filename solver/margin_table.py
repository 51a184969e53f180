"""The margin table: every elastic mode against every source interval, with its separation.

:func:`solver.margin_check` lists only the conflicts; this table gives every pair, so a reviewer sees
how much room each mode has as well as which ones fail. One row per elastic mode and per source
interval (a band, or one order of a speed source: a line at ``order * rpm / 60`` Hz, or over an
operating range the interval ``[order * rpm_min / 60, order * rpm_max / 60]`` Hz).

Separation, in percent of the excitation frequency at the nearest edge of the source's own interval
``[lo, hi]`` (Hz), for a mode at ``f`` Hz:

- ``position == "below"`` (``f < lo``): ``separation = (lo - f) / lo * 100``;
- ``position == "above"`` (``f > hi``): ``separation = (f - hi) / hi * 100``;
- ``position == "inside"`` (``lo <= f <= hi``; on a line means ``f == lo == hi``): how far in, to
  the nearer edge by the same measure, ``min((f - lo) / lo, (hi - f) / hi) * 100`` (a band from
  0 Hz has only its upper edge to leave by).

This is the measure :mod:`solver.margins` widens intervals by, ``[lo (1 - p), hi (1 + p)]`` with
``p = margin_percent / 100``: a mode below passes exactly when ``separation >= margin_percent``
(``f <= lo (1 - p)``), one above exactly when ``separation >= margin_percent``
(``f >= hi (1 + p)``). ``passes`` is computed by the very test of :func:`solver.margin_check` (a mode
on a widened edge passes, to :data:`solver.margins.EDGE_RTOL`), so the table and the check agree
row for row; a mode inside the interval fails at any positive margin.

``clear_hz``: the nearest frequency that clears every source at once: the nearer edge of the union
of widened intervals the mode lies in (:attr:`solver.MarginResult.keep_out`), the mode's own
frequency when it is already clear. Zero-frequency modes are not listed.
"""

from __future__ import annotations

from dataclasses import dataclass

import math

from .errors import ModelError, checked_arguments, number
from .margins import EDGE_RTOL, in_conflict, keep_out_intervals, source_bands
from .model import Model

POSITIONS = ("below", "inside", "above")


@dataclass(frozen=True)
class MarginRow:
    """One elastic mode against one source interval (units: Hz and %; see the module docstring).

    ``order`` is None for a band. ``low_hz`` / ``high_hz``: the source's own interval (equal for a
    single-speed order). ``clear_hz`` / ``clear_below_hz`` / ``clear_above_hz``: the mode's nearest
    frequency clear of every source, and the nearest below (None when no positive frequency below
    is clear) and above; all three equal ``frequency_hz`` for a mode that is clear already.
    """

    mode: int
    frequency_hz: float
    source_id: str
    order: float | None
    low_hz: float
    high_hz: float
    position: str
    separation_percent: float
    passes: bool
    clear_hz: float
    clear_below_hz: float | None
    clear_above_hz: float | None


@dataclass(frozen=True)
class MarginTable:
    """All rows (by mode, then source in model order, then order), the margin and the union of
    widened intervals (``keep_out``: disjoint ``(lo, hi)`` Hz, ascending)."""

    margin_percent: float
    rows: tuple
    keep_out: tuple

    @property
    def ok(self) -> bool:
        """Every row passes (True for a model with no sources or no elastic modes)."""
        return all(r.passes for r in self.rows)

    def for_mode(self, mode: int) -> tuple:
        return tuple(r for r in self.rows if r.mode == mode)

    @property
    def failing(self) -> tuple:
        return tuple(r for r in self.rows if not r.passes)


def margin_of(model: Model, margin_percent=None) -> float:
    """The margin in % to use: the model's, or ``margin_percent`` checked (0 <= p < 100, as the
    model itself allows: at 100 % the band ``f / (1 - p)`` has no upper end)."""
    if margin_percent is None:
        return float(model.margin_percent)
    pct = number(margin_percent, "margin_percent")
    if not (math.isfinite(pct) and 0.0 <= pct < 100.0):
        raise ModelError(f"margin_percent must be from 0 to below 100 %, got {pct:g}")
    return pct


def separation(f: float, lo: float, hi: float) -> tuple[str, float]:
    """``(position, separation in %)`` of a frequency ``f`` from the interval ``[lo, hi]`` Hz (the
    module docstring gives the definition)."""
    if f < lo:
        return "below", (lo - f) / lo * 100.0
    if f > hi:
        # a source at 0 Hz (a speed so low its frequency underflows) is infinitely far below
        return "above", (f - hi) / hi * 100.0 if hi > 0 else math.inf
    depth = (hi - f) / hi if hi > 0 else 0.0
    if lo > 0:
        depth = min(depth, (f - lo) / lo)
    return "inside", depth * 100.0


def nearest_clear(f: float, keep_out) -> tuple[float, float | None, float | None]:
    """``(nearest, below, above)``: the frequencies nearest ``f`` clear of every interval of
    ``keep_out`` (open intervals, as :func:`solver.margins.keep_out_intervals` gives them).

    ``f`` itself three times when it is clear; ``below`` is None when the interval it is in starts
    at 0 Hz (no positive frequency below clears it)."""
    for a, b in keep_out:
        if a * (1 + EDGE_RTOL) < f < b * (1 - EDGE_RTOL):
            below = a if a > 0 else None
            nearest = below if below is not None and f - a <= b - f else b
            return nearest, below, b
    return f, f, f


@checked_arguments
def margin_table(model: Model, modal, margin_percent: float | None = None) -> MarginTable:
    """The margin table of ``model``'s elastic modes (from ``modal``, a ModalResult: its
    ``frequencies_hz`` and ``is_zero`` are read) against its excitation sources.

    ``margin_percent``: the margin in %, default the model's. Raises ModelError for a margin outside
    [0, 100).
    """
    pct = margin_of(model, margin_percent)
    bands = source_bands(model, pct)
    keep_out = keep_out_intervals(bands)
    rows = []
    for i, (f, zero) in enumerate(zip(modal.frequencies_hz, modal.is_zero)):
        f = float(f)
        if zero or not f > 0:
            continue
        nearest, below, above = nearest_clear(f, keep_out)
        for sid, order, lo, hi, lo_w, hi_w in bands:
            position, sep = separation(f, lo, hi)
            fails = in_conflict(f, lo, hi, lo_w, hi_w)
            rows.append(MarginRow(mode=i + 1, frequency_hz=f, source_id=sid, order=order,
                                  low_hz=float(lo), high_hz=float(hi), position=position,
                                  separation_percent=float(sep), passes=not fails,
                                  clear_hz=float(nearest), clear_below_hz=below,
                                  clear_above_hz=above))
    return MarginTable(margin_percent=pct, rows=tuple(rows), keep_out=keep_out)


__all__ = ["MarginRow", "MarginTable", "POSITIONS", "margin_of", "margin_table",
           "nearest_clear", "separation"]
