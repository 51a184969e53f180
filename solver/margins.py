"""Frequency separation check of every mode against the model's excitation sources.

A source is a set of intervals in Hz: a shaft speed gives one line per order (``order * rpm / 60``),
over an operating range the interval ``[order * rpm_min / 60, order * rpm_max / 60]``; a band gives
``[f_min_hz, f_max_hz]``. With a margin ``p`` (``margin_percent / 100``) a source's
interval ``[lo, hi]`` is widened to ``[lo (1 - p), hi (1 + p)]``: a natural frequency must lie at
least ``p`` of the excitation frequency away from it (common practice: 10 to 20 %, no single
source). A mode conflicts when its frequency lies strictly inside a widened interval; a mode exactly
on an edge has exactly the margin asked for and passes; "exactly" allows for round-off in the
computed frequency (:data:`EDGE_RTOL`), so a mode retuned onto an edge is not flagged by a few ulp.
Zero-frequency modes are not checked.

Advice: widened intervals of different sources (or orders) can overlap, e.g. 600 rpm with orders 1
and 2 at 40 %: [6, 14] and [12, 28] Hz. Moving a 13 Hz mode to 14 Hz clears order 1 but lands in
order 2. So a conflict's "move to" frequencies are the edges of the *union* of all widened
intervals around the mode (here 6 and 28 Hz): the nearest frequencies below and above it that clear
every source. Intervals that only touch (one ends where the next begins) leave that point clear.
"""

from __future__ import annotations

from dataclasses import dataclass

from .errors import checked_arguments, number
from .model import Model
from .naming import named_id

#: Relative tolerance on a widened edge: a mode within this of an edge is on it (round-off of the
#: eigen-solver and of retune is ~1e-13; no margin in practice is set to better than 1e-9).
EDGE_RTOL = 1e-9


@dataclass(frozen=True)
class Conflict:
    """One mode inside one widened source interval.

    ``low_hz`` / ``high_hz``: the source interval itself (before widening).
    ``lower_to_hz`` / ``raise_to_hz``: the nearest frequencies below and above the mode that clear
    every source (the edges of the union of overlapping widened intervals around it);
    ``lower_to_hz`` is 0 when no positive frequency below clears them (a band from 0 Hz).
    ``move_hz``: the smaller signed change that clears every source (negative = lower the mode).
    """

    mode: int
    frequency_hz: float
    source_id: str
    order: float | None
    low_hz: float
    high_hz: float
    lower_to_hz: float
    raise_to_hz: float
    move_hz: float
    message: str


@dataclass(frozen=True)
class MarginResult:
    """``bands``: (source_id, order or None, lo, hi, lo_widened, hi_widened) per source interval;
    ``keep_out``: the union of the widened intervals as disjoint (lo, hi) in Hz, ascending: a mode
    strictly inside one is within the margin of some source."""

    margin_percent: float
    conflicts: tuple
    bands: tuple  # (source_id, order or None, lo, hi, lo_widened, hi_widened)
    keep_out: tuple = ()

    def for_mode(self, mode: int) -> tuple:
        return tuple(c for c in self.conflicts if c.mode == mode)

    @property
    def ok(self) -> bool:
        return not self.conflicts


@checked_arguments
def source_bands(model: Model, margin_percent: float | None = None) -> tuple:
    """Every source interval with its widened edges: (id, order, lo, hi, lo_w, hi_w) in Hz."""
    p = (model.margin_percent if margin_percent is None else margin_percent) / 100.0
    bands = []
    for e in model.excitations:
        # a speed order is a line, or over an operating range the band it sweeps; widened as
        # any band (Excitation.frequencies_hz gives one (lo, hi) per order)
        orders = e.orders if e.type == "speed" else (None,)
        for o, (lo, hi) in zip(orders, e.frequencies_hz()):
            bands.append((e.id, o, lo, hi, lo * (1 - p), hi * (1 + p)))
    return tuple(bands)


def in_conflict(f: float, lo: float, hi: float, lo_w: float, hi_w: float) -> bool:
    """True when a mode at ``f`` Hz violates the margin of the source interval ``[lo, hi]``
    widened to ``(lo_w, hi_w)``: strictly inside the widened interval (a mode exactly on a
    widened edge has exactly the margin and passes), or on the excitation itself, which is a
    resonance at any margin, 0 % included (both to :data:`EDGE_RTOL`)."""
    inside = lo_w * (1 + EDGE_RTOL) < f < hi_w * (1 - EDGE_RTOL)
    return inside or lo * (1 - EDGE_RTOL) <= f <= hi * (1 + EDGE_RTOL)


def keep_out_intervals(bands) -> tuple:
    """Union of the widened intervals ``(lo_w, hi_w)`` of ``bands`` (see :func:`source_bands`) as
    disjoint (lo, hi) in Hz, ascending. Intervals are open: two that only touch (within
    :data:`EDGE_RTOL`) stay apart, since their common edge has the margin from both."""
    spans = sorted((b[4], b[5]) for b in bands if b[5] > b[4])
    merged: list[list[float]] = []
    for lo, hi in spans:
        if merged and lo * (1 + EDGE_RTOL) < merged[-1][1] * (1 - EDGE_RTOL):
            merged[-1][1] = max(merged[-1][1], hi)
        else:
            merged.append([lo, hi])
    return tuple((lo, hi) for lo, hi in merged)


@checked_arguments
def margin_check(model: Model, modal, margin_percent: float | None = None) -> MarginResult:
    """Check every elastic mode of ``modal`` (a ModalResult) against the model's sources."""
    pct = model.margin_percent if margin_percent is None else number(margin_percent,
                                                                     "margin_percent")
    bands = source_bands(model, pct)
    keep_out = keep_out_intervals(bands)
    zero = modal.is_zero
    conflicts = []
    for i, f in enumerate(modal.frequencies_hz):
        if zero[i]:
            continue
        for sid, order, lo, hi, lo_w, hi_w in bands:
            if in_conflict(f, lo, hi, lo_w, hi_w):
                below, above = next(((a, b) for a, b in keep_out if a <= f <= b), (lo_w, hi_w))
                down, up = below - f, above - f
                move = down if (below > 0 and abs(down) <= abs(up)) else up
                source = named_id(model, sid)
                span = f"{lo:.4g} Hz" if hi <= lo else f"{lo:.4g} to {hi:.4g} Hz"
                what = (f"{source} order {order:g} ({span})" if order is not None
                        else f"{source} ({span})")
                if below > 0:
                    way = f"move it below {below:.4g} Hz or above {above:.4g} Hz"
                else:
                    way = f"move it above {above:.4g} Hz (no frequency below clears the sources)"
                if (below, above) != (lo_w, hi_w):
                    way += " (the nearest frequencies clear of every source)"
                msg = f"mode {i + 1} at {f:.4g} Hz is within {pct:g} % of {what}: {way}"
                conflicts.append(Conflict(mode=i + 1, frequency_hz=float(f), source_id=sid,
                                          order=order, low_hz=lo, high_hz=hi,
                                          lower_to_hz=float(max(below, 0.0)),
                                          raise_to_hz=float(above), move_hz=float(move),
                                          message=msg))
    # one conflict per mode and source interval (a speed with several orders may flag a mode
    # once each; they then share the same advice)
    return MarginResult(margin_percent=pct, conflicts=tuple(conflicts), bands=bands,
                        keep_out=keep_out)
