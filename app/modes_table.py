"""The modes table: natural frequencies, periods, effective modal mass and flags of every mode.

:func:`mode_table_rows` turns an analysis into plain rows (shared with the report and CSV export);
:class:`ModesTable` shows them. Selecting a row emits ``mode_selected(n)`` (n from 1).
"""

from __future__ import annotations

import csv
import io
import math

from PySide6.QtCore import QAbstractTableModel, QModelIndex, Qt, Signal
from PySide6.QtGui import QColor, QGuiApplication
from PySide6.QtWidgets import QAbstractItemView, QHeaderView, QLabel, QTableView, QVBoxLayout, QWidget

from .style import current_style

_DIR_SYMBOL = {"x": "x", "y": "y", "theta": "θ"}


def _modal(analysis):
    """The ModalResult inside an Analysis (or the ModalResult itself)."""
    return getattr(analysis, "modal", analysis)


def _model(analysis):
    m = getattr(analysis, "model", None)
    return m if m is not None else _modal(analysis).model


def _directions(analysis) -> list[str]:
    modal = _modal(analysis)
    model = _model(analysis)
    dirs = [d for d in model.directions if d in modal.effective_mass]
    return dirs + [d for d in modal.effective_mass if d not in dirs]


def _excitation_hits(model, margin, mode: int) -> list[str]:
    """Sources (with order) whose margin-widened interval holds ``mode``: the solver's margin
    check (:func:`solver.margin_check`), so the table, the report and the command line agree."""
    labels = {e.id: e.label for e in model.excitations}
    hits = []
    for c in margin.for_mode(mode):
        name = labels.get(c.source_id, c.source_id)
        if c.order is not None:
            hits.append(f"{name} order {c.order:g} ({c.low_hz:.4g} Hz)")
        else:
            hits.append(f"{name} ({c.low_hz:.4g} to {c.high_hz:.4g} Hz)")
    return hits


def mode_table_rows(analysis) -> list[dict]:
    """One dict per mode, in ascending frequency.

    Keys: ``mode`` (from 1), ``frequency_hz``, ``omega_rad_s``, ``period_s`` (inf for a zero
    mode), ``effective_mass`` {direction: kg (kg m^2 in torsion)}, ``effective_mass_percent`` and
    ``cumulative_percent`` {direction: %}, ``zero_frequency`` (bool), ``zero_kind`` ("rigid",
    "mechanism" or ""), ``zero_cause`` (plain words), ``repeated_with`` (tuple of the other mode
    numbers of a repeated group), ``near_excitation`` (list of texts: sources within the model's
    separation margin), ``flags`` (all of that as one line of text).
    """
    if analysis is None:
        return []
    modal = _modal(analysis)
    model = _model(analysis)
    dirs = _directions(analysis)
    f = modal.frequencies_hz
    w = modal.omegas
    T = modal.periods_s
    pct = modal.effective_mass_percent
    cum = modal.cumulative_percent
    rows = []
    from solver.margins import margin_check

    margin = margin_check(model, modal)
    for i in range(modal.n_modes):
        n = i + 1
        z = modal.zero_mode(n)
        group = tuple(g for g in modal.repeated_group(n) if g != n)
        near = _excitation_hits(model, margin, n)
        flags = []
        if z is not None:
            flags.append(f"zero frequency ({z.kind}): {z.cause}")
        if group:
            flags.append("repeated with mode " + ", ".join(str(g) for g in group)
                         + " (shapes are one choice among many)")
        if near:
            flags.append(f"within {model.margin_percent:g} % of " + "; ".join(near))
        rows.append({
            "mode": n,
            "frequency_hz": float(f[i]),
            "omega_rad_s": float(w[i]),
            "period_s": float(T[i]),
            "effective_mass": {d: float(modal.effective_mass[d][i]) for d in dirs},
            "effective_mass_percent": {d: float(pct[d][i]) for d in dirs},
            "cumulative_percent": {d: float(cum[d][i]) for d in dirs},
            "zero_frequency": z is not None,
            "zero_kind": z.kind if z is not None else "",
            "zero_cause": z.cause if z is not None else "",
            "repeated_with": group,
            "near_excitation": near,
            "flags": "; ".join(flags),
        })
    return rows


def mode_table_header(analysis) -> list[str]:
    """Column headings (with units) matching :func:`mode_table_cells`."""
    head = ["Mode", "Frequency (Hz)", "ω (rad/s)", "Period (s)"]
    for d in _directions(analysis) if analysis is not None else []:
        s = _DIR_SYMBOL.get(d, d)
        head += [f"Eff. mass {s} (%)", f"Cumul. {s} (%)"]
    head.append("Notes")
    return head


def _short_flags(row: dict) -> str:
    parts = []
    if row["zero_frequency"]:
        parts.append(f"0 Hz: {row['zero_kind']}")
    if row["repeated_with"]:
        parts.append("repeated")
    if row["near_excitation"]:
        first = row["near_excitation"][0].split(" (")[0]
        more = len(row["near_excitation"]) - 1
        parts.append(f"in margin of {first}" + (f" (+{more})" if more else ""))
    return ", ".join(parts)


def _fmt_num(v: float, digits: int = 5) -> str:
    if math.isinf(v):
        return "∞"
    if v == 0:
        return "0"
    return f"{v:.{digits}g}"


def mode_table_cells(analysis, rows: list[dict] | None = None, short_flags: bool = True) -> list[list[str]]:
    """Rows of display text (rounded for reading); flags short or in full."""
    rows = mode_table_rows(analysis) if rows is None else rows
    dirs = _directions(analysis) if analysis is not None else []
    out = []
    for r in rows:
        cells = [str(r["mode"]), _fmt_num(r["frequency_hz"]), _fmt_num(r["omega_rad_s"]),
                 _fmt_num(r["period_s"])]
        for d in dirs:
            cells += [f"{r['effective_mass_percent'][d]:.2f}", f"{r['cumulative_percent'][d]:.2f}"]
        cells.append(_short_flags(r) if short_flags else r["flags"])
        out.append(cells)
    return out


def _csv_header(analysis) -> list[str]:
    head = ["mode", "frequency_hz", "omega_rad_s", "period_s"]
    for d in _directions(analysis):
        head += [f"effective_mass_{d}", f"effective_mass_percent_{d}", f"cumulative_percent_{d}"]
    head += ["zero_frequency", "repeated_with", "notes"]
    return head


def _csv_records(analysis) -> list[list]:
    dirs = _directions(analysis)
    recs = []
    for r in mode_table_rows(analysis):
        rec = [r["mode"], repr(r["frequency_hz"]), repr(r["omega_rad_s"]),
               "inf" if math.isinf(r["period_s"]) else repr(r["period_s"])]
        for d in dirs:
            rec += [repr(r["effective_mass"][d]), repr(r["effective_mass_percent"][d]),
                    repr(r["cumulative_percent"][d])]
        rec += ["yes" if r["zero_frequency"] else "no",
                " ".join(str(g) for g in r["repeated_with"]), r["flags"]]
        recs.append(rec)
    return recs


def mode_table_csv(analysis, delimiter: str = ",") -> str:
    """The mode table as CSV text with full-precision numbers (SI units named in the header)."""
    buf = io.StringIO()
    writer = csv.writer(buf, delimiter=delimiter, lineterminator="\n")
    if analysis is not None:
        writer.writerow(_csv_header(analysis))
        writer.writerows(_csv_records(analysis))
    return buf.getvalue()


def write_mode_table_csv(analysis, path) -> None:
    """Write :func:`mode_table_csv` to ``path`` (UTF-8)."""
    with open(path, "w", encoding="utf-8", newline="") as fh:
        fh.write(mode_table_csv(analysis))


class _ModesModel(QAbstractTableModel):
    def __init__(self, parent=None):
        super().__init__(parent)
        self._analysis = None
        self._rows: list[dict] = []
        self._cells: list[list[str]] = []
        self._header: list[str] = mode_table_header(None)
        self.stale = False

    def set_analysis(self, analysis) -> bool:
        """Take new results; True when the table kept its shape (updated in place, the view's
        selection and scroll position untouched), False when it was reset."""
        rows = mode_table_rows(analysis)
        cells = mode_table_cells(analysis, rows)
        header = mode_table_header(analysis)
        self._analysis = analysis
        if cells and len(cells) == len(self._cells) and header == self._header:
            # same modes and columns (a slider step, a property edit): new values only
            self._rows, self._cells = rows, cells
            self.dataChanged.emit(self.index(0, 0), self.index(len(cells) - 1, len(header) - 1))
            return True
        self.beginResetModel()
        self._rows, self._cells, self._header = rows, cells, header
        self.endResetModel()
        return False

    def set_stale(self, stale: bool):
        self.stale = bool(stale)
        if self._cells:
            self.dataChanged.emit(self.index(0, 0),
                                  self.index(len(self._cells) - 1, len(self._header) - 1))

    def rowCount(self, parent=QModelIndex()):
        return 0 if parent.isValid() else len(self._cells)

    def columnCount(self, parent=QModelIndex()):
        return 0 if parent.isValid() else len(self._header)

    def headerData(self, section, orientation, role=Qt.ItemDataRole.DisplayRole):
        if role == Qt.ItemDataRole.DisplayRole and orientation == Qt.Orientation.Horizontal:
            return self._header[section] if section < len(self._header) else None
        return None

    def data(self, index, role=Qt.ItemDataRole.DisplayRole):
        if not index.isValid():
            return None
        r, c = index.row(), index.column()
        row = self._rows[r]
        last = len(self._header) - 1
        if role == Qt.ItemDataRole.DisplayRole:
            return self._cells[r][c]
        if role == Qt.ItemDataRole.ToolTipRole:
            if row["flags"]:
                return row["flags"]
            return None
        if role == Qt.ItemDataRole.TextAlignmentRole:
            if c == last:
                return int(Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignVCenter)
            return int(Qt.AlignmentFlag.AlignRight | Qt.AlignmentFlag.AlignVCenter)
        if role == Qt.ItemDataRole.ForegroundRole:
            st = current_style()
            if self.stale:
                return st.undeformed
            if row["near_excitation"] and c in (0, 1, last):
                return st.warning
            if c == last and row["zero_frequency"]:
                return st.warning
            return None
        if role == Qt.ItemDataRole.BackgroundRole and row["near_excitation"] and not self.stale:
            # the whole row is tinted, so a conflict shows even with the notes scrolled away
            tint = QColor(current_style().warning)
            tint.setAlpha(38)
            return tint
        if role == Qt.ItemDataRole.UserRole:
            return row
        return None


class ModesTable(QWidget):
    """Table of the modes of the current analysis.

    Signals
    -------
    mode_selected(int) : the user selected mode n (from 1).
    """

    mode_selected = Signal(int)

    def __init__(self, parent=None):
        super().__init__(parent)
        self._analysis = None
        self._updating = False
        self._banner = QLabel(self)
        self._banner.setWordWrap(True)
        self._banner.setVisible(False)
        self._model = _ModesModel(self)
        self.view = QTableView(self)
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

    # -- public API --------------------------------------------------------------------------
    def set_analysis(self, analysis) -> None:
        """Show an analysis (or None to clear); keeps the selected mode number when it exists."""
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

    def to_csv(self, path) -> None:
        write_mode_table_csv(self._analysis, path)

    def copy_to_clipboard(self) -> str:
        """Copy the table as tab-separated text (pastes into a spreadsheet); returns the text."""
        text = mode_table_csv(self._analysis, delimiter="\t")
        QGuiApplication.clipboard().setText(text)
        return text

    # -- internals ---------------------------------------------------------------------------
    def _fit_columns(self, in_place: bool):
        cells, header = self._model._cells, self._model._header
        chars = [max([len(header[c])] + [len(r[c]) for r in cells]) for c in range(len(header))]
        if not in_place:
            # the notes (zero-frequency causes, conflicts) read right after the period, before
            # the effective-mass columns, so a narrow dock still shows them (display order only)
            hdr = self.view.horizontalHeader()
            notes = len(header) - 1
            if notes > 4 and hdr.visualIndex(notes) != 4:
                hdr.moveSection(hdr.visualIndex(notes), 4)
        if not in_place or len(chars) != len(self._col_chars) or \
                any(a > b for a, b in zip(chars, self._col_chars)):
            self.view.resizeColumnsToContents()
            self._col_chars = chars

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
            self._banner.setStyleSheet(f"color: {st.warning_hex}; font-weight: bold;")
            self._banner.setVisible(True)
        elif self._message:
            self._banner.setText(self._message)
            self._banner.setStyleSheet(f"color: {st.ink_soft_hex};")
            self._banner.setVisible(True)
        else:
            self._banner.setVisible(False)


__all__ = ["ModesTable", "mode_table_rows", "mode_table_header", "mode_table_cells",
           "mode_table_csv", "write_mode_table_csv"]
