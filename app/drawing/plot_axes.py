"""Axis helpers shared by every plot in the window: ticks that read as true values.

pyqtgraph scales an axis by a power of a thousand on its own (``autoSIPrefix``) and, when the label
carries no unit it understands, says so only in a small ``(x1e-06)`` that is easily cut off, so a
receptance of 2e-4 m/N read as 200. :class:`TrueValueAxis` turns that off and labels every tick
with the value itself in the shared number format (:mod:`app.text.numbers`): engineering notation
(``200e-6``) where a value needs an exponent, so the unit in the axis title is the unit of the
tick labels.
"""

from __future__ import annotations

import numpy as np
import pyqtgraph as pg

from app.results.response_data import decade_ticks
from app.text.numbers import number, tick_texts


class TrueValueAxis(pg.AxisItem):
    """An axis whose tick labels are the plotted values themselves (no hidden scale factor).

    Linear: one engineering exponent for the whole axis (``0``, ``0.5e-3``, ``1e-3``). Log mode:
    the value at each tick (``1e-6``, ``10e-6``, ``100e-6``), not its logarithm.
    """

    def __init__(self, orientation, **kw):
        super().__init__(orientation, **kw)
        self.enableAutoSIPrefix(False)

    def tickStrings(self, values, scale, spacing):  # noqa: N802 (pyqtgraph's name)
        if self.logMode:
            return [number(10.0 ** float(v), 3) for v in values]
        return tick_texts([v * scale for v in values], spacing * scale)


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
