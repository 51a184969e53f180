"""Property panel: edit the selected element (or, with nothing selected, the model itself).

Number fields take a value with a unit (``12 lbf/in``, ``3.5 kN/mm``, ``20 lb``, ``0.4 kg m^2``);
a plain number is in the display unit system. An entry that cannot be read, or that the model
refuses (``Model`` validation), is refused in place: the field gets a red frame and the reason
appears under it and in its tooltip; the model is not changed. Esc puts the current value back.
Fields are refreshed from the model on every change, with signals blocked so that a refresh never
echoes back as an edit.

In a planar model a mass has an Inertia field (kg m^2 about its centre; > 0 makes it a rigid
body that turns); a spring or dashpot end on a body has its attachment offset (x and y, length
units), and a selected body shows how its bounce and rock couple. A gear stage (torsion) has its
speed ratio, mesh stiffness (blank: rigid) and the equivalent system referred to one shaft.
"""

from __future__ import annotations

from PySide6.QtCore import QSignalBlocker, Qt, Signal
from PySide6.QtWidgets import (QCheckBox, QComboBox, QFormLayout, QHBoxLayout, QLabel, QLineEdit,
                               QScrollArea, QSizePolicy, QVBoxLayout, QWidget)

from solver.errors import ModelError
from solver.model import Anchor, Damper, Gear, Mass, Spring

from app.docks.field_error import InPlaceError
from app.drawing import bodies
from app.text import units
from app.drawing.style import current_style


class QuantityField(InPlaceError, QWidget):
    """A line edit for one physical quantity (SI inside), with the refusal reason shown beneath.

    ``value_entered(float)`` carries the SI value of an accepted entry; the owner applies it and
    calls :meth:`show_error` if the model refuses it.
    """

    value_entered = Signal(float)

    def __init__(self, kind: str, system: str = "SI", parent=None):
        super().__init__(parent)
        self.kind = kind
        self.system = system
        self.value_si: float | None = None
        self.edit = QLineEdit(self)
        self.error_label = QLabel(self)
        self.error_label.setWordWrap(True)
        self.error_label.hide()
        self.error = ""
        lay = QVBoxLayout(self)
        lay.setContentsMargins(0, 0, 0, 0)
        lay.setSpacing(1)
        lay.addWidget(self.edit)
        lay.addWidget(self.error_label)
        self.edit.editingFinished.connect(self._on_edit_finished)
        self._hint = f"{units.KINDS[kind].name} in {units.unit_label(kind, system)}, or with a" \
                     f" unit, e.g. {units.KINDS[kind].example}"
        self.edit.setToolTip(self._hint)
        self.edit.setPlaceholderText(units.unit_label(kind, system))

    def _format(self, value_si: float) -> str:
        return units.format_value(value_si, self.kind, self.system)

    def _parse(self, text: str) -> float:
        return units.parse(text, self.kind, self.system)

    def _unit(self) -> str:
        return units.unit_label(self.kind, self.system)

    def set_value(self, value_si: float | None, system: str | None = None) -> None:
        """Show ``value_si`` (clears any refusal); None: several elements with different
        values, shown empty with a hint."""
        if system is not None:
            self.system = system
        self.value_si = value_si
        with QSignalBlocker(self.edit):
            if value_si is None:
                self.edit.clear()
                self.edit.setPlaceholderText(self._blank_text())
            else:
                self.edit.setText(self._format(value_si))
                self.edit.setPlaceholderText(self._unit())
        self.clear_error()

    def _blank_text(self) -> str:
        return f"different values ({self._unit()})"


    def keyPressEvent(self, event):  # noqa: N802
        if event.key() == Qt.Key_Escape and self.value_si is not None:
            self.set_value(self.value_si)
            return
        super().keyPressEvent(event)

    def _on_edit_finished(self):
        text = self.edit.text()
        if self.value_si is None and not text.strip() and not self.error:
            return  # several values shown as none and nothing typed
        if (self.value_si is not None and not self.error
                and text == self._format(self.value_si)):
            return  # focus left without a change
        try:
            value = self._parse(text)
        except units.UnitError as exc:
            self.show_error(str(exc))
            return
        self.clear_error()
        self.value_entered.emit(value)


class RatioField(QuantityField):
    """A plain positive number with no unit (a gear stage's speed ratio)."""

    def __init__(self, what: str, example: str, parent=None):
        super().__init__("length", "SI", parent)
        self.what = what
        self._hint = f"{what}: a number above 0, e.g. {example}"
        self.edit.setToolTip(self._hint)
        self.edit.setPlaceholderText("")

    def _format(self, value_si: float) -> str:
        return f"{value_si:.6g}"

    def _parse(self, text: str) -> float:
        try:
            value = float(text.strip())
        except ValueError:
            raise units.UnitError(f'{self.what}: give a number, e.g. 3.5; got "{text}"') \
                from None
        if not value > 0 or value == float("inf"):
            raise units.UnitError(f"{self.what} must be above 0, got {text.strip()}")
        return value

    def _unit(self) -> str:
        return "ratio"


class OptionalQuantityField(QuantityField):
    """A quantity that may be left blank (a gear mesh's stiffness: blank is a rigid mesh).
    ``cleared`` is emitted when the text is emptied; None shows the blank meaning."""

    cleared = Signal()

    def __init__(self, kind: str, system: str, blank: str, parent=None):
        super().__init__(kind, system, parent)
        self.blank = blank
        self._hint += f"; leave blank for {blank}"
        self.edit.setToolTip(self._hint)

    def _blank_text(self) -> str:
        return f"{self.blank} (blank)"

    def _on_edit_finished(self):
        if not self.edit.text().strip():
            if self.value_si is not None or self.error:
                self.clear_error()
                self.cleared.emit()
            return
        super()._on_edit_finished()


def _show_text(edit: QLineEdit, text: str) -> None:
    """A name in a field narrower than the name: its start shows (where a name is read from)
    and the whole of it is in the tooltip, above what the field is for."""
    edit.setText(text)
    edit.setCursorPosition(0)
    hint = edit.property("hint")
    if hint is None:
        hint = edit.toolTip()
        edit.setProperty("hint", hint)
    edit.setToolTip(f"{text}\n\n{hint}" if text and hint else (text or hint))


def model_counts(model) -> str:
    """``"3 masses, 1 anchor, 3 springs, 1 dashpot"`` of ``model``."""
    parts = [units.count(len(model.masses), "mass", "masses"),
             units.count(len(model.anchors), "anchor"),
             units.count(len(model.springs), "spring"),
             units.count(len(model.dampers), "dashpot")]
    if model.bodies:
        parts.insert(1, f"{units.count(len(model.bodies), 'rigid body', 'rigid bodies')} among"
                        " them")
    if model.gears:
        parts.append(units.count(len(model.gears), "gear stage"))
    return ", ".join(parts)


def _gear_note(model, gear_id: str) -> tuple[str, str]:
    """(the referred-system line of this gear stage, every line for the tooltip): the whole
    equivalent system is longer than the panel has room for; the report states it all."""
    lines = bodies.referred_statements(model)
    mine = [s for s in lines if f'({gear_id})' in s or f'"{gear_id}"' in s]
    text = _without_name(mine[0]) if mine else ""
    return text, "\n".join(lines)


def _without_name(statement: str) -> str:
    """A body's statement without its leading ``mass "name" (id): `` (the panel's title names
    the body already), capitalised."""
    head, sep, rest = statement.partition("): ")
    text = rest if sep and head.count('"') >= 2 else statement
    return text[:1].upper() + text[1:]


def _body_ends(model, el) -> tuple[str, ...]:
    """The ends (``"a"``, ``"b"``) of a spring or dashpot that sit on a rigid body."""
    if not isinstance(el, (Spring, Damper)) or model.kind != "planar":
        return ()
    return tuple(end for end in ("a", "b")
                 if bodies.is_body(model, model.find(getattr(el, end))))


def _mass_kind(model) -> str:
    return "inertia" if model.kind == "torsion" else "mass"


def _stiffness_kind(model) -> str:
    return "torsional stiffness" if model.kind == "torsion" else "stiffness"


def _damping_kind(model) -> str:
    return "torsional damping" if model.kind == "torsion" else "damping"


class PropertyPanel(QWidget):
    """Edits ``document.model`` through the document's edit methods; never changes it directly.

    Signal ``unit_system_changed(str)`` ("SI" or "US") lets the owner keep the preference.
    """

    unit_system_changed = Signal(str)
    status_message = Signal(str)

    def __init__(self, document, unit_system: str = "SI", parent=None):
        super().__init__(parent)
        self.document = document
        self.unit_system = unit_system if unit_system in units.SYSTEMS else "SI"
        self.selection: list[str] = []
        self._fields: dict[str, tuple[QuantityField, object]] = {}
        self._widgets: dict[str, QWidget] = {}
        self._signature = None
        self.counts_label: QLabel | None = None

        outer = QVBoxLayout(self)
        outer.setContentsMargins(4, 4, 4, 4)
        top = QHBoxLayout()
        top.addWidget(QLabel("Units:"))
        self.units_combo = QComboBox()
        self.units_combo.setObjectName("units_combo")
        self.units_combo.addItem("SI (kg, m, N)", "SI")
        self.units_combo.addItem("US customary (lb, in, lbf)", "US")
        self.units_combo.setCurrentIndex(units.SYSTEMS.index(self.unit_system))
        self.units_combo.setToolTip("Units for showing values and for plain numbers you type;"
                                    " files are always SI")
        self.units_combo.currentIndexChanged.connect(self._on_units_change)
        top.addWidget(self.units_combo, 1)
        outer.addLayout(top)
        self.title = QLabel()
        self.title.setObjectName("properties_title")
        self.title.setStyleSheet("font-weight: bold;")
        # a long model name wraps inside the panel: it must not widen the dock
        self.title.setWordWrap(True)
        self.title.setSizePolicy(QSizePolicy.Policy.Ignored, QSizePolicy.Policy.Preferred)
        outer.addWidget(self.title)
        scroll = QScrollArea()
        scroll.setObjectName("properties_scroll")
        scroll.setWidgetResizable(True)
        scroll.setFrameShape(QScrollArea.NoFrame)
        self._body = QWidget()
        self.form = QFormLayout(self._body)
        self.form.setFieldGrowthPolicy(QFormLayout.AllNonFixedFieldsGrow)
        # rows closer than the style's default: a planar mass's twelve rows (position, mass,
        # locks, initial displacement and velocity in x, y and θ) then fit the panel's first
        # height without a scroll bar; the framed fields keep them apart
        self.form.setVerticalSpacing(3)
        self.form.setContentsMargins(4, 2, 4, 2)
        scroll.setWidget(self._body)
        outer.addWidget(scroll, 1)
        document.model_changed.connect(self._on_model_change)
        self._on_model_change(document.model)

    # -- public -------------------------------------------------------------------------------
    def set_selection(self, ids) -> None:
        self.selection = [i for i in ids if i in self.document.model.ids()]
        self._on_model_change(self.document.model)

    def set_unit_system(self, system: str) -> None:
        if system == self.unit_system:
            return
        self.unit_system = system
        with QSignalBlocker(self.units_combo):
            self.units_combo.setCurrentIndex(units.SYSTEMS.index(system))
        self._signature = None
        self._on_model_change(self.document.model)

    def field(self, name: str) -> QuantityField:
        """The number field ``name`` (``mass``, ``k``, ``x`` ...) shown now (tests, focus)."""
        return self._fields[name][0]

    def widget(self, name: str) -> QWidget:
        return self._widgets[name]

    # -- model -> widgets ---------------------------------------------------------------------
    def _on_units_change(self, index):
        system = self.units_combo.itemData(index)
        self.unit_system = system
        self._signature = None
        self._on_model_change(self.document.model)
        self.unit_system_changed.emit(system)

    def _on_model_change(self, model):
        self.selection = [i for i in self.selection if i in model.ids()]
        elements = [model.element(i) for i in self.selection]
        signature = (tuple(self.selection), model.kind, model.axis, self.unit_system,
                     tuple(getattr(e, "fixed", ()) for e in elements),
                     tuple(getattr(e, "mass", None) == 0 for e in elements),  # junction or mass
                     tuple(getattr(e, "inertia", 0.0) > 0 for e in elements),  # a rigid body
                     tuple(_body_ends(model, e) for e in elements))   # offsets to edit
        if signature != self._signature:
            self._signature = signature
            self._rebuild(model, elements)
        self._update_title(model, elements)
        self._refresh(model)

    def _update_title(self, model, elements):
        """Header and counts follow every change of the model (open, rename, add, undo)."""
        if not elements:
            self.title.setText(f"Model: {model.name or 'untitled'}")
            if self.counts_label is not None:
                self.counts_label.setText(model_counts(model))
        elif len(elements) > 1:
            kinds = {type(e) for e in elements}
            noun = {Mass: ("mass", "masses"), Anchor: ("anchor", "anchors"),
                    Spring: ("spring", "springs"), Damper: ("dashpot", "dashpots"),
                    Gear: ("gear stage", "gear stages")}
            what = noun.get(kinds.pop(), ("element", "elements")) if len(kinds) == 1 \
                else ("element", "elements")
            self.title.setText(f"{units.count(len(elements), *what)} selected")

    def _clear(self):
        # rows are taken out and their widgets deleted later, not at once: the edit that
        # rebuilds the form may still be running inside a signal of one of them (a Locked
        # box's toggle), and deleting a widget inside its own signal is a use after free
        while self.form.rowCount():
            row = self.form.takeRow(0)
            for item in (row.labelItem, row.fieldItem):
                w = item.widget() if item is not None else None
                if w is not None:
                    w.hide()
                    w.deleteLater()
        self._fields.clear()
        self._widgets.clear()

    def _refresh(self, model):
        for name, (field, getter) in self._fields.items():
            field.set_value(getter(model), self.unit_system)
        for name, (w, getter) in getattr(self, "_text_getters", {}).items():
            with QSignalBlocker(w):
                if isinstance(w, QLineEdit):
                    if not w.hasFocus():
                        _show_text(w, getter(model))
                elif isinstance(w, QComboBox):
                    w.setCurrentIndex(max(0, w.findData(getter(model))))
                elif isinstance(w, QCheckBox):
                    w.setChecked(bool(getter(model)))
                elif isinstance(w, QLabel):
                    text = getter(model)
                    text, tip = text if isinstance(text, tuple) else (text, text)
                    w.setText(text)
                    w.setToolTip(tip)
                    w.setVisible(bool(text))

    def _rebuild(self, model, elements):
        self._clear()
        self._text_getters = {}
        self.counts_label = None
        if not elements:
            self._build_model(model)
        elif len(elements) > 1:
            self._build_several(model, elements)
        else:
            el = elements[0]
            if isinstance(el, Mass):
                what = "Disc" if model.kind == "torsion" else ("Junction" if el.mass == 0
                                                               else "Rigid body" if el.inertia
                                                               > 0 else "Mass")
                self.title.setText(f"{what} {el.id}")
                self._build_mass(model, el)
            elif isinstance(el, Anchor):
                self.title.setText(f"Anchor {el.id}")
                self._build_node_common(el)
            elif isinstance(el, Spring):
                self.title.setText(f"Spring {el.id}: {el.a}–{el.b}")
                self._build_label(el)
                self._add_quantity("k", _stiffness_kind(model), "Stiffness k",
                                   lambda m, i=el.id: m.element(i).k,
                                   lambda v, i=el.id: self.document.set_element(i, k=v))
                if model.kind == "planar":
                    self._add_quantity("k_t", "transverse stiffness", "Transverse k_t",
                                       lambda m, i=el.id: m.element(i).k_t,
                                       lambda v, i=el.id: self.document.set_element(i, k_t=v))
                self._build_offsets(model, el)
            elif isinstance(el, Damper):
                self.title.setText(f"Dashpot {el.id}: {el.a}–{el.b}")
                self._build_label(el)
                self._add_quantity("c", _damping_kind(model), "Damping c",
                                   lambda m, i=el.id: m.element(i).c,
                                   lambda v, i=el.id: self.document.set_element(i, c=v))
                self._build_offsets(model, el)
            elif isinstance(el, Gear):
                self.title.setText(f"Gear stage {el.id}: {el.a}–{el.b}")
                self._build_gear(model, el)
            else:
                self.title.setText(f"{el.id}")
            if isinstance(el, (Spring, Damper)) or (isinstance(el, Mass) and el.mass > 0):
                self._build_tolerance([el])

    def _build_several(self, model, elements):
        """Fields every selected element has (all springs, all dashpots or all masses): a value
        typed once is given to each, as one undo step. A field shows the common value, or is
        empty when the values differ."""
        kinds = {type(e) for e in elements}
        ids = [e.id for e in elements]
        fields = []
        if kinds == {Spring}:
            fields.append(("k", _stiffness_kind(model), "Stiffness k"))
            if model.kind == "planar":
                fields.append(("k_t", "transverse stiffness", "Transverse k_t"))
        elif kinds == {Damper}:
            fields.append(("c", _damping_kind(model), "Damping c"))
        elif kinds == {Mass}:
            kind = _mass_kind(model)
            fields.append(("mass", kind, "Inertia" if kind == "inertia" else "Mass"))
            if model.kind == "planar":
                fields.append(("inertia", "inertia", "Inertia"))
        if not fields:
            hint = QLabel("Select springs only, dashpots only or masses only to set a value on"
                          " all of them at once.")
            hint.setWordWrap(True)
            self.form.addRow(hint)
            return

        def common(m, name, ids=tuple(ids)):
            values = {getattr(m.element(i), name) for i in ids if i in m.ids()}
            return values.pop() if len(values) == 1 else None

        for name, kind, label in fields:
            self._add_quantity(name, kind, f"{label} (all)",
                               lambda m, n=name: common(m, n),
                               lambda v, n=name, ids=tuple(ids):
                                   self.document.set_elements(ids, **{n: v}))
        self._build_tolerance(elements)   # one tolerance for all of them, one undo step

    def _build_label(self, el):
        edit = QLineEdit()
        edit.setObjectName("field_label")
        edit.setToolTip("Name shown on the canvas and in tables (empty: the id)")
        edit.editingFinished.connect(
            lambda i=el.id, e=edit: self._try(lambda: self.document.set_element(
                i, label=e.text().strip()), None))
        self.form.addRow("Label", edit)
        self._widgets["label"] = edit
        self._text_getters["label"] = (edit, lambda m, i=el.id: m.element(i).label)

    def _build_node_common(self, el, pair: bool = False):
        self._build_label(el)
        fields = [self._add_quantity(axis, "length", f"Position {axis}",
                                     lambda m, i=el.id, a=axis: getattr(m.element(i), a),
                                     lambda v, i=el.id, a=axis: self.document.set_element(
                                         i, **{a: v}), row=not pair)
                  for axis in ("x", "y")]
        if pair:
            self._pair_row("Position x, y", *fields)

    def _pair_row(self, label, first, second):
        """Two fields side by side on one row (a body's rows: they must fit without scrolling)."""
        box = QWidget()
        row = QHBoxLayout(box)
        row.setContentsMargins(0, 0, 0, 0)
        row.setSpacing(4)
        row.addWidget(first, 1)
        row.addWidget(second, 1)
        self.form.addRow(label, box)

    def _build_mass(self, model, el):
        self._build_node_common(el, pair=el.inertia > 0)
        kind = _mass_kind(model)
        body = el.inertia > 0   # a body's mass and inertia share a row (room for its tolerance)
        mass_field = self._add_quantity("mass", kind, "Inertia" if kind == "inertia" else "Mass",
                                        lambda m, i=el.id: m.element(i).mass,
                                        lambda v, i=el.id: self.document.set_element(i, mass=v),
                                        row=not body)
        if model.kind == "planar":
            inertia_field = self._add_quantity(
                "inertia", "inertia", "Inertia", lambda m, i=el.id: m.element(i).inertia,
                lambda v, i=el.id: self.document.set_element(i, inertia=v), row=not body)
            if body:
                self._pair_row("Mass, inertia", mass_field, inertia_field)
            self.field("inertia").edit.setToolTip(
                "Rotary inertia about the centre of mass; 0: a point mass, above 0: a rigid"
                " body that turns (theta) and takes springs at mount points. "
                + self.field("inertia")._hint)
            if el.inertia > 0:
                self._add_note("coupling", "Coupling",
                               lambda m, i=el.id: _without_name(bodies.coupling_statement(m, i)))
        directions = model.directions_of(el)
        row = QHBoxLayout()
        box = QWidget()
        box.setLayout(row)
        row.setContentsMargins(0, 0, 0, 0)
        for d in directions:
            cb = QCheckBox(d)
            cb.setObjectName(f"fixed_{d}")
            cb.setToolTip(f"Lock this mass in direction {d} (it then cannot move that way)")
            cb.toggled.connect(lambda on, i=el.id, d=d: self._set_fixed(i, d, on))
            row.addWidget(cb)
            self._widgets[f"fixed_{d}"] = cb
            self._text_getters[f"fixed_{d}"] = (cb, lambda m, i=el.id, d=d: d in m.element(i).fixed)
        row.addStretch(1)
        self.form.addRow("Locked", box)
        # a body has three directions: each direction's displacement and velocity share a row,
        # so its fifteen fields fit the panel's first height without scrolling
        pair = el.inertia > 0 and len(directions) > 2
        for d in directions:
            rot = d == "theta"
            disp = self._add_quantity(
                f"init_{d}", "angle" if rot else "length", f"Initial {d}",
                lambda m, i=el.id, d=d: self._initial(m, i, "displacement", d),
                lambda v, i=el.id, d=d: self.document.set_initial(i, d, displacement=v),
                row=not pair)
            vel = self._add_quantity(
                f"init_v{d}", "angular velocity" if rot else "velocity", f"Initial v{d}",
                lambda m, i=el.id, d=d: self._initial(m, i, "velocity", d),
                lambda v, i=el.id, d=d: self.document.set_initial(i, d, velocity=v),
                row=not pair)
            if pair:
                self._pair_row(f"Initial {d}, v{d}", disp, vel)

    def _add_note(self, name: str, label: str, getter) -> None:
        """A line of text from the model (a body's coupling, a geared system referred to one
        shaft), wrapped to the panel and refreshed on every change."""
        note = QLabel()
        note.setObjectName(f"note_{name}")
        note.setWordWrap(True)
        note.setTextInteractionFlags(Qt.TextInteractionFlag.TextSelectableByMouse)
        note.setSizePolicy(QSizePolicy.Policy.Ignored, QSizePolicy.Policy.Preferred)
        self.form.addRow(label, note)
        self._widgets[name] = note
        self._text_getters[name] = (note, getter)

    def _build_offsets(self, model, el):
        """Attachment offsets of the ends on rigid bodies (m, body frame)."""
        for end in _body_ends(model, el):
            node = model.element(getattr(el, end))
            for k, axis in enumerate(("x", "y")):
                def setter(v, i=el.id, end=end, k=k):
                    off = list(getattr(self.document.model.element(i), f"{end}_offset"))
                    off[k] = v
                    return self.document.set_element(i, **{f"{end}_offset": tuple(off)})

                self._add_quantity(f"{end}_offset_{axis}", "length", f"{end} offset {axis}",
                                   lambda m, i=el.id, end=end, k=k:
                                       getattr(m.element(i), f"{end}_offset")[k], setter)
                self.field(f"{end}_offset_{axis}").edit.setToolTip(
                    f"Where end {end} attaches on {node.label}: {axis} from its centre of mass,"
                    " in the body's frame (0: at the centre). "
                    + self.field(f"{end}_offset_{axis}")._hint)

    def _build_gear(self, model, el):
        self._build_label(el)
        field = RatioField("speed ratio", "3 (disc a turns 3 times as fast as disc b)")
        field.setObjectName("field_ratio")
        field.edit.setObjectName("edit_ratio")
        field.value_entered.connect(lambda v, f=field, i=el.id: self._try(
            lambda: self.document.set_element(i, ratio=v), f))
        self.form.addRow("Speed ratio a/b", field)
        self._fields["ratio"] = (field, lambda m, i=el.id: m.element(i).ratio)
        mesh = OptionalQuantityField("torsional stiffness", self.unit_system, "rigid mesh")
        mesh.setObjectName("field_k_mesh")
        mesh.edit.setObjectName("edit_k_mesh")
        mesh.value_entered.connect(lambda v, f=mesh, i=el.id: self._try(
            lambda: self.document.set_element(i, k_mesh=v), f))
        mesh.cleared.connect(lambda f=mesh, i=el.id: self._try(
            lambda: self.document.set_element(i, k_mesh=None), f))
        self.form.addRow("Mesh stiffness", mesh)
        self._fields["k_mesh"] = (mesh, lambda m, i=el.id: m.element(i).k_mesh)
        self._add_note("referred", "Referred", lambda m, i=el.id: _gear_note(m, i))

    @staticmethod
    def _initial(model, mass_id, what, direction):
        ic = model.initial_of(mass_id)
        return ic.get(what, direction) if ic else 0.0

    def _set_fixed(self, mass_id, direction, on):
        el = self.document.model.element(mass_id)
        fixed = [d for d in el.fixed if d != direction] + ([direction] if on else [])
        order = ("x", "y", "theta")
        self._try(lambda: self.document.set_element(
            mass_id, fixed=tuple(sorted(fixed, key=order.index))), None)

    def _build_model(self, model):
        name = QLineEdit()
        name.setObjectName("field_name")
        name.setToolTip("The model's name, shown in the title and the report")
        name.editingFinished.connect(
            lambda e=name: self._try(lambda: self.document.set_top(name=e.text().strip()), None))
        self.form.addRow("Name", name)
        self._widgets["name"] = name
        self._text_getters["name"] = (name, lambda m: m.name)
        kind = QComboBox()
        kind.setObjectName("field_kind")
        for k, text in (("line", "line (one direction per mass)"),
                        ("planar", "planar (x and y per mass)"),
                        ("torsion", "torsion (discs on shafts)")):
            kind.addItem(text, k)
        kind.currentIndexChanged.connect(
            lambda _i, c=kind: self._try(lambda: self.document.set_top(
                kind=c.currentData(), text=f"Change model kind to {c.currentData()}"), None))
        self.form.addRow("Kind", kind)
        self._widgets["kind"] = kind
        self._text_getters["kind"] = (kind, lambda m: m.kind)
        if model.kind == "line":
            axis = QComboBox()
            axis.setObjectName("field_axis")
            axis.addItem("x (horizontal)", "x")
            axis.addItem("y (vertical)", "y")
            axis.currentIndexChanged.connect(
                lambda _i, c=axis: self._try(lambda: self.document.set_top(
                    axis=c.currentData()), None))
            self.form.addRow("Axis", axis)
            self._widgets["axis"] = axis
            self._text_getters["axis"] = (axis, lambda m: m.axis)
        def percent(text: str) -> float:
            try:
                return float(text.replace("%", "").strip())
            except ValueError:
                raise ModelError(f'margin: give a number of %, e.g. 15; got "{text}"') from None

        margin = QLineEdit()
        margin.setObjectName("field_margin_percent")
        margin.setToolTip("Frequency margin in %: a mode must lie at least this far from every"
                          " excitation frequency (common practice 10 to 20 %)")
        margin.editingFinished.connect(
            lambda e=margin: self._try(lambda: self.document.set_top(
                margin_percent=percent(e.text()),
                text="Change frequency margin"), None))
        self.form.addRow("Margin (%)", margin)
        self._widgets["margin_percent"] = margin
        self._text_getters["margin_percent"] = (margin, lambda m: f"{m.margin_percent:g}")
        info = QLabel(model_counts(model))
        info.setObjectName("properties_counts")
        info.setWordWrap(True)
        self.form.addRow(info)
        self.counts_label = info
        self._kind_error = QLabel()
        self._kind_error.setWordWrap(True)
        self._kind_error.setStyleSheet(f"color: {current_style().error.name()};")
        self._kind_error.hide()
        self.form.addRow(self._kind_error)
        from app.docks.damping_editor import DampingEditor  # the model's damping, one undo entry per edit

        self.damping_editor = DampingEditor(self.document)
        self.damping_editor.status_message.connect(self.status_message)
        self.form.addRow(self.damping_editor)
        self._widgets["damping"] = self.damping_editor

    def _add_quantity(self, name, kind, label, getter, setter, row: bool = True):
        field = QuantityField(kind, self.unit_system)
        field.setObjectName(f"field_{name}")
        field.edit.setObjectName(f"edit_{name}")
        field.value_entered.connect(lambda v, f=field: self._try(lambda: setter(v), f))
        if row:
            self.form.addRow(label, field)
        else:
            field.edit.setToolTip(f"{label}: {field._hint}")
        self._fields[name] = (field, getter)
        return field

    def _try(self, edit, field: QuantityField | None):
        """Run an edit; a refusal by the model is shown in place and the model stays as it was."""
        try:
            edit()
        except ModelError as exc:
            if field is not None:
                field.show_error(str(exc))
            else:
                # put the widgets back to the model's values, then say why
                self._signature = None
                self._on_model_change(self.document.model)
                if not self.selection:
                    self._kind_error.setText(str(exc))
                    self._kind_error.show()
                self.status_message.emit(f"Refused: {exc}")

    # -- tolerance (issue 15): percent and distribution, one undo step per edit ----------------
    def _build_tolerance(self, els):
        """A ``Tolerance (±%)`` row for one element, or for several of one kind (the same
        tolerance for all, one undo step): a percent (blank: none) and its distribution."""
        from solver.model import TOLERANCE_DISTRIBUTIONS, Tolerance

        percent = QLineEdit()
        percent.setObjectName("field_tolerance_percent")
        ids = tuple(e.id for e in els)
        what = {Spring: "k (and k_t)", Damper: "c"}.get(type(els[0]), "the mass (and inertia)")
        percent.setToolTip(f"Tolerance on {what} for a tolerance study: the value lies within"
                           " +-this % of nominal (normal: this is the 3-sigma bound, truncated"
                           " there); leave blank for none")
        percent.setPlaceholderText("none")
        dist = QComboBox()
        dist.setObjectName("field_tolerance_distribution")
        for d in TOLERANCE_DISTRIBUTIONS:
            dist.addItem(d, d)
        dist.setToolTip("How values spread inside the bound: uniform, normal (3-sigma at the"
                        " bound, truncated) or triangular (most likely at nominal)")
        error = QLabel()
        error.setObjectName("tolerance_error")
        error.setWordWrap(True)
        error.setStyleSheet(f"color: {current_style().error.name()};")
        error.hide()

        def apply():
            text = percent.text().replace("%", "").replace("±", "").replace("+-", "").strip()
            try:
                if not text:
                    tol = None
                else:
                    try:
                        value = float(text)
                    except ValueError:
                        raise ModelError(f'tolerance: give a number of %, e.g. 20; got'
                                         f' "{percent.text()}"') from None
                    tol = Tolerance(value, dist.currentData())
                error.hide()   # before the edit: the model's change may rebuild this form
                model = self.document.model
                if any(model.element(i).tolerance != tol for i in ids):
                    if len(ids) == 1:
                        self.document.set_element(ids[0], tolerance=tol)
                    else:
                        self.document.set_elements(ids, tolerance=tol)
            except ModelError as exc:
                error.setText(str(exc))
                error.show()
                percent.setToolTip(str(exc))
                self.status_message.emit(f"Refused: {exc}")

        percent.editingFinished.connect(apply)
        # activated: a user's choice only (a combo being destroyed changes its index too)
        dist.activated.connect(lambda _i: percent.text().strip() and apply())
        row = QWidget()
        v = QVBoxLayout(row)
        v.setContentsMargins(0, 0, 0, 0)
        v.setSpacing(1)
        h = QHBoxLayout()
        h.setContentsMargins(0, 0, 0, 0)
        h.addWidget(percent, 1)
        h.addWidget(dist)
        v.addLayout(h)
        v.addWidget(error)   # the refusal in place, under the entry (no height while hidden)
        self.form.addRow("Tolerance (±%)" if len(ids) == 1 else "Tolerance (±%, all)", row)
        self._widgets["tolerance_percent"] = percent
        self._widgets["tolerance_distribution"] = dist

        def common(m):
            tols = {m.element(i).tolerance for i in ids if i in m.ids()}
            return tols.pop() if len(tols) == 1 else "differ"

        def percent_text(m):
            tol = common(m)
            percent.setPlaceholderText("differ" if tol == "differ" else "none")
            if tol == "differ" or tol is None:
                return ""
            return f"{tol.percent:g}"

        self._text_getters["tolerance_percent"] = (percent, percent_text)
        self._text_getters["tolerance_distribution"] = (
            dist, lambda m: common(m).distribution if common(m) not in (None, "differ")
            else "uniform")
