"""Log axes label 1, 2 and 5 times a power of ten, never every minor tick.

Common practice (readable plots): on a log axis spanning less than two decades pyqtgraph puts a
tick at every 1..9 x 10^k; labelled all, 60e-9, 70e-9, 80e-9 and 90e-9 ran into each other on
the absorber plot. The true value is still what each label says (the axis shows values, not
their logarithms).
"""

import numpy as np
import pyqtgraph as pg

from app.drawing.plot_axes import true_value_axes


def test_minor_ticks_of_a_short_log_axis_are_not_labelled(qtbot):
    w = pg.PlotWidget(axisItems=true_value_axes("left", "bottom"))
    qtbot.addWidget(w)
    w.setLogMode(y=True)
    axis = w.getAxis("left")
    values = np.log10([6e-8, 7e-8, 8e-8, 9e-8, 1e-7, 2e-7, 3e-7, 4e-7, 5e-7])
    labels = axis.tickStrings(list(values), 1.0, 0.1)
    shown = {v: t for v, t in zip([6e-8, 7e-8, 8e-8, 9e-8, 1e-7, 2e-7, 3e-7, 4e-7, 5e-7], labels)}
    assert all(shown[v] == "" for v in (6e-8, 7e-8, 8e-8, 9e-8, 3e-7, 4e-7))
    assert shown[1e-7] == "100e-9" and shown[2e-7] == "200e-9" and shown[5e-7] == "500e-9"
