"""Sensitivity table: how much each mode's frequency moves per change of each element.

Rows are the springs (``k``; ``k_t`` too in a planar model) and masses; columns the modes. A cell is
the normalised sensitivity ``(p/f)(df/dp)`` from ``Analysis.sensitivity`` (Fox and Kapoor
eigenvalue derivatives, see :mod:`solver.metrics`): the % change of the mode's frequency per % change
of the element's value. Stiffness entries are >= 0 and sum to 0.5 over the springs of a mode; mass
entries are <= 0 and sum to -0.5. Zero-frequency modes have none ("—"). Click a header to sort.
The table (modes x elements cells, sorted) is filled only while it is shown: results that arrive
while its tab is hidden are taken when it is shown or read.
"""

from __future__ import annotations

import math

import numpy as np
from PySide6.QtCore import QAbstractTableModel, QModelIndex, Qt
from PySide6.QtGui import QFontMetrics
from PySide6.QtWidgets import (QAbstractItemView, QHeaderView, QLabel, QStyle, QTableView,
                               QVBoxLayout, QWidget)

from app.docks.on_screen import on_screen
from app.drawing.style import current_style
from app.text.numbers import hz, signed

SORT_ROLE = Qt.ItemDataRole.UserRole + 1
DASH = "—"
_FIELD_WORDS = {"k": "stiffness k", "k_t": "transverse stiffness k_t", "mass": "mass"}


def sensitivity_rows(analysis) -> list[tuple[str, str, str, np.ndarray]]:
    """``[(element_id, field, label, values (n_modes,))]``: every stiffness, then every mass."""
    if analysis is None:
        return []
    model, sens = analysis.model, analysis.sensitivity
    by_id = {e.id: e for e in model.springs + model.masses}    # one look-up each, not a search
    rows = []
    for j, sid in enumerate(sens.spring_ids):
        label = by_id[sid].label
        rows.append((sid, "k", f"{label} · k", np.asarray(sens.normalised_k[:, j], float)))
        if model.kind == "planar":
            rows.append((sid, "k_t", f"{label} · k_t",
                         np.asarray(sens.normalised_kt[:, j], float)))
    for j, mid in enumerate(sens.mass_ids):
        m = by_id[mid]
        what = "inertia" if model.kind == "torsion" else "m"
        rows.append((mid, "mass", f"{m.label} · {what}", np.asarray(sens.normalised_m[:, j], float)))
    return rows


class _SensitivityModel(QAbstractTableModel):
    def __init__(self, parent=None):
        super().__init__(parent)
        self._source = []          # rows in sensitivity_rows order
        self._rows = []            # as shown (sorted)
        self._freqs = np.zeros(0)
        self._sort = None          # (column, order) last asked by the view

    def set_analysis(self, analysis):
        self.beginResetModel()
        self._source = sensitivity_rows(analysis)
        self._rows = self._sorted(self._source)
        self._freqs = (np.asarray(analysis.modal.frequencies_hz, float) if analysis is not None
                       else np.zeros(0))
        self.endResetModel()

    def sort(self, column, order=Qt.SortOrder.AscendingOrder):
        """Sort here, once, by the sort role's value (a sorting proxy asked ``data`` for every
        comparison: some 20,000 calls per update at 1000 masses). Stable from the order shown,
        as QSortFilterProxyModel (new results are sorted from sensitivity_rows' order)."""
        self._sort = (int(column), order)
        self.layoutAboutToBeChanged.emit()
        self._rows = self._sorted(self._rows)
        self.layoutChanged.emit()

    def _sorted(self, rows):
        if self._sort is None or not rows:
            return list(rows)
        column, order = self._sort
        if column == 0:
            def key(row):
                return row[2]
        elif 1 <= column <= len(rows[0][3]):
            def key(row):
                v = float(row[3][column - 1])
                return v if math.isfinite(v) else -math.inf
        else:
            return list(rows)
        return sorted(rows, key=key, reverse=order == Qt.SortOrder.DescendingOrder)

    def rowCount(self, parent=QModelIndex()):  # noqa: N802
        return 0 if parent.isValid() else len(self._rows)

    def columnCount(self, parent=QModelIndex()):  # noqa: N802
        return 0 if parent.isValid() else 1 + len(self._freqs)

    def headerData(self, section, orientation, role=Qt.ItemDataRole.DisplayRole):  # noqa: N802
        if orientation != Qt.Orientation.Horizontal or role != Qt.ItemDataRole.DisplayRole:
            return None
        if section == 0:
            return "element"
        return f"mode {section}\n{hz(self._freqs[section - 1])}"

    def value(self, row: int, mode: int) -> float:
        return float(self._rows[row][3][mode - 1])

    def data(self, index, role=Qt.ItemDataRole.DisplayRole):
        if not index.isValid():
            return None
        eid, field, label, vals = self._rows[index.row()]
        c = index.column()
        if c == 0:
            if role in (Qt.ItemDataRole.DisplayRole, SORT_ROLE):
                return label
            if role == Qt.ItemDataRole.ToolTipRole:
                return f"{label}: {_FIELD_WORDS.get(field, field)}"
            return None
        v = float(vals[c - 1])
        if role == Qt.ItemDataRole.DisplayRole:
            return DASH if not math.isfinite(v) else signed(v, 3)
        if role == SORT_ROLE:
            return v if math.isfinite(v) else -math.inf
        if role == Qt.ItemDataRole.TextAlignmentRole:
            return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        if role == Qt.ItemDataRole.ToolTipRole:
            if not math.isfinite(v):
                return "zero-frequency mode: no sensitivity"
            return (f"a 1 % change of {label} moves mode {c} by about {signed(v, 3)} %"
                    f" ({hz(self._freqs[c - 1])})")
        if role == Qt.ItemDataRole.ForegroundRole and math.isfinite(v) and abs(v) >= 0.1:
            return current_style().accent
        return None


class SensitivityTable(QWidget):
    """Sortable table of normalised sensitivities; follows the solve service's results."""

    def __init__(self, solve_service=None, parent=None):
        super().__init__(parent)
        self.model = _SensitivityModel(self)
        self.view = QTableView()
        self.view.setObjectName("sensitivity_table")
        self.view.setModel(self.model)
        self.view.setSortingEnabled(True)
        self.view.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.view.verticalHeader().setVisible(False)
        self.view.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        self.view.horizontalHeader().setDefaultSectionSize(86)
        self.view.horizontalHeader().sortIndicatorChanged.connect(
            lambda *_: self._fit_mode_columns())
        self.view.setAlternatingRowColors(True)
        note = QLabel("(p/f)(df/dp): % change of a mode's frequency per % change of an element."
                      " Springs sum to +0.5 in each mode, masses to −0.5.")
        note.setWordWrap(True)
        note.setStyleSheet(f"color: {current_style().ink_soft_hex};")
        lay = QVBoxLayout(self)
        lay.setContentsMargins(2, 2, 2, 2)
        lay.addWidget(note)
        lay.addWidget(self.view, 1)
        self._due, self._has_due = None, False     # results not yet put in the table
        if solve_service is not None:
            solve_service.results_ready.connect(self.set_analysis)
            if solve_service.last_analysis is not None:
                self.set_analysis(solve_service.last_analysis)

    def set_analysis(self, analysis):
        self._due = analysis
        self._has_due = True
        if on_screen(self):
            self._catch_up()

    def catch_up(self):
        """The results that came while the table was behind another tab."""
        self._catch_up()

    def _catch_up(self):
        if not self._has_due:
            return
        analysis, self._due, self._has_due = self._due, None, False
        self.model.set_analysis(analysis)
        if self.view.columnWidth(0) < 140:
            self.view.setColumnWidth(0, 180)
        self._fit_mode_columns()

    def _fit_mode_columns(self):
        """Each mode column at least as wide as its heading ("mode 12" over "29.2296e3 Hz"),
        measured in the header's own font with the sort arrow's room (fonts differ between
        desktops: a fixed width cut the frequency on some)."""
        hdr = self.view.horizontalHeader()
        fm = QFontMetrics(hdr.font())
        style = self.view.style()
        margin = style.pixelMetric(QStyle.PixelMetric.PM_HeaderMargin, None, hdr)
        arrow = style.pixelMetric(QStyle.PixelMetric.PM_HeaderMarkSize, None, hdr) + margin
        for c in range(1, self.model.columnCount()):
            text = str(self.model.headerData(c, Qt.Orientation.Horizontal))
            need = max(fm.horizontalAdvance(t) for t in text.split("\n")) + 2 * margin + 8
            if c == hdr.sortIndicatorSection():
                need += arrow             # the sort arrow takes room from the heading
            if hdr.sectionSize(c) < need:
                hdr.resizeSection(c, need)

    def showEvent(self, event):  # noqa: N802
        self._catch_up()
        super().showEvent(event)

    def cell_value(self, element_id: str, field: str, mode: int) -> float:
        """The value shown for an element (id, field) in mode ``mode`` (from 1)."""
        self._catch_up()
        for i, (eid, f, _label, vals) in enumerate(self.model._rows):
            if eid == element_id and f == field:
                return float(vals[mode - 1])
        raise KeyError((element_id, field))

    def cell_text(self, element_id: str, field: str, mode: int) -> str:
        self._catch_up()
        for i, (eid, f, _label, _vals) in enumerate(self.model._rows):
            if eid == element_id and f == field:
                return self.model.data(self.model.index(i, mode))
        raise KeyError((element_id, field))


__all__ = ["SensitivityTable", "sensitivity_rows"]
