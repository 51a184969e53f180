"""What a person can read in the window: every text of every widget, and every text that does not
fit its widget (elided or cut off). Shared by the stale-state and the clipping tests.

Texts come from the widgets themselves (QLabel, buttons, combo items, line and spin edits, list
and table cells and headers, tab bars, dock titles, the status bar), from the pyqtgraph plots
(titles, axis labels, legend entries, text items) and from the canvas items' labels.
"""

from __future__ import annotations

import pyqtgraph as pg
from PySide6.QtCore import QModelIndex, Qt
from PySide6.QtGui import QFontMetrics
from PySide6.QtWidgets import (QAbstractButton, QAbstractItemView, QAbstractSpinBox, QCheckBox,
                               QComboBox, QDockWidget, QGraphicsSimpleTextItem, QGraphicsView,
                               QHeaderView, QLabel, QLineEdit, QListWidget, QStatusBar, QStyle,
                               QStyleOptionButton, QStyleOptionComboBox, QTabBar, QWidget)


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
    return w.isVisible() and w.window() is window and w.width() > 0 and w.height() > 0


def _button_text_width(b: QAbstractButton) -> int:
    """Width a button needs for its text and decorations (its size hint's width)."""
    return b.sizeHint().width()


def clipped_texts(window) -> list[str]:
    """Every text of the shown widgets that does not fit: a label wider (or, wrapped, taller)
    than its rectangle, a button or check box narrower than its size hint, a combo box whose
    current text is wider than its text field, a table header section narrower than its text,
    a table (modes) with columns out of sight, a legend over a curve."""
    problems = []
    for w in window.findChildren(QWidget):
        if not _shown(w, window):
            continue
        name = f"{type(w).__name__}({w.objectName() or getattr(w, 'text', lambda: '')()})"
        if isinstance(w, QLabel) and w.text() and w.pixmap().isNull():
            cr = w.contentsRect()
            if w.wordWrap():
                need = w.heightForWidth(w.width())
                if need > w.height() + 1:
                    problems.append(f"{name} {w.text()[:40]!r}: needs height {need},"
                                    f" has {w.height()}")
            else:
                fm = QFontMetrics(w.font())
                lines = w.text().split("\n") if w.textFormat() != Qt.TextFormat.RichText \
                    and "<" not in w.text() else None
                need = max(fm.horizontalAdvance(s) for s in lines) if lines else \
                    w.sizeHint().width() - 2 * w.margin()
                if need > cr.width() + 1:
                    problems.append(f"{name} {w.text()[:40]!r}: needs width {need},"
                                    f" has {cr.width()}")
        elif isinstance(w, QAbstractButton) and w.text() and not isinstance(w, QTabBar):
            if w.parent() is not None and type(w.parent()).__name__ in ("QDockWidget",):
                continue
            need = _button_text_width(w)
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
        elif isinstance(w, QHeaderView) and w.orientation() == Qt.Orientation.Horizontal:
            model = w.model()
            if model is None:
                continue
            fm = QFontMetrics(w.font())
            for c in range(model.columnCount()):
                if w.isSectionHidden(c):
                    continue
                text = model.headerData(c, Qt.Orientation.Horizontal,
                                        Qt.ItemDataRole.DisplayRole)
                if not text:
                    continue
                need = max(fm.horizontalAdvance(s) for s in str(text).split("\n")) + 8
                if w.sectionSize(c) < need:
                    problems.append(f"header of {w.parent().objectName()} column {text!r}:"
                                    f" {w.sectionSize(c)} < {need}")
    return problems
