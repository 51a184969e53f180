"""Axis helpers shared by every plot in the window: ticks that read as true values.

pyqtgraph scales an axis by a power of a thousand on its own (``autoSIPrefix``) and, when the label
carries no unit it understands, says so only in a small ``(x1e-06)`` that is easily cut off, so a
receptance of 2e-4 m/N read as 200. :class:`TrueValueAxis` turns that off and labels every tick
with the value itself in the shared number format (:mod:`app.text.numbers`): engineering notation
(``200e-6``) where a value needs an exponent, so the unit in the axis title is the unit of the
tick labels.

The axis also makes room for what it shows: its width (or height) is its widest tick label plus its
title, measured, never a fixed number of pixels, so a title is never drawn over the tick labels;
a title too long for the axis goes onto two lines (the quantity, then its unit) and, only if that
is still too long, into a smaller font. Axes stacked over a shared x axis keep one width
(:meth:`TrueValueAxis.share_width`), so their plots start at the same x.
"""

from __future__ import annotations

import html

import numpy as np
import pyqtgraph as pg
from PySide6.QtWidgets import QGraphicsItem

from app.results.response_data import decade_ticks
from app.text.numbers import number, tick_texts


#: pyqtgraph draws a title this far (px) outside the axis's edge (AxisItem.resizeEvent).
_NUDGE = 5
#: Room between a title and the nearest tick label (px).
_GAP = 2
#: The smallest title font tried before a title is left cut (pt).
_MIN_TITLE_PT = 7.0


def _leading(log_value: float) -> int:
    """The leading digit of 10 ** ``log_value`` (1..9)."""
    mantissa = 10.0 ** (log_value - np.floor(log_value + 1e-9))
    return int(round(mantissa)) if abs(mantissa - round(mantissa)) < 1e-6 else 0


class TrueValueAxis(pg.AxisItem):
    """An axis whose tick labels are the plotted values themselves (no hidden scale factor).

    Linear: one engineering exponent for the whole axis (``0``, ``0.5e-3``, ``1e-3``). Log mode:
    the value at each tick (``1e-6``, ``10e-6``, ``100e-6``), not its logarithm. Sized to its
    widest tick label plus its title; the title wraps or shrinks to fit the axis's length.
    """

    def __init__(self, orientation, **kw):
        self._peers: list[TrueValueAxis] = [self]
        self._title_form = (False, None)      # (two lines, point size or None)
        super().__init__(orientation, **kw)
        self.enableAutoSIPrefix(False)
        # pyqtgraph records an axis as a QPicture and replays it, text shaping and all, on every
        # paint of its plot (~3 ms an axis); a pixmap cache makes an unchanged axis a copy
        # (bench/plot_paint_bench.py). A new range, size or label repaints it as before.
        self.setCacheMode(QGraphicsItem.CacheMode.DeviceCoordinateCache)

    def tickStrings(self, values, scale, spacing):  # noqa: N802 (pyqtgraph's name)
        if self.logMode:
            # pyqtgraph ticks every 1..9 x 10^k on a short log axis: labelled all, the upper
            # ones of a decade run into each other; 1, 2 and 5 are labelled, the rest are ticks
            return [number(10.0 ** float(v), 3) if _leading(float(v)) in (1, 2, 5) else ""
                    for v in values]
        return tick_texts([v * scale for v in values], spacing * scale)

    # -- room for the ticks and the title ----------------------------------------------------
    def share_width(self, *others: TrueValueAxis) -> None:
        """Give this axis and ``others`` (vertical axes of plots stacked over one x axis) the
        width the widest of them needs."""
        group = list(dict.fromkeys(self._peers + [a for o in others for a in o._peers]))
        for axis in group:
            axis._peers = group
        self._updateWidth()

    def _title_room(self) -> float:
        """What the title takes across the axis (px): its height less pyqtgraph's outward
        nudge, and a small gap before the tick labels."""
        if not self.label.isVisible():
            return 0.0
        return max(0.0, self.label.boundingRect().height() - _NUDGE) + _GAP

    def _needed_width(self) -> float:
        if not self.isVisible():
            return 0.0
        if self.fixedWidth is not None:
            return float(self.fixedWidth)
        w = 0.0
        if self.style["showValues"]:
            w = (self.textWidth if self.style["autoExpandTextSpace"]
                 else self.style["tickTextWidth"]) + self.style["tickTextOffset"][0]
        return w + max(0, self.style["tickLength"]) + self._title_room()

    def _updateWidth(self):  # noqa: N802 (pyqtgraph's name)
        peers = getattr(self, "_peers", None)
        if peers is None:                     # during pyqtgraph's own __init__
            return super()._updateWidth()
        w = int(np.ceil(max(a._needed_width() for a in peers)))
        for axis in peers:
            if axis.minimumWidth() != w or axis.maximumWidth() != w:
                axis.setMaximumWidth(w)
                axis.setMinimumWidth(w)
            axis.picture = None

    def _updateHeight(self):  # noqa: N802 (pyqtgraph's name)
        if getattr(self, "_peers", None) is None or self.fixedHeight is not None \
                or not self.isVisible():
            return super()._updateHeight()
        h = 0.0
        if self.style["showValues"]:
            h = (self.textHeight if self.style["autoExpandTextSpace"]
                 else self.style["tickTextHeight"]) + self.style["tickTextOffset"][1]
        h += max(0, self.style["tickLength"])
        if self.label.isVisible():
            # the title sits its nudge below the axis's edge (pyqtgraph's placement)
            h += max(0.0, self.label.boundingRect().height() - _NUDGE) + _GAP
        h = int(np.ceil(h))
        self.setMaximumHeight(h)
        self.setMinimumHeight(h)
        self.picture = None

    # -- a title that fits its axis ----------------------------------------------------------
    def labelString(self) -> str:  # noqa: N802 (pyqtgraph's name)
        two, pt = getattr(self, "_title_form", (False, None))
        text = self.labelText if not self.labelUnits else \
            f"{self.labelText} ({self.labelUnitPrefix}{self.labelUnits})"
        head, sep, unit = text.partition(" (")
        body = html.escape(text)
        if two and sep:
            body = f"{html.escape(head)}<br>{html.escape('(' + unit)}"
        style = dict(self.labelStyle)
        if pt is not None:
            style["font-size"] = f"{pt:g}pt"
        css = ";".join(f"{k}: {v}" for k, v in style.items())
        return f"<div style='{css}; text-align: center'>{body}</div>" if two and sep else \
            f"<span style='{css}'>{body}</span>"

    def _title_length(self) -> float:
        return self.label.boundingRect().width()

    def _fit_title(self) -> None:
        """One line if it fits along the axis, else two lines, else two lines in a smaller
        font (down to :data:`_MIN_TITLE_PT`)."""
        if self.label is None or not self.labelText:
            return
        room = self.height() if self.orientation in ("left", "right") else self.width()
        forms = [(False, None), (True, None)]
        base = self.label.font().pointSizeF()
        size = self.labelStyle.get("font-size")
        if isinstance(size, str) and size.endswith("pt"):
            base = float(size[:-2])
        pt = base - 0.5
        while pt >= _MIN_TITLE_PT:
            forms.append((True, pt))
            pt -= 0.5
        chosen = forms[0]
        if room > 1:
            for form in forms:
                self._title_form = form
                self.label.setHtml(self.labelString())
                chosen = form
                if self._title_length() <= room:
                    break
        self._title_form = chosen
        self.label.setHtml(self.labelString())
        # the title's thickness across the axis may have changed
        self._adjustSize()

    def _updateLabel(self):  # noqa: N802 (pyqtgraph's name)
        self._fit_title()
        super()._updateLabel()

    def resizeEvent(self, ev=None):  # noqa: N802 (Qt's name)
        if self.label is not None and self.labelText:
            room = self.height() if self.orientation in ("left", "right") else self.width()
            fits = self._title_length() <= room
            if not fits or self._title_form != (False, None):
                self._fit_title()
        super().resizeEvent(ev)


def paint_whole(view):
    """Make a pyqtgraph view (PlotWidget, GraphicsLayoutWidget) repaint its whole viewport on
    every update, and return it. pyqtgraph asks for the changed region only; Qt then draws every
    antialiased curve through that region's clip, several times slower than unclipped (an edit's
    paints of a 200-mode Tune sweep: ~40 ms against ~6 ms, bench/plot_paint_bench.py), while
    the whole plot with its cached axes paints in a few ms."""
    from PySide6.QtWidgets import QGraphicsView

    view.setViewportUpdateMode(QGraphicsView.ViewportUpdateMode.FullViewportUpdate)
    return view


def true_value_axes(*sides: str) -> dict:
    """``axisItems`` for a PlotItem / PlotWidget: a :class:`TrueValueAxis` on each side
    (default left and bottom)."""
    return {side: TrueValueAxis(side) for side in (sides or ("left", "bottom"))}


def log_ticks(lo: float, hi: float, **kw):
    """pyqtgraph ticks (log10 units) for a log axis: labelled majors, unlabelled minors
    (``kw`` as for :func:`app.results.response_data.decade_ticks`)."""
    ticks = decade_ticks(lo, hi, **kw)
    return [[(np.log10(v), t) for v, t in ticks if t], [(np.log10(v), "") for v, t in ticks if not t]]


__all__ = ["TrueValueAxis", "log_ticks", "true_value_axes"]
