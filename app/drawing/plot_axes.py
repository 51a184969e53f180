"""Axis helpers shared by every plot in the window."""

from __future__ import annotations

import numpy as np

from app.results.response_data import decade_ticks


def log_ticks(lo: float, hi: float, **kw):
    """pyqtgraph ticks (log10 units) for a log axis: labelled majors, unlabelled minors
    (``kw`` as for :func:`app.results.response_data.decade_ticks`)."""
    ticks = decade_ticks(lo, hi, **kw)
    return [[(np.log10(v), t) for v, t in ticks if t], [(np.log10(v), "") for v, t in ticks if not t]]
