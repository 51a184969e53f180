"""The modes table: natural frequencies, periods, effective modal mass and flags of every mode.

The rows come from :mod:`app.results.mode_rows` (shared with the report, the CSV export and the
command line); :class:`ModesTable` shows them. Selecting a row emits ``mode_selected(n)`` (n from 1).
"""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import QAbstractTableModel, QEvent, QModelIndex, Qt, Signal
from PySide6.QtGui import QColor, QGuiApplication
from PySide6.QtWidgets import QAbstractItemView, QHeaderView, QLabel, QTableView, QVBoxLayout, QWidget

from app.document.solve_service import same_solve
from app.drawing.style import current_style, restyle
from app.results.mode_rows import (ModeRows, _modal, mode_column_widths,
                                   mode_row_cells, mode_table_cells, mode_table_csv,
                                   mode_table_header, mode_table_rows, write_mode_table_csv)


#: The notes column is never narrower than this (px); longer notes wrap.
MIN_NOTES = 120
#: Narrowest the notes column gets when the number columns leave less than MIN_NOTES (px).
NOTES_FLOOR = 40
#: At most this many of a column's longest cells are measured when the columns are fitted.
MEASURED_ROWS = 24


def _two_lines(text: str) -> str:
    """A heading on two lines, its unit (and a direction symbol) on the second:
    ``Frequency\n(Hz)``, ``Eff. mass\nx (%)``."""
    head, sep, unit = text.partition(" (")
    if not sep:
        return text
    words = head.split(" ")
    if len(words) > 1 and len(words[-1]) <= 2:      # a direction: x, y, θ
        return f"{' '.join(words[:-1])}\n{words[-1]} ({unit}"
    return f"{head}\n({unit}"


# The roles the table answers (the font, decoration, check state ... are the view's own), as
# plain ints: a paint asks for every role of every cell shown, and an enum's lookups and
# comparisons cost more than the answers
_DISPLAY, _TOOLTIP, _ALIGN, _FOREGROUND, _BACKGROUND, _USER = (int(r) for r in (
    Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.ToolTipRole, Qt.ItemDataRole.TextAlignmentRole,
    Qt.ItemDataRole.ForegroundRole, Qt.ItemDataRole.BackgroundRole, Qt.ItemDataRole.UserRole))
_ROLES = frozenset({_DISPLAY, _TOOLTIP, _ALIGN, _FOREGROUND, _BACKGROUND, _USER})
_ALIGN_NUMBER = int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
_ALIGN_TEXT = int(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter)


class _ModesModel(QAbstractTableModel):
    def __init__(self, parent=None):
        super().__init__(parent)
        self._analysis = None
        self._rows = ModeRows(None)
        self._cells: list = []             # each row's text once written, else None
        self._header: list[str] = mode_table_header(None)
        self.stale = False
        self._style = None

    def set_analysis(self, analysis) -> bool:
        """Take new results; True when the table kept its shape (updated in place, the view's
        selection and scroll position untouched), False when it was reset.

        A row's text is written when it is first asked for (:meth:`row_cells`): a view shows a
        screenful of a table of hundreds of modes, and writing every number of every row was
        half the cost of an update (200 modes: ~1.7 ms an edit)."""
        rows = ModeRows(analysis)          # each row's dict made when first asked for
        header = mode_table_header(analysis)
        self._analysis = analysis
        self._style = current_style()      # data() asks for colours per cell and role
        if rows and len(rows) == len(self._rows) and header == self._header:
            # same modes and columns (a slider step, a property edit): new values only
            self._rows, self._cells = rows, [None] * len(rows)
            self.dataChanged.emit(self.index(0, 0), self.index(len(rows) - 1, len(header) - 1))
            return True
        self.beginResetModel()
        self._rows, self._cells, self._header = rows, [None] * len(rows), header
        self.endResetModel()
        return False

    def row_cells(self, r: int) -> list[str]:
        """The display text of row ``r`` (:func:`mode_row_cells`), written once."""
        cells = self._cells[r]
        if cells is None:
            cells = self._cells[r] = mode_row_cells(self._rows[r], self._rows.dirs)
        return cells

    def all_cells(self) -> list[list[str]]:
        """The display text of every row (:func:`mode_table_cells`)."""
        return [self.row_cells(r) for r in range(len(self._rows))]

    def longer_than(self, chars: list[int]) -> bool:
        """True when a cell's text is longer than ``chars`` (one count per column). Only the
        rows whose width bound (:func:`mode_column_widths`) exceeds a column's count are
        written to find out."""
        if not self._rows:
            return False
        widths = mode_column_widths(self._analysis, self._rows)
        if len(widths) != len(chars):
            return True
        for c, (w, limit) in enumerate(zip(widths, chars)):
            for r in np.flatnonzero(w > limit).tolist():
                if len(self.row_cells(r)[c]) > limit:
                    return True
        return False

    def set_stale(self, stale: bool):
        self.stale = bool(stale)
        self._style = current_style()
        if self._rows:
            self.dataChanged.emit(self.index(0, 0),
                                  self.index(len(self._rows) - 1, len(self._header) - 1))

    def rowCount(self, parent=QModelIndex()):
        return 0 if parent.isValid() else len(self._rows)

    def columnCount(self, parent=QModelIndex()):
        return 0 if parent.isValid() else len(self._header)

    def headerData(self, section, orientation, role=Qt.ItemDataRole.DisplayRole):
        if role == Qt.ItemDataRole.DisplayRole and orientation == Qt.Orientation.Horizontal:
            if section >= len(self._header):
                return None
            # the unit on a second line: columns as narrow as their numbers, so every column
            # shows at the window's first size
            return _two_lines(self._header[section])
        return None

    def data(self, index, role=Qt.ItemDataRole.DisplayRole):
        role = int(role)
        if role not in _ROLES or not index.isValid():
            return None       # the view asks for every role of every cell it paints
        return self._value(index.row(), index.column(), role)

    def multiData(self, index, span):  # noqa: N802 (Qt's name)
        """Every role the view asks of a cell in one call (the item delegate asks seven per
        cell it paints): one call from Qt into Python per cell instead of one per role (a
        repaint of 15 rows by 7 columns: 105 calls instead of 735)."""
        if not index.isValid():
            for rd in span:
                rd.clearData()
            return
        r, c = index.row(), index.column()
        for rd in span:
            role = rd.role()
            value = self._value(r, c, role) if role in _ROLES else None
            if value is None:
                rd.clearData()
            else:
                rd.setData(value)

    def _value(self, r: int, c: int, role: int):
        """The value of ``role`` (an int of _ROLES) for cell (r, c), or None."""
        if role == _DISPLAY:
            return self.row_cells(r)[c]
        row = self._rows[r]
        last = len(self._header) - 1
        if role == _ALIGN:
            return _ALIGN_TEXT if c == last else _ALIGN_NUMBER
        if role == _FOREGROUND:
            if self.stale:
                return (self._style or current_style()).undeformed
            if (row["near_excitation"] and c in (0, 1, last)) or (
                    c == last and row["zero_frequency"]):
                return (self._style or current_style()).warning
            return None
        if role == _BACKGROUND:
            if row["near_excitation"] and not self.stale:
                # the whole row is tinted, so a conflict shows even with the notes scrolled away
                tint = QColor((self._style or current_style()).warning)
                tint.setAlpha(38)
                return tint
            return None
        if role == _TOOLTIP:
            return row["flags"] or None
        if role == _USER:
            return row
        return None


class ModesTable(QWidget):
    """Table of the modes of the current analysis.

    Signals
    -------
    mode_selected(int) : the user selected mode n (from 1).
    """

    mode_selected = Signal(int)
    #: width (px) the table needs to show every column with readable notes, when it has less
    needs_width = Signal(int)

    def __init__(self, parent=None):
        super().__init__(parent)
        self._analysis = None
        self._updating = False
        self._banner = QLabel(self)
        self._banner.setWordWrap(True)
        self._banner.setVisible(False)
        self._model = _ModesModel(self)
        self.view = QTableView(self)
        self.view.setObjectName("modes_table")
        self.view.setModel(self._model)
        self.view.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.view.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        self.view.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.view.verticalHeader().setVisible(False)
        self.view.horizontalHeader().setStretchLastSection(False)
        # columns are fitted to their contents when the table changes shape or a value grows
        # longer, not on every update: measuring every cell each slider step costs a frame
        self.view.horizontalHeader().setSectionResizeMode(QHeaderView.ResizeMode.Interactive)
        self._col_chars: list[int] = []
        self._wrapped = False
        self._sharing = False
        self._ask_room = False
        self.view.setWordWrap(True)
        self.view.installEventFilter(self)
        self.view.viewport().installEventFilter(self)
        self.view.setAlternatingRowColors(True)
        self.view.setToolTip("Select a mode to animate it. Hover the notes for zero-frequency"
                             " causes and repeated modes.")
        self.view.selectionModel().selectionChanged.connect(self._on_selection_change)
        lay = QVBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.setSpacing(2)
        lay.addWidget(self._banner)
        lay.addWidget(self.view)
        self._stale = False
        self._message = ""
        self.unit_system = "SI"

    # -- public API --------------------------------------------------------------------------
    def set_analysis(self, analysis) -> None:
        """Show an analysis (or None to clear); keeps the selected mode number when it exists."""
        if not self._stale and same_solve(analysis, self._analysis) and analysis is not None:
            # the same solve's results (a line model moved on the page): every cell is as shown
            self._analysis = self._model._analysis = analysis
            return
        keep = self.selected_mode()
        self._analysis = analysis
        self._updating = True
        try:
            in_place = self._model.set_analysis(analysis)
            self._fit_columns(in_place)
            if keep and analysis is not None and keep <= _modal(analysis).n_modes \
                    and not (in_place and self.selected_mode() == keep):
                self._select_row(keep - 1)
        finally:
            self._updating = False
        self._message = ""
        if analysis is not None:
            modal = _modal(analysis)
            if modal.message:
                self._message = modal.message
        elif analysis is None:
            self._message = "No results."
        self._stale = False
        self._model.set_stale(False)
        self._update_banner()

    def set_stale(self, stale: bool) -> None:
        """Mark the results as out of date (a solve is pending) or current again."""
        self._stale = bool(stale)
        self._model.set_stale(self._stale)
        self._update_banner()

    def is_stale(self) -> bool:
        return self._stale

    def select_mode(self, n: int) -> None:
        """Select mode n (from 1) without emitting ``mode_selected`` (the caller knows already)."""
        if self._analysis is None or not 1 <= int(n) <= self._model.rowCount():
            return
        if self.selected_mode() == int(n):
            return
        self._updating = True
        try:
            self._select_row(int(n) - 1)
        finally:
            self._updating = False

    def selected_mode(self) -> int | None:
        rows = self.view.selectionModel().selectedRows()
        return rows[0].row() + 1 if rows else None

    def rows(self) -> list[dict]:
        """The rows shown (see :func:`mode_table_rows`)."""
        return list(self._model._rows)

    def set_unit_system(self, system: str) -> None:
        """"SI" or "US": the unit of the effective masses in the CSV and the clipboard (the
        columns shown are in Hz, rad/s, s and %, the same in both)."""
        self.unit_system = system

    def to_csv(self, path) -> None:
        write_mode_table_csv(self._analysis, path, self.unit_system)

    def copy_to_clipboard(self) -> str:
        """Copy the table as tab-separated text (pastes into a spreadsheet); returns the text."""
        text = mode_table_csv(self._analysis, delimiter="\t", system=self.unit_system)
        QGuiApplication.clipboard().setText(text)
        return text

    # -- internals ---------------------------------------------------------------------------
    def _fit_columns(self, in_place: bool):
        header = self._model._header
        if in_place and len(header) == len(self._col_chars) and \
                not self._model.longer_than(self._col_chars):
            return        # new values, none longer than the columns were fitted to
        cells = self._model.all_cells()
        # the cells' lengths alone: a heading longer than its numbers (``Period (s)``, shown on
        # two lines) hid numbers that grew longer and were then cut
        chars = [max([0] + [len(r[c]) for r in cells]) for c in range(len(header))]
        if not in_place:
            # the notes (zero-frequency causes, conflicts) read right after the period, before
            # the effective-mass columns, so a narrow dock still shows them (display order only)
            hdr = self.view.horizontalHeader()
            notes = len(header) - 1
            if notes > 4 and hdr.visualIndex(notes) != 4:
                hdr.moveSection(hdr.visualIndex(notes), 4)
        if not in_place or len(chars) != len(self._col_chars) or \
                any(a > b for a, b in zip(chars, self._col_chars)):
            self._measure_numbers()
            self._ask_room = self._ask_room or len(chars) != len(self._col_chars)
            self._col_chars = chars
            self._share_width()

    def _measure_numbers(self):
        """Each number column as wide as its widest cell or header line, in the table's own
        font (the widths follow the fonts of the desktop it runs on).

        Qt's resizeColumnToContents asks every row of every column for its text and size (200
        modes: ~15 ms an edit); the widest cell is among the longest texts (digits are of one
        width in UI fonts), so only the rows whose text is at most one character shorter than
        the longest are measured, as Qt measures them (the delegate's size hint)."""
        cells = self._model.all_cells()
        notes = len(self._model._header) - 1
        hdr = self.view.horizontalHeader()
        for c in range(notes):
            lengths = [len(r[c]) for r in cells]
            top = max(lengths, default=0)
            rows = [i for i, n in enumerate(lengths) if n >= top - 1][:MEASURED_ROWS]
            cell = max([self.view.sizeHintForIndex(self._model.index(i, c)).width()
                        for i in rows], default=0)
            # QTableView adds a pixel for the grid line
            want = max(cell + (1 if self.view.showGrid() else 0), hdr.sectionSizeHint(c))
            if hdr.sectionSize(c) != want:
                hdr.resizeSection(c, want)

    def _share_width(self):
        """The notes take exactly the width the number columns leave (at least
        :data:`MIN_NOTES` px) and wrap onto more lines rather than being cut, so the columns add
        up to the viewport's width and none is out of sight."""
        header = self._model._header
        if not header or self._sharing:
            return
        self._sharing = True
        try:
            hdr = self.view.horizontalHeader()
            notes = len(header) - 1
            others = sum(hdr.sectionSize(c) for c in range(len(header)) if c != notes)
            room = self.view.viewport().width() - others
            # a rigid body adds two columns (theta): the notes then wrap narrower rather than
            # push a column out of sight, down to a floor where a word still fits a line
            width = max(MIN_NOTES if room >= MIN_NOTES else NOTES_FLOOR, room)
            if room < MIN_NOTES and self._ask_room:
                # the window may give the dock more room (a model with rigid bodies has two
                # columns more); the narrow wrap above is the fallback when it cannot
                # (asked once per new table shape: a dock the user narrows stays narrow)
                self._ask_room = False
                self.needs_width.emit(self.width() + MIN_NOTES - room)
            if width != hdr.sectionSize(notes):
                hdr.resizeSection(notes, width)
            want = self.view.sizeHintForColumn(notes) if self._model.rowCount() else 0
            if want > width or self._wrapped:
                self.view.resizeRowsToContents()
            self._wrapped = want > width
        finally:
            self._sharing = False

    def changeEvent(self, event):  # noqa: N802 (Qt's name)
        # a new palette (light or dark desktop): the cells take its colours now, not at the
        # next update (the model keeps the style it looked up last)
        if event.type() in (QEvent.Type.PaletteChange, QEvent.Type.StyleChange) and \
                getattr(self, "_model", None) is not None:
            self._model._style = None
            self.view.viewport().update()
            self._update_banner()
        super().changeEvent(event)

    def eventFilter(self, obj, event):  # noqa: N802
        # the viewport's own resize (not the view's): it comes after the frame and the scroll
        # bars are laid out, so its width is the room the columns really have
        # (a change of height alone, the banner above shown or hidden, changes no column:
        # sharing measures every row's notes, ~40 ms at 1000 modes)
        if obj is self.view.viewport() and event.type() == QEvent.Type.Resize:
            if event.size().width() != event.oldSize().width():
                self._share_width()
        elif obj is self.view and event.type() == QEvent.Type.FontChange:
            self._measure_numbers()
            self._share_width()
        return False

    def _select_row(self, row: int):
        self.view.selectRow(row)
        self.view.scrollTo(self._model.index(row, 0))

    def _on_selection_change(self, *_):
        if self._updating:
            return
        n = self.selected_mode()
        if n is not None:
            self.mode_selected.emit(n)

    def _update_banner(self):
        st = current_style()
        if self._stale:
            self._banner.setText("Results out of date: solving the edited model…")
            restyle(self._banner, f"color: {st.warning_hex}; font-weight: bold;")
            self._banner.setVisible(True)
        elif self._message:
            self._banner.setText(self._message)
            restyle(self._banner, f"color: {st.ink_soft_hex};")
            self._banner.setVisible(True)
        else:
            self._banner.setVisible(False)


__all__ = ["ModesTable", "mode_table_rows", "mode_table_header", "mode_table_cells",
           "mode_table_csv", "write_mode_table_csv"]
