"""The open document: the one owner of the current Model, its file path, dirty flag and undo history.

Views never change the model. They call the edit methods here (or :meth:`Document.apply` with a
new Model); each edit becomes one undo command, and :attr:`Document.model_changed` tells every view
the new Model. An edit that would make an invalid Model raises :class:`solver.ModelError` with the
reason and leaves the document untouched.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

from PySide6.QtCore import QObject, Signal
from PySide6.QtGui import QUndoStack

from solver.errors import ModelError
from solver.io import load_model, save_model
from solver.model import Anchor, Damper, Initial, Mass, Model, Spring

from app.document import commands

#: Values a new element starts with, by model kind (SI: kg or kg m^2, N/m or N m/rad, N s/m).
DEFAULT_MASS = {"line": 1.0, "planar": 1.0, "torsion": 0.01}
DEFAULT_STIFFNESS = {"line": 10_000.0, "planar": 10_000.0, "torsion": 1_000.0}
DEFAULT_DAMPING = {"line": 10.0, "planar": 10.0, "torsion": 0.1}


class Document(QObject):
    """Current model + path + dirty flag + ``QUndoStack``.

    Signals
    -------
    model_changed(Model)
        After every change of the model (edit, undo, redo, open, new).
    path_changed(str)
        The file path changed (empty text for an unsaved document).
    dirty_changed(bool)
        True when there are edits since the last save or open.
    opened(Model)
        A different model was loaded (open or new): views may reset zoom and selection.
    """

    model_changed = Signal(object)
    path_changed = Signal(str)
    dirty_changed = Signal(bool)
    opened = Signal(object)

    def __init__(self, model: Model | None = None, parent=None):
        super().__init__(parent)
        self._model = model if model is not None else Model(kind="line", name="untitled")
        self._path: Path | None = None
        self.undo_stack = QUndoStack(self)
        self.undo_stack.cleanChanged.connect(self._on_clean_change)

    def _on_clean_change(self, clean: bool) -> None:
        self.dirty_changed.emit(not clean)

    # -- state --------------------------------------------------------------------------------
    @property
    def model(self) -> Model:
        return self._model

    @property
    def path(self) -> Path | None:
        return self._path

    @property
    def dirty(self) -> bool:
        return not self.undo_stack.isClean()

    @property
    def display_name(self) -> str:
        if self._path is not None:
            return self._path.stem
        return self._model.name or "untitled"

    def suggested_path(self, suffix: str) -> Path:
        """Where an export of this model is offered: beside the model file, named after it
        (``rack-report.png`` for ``suffix="-report.png"``); an unsaved model's go to the home
        folder."""
        folder = self._path.parent if self._path is not None else Path.home()
        return folder / f"{self.display_name}{suffix}"

    def _set_model(self, model: Model) -> None:
        # Called by commands only (redo/undo), so every change goes through the history.
        self._model = model
        self.model_changed.emit(model)

    def _reset(self, model: Model, path: Path | None) -> None:
        self.undo_stack.clear()
        self._model = model
        self._path = path
        self.undo_stack.setClean()
        self.path_changed.emit(str(path) if path else "")
        self.dirty_changed.emit(False)
        self.model_changed.emit(model)
        self.opened.emit(model)

    # -- files --------------------------------------------------------------------------------
    def new(self, kind: str = "line", model: Model | None = None) -> None:
        """Start an empty model of ``kind`` (or the given model) with no file and no history."""
        self._reset(model if model is not None else Model(kind=kind, name="untitled"), None)

    def open(self, path) -> None:
        """Load a model file. Raises :class:`solver.ModelFileError`; the document is then unchanged."""
        path = Path(path)
        model = load_model(path)
        self._reset(model, path.resolve())

    def load_recovered(self, model: Model, path: Path | None) -> None:
        """Take a model restored from the recovery file: it has unsaved edits, so it is dirty."""
        self._reset(model, path)
        # An empty-diff entry can't be pushed; mark dirty by moving the clean index off the top.
        self.undo_stack.resetClean()
        self.dirty_changed.emit(True)

    def save(self, path=None) -> Path:
        """Write the model (atomically) to ``path`` or the current path; returns the path written.

        Raises ``OSError`` (folder missing, read-only, disk full); the old file is then intact
        because solver.save_model writes a temporary file and renames it only when complete.
        """
        target = Path(path) if path is not None else self._path
        if target is None:
            raise ValueError("the document has no file yet; give a path to save to")
        save_model(self._model, target)
        target = target.resolve()
        if target != self._path:
            self._path = target
            self.path_changed.emit(str(target))
        self.undo_stack.setClean()
        return target

    # -- edits --------------------------------------------------------------------------------
    def apply(self, new_model: Model, text: str, merge_key=None,
              command_class=commands.ModelCommand) -> bool:
        """Make ``new_model`` the current model as one undo entry. False if nothing changed."""
        diff = commands.ModelDiff.between(self._model, new_model)
        if diff.is_empty():
            return False
        self.undo_stack.push(command_class(self, diff, text, merge_key))
        return True

    def add(self, elements, text: str | None = None) -> bool:
        elements = list(elements)
        if text is None:
            text = (f"Add {elements[0].label}" if len(elements) == 1
                    else f"Add {len(elements)} elements")
        return self.apply(self._model.with_changes(put=elements), text,
                          command_class=commands.AddCommand)

    def add_mass(self, x: float, y: float, mass: float | None = None) -> str:
        """Add a mass at (x, y) m with the kind's default mass; returns its id."""
        mid = self._model.new_id("m")
        value = DEFAULT_MASS[self._model.kind] if mass is None else mass
        self.add([Mass(id=mid, x=x, y=y, mass=value)])
        return mid

    def add_anchor(self, x: float, y: float) -> str:
        aid = self._model.new_id("g")
        self.add([Anchor(id=aid, x=x, y=y)])
        return aid

    def connect(self, what: str, a: str, b: str, value: float | None = None) -> str:
        """Join nodes ``a`` and ``b`` with a new ``"spring"`` or ``"dashpot"``; returns its id."""
        kind = self._model.kind
        if what == "spring":
            eid = self._model.new_id("s")
            el = Spring(id=eid, a=a, b=b, k=DEFAULT_STIFFNESS[kind] if value is None else value)
        elif what == "dashpot":
            eid = self._model.new_id("c")
            el = Damper(id=eid, a=a, b=b, c=DEFAULT_DAMPING[kind] if value is None else value)
        else:
            raise ValueError(f"cannot connect with {what!r}")
        self.apply(self._model.with_changes(put=[el]), f"Connect {a}–{b} with {what} {eid}",
                   command_class=commands.ConnectCommand)
        return eid

    def move_nodes(self, positions: dict, merge_key=None) -> bool:
        """Move masses/anchors: ``{node_id: (x, y)}`` in m. One undo entry (merging with ``merge_key``)."""
        put = []
        for nid, (x, y) in positions.items():
            node = self._model.node(nid)
            if (node.x, node.y) != (x, y):
                put.append(dataclasses.replace(node, x=float(x), y=float(y)))
        if not put:
            return False
        text = f"Move {put[0].label}" if len(put) == 1 else f"Move {len(put)} nodes"
        if merge_key is None:
            merge_key = ("move", tuple(sorted(positions)))
        return self.apply(self._model.with_changes(put=put), text, merge_key=merge_key,
                          command_class=commands.MoveCommand)

    def remove(self, ids) -> bool:
        """Delete elements by id, with the springs/dashpots attached to deleted nodes, as one entry."""
        ids = [i for i in ids if i in self._model.ids()]
        if not ids:
            return False
        text = (f"Delete {self._model.element(ids[0]).label}" if len(ids) == 1
                else f"Delete {len(ids)} elements")
        return self.apply(self._model.with_changes(remove=ids), text,
                          command_class=commands.DeleteCommand)

    def set_element(self, element_id: str, merge: bool = False, **changes) -> bool:
        """Change fields of one element (``label``, ``mass``, ``k``, ``x`` ...). Raises ModelError."""
        el = self._model.element(element_id)
        new_el = dataclasses.replace(el, **changes)
        names = ", ".join(sorted(changes))
        key = ("set", element_id, tuple(sorted(changes))) if merge else None
        return self.apply(self._model.with_changes(put=[new_el]),
                          f"Change {names} of {el.label}", merge_key=key,
                          command_class=commands.PropertyCommand)

    def set_elements(self, element_ids, **changes) -> bool:
        """Give several elements the same field values (``k`` of four isolators) as one undo
        entry. Raises ModelError, naming the element, when the model refuses any of them; then
        none is changed."""
        ids = list(dict.fromkeys(element_ids))
        put = [dataclasses.replace(self._model.element(i), **changes) for i in ids]
        if len(put) == 1:
            what = put[0].label
        else:
            kinds = {type(el).__name__.lower() for el in put}
            noun = kinds.pop().replace("damper", "dashpot") if len(kinds) == 1 else "element"
            what = f"{len(put)} {noun}{'es' if noun == 'mass' else 's'}"
        return self.apply(self._model.with_changes(put=put),
                          f"Change {', '.join(sorted(changes))} of {what}",
                          command_class=commands.PropertyCommand)

    def set_initial(self, mass_id: str, direction: str, displacement: float | None = None,
                    velocity: float | None = None) -> bool:
        """Set one mass's initial displacement (m or rad) and/or velocity in one direction."""
        ic = self._model.initial_of(mass_id) or Initial(mass_id=mass_id)
        disp, vel = dict(ic.displacement), dict(ic.velocity)
        if displacement is not None:
            disp[direction] = displacement
        if velocity is not None:
            vel[direction] = velocity
        disp = {d: v for d, v in disp.items() if v != 0}
        vel = {d: v for d, v in vel.items() if v != 0}
        new_ic = Initial(mass_id=mass_id, displacement=tuple(disp.items()),
                         velocity=tuple(vel.items()))
        if not new_ic.displacement and not new_ic.velocity:
            initial = tuple(i for i in self._model.initial if i.mass_id != mass_id)
            new_model = dataclasses.replace(self._model, initial=initial)
        else:
            new_model = self._model.with_changes(put=[new_ic])
        return self.apply(new_model, f"Change initial condition of {mass_id}",
                          command_class=commands.PropertyCommand)

    def set_top(self, text: str | None = None, **fields) -> bool:
        """Change top fields of the model (``name``, ``kind``, ``axis``, ``margin_percent`` ...)."""
        new_model = dataclasses.replace(self._model, **fields)
        return self.apply(new_model, text or f"Change model {', '.join(sorted(fields))}",
                          command_class=commands.PropertyCommand)

    def paste(self, elements, offset=(0.0, 0.0)) -> list[str]:
        """Insert copies of ``elements`` under fresh ids, nodes shifted by ``offset`` (m).

        Springs and dashpots are kept when both their ends are among the pasted nodes (re-linked
        to the copies) or still exist in the model. Returns the new ids.
        """
        model = self._model
        used = set(model.ids())
        mapping: dict[str, str] = {}
        put = []

        def fresh(prefix):
            n = 1
            while f"{prefix}{n}" in used:
                n += 1
            used.add(f"{prefix}{n}")
            return f"{prefix}{n}"

        dx, dy = offset
        for el in elements:
            if isinstance(el, (Mass, Anchor)):
                nid = fresh("m" if isinstance(el, Mass) else "g")
                mapping[el.id] = nid
                label = el.label if el.label != el.id else ""
                put.append(dataclasses.replace(el, id=nid, x=el.x + dx, y=el.y + dy, label=label))
        node_ids = {el.id for el in model.masses + model.anchors}
        for el in elements:
            if isinstance(el, (Spring, Damper)):
                a, b = mapping.get(el.a), mapping.get(el.b)
                if a is None and el.a in node_ids:
                    a = el.a
                if b is None and el.b in node_ids:
                    b = el.b
                if a is None or b is None or a == b:
                    continue
                if el.a not in mapping and el.b not in mapping:
                    continue  # would only duplicate an existing link between the same nodes
                nid = fresh("s" if isinstance(el, Spring) else "c")
                label = el.label if el.label != el.id else ""
                put.append(dataclasses.replace(el, id=nid, a=a, b=b, label=label))
        if not put:
            return []
        self.apply(model.with_changes(put=put), f"Paste {len(put)} element" + ("s" * (len(put) > 1)),
                   command_class=commands.PasteCommand)
        return [el.id for el in put]


__all__ = ["Document", "ModelError"]
