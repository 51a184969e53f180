"""Sources panel: the model's excitation sources, edited in place, and the margin table.

*Sources* tab: the list of sources (shaft speeds with their orders, frequency bands) and an editor
for the one selected. Add a speed or a band with the buttons (or Insert in the list: a speed;
Delete removes the selected source); every change is one undo step through the document. Speeds
take a unit (``1450 rpm``, ``24.2 Hz``, ``1450 1/min``, ``152 rad/s``; a plain number is rpm),
band edges too (``50 Hz``, ``3000 rpm``; a plain number is Hz). A speed source runs at one speed or
over an operating range (minimum and maximum speed); orders are a list such as ``1, 2, 4.5``. An
entry that cannot be read or that the model refuses is refused in place: the field shows the reason
and the model is unchanged. The margin (%) applied to every source is edited here too.

*Margin table* tab: every elastic mode against every source and order
(:func:`solver.margin_table.margin_table`): the separation from the source's own frequencies, pass
or fail against the margin and the nearest frequency that clears every source.
"""

from __future__ import annotations

import re

from PySide6.QtCore import QSignalBlocker, Qt, Signal
from PySide6.QtGui import QBrush
from PySide6.QtWidgets import (QAbstractItemView, QComboBox, QFormLayout, QHBoxLayout,
                               QHeaderView, QLabel, QLineEdit, QPushButton, QScrollArea,
                               QSplitter, QTableWidget,
                               QTableWidgetItem, QTabWidget, QVBoxLayout, QWidget)

from solver.errors import ModelError
from solver.margin_table import margin_table
from solver.model import Excitation

from app.docks.field_error import InPlaceError
from app.docks.on_screen import on_screen
from app.docks.properties import QuantityField
from app.drawing.style import current_style
from app.results import margin_rows
from app.results.names import names
from app.results.source_text import orders_text, source_summary

#: Values a new source starts with (typed over at once): a four-pole motor's speed, its first
#: order; a band an octave and more wide.
NEW_SPEED_RPM = 1500.0
NEW_BAND_HZ = (10.0, 50.0)
#: A single speed switched to a range starts at +-20 % about it.
RANGE_SPREAD = 0.2


def parse_orders(text: str) -> tuple[float, ...]:
    """``"1, 2, 4.5"`` -> ``(1.0, 2.0, 4.5)``. Commas, semicolons or spaces separate; raises
    ValueError with the reason for text that is not a list of positive numbers."""
    parts = [p for p in re.split(r"[,;\s]+", (text or "").strip()) if p]
    if not parts:
        raise ValueError("give at least one order, e.g. 1, 2, 4.5")
    out = []
    for p in parts:
        try:
            v = float(p.lstrip("×x"))
        except ValueError:
            raise ValueError(f"cannot read {p!r} as an order; give numbers such as 1, 2, 4.5") \
                from None
        if not (v > 0 and v < float("inf")):
            raise ValueError(f"an order must be a positive number (a multiple of the shaft"
                             f" speed), got {p}")
        out.append(v)
    return tuple(out)


class CheckedLine(InPlaceError, QWidget):
    """A line edit whose text ``parse`` turns into a value, with the refusal reason beneath.

    ``value_entered(object)`` carries the parsed value; the owner applies it and calls
    :meth:`show_error` when the model refuses it. Esc puts the shown value back.
    """

    value_entered = Signal(object)

    def __init__(self, parse, hint: str, parent=None):
        super().__init__(parent)
        self.parse = parse
        self.error = ""
        self.shown = ""
        self.edit = QLineEdit(self)
        self.error_label = QLabel(self)
        self.error_label.setWordWrap(True)
        self.error_label.hide()
        lay = QVBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.setSpacing(1)
        lay.addWidget(self.edit)
        lay.addWidget(self.error_label)
        self._hint = hint
        self.edit.setToolTip(hint)
        self.edit.editingFinished.connect(self._on_edit_finished)

    def set_text(self, text: str) -> None:
        self.shown = text
        with QSignalBlocker(self.edit):
            self.edit.setText(text)
        self.clear_error()


    def keyPressEvent(self, event):  # noqa: N802
        if event.key() == Qt.Key.Key_Escape:
            self.set_text(self.shown)
            return
        super().keyPressEvent(event)

    def _on_edit_finished(self):
        text = self.edit.text()
        if text == self.shown and not self.error:
            return
        try:
            value = self.parse(text)
        except ValueError as exc:
            self.show_error(str(exc))
            return
        self.clear_error()
        self.value_entered.emit(value)


def _percent(text: str) -> float:
    s = (text or "").replace("%", "").strip()
    try:
        return float(s)
    except ValueError:
        raise ValueError(f"give the margin as a number of %, e.g. 15; got {text!r}") from None


class SourcesPanel(QWidget):
    """Edits the document's excitation sources and margin; shows the margin table.

    Signals: ``status_message(str)`` (refusals and what an action did), ``source_selected(str)``.
    """

    status_message = Signal(str)
    source_selected = Signal(str)

    def __init__(self, document, parent=None):
        super().__init__(parent)
        self.document = document
        self.current_id: str | None = None
        self._fields: dict[str, QWidget] = {}
        self._signature = None
        self._analysis = None
        self._table_dirty = False

        outer = QVBoxLayout(self)
        outer.setContentsMargins(2, 2, 2, 2)
        self.tabs = QTabWidget()
        self.tabs.setObjectName("sources_tabs")
        outer.addWidget(self.tabs)

        # -- Sources tab (scrolls when the dock is short) ------------------------------------
        # the list on the left, the selected source's editor on the right (each scrolls when
        # the dock is small)
        page = QWidget()
        lay = QVBoxLayout(page)
        lay.setContentsMargins(4, 4, 4, 4)
        top = QFormLayout()
        self.margin_field = CheckedLine(_percent, "Frequency margin in %: every natural frequency"
                                        " must lie at least this far from every source's"
                                        " frequencies (common practice 10 to 20 %)")
        self.margin_field.setObjectName("sources_margin")
        self.margin_field.value_entered.connect(self._on_margin_entered)
        top.addRow("Margin (%)", self.margin_field)
        lay.addLayout(top)
        self.table = QTableWidget(0, 3)
        self.table.setObjectName("sources_table")
        self.table.setHorizontalHeaderLabels(["Label", "Kind", "Frequencies"])
        self.table.verticalHeader().hide()
        self.table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.table.setSelectionMode(QAbstractItemView.SelectionMode.SingleSelection)
        self.table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.table.horizontalHeader().setSectionResizeMode(2, QHeaderView.ResizeMode.Stretch)
        self.table.setToolTip("Excitation sources. Insert adds a shaft speed, Delete removes the"
                              " selected source; edit the selected one beside the list.")
        self.table.itemSelectionChanged.connect(self._on_table_selection)
        self.table.installEventFilter(self)
        self.table.setMinimumHeight(70)
        lay.addWidget(self.table, 1)
        row = QHBoxLayout()
        self.add_speed_button = QPushButton("Add &speed")
        self.add_speed_button.setObjectName("add_speed")
        self.add_speed_button.setToolTip("Add a shaft speed with its orders (Insert in the list)")
        self.add_speed_button.clicked.connect(self.add_speed)
        self.add_band_button = QPushButton("Add &band")
        self.add_band_button.setObjectName("add_band")
        self.add_band_button.setToolTip("Add a frequency band (a test band, floor or road input)")
        self.add_band_button.clicked.connect(self.add_band)
        self.delete_button = QPushButton("&Delete")
        self.delete_button.setObjectName("delete_source")
        self.delete_button.setToolTip("Delete the selected source (Delete in the list)")
        self.delete_button.clicked.connect(self.delete_current)
        for b in (self.add_speed_button, self.add_band_button, self.delete_button):
            row.addWidget(b)
        row.addStretch(1)
        lay.addLayout(row)
        editor = QWidget()
        el = QVBoxLayout(editor)
        el.setContentsMargins(4, 4, 4, 4)
        self.editor_title = QLabel()
        self.editor_title.setObjectName("source_editor_title")
        self.editor_title.setStyleSheet("font-weight: bold;")
        self.editor_title.setWordWrap(True)
        el.addWidget(self.editor_title)
        self.form = QFormLayout()
        self.form.setFieldGrowthPolicy(QFormLayout.FieldGrowthPolicy.AllNonFixedFieldsGrow)
        el.addLayout(self.form)
        el.addStretch(1)
        split = QSplitter(Qt.Orientation.Horizontal)
        split.setChildrenCollapsible(False)
        for w, least in ((page, 240), (editor, 270)):
            scroll = QScrollArea()
            scroll.setWidget(w)
            scroll.setWidgetResizable(True)
            scroll.setFrameShape(QScrollArea.Shape.NoFrame)
            scroll.setHorizontalScrollBarPolicy(Qt.ScrollBarPolicy.ScrollBarAlwaysOff)
            scroll.setMinimumWidth(least)
            split.addWidget(scroll)
        split.setStretchFactor(0, 1)
        split.setStretchFactor(1, 1)
        split.setSizes([300, 300])
        self.tabs.addTab(split, "Sources")

        # -- Margin table tab -----------------------------------------------------------------
        mpage = QWidget()
        ml = QVBoxLayout(mpage)
        ml.setContentsMargins(4, 4, 4, 4)
        self.margin_summary = QLabel()
        self.margin_summary.setObjectName("margin_summary")
        self.margin_summary.setWordWrap(True)
        ml.addWidget(self.margin_summary)
        self.margin_table = QTableWidget(0, len(margin_rows.HEADERS))
        self.margin_table.setObjectName("margin_table")
        self.margin_table.setHorizontalHeaderLabels(list(margin_rows.HEADERS))
        for i, tip in enumerate(margin_rows.TOOLTIPS):
            self.margin_table.horizontalHeaderItem(i).setToolTip(tip)
        self.margin_table.verticalHeader().hide()
        self.margin_table.setEditTriggers(QAbstractItemView.EditTrigger.NoEditTriggers)
        self.margin_table.setSelectionBehavior(QAbstractItemView.SelectionBehavior.SelectRows)
        self.margin_table.horizontalHeader().setSectionResizeMode(
            QHeaderView.ResizeMode.ResizeToContents)
        ml.addWidget(self.margin_table, 1)
        self.tabs.addTab(mpage, "Margin table")
        self.tabs.currentChanged.connect(self._on_tab_change)

        document.model_changed.connect(self._on_model_change)
        document.opened.connect(self._on_opened)
        # made on a model already open (the window builds this panel when its tab is first
        # shown): its first source is ready to edit, as after opening it
        model = document.model
        self.current_id = model.excitations[0].id if model.excitations else None
        self._on_model_change(model)

    # -- public -------------------------------------------------------------------------------
    def field(self, name: str) -> QWidget:
        """The editor field ``name`` shown now (``label``, ``rpm``, ``rpm_min``, ``rpm_max``,
        ``orders``, ``f_min_hz``, ``f_max_hz``, ``speed_kind``)."""
        return self._fields[name]

    def select(self, source_id: str | None) -> None:
        ids = [e.id for e in self.document.model.excitations]
        self.current_id = source_id if source_id in ids else None
        with QSignalBlocker(self.table):
            self.table.clearSelection()
            if self.current_id is not None:
                self.table.selectRow(ids.index(self.current_id))
        self._signature = None
        self._refresh_editor(self.document.model)

    def add_speed(self) -> str | None:
        model = self.document.model
        sid = model.new_id("speed")
        return self._add(Excitation(id=sid, type="speed", label=f"Shaft speed {sid[5:]}",
                                    rpm=NEW_SPEED_RPM, orders=(1.0,)), focus="rpm")

    def add_band(self) -> str | None:
        model = self.document.model
        sid = model.new_id("band")
        return self._add(Excitation(id=sid, type="band", label=f"Band {sid[4:]}",
                                    f_min_hz=NEW_BAND_HZ[0], f_max_hz=NEW_BAND_HZ[1]),
                         focus="f_min_hz")

    def delete_current(self) -> bool:
        if self.current_id is None:
            self.status_message.emit("Select a source to delete")
            return False
        gone = self.current_id
        ids = [e.id for e in self.document.model.excitations]
        at = ids.index(gone)
        label = self.document.model.element(gone).label
        done = self.document.remove([gone])
        rest = [i for i in ids if i != gone]     # the next source is ready to edit
        self.select(rest[min(at, len(rest) - 1)] if rest else None)
        if done:
            self.status_message.emit(f"Deleted source {label}")
        return done

    def set_analysis(self, analysis) -> None:
        """New results: the margin table follows (now when shown, else when its tab is shown)."""
        self._analysis = analysis
        if self.tabs.currentIndex() == 1 and on_screen(self):
            self._fill_margin_table()
        else:
            self._table_dirty = True

    # -- events -------------------------------------------------------------------------------
    def eventFilter(self, obj, event):  # noqa: N802
        if obj is self.table and event.type() == event.Type.KeyPress:
            if event.key() == Qt.Key.Key_Insert:
                self.add_speed()
                return True
            if event.key() in (Qt.Key.Key_Delete, Qt.Key.Key_Backspace):
                self.delete_current()
                return True
        return super().eventFilter(obj, event)

    def showEvent(self, event):  # noqa: N802
        super().showEvent(event)
        self.catch_up()

    def catch_up(self) -> None:
        """Fill the margin table with the results that came while it was not on screen."""
        if self._table_dirty and self.tabs.currentIndex() == 1:
            self._fill_margin_table()

    def _on_tab_change(self, index):
        if index == 1 and self._table_dirty:
            self._fill_margin_table()

    def _on_opened(self, model):
        # another model: its first source is ready to edit
        self.current_id = model.excitations[0].id if model.excitations else None
        self._analysis = None
        self._signature = None
        self._fill_margin_table()
        self._on_model_change(model)

    def _on_table_selection(self):
        rows = {i.row() for i in self.table.selectedIndexes()}
        ids = [e.id for e in self.document.model.excitations]
        self.current_id = ids[min(rows)] if rows else None
        self._refresh_editor(self.document.model)
        if self.current_id is not None:
            self.source_selected.emit(self.current_id)

    def _on_margin_entered(self, value):
        try:
            self.document.set_top(margin_percent=value, text="Change frequency margin")
        except ModelError as exc:
            self.margin_field.show_error(str(exc))
            self.status_message.emit(f"Refused: {exc}")

    # -- model -> widgets ---------------------------------------------------------------------
    def _on_model_change(self, model):
        ids = [e.id for e in model.excitations]
        if self.current_id not in ids:
            self.current_id = None
        if not self.margin_field.edit.hasFocus() or not self.margin_field.error:
            self.margin_field.set_text(f"{model.margin_percent:g}")
        shown = names(model)
        with QSignalBlocker(self.table):
            self.table.setRowCount(len(ids))
            for r, e in enumerate(model.excitations):
                kind = "speed" if e.type == "speed" else "band"
                if e.type == "speed" and e.is_ranged:
                    kind = "speed range"
                for c, text in enumerate((shown.get(e.id, e.id), kind, source_summary(e))):
                    item = self.table.item(r, c)
                    if item is None:
                        item = QTableWidgetItem()
                        self.table.setItem(r, c, item)
                    item.setText(text)
            self.table.clearSelection()
            if self.current_id is not None:
                self.table.selectRow(ids.index(self.current_id))
        self.table.resizeColumnToContents(0)
        self.table.resizeColumnToContents(1)
        self.delete_button.setEnabled(self.current_id is not None)
        self._refresh_editor(model)

    def _refresh_editor(self, model):
        self.delete_button.setEnabled(self.current_id is not None)
        e = model.element(self.current_id) if self.current_id is not None else None
        signature = (None if e is None else (e.id, e.type, e.type == "speed" and e.is_ranged))
        if signature != self._signature:
            self._signature = signature
            self._rebuild_editor(e)
        if e is None:
            return
        self.editor_title.setText(("Shaft speed: " if e.type == "speed" else "Band: ")
                                  + names(model).get(e.id, e.id))
        for name, w in self._fields.items():
            if name == "label":
                if not w.hasFocus():
                    with QSignalBlocker(w):
                        w.setText(e.label)
            elif name == "speed_kind":
                with QSignalBlocker(w):
                    w.setCurrentIndex(1 if e.is_ranged else 0)
            elif name == "orders":
                w.set_text(orders_text(e.orders))
            elif name in ("rpm_min", "rpm_max"):
                lo, hi = e.speed_range_rpm()
                w.set_value(lo if name == "rpm_min" else hi)
            else:
                w.set_value(getattr(e, name))

    def _clear_form(self):
        while self.form.rowCount():
            self.form.removeRow(0)
        self._fields.clear()

    def _rebuild_editor(self, e):
        self._clear_form()
        if e is None:
            n = len(self.document.model.excitations)
            self.editor_title.setText("Select a source to edit it" if n else
                                      "No sources yet: add a shaft speed or a band")
            return
        label = QLineEdit()
        label.setObjectName("source_label")
        label.setToolTip("Name shown in tables, plots and the report (empty: the id)")
        label.editingFinished.connect(lambda w=label: self._set(label=w.text().strip()))
        self.form.addRow("Label", label)
        self._fields["label"] = label
        if e.type == "speed":
            kind = QComboBox()
            kind.setObjectName("source_speed_kind")
            kind.addItem("one speed", False)
            kind.addItem("a speed range", True)
            kind.setToolTip("A machine at one running speed, or over an operating range"
                            " (variable-speed drive, run-up and run-down): each order then covers"
                            " a band of frequencies")
            kind.currentIndexChanged.connect(self._on_speed_kind)
            self.form.addRow("Runs at", kind)
            self._fields["speed_kind"] = kind
            if e.is_ranged:
                self._quantity("rpm_min", "shaft speed", "Minimum speed")
                self._quantity("rpm_max", "shaft speed", "Maximum speed")
            else:
                self._quantity("rpm", "shaft speed", "Speed")
            orders = CheckedLine(parse_orders, "Orders: multiples of the shaft speed that excite"
                                 " the structure, e.g. 1, 2, 4.5 (blade passing: the blade"
                                 " count)")
            orders.setObjectName("source_orders")
            orders.edit.setObjectName("source_orders_edit")
            orders.value_entered.connect(lambda v, f=orders: self._set_field(f, orders=v))
            self.form.addRow("Orders", orders)
            self._fields["orders"] = orders
        else:
            self._quantity("f_min_hz", "frequency", "From")
            self._quantity("f_max_hz", "frequency", "To")

    def _quantity(self, name, kind, label):
        field = QuantityField(kind)
        field.setObjectName(f"source_{name}")
        field.edit.setObjectName(f"source_{name}_edit")
        field.value_entered.connect(lambda v, f=field, n=name: self._set_field(f, **{n: v}))
        self.form.addRow(label, field)
        self._fields[name] = field

    def _fill_margin_table(self):
        self._table_dirty = False
        a = self._analysis
        t = self.margin_table
        if a is None or not a.model.excitations:
            t.setRowCount(0)
            self.margin_summary.setText("" if a is None else
                                        "No excitation sources: add one in the Sources tab.")
            return
        try:
            table = margin_table(a.model, a.modal)
        except ModelError as exc:
            t.setRowCount(0)
            self.margin_summary.setText(f"No margin table: {exc}")
            return
        rows = margin_rows.cells(a.model, table)
        st = current_style()
        bad = QBrush(st.error)
        ink = QBrush(st.ink)
        t.setUpdatesEnabled(False)
        try:
            t.setRowCount(len(rows))
            for r, row in enumerate(rows):
                for c, text in enumerate(row.cells):
                    item = t.item(r, c)
                    if item is None:
                        item = QTableWidgetItem()
                        if c in (0, 1):
                            item.setTextAlignment(Qt.AlignmentFlag.AlignRight
                                                  | Qt.AlignmentFlag.AlignVCenter)
                        t.setItem(r, c, item)
                    item.setText(text)
                    item.setForeground(ink if row.passes else bad)
        finally:
            t.setUpdatesEnabled(True)
        self.margin_summary.setText(margin_rows.summary(a.model, table))

    # -- edits --------------------------------------------------------------------------------
    def _add(self, source, focus):
        try:
            self.document.add([source], text=f"Add source {source.label}")
        except ModelError as exc:
            self.status_message.emit(f"Refused: {exc}")
            return None
        self.select(source.id)
        self.status_message.emit(f"Added {source.label}: type its values in the Sources panel")
        w = self._fields.get(focus)
        if w is not None:
            w.edit.setFocus()
            w.edit.selectAll()
        return source.id

    def _set(self, **changes) -> bool:
        if self.current_id is None:
            return False
        try:
            return self.document.set_element(self.current_id, **changes)
        except ModelError as exc:
            self.status_message.emit(f"Refused: {exc}")
            self._signature = None
            self._refresh_editor(self.document.model)
            return False

    def _set_field(self, field, **changes) -> bool:
        """Apply one field's value; a refusal by the model is shown on the field."""
        if self.current_id is None:
            return False
        e = self.document.model.element(self.current_id)
        if "rpm_min" in changes or "rpm_max" in changes:
            lo, hi = e.speed_range_rpm()
            changes = {"rpm_min": changes.get("rpm_min", lo), "rpm_max": changes.get("rpm_max", hi)}
        try:
            return self.document.set_element(self.current_id, **changes)
        except ModelError as exc:
            field.show_error(str(exc))
            self.status_message.emit(f"Refused: {exc}")
            return False

    def _on_speed_kind(self, index):
        if self.current_id is None:
            return
        e = self.document.model.element(self.current_id)
        ranged = bool(index == 1)
        if ranged == e.is_ranged:
            return
        lo, hi = e.speed_range_rpm()
        if ranged:
            changes = dict(rpm=0.0, rpm_min=lo * (1 - RANGE_SPREAD), rpm_max=hi * (1 + RANGE_SPREAD))
            what = "a speed range"
        else:
            changes = dict(rpm=hi, rpm_min=None, rpm_max=None)
            what = "one speed (the range's maximum)"
        if self._set(**changes):
            self.status_message.emit(f"{e.label} now runs at {what}")


__all__ = ["CheckedLine", "SourcesPanel", "parse_orders"]
