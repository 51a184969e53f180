"""Reading the window as a person does: the tick labels drawn on plot axes, and every text shown.

Kept apart from the code under test: tick labels are read from what pyqtgraph lays out to draw
(``AxisItem.generateDrawSpecs``) and parsed here with a parser of our own, so a test compares what
is drawn with where it is drawn.
"""

from __future__ import annotations

import math
import re

import numpy as np
import pyqtgraph as pg
from PySide6.QtCore import QModelIndex, Qt
from PySide6.QtGui import QImage, QPainter
from PySide6.QtWidgets import (QAbstractButton, QAbstractItemView, QComboBox, QLabel, QLineEdit,
                               QListWidget)

_SUP = str.maketrans("⁻⁰¹²³⁴⁵⁶⁷⁸⁹", "-0123456789")
#: SI prefixes a label may put before its unit (then ticks are in that multiple).
PREFIX = {"p": 1e-12, "n": 1e-9, "µ": 1e-6, "u": 1e-6, "m": 1e-3, "k": 1e3, "M": 1e6, "G": 1e9}
#: Units an axis of this program may state (SI and US customary, common practice).
UNITS = {"Hz", "s", "m", "rad", "deg", "kg", "lb", "in", "N/m", "lbf/in", "N m/rad",
         "lbf in/rad", "m/N", "in/lbf", "m/s/N", "in/s/lbf", "m/s²/N", "in/s²/lbf", "rad/(N m)",
         "rad/(lbf in)", "rad/s/(N m)", "rad/s/(lbf in)", "rad/s²/(N m)", "rad/s²/(lbf in)",
         "ratio", "rpm"}


def read_number(text: str) -> float:
    """A tick label as a number: ``20``, ``-0.5``, ``2.5e-4``, ``200e-6``, ``5×10⁶``, ``10⁻⁴``,
    ``2k`` (a bare SI prefix letter multiplies)."""
    s = text.strip().replace("−", "-").replace("·", "×")
    m = re.fullmatch(r"([-+]?[\d.]*)\s*×?\s*10([⁻⁰¹²³⁴⁵⁶⁷⁸⁹]+)", s)
    if m:
        mant = float(m.group(1)) if m.group(1) not in ("", "+", "-") else 1.0
        return mant * 10.0 ** int(m.group(2).translate(_SUP))
    m = re.fullmatch(r"([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*([pnµumkMG]?)", s)
    if not m:
        raise ValueError(f"tick label {text!r} is not a number")
    return float(m.group(1)) * (PREFIX[m.group(2)] if m.group(2) else 1.0)


def plain(html: str) -> str:
    return re.sub(r"<[^>]+>", "", html or "").replace("&nbsp;", " ").strip()


def _last_bracket(title: str) -> str | None:
    """The text of the balanced ``(...)`` that ends ``title`` (``rad/(N m)`` nests)."""
    t = title.rstrip()
    if not t.endswith(")"):
        return None
    depth = 0
    for i in range(len(t) - 1, -1, -1):
        depth += {")": 1, "(": -1}.get(t[i], 0)
        if depth == 0:
            return t[i + 1:-1].strip()
    return None


def stated_unit(axis) -> tuple[str, float]:
    """(unit text, SI-prefix multiple) stated in the axis title as ``... (unit)``; raises
    AssertionError when the title states none this program uses."""
    title = plain(axis.labelString())
    unit = _last_bracket(title)
    assert unit is not None, f"axis title {title!r} states no unit"
    if unit in UNITS:
        return unit, 1.0
    if unit[:1] in PREFIX and unit[1:] in UNITS:
        return unit, PREFIX[unit[:1]]
    raise AssertionError(f"axis title {title!r}: {unit!r} is not a unit with an SI prefix")


def tick_readings(axis) -> list[tuple[str, float, float]]:
    """``(label, value read from the label, value at the label's place on the axis)`` for every
    tick label pyqtgraph draws on ``axis`` (positions in data units: 10**x on a log axis)."""
    img = QImage(1600, 1200, QImage.Format.Format_ARGB32)
    p = QPainter(img)
    try:
        specs = axis.generateDrawSpecs(p)
    finally:
        p.end()
    if specs is None:
        return []
    vb = axis.linkedView()
    out = []
    for rect, _flags, text in specs[2]:
        if not text.strip():
            continue
        at = vb.mapSceneToView(axis.mapToScene(rect.center()))
        pos = at.x() if axis.orientation in ("bottom", "top") else at.y()
        out.append((text, read_number(text), 10.0 ** pos if axis.logMode else pos))
    return out


def plots_in(window) -> list[pg.PlotItem]:
    """Every PlotItem of every pyqtgraph view in the window (docks included)."""
    out = []
    for view in window.findChildren(pg.GraphicsView):
        for item in view.scene().items():
            if isinstance(item, pg.PlotItem) and item not in out:
                out.append(item)
    return out


def plotted_xy(plot: pg.PlotItem) -> tuple[np.ndarray, np.ndarray]:
    """x and y of every curve in ``plot`` (data units, finite points inside the visible range)."""
    xs, ys = [], []
    (x0, x1), (y0, y1) = plot.getViewBox().viewRange()
    lx, ly = plot.getAxis("bottom").logMode, plot.getAxis("left").logMode
    for item in plot.listDataItems():
        x, y = item.xData, item.yData
        if x is None or y is None or not len(x):
            continue
        x, y = np.asarray(x, float), np.asarray(y, float)
        ok = np.isfinite(x) & np.isfinite(y)
        if lx:
            ok &= x > 0
        if ly:
            ok &= y > 0
        x, y = x[ok], y[ok]
        px = np.log10(x) if lx else x
        py = np.log10(y) if ly else y
        inside = (px >= x0) & (px <= x1) & (py >= y0) & (py <= y1)
        xs.append(x[inside])
        ys.append(y[inside])
    if not xs:
        return np.zeros(0), np.zeros(0)
    return np.concatenate(xs), np.concatenate(ys)


def check_axis(axis, data: np.ndarray) -> list[str]:
    """Problems with one axis: each tick label must read the value where it is drawn (in the
    unit the title states), and the labelled ticks must overlap the plotted data."""
    problems = []
    readings = tick_readings(axis)
    if not readings:
        return problems
    title = plain(axis.labelString())
    try:
        unit, multiple = stated_unit(axis)
    except AssertionError as exc:
        return [str(exc)]
    lo, hi = axis.range
    span = (hi - lo) if not axis.logMode else (hi - lo)
    for text, value, pos in readings:
        true = value * multiple
        if axis.logMode:
            bad = not (true > 0 and abs(math.log10(true) - math.log10(pos)) <= 0.02 * span)
        else:
            bad = abs(true - pos) > 0.02 * abs(span)
        if bad:
            problems.append(f"{title}: tick {text!r} reads {true:g} {unit} but sits at {pos:g}")
    if len(data):
        values = [v * multiple for _t, v, _p in readings]
        if not (min(values) <= data.max() and max(values) >= data.min()):
            problems.append(f"{title}: ticks {min(values):g} to {max(values):g} miss the data"
                            f" {data.min():g} to {data.max():g}")
    return problems


def check_plot(plot: pg.PlotItem) -> tuple[list[str], int]:
    """(problems, number of tick labels read) of the left and bottom axes of ``plot``."""
    x, y = plotted_xy(plot)
    problems, n = [], 0
    for side, data in (("bottom", x), ("left", y)):
        axis = plot.getAxis(side)
        if not axis.isVisible():
            continue
        n += len(tick_readings(axis))
        problems += check_axis(axis, data)
    return problems, n


def window_texts(window) -> list[str]:
    """Every text a person can read in the window's widgets: labels, buttons, line edits, combo
    items, list items, table cells and headers, plot titles, axis titles, legends and text items
    on the plots, and the status bar message."""
    out = []
    for w in window.findChildren(QLabel):
        out.append(w.text())
    for w in window.findChildren(QAbstractButton):
        out.append(w.text())
    for w in window.findChildren(QLineEdit):
        out.append(w.text())
    for w in window.findChildren(QComboBox):
        out += [w.itemText(i) for i in range(w.count())]
    for w in window.findChildren(QListWidget):
        out += [w.item(i).text() for i in range(w.count())]
    for w in window.findChildren(QAbstractItemView):
        model = w.model()
        if model is None or isinstance(w, QListWidget):
            continue
        for c in range(model.columnCount()):
            out.append(str(model.headerData(c, Qt.Orientation.Horizontal) or ""))
        for r in range(model.rowCount()):
            for c in range(model.columnCount()):
                for role in (Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.ToolTipRole):
                    v = model.data(model.index(r, c, QModelIndex()), role)
                    if isinstance(v, str):
                        out.append(v)
    for view in window.findChildren(pg.GraphicsView):
        for item in view.scene().items():
            if isinstance(item, pg.TextItem):
                out.append(item.toPlainText())
            elif isinstance(item, pg.LabelItem):
                out.append(plain(item.text))
            elif isinstance(item, pg.AxisItem):
                out.append(plain(item.labelString()))
    out.append(window.statusBar().currentMessage())
    return [plain(t) for t in out if t]


class _RecordingPainter:
    """Stands in for the report's QPainter: notes every string drawn, passes everything on."""

    def __init__(self, painter, drawn: list):
        self._painter = painter
        self._drawn = drawn

    def drawText(self, *args):  # noqa: N802 (Qt's name)
        self._drawn += [a for a in args if isinstance(a, str)]
        return self._painter.drawText(*args)

    def __getattr__(self, name):
        return getattr(self._painter, name)


def record_report_text(monkeypatch) -> list[str]:
    """Every string the report draws from now on (through its page's painter)."""
    from app.report import page

    drawn: list[str] = []
    original = page._Page.__init__

    def init(self, painter, *a, **kw):
        original(self, _RecordingPainter(painter, drawn), *a, **kw)

    monkeypatch.setattr(page._Page, "__init__", init)
    return drawn
