"""What a person can read in the window: every text of every widget, and every text that does not
fit its widget (elided or cut off). Shared by the stale-state and the clipping tests.

Texts come from the widgets themselves (QLabel, buttons, combo items, line and spin edits, list
and table cells and headers, tab bars, dock titles, the status bar), from the pyqtgraph plots
(titles, axis labels, legend entries, text items) and from the canvas items' labels.
"""

from __future__ import annotations

import pyqtgraph as pg
from PySide6.QtCore import QModelIndex, QPointF, Qt
from PySide6.QtGui import QFontMetrics
from PySide6.QtWidgets import (QAbstractButton, QAbstractItemView, QAbstractScrollArea, QAbstractSpinBox, QCheckBox,
                               QComboBox, QDockWidget, QGraphicsSimpleTextItem, QGraphicsView,
                               QLabel, QLineEdit, QListWidget, QScrollArea, QStatusBar, QStyle,
                               QStyleOptionComboBox, QTableView, QTabBar, QWidget)


def _model_texts(model, where):
    """Every display text of an item model: horizontal headers and cells."""
    out = []
    if model is None:
        return out
    for c in range(model.columnCount()):
        h = model.headerData(c, Qt.Orientation.Horizontal, Qt.ItemDataRole.DisplayRole)
        if h is not None:
            out.append((f"{where} header {c}", str(h)))
    for r in range(model.rowCount()):
        for c in range(model.columnCount()):
            v = model.index(r, c, QModelIndex()).data(Qt.ItemDataRole.DisplayRole)
            if v is not None:
                out.append((f"{where} cell {r},{c}", str(v)))
    return out


def plot_texts(plot: pg.PlotWidget, where: str):
    pi = plot.getPlotItem()
    out = []
    title = pi.titleLabel.text if pi.titleLabel is not None else ""
    if title:
        out.append((f"{where} title", title))
    for name in ("left", "bottom", "right", "top"):
        ax = pi.getAxis(name)
        if ax.isVisible() and ax.labelText:
            out.append((f"{where} {name} axis", f"{ax.labelText} {ax.labelUnits or ''}".strip()))
    if pi.legend is not None:
        for _sample, label in pi.legend.items:
            out.append((f"{where} legend", label.text))
    for item in pi.vb.addedItems:
        if isinstance(item, pg.TextItem):
            out.append((f"{where} text", item.textItem.toPlainText()))
    return out


def window_texts(window) -> list[tuple[str, str]]:
    """``[(where, text)]`` of every widget of ``window`` and of its plots and canvas."""
    out = [("window title", window.windowTitle())]
    widgets = [window] + window.findChildren(QWidget)
    for w in widgets:
        name = f"{type(w).__name__}({w.objectName()})"
        if isinstance(w, QLabel):
            out.append((name, w.text()))
        elif isinstance(w, QAbstractButton):
            out.append((name, w.text()))
        elif isinstance(w, QComboBox):
            out += [(f"{name} item {i}", w.itemText(i)) for i in range(w.count())]
        elif isinstance(w, QLineEdit):
            out.append((name, w.text()))
        elif isinstance(w, QAbstractSpinBox):
            out.append((name, w.text()))
        elif isinstance(w, QListWidget):
            out += [(f"{name} item {i}", w.item(i).text()) for i in range(w.count())]
        elif isinstance(w, QAbstractItemView):
            out += _model_texts(w.model(), name)
        elif isinstance(w, QTabBar):
            out += [(f"{name} tab {i}", w.tabText(i)) for i in range(w.count())]
        elif isinstance(w, QDockWidget):
            out.append((name, w.windowTitle()))
        elif isinstance(w, QStatusBar):
            out.append((name, w.currentMessage()))
        elif isinstance(w, pg.PlotWidget):
            out += plot_texts(w, name)
        if isinstance(w, QGraphicsView) and w.scene() is not None and \
                not isinstance(w, pg.GraphicsView):
            for item in w.scene().items():
                if isinstance(item, QGraphicsSimpleTextItem):
                    out.append((f"{name} scene label", item.text()))
        caption = getattr(w, "caption", None)
        if isinstance(caption, str):
            out.append((f"{name} caption", caption))
    return [(where, t) for where, t in out if t]


# -- clipping -----------------------------------------------------------------------------------
def _shown(w, window) -> bool:
    """On screen now (a dock tabbed behind another is not)."""
    if not (w.isVisible() and w.window() is window and w.width() > 0 and w.height() > 0):
        return False
    seen = w.viewport() if isinstance(w, QAbstractScrollArea) else w
    return not seen.visibleRegion().isEmpty()


def on_screen_now(widget) -> bool:
    """The widget is shown and not behind another dock tab."""
    from app.docks.on_screen import behind_tab

    return widget.isVisible() and not behind_tab(widget)


def click_tab(qtbot, window, text: str) -> None:
    """Click the visible dock tab titled ``text`` (as a user brings a panel to the front)."""
    from PySide6.QtWidgets import QTabBar

    for bar in window.findChildren(QTabBar):
        for i in range(bar.count()):
            if bar.tabText(i) == text and bar.isVisible():
                qtbot.mouseClick(bar, Qt.MouseButton.LeftButton, pos=bar.tabRect(i).center())
                qtbot.wait(10)
                return
    raise AssertionError(f"no visible tab {text!r}")


def _cut_by_parent(w) -> bool:
    """Part of the widget lies outside an ancestor's rectangle (a scroll area's viewport, a dock
    too narrow for its row of controls)."""
    r = w.rect()
    p = w
    while p.parentWidget() is not None and not p.isWindow():
        r = r.translated(p.pos())
        p = p.parentWidget()
        if not p.rect().adjusted(-1, -1, 1, 1).contains(r):
            return True
    return False


def _label_problem(w):
    cr = w.contentsRect()
    if w.wordWrap():
        need = w.heightForWidth(w.width())
        if need > w.height() + 1:
            return f"needs height {need}, has {w.height()}"
        return None
    fm = QFontMetrics(w.font())
    rich = w.textFormat() == Qt.TextFormat.RichText or \
        (w.textFormat() == Qt.TextFormat.AutoText and "<" in w.text() and ">" in w.text())
    need = w.sizeHint().width() - 2 * w.margin() if rich else \
        max(fm.horizontalAdvance(s) for s in w.text().split("\n"))
    if need > cr.width() + 1:
        return f"needs width {need}, has {cr.width()}"
    return None


def _table_problems(view, name):
    """Header sections narrower than their text; cells whose text is cut (wrapped cells must
    have the height for their lines)."""
    out = []
    model = view.model()
    if model is None:
        return out
    hdr = view.horizontalHeader()
    fm = QFontMetrics(hdr.font())
    for c in range(model.columnCount()):
        if hdr.isSectionHidden(c):
            continue
        text = model.headerData(c, Qt.Orientation.Horizontal, Qt.ItemDataRole.DisplayRole)
        if text:
            need = max(fm.horizontalAdvance(s) for s in str(text).split("\n")) + 8
            if hdr.sectionSize(c) < need:
                out.append(f"{name} header {str(text)!r}: {hdr.sectionSize(c)} < {need}")
    cfm = QFontMetrics(view.font())
    vp = view.viewport().rect()
    for r in range(model.rowCount()):
        for c in range(model.columnCount()):
            if hdr.isSectionHidden(c):
                continue
            idx = model.index(r, c)
            rect = view.visualRect(idx)
            if not rect.intersects(vp):
                continue
            text = idx.data(Qt.ItemDataRole.DisplayRole)
            if text in (None, ""):
                continue
            text = str(text)
            room = rect.width() - 8
            if cfm.horizontalAdvance(text) <= room:
                continue
            if view.wordWrap():
                h = cfm.boundingRect(0, 0, max(1, room), 100000,
                                     int(Qt.TextFlag.TextWordWrap), text).height()
                if h <= rect.height():
                    continue
            out.append(f"{name} cell {r},{c} {text!r} cut: {cfm.horizontalAdvance(text)} >"
                       f" {room}")
    return out


def _plot_problems(plot, name):
    """Axis titles longer than their axis; a legend box over plotted points."""
    out = []
    items = []
    if isinstance(plot, pg.PlotWidget):
        items = [plot.getPlotItem()]
    elif isinstance(plot, pg.GraphicsLayoutWidget):
        items = [i for i in plot.ci.items if isinstance(i, pg.PlotItem)]
    for pi in items:
        for side in ("left", "bottom"):
            ax = pi.getAxis(side)
            if not ax.isVisible() or not ax.label.isVisible() or not ax.labelText:
                continue
            need = ax.label.boundingRect().width()
            room = ax.height() if side == "left" else ax.width()
            if need > room + 1:
                out.append(f"{name} {side} axis title {ax.labelText!r}: {need:.0f} > {room:.0f}")
        legend = pi.legend
        if legend is not None and legend.isVisible() and legend.parentItem() is pi.vb:
            box = legend.sceneBoundingRect()
            for curve in pi.listDataItems():
                xs, ys = curve.getData()
                if xs is None:
                    continue
                for x, y in zip(xs, ys):
                    if x is None or y is None or not (abs(x) < 1e300 and abs(y) < 1e300):
                        continue
                    if box.contains(pi.vb.mapViewToScene(QPointF(x, y))):
                        out.append(f"{name} legend lies over a curve")
                        break
                else:
                    continue
                break
    return out


def clipped_texts(window) -> list[str]:
    """Every text of the shown widgets that does not fit: a label wider (or, wrapped, taller)
    than its rectangle, a button, check box or combo box cut, a table header or cell narrower
    than its text, the modes table with columns out of sight, Properties needing to scroll, an
    axis title longer than its axis, a legend over a curve."""
    problems = []
    for w in window.findChildren(QWidget):
        if not _shown(w, window):
            continue
        name = f"{type(w).__name__}({w.objectName() or getattr(w, 'text', lambda: '')()})"
        if isinstance(w, (QLabel, QAbstractButton, QComboBox)) and _cut_by_parent(w):
            problems.append(f"{name}: cut off by its panel")
        if isinstance(w, QLabel) and w.text() and w.pixmap().isNull():
            why = _label_problem(w)
            if why:
                problems.append(f"{name} {w.text()[:50]!r}: {why}")
        elif isinstance(w, QAbstractButton) and w.text():
            need = w.sizeHint().width()
            if need > w.width() + 1:
                problems.append(f"{name} {w.text()!r}: needs width {need}, has {w.width()}")
        elif isinstance(w, QComboBox) and w.currentText():
            opt = QStyleOptionComboBox()
            w.initStyleOption(opt)
            field = w.style().subControlRect(QStyle.ComplexControl.CC_ComboBox, opt,
                                             QStyle.SubControl.SC_ComboBoxEditField, w)
            need = QFontMetrics(w.font()).horizontalAdvance(w.currentText())
            if need > field.width():
                problems.append(f"{name} {w.currentText()!r}: needs width {need},"
                                f" has {field.width()}")
        elif isinstance(w, QAbstractSpinBox):
            need = QFontMetrics(w.font()).horizontalAdvance(w.text())
            if need > w.lineEdit().width():
                problems.append(f"{name} {w.text()!r}: needs width {need},"
                                f" has {w.lineEdit().width()}")
        elif isinstance(w, QTableView):
            problems += _table_problems(w, name)
            if w.objectName() == "modes_table" and w.horizontalScrollBar().maximum() > 0:
                problems.append(f"{name}: columns out of sight (scrolls by"
                                f" {w.horizontalScrollBar().maximum()} px)")
        elif isinstance(w, QListWidget):
            fm = QFontMetrics(w.font())
            room = w.viewport().width() - 8
            for i in range(w.count()):
                it = w.item(i)
                extra = 22 if it.flags() & Qt.ItemFlag.ItemIsUserCheckable else 0
                extra += 22 if not it.icon().isNull() else 0
                if fm.horizontalAdvance(it.text()) + extra <= room:
                    continue
                if w.wordWrap():
                    rect = w.visualItemRect(it)
                    need = fm.boundingRect(0, 0, max(1, rect.width() - extra - 4), 100000,
                                           int(Qt.TextFlag.TextWordWrap), it.text()).height()
                    if need <= rect.height():
                        continue
                problems.append(f"{name} item {it.text()!r}: cut")
        elif isinstance(w, (pg.PlotWidget, pg.GraphicsLayoutWidget)):
            problems += _plot_problems(w, name)
        elif isinstance(w, QScrollArea) and w.objectName() == "properties_scroll":
            if w.verticalScrollBar().maximum() > 0:
                problems.append(f"Properties scroll: fields out of sight (scrolls by"
                                f" {w.verticalScrollBar().maximum()} px)")
    return problems


def settled(qtbot, find, timeout_s: float = 5.0) -> list[str]:
    """``find()`` (a list of problems) once it is empty, or as it still is after ``timeout_s``.

    Layout runs on later event-loop turns than the change that calls for it (a pyqtgraph axis
    learns its tick labels' width when it first draws them and makes room on the next pass;
    results computed off the window's thread bring new ticks), and a slow machine runs those
    turns late: a check read once after a fixed pause fails there. A problem that stays is
    still reported."""
    import time

    found = find()
    deadline = time.monotonic() + timeout_s
    while found and time.monotonic() < deadline:
        qtbot.wait(50)
        found = find()
    return found
