"""Undo commands: each edit of the model is one :class:`QUndoCommand`.

A command stores values, never widget or item pointers: for every collection of the Model that the
edit changed (``masses``, ``springs``, ...) the tuple of element dataclasses before and after, and for
every changed top field (``name``, ``kind``, ``axis``, ...) its value before and after. Elements are
frozen, so holding them is holding values. Undo puts the "before" values back in place, which
restores the model exactly (order included), and redo puts the "after" values.

Commands with the same ``merge_key`` that follow one another merge into one history entry (Qt's
``mergeWith``), so a run of nudges of the same selection or typing into the same field is one undo step.
"""

from __future__ import annotations

import dataclasses
import zlib

from PySide6.QtGui import QUndoCommand

from solver.model import Model

_COLLECTIONS = ("masses", "anchors", "springs", "dampers", "excitations", "initial", "gears")
_TOP = ("kind", "name", "axis", "damping", "margin_percent", "loads")


@dataclasses.dataclass(frozen=True)
class ModelDiff:
    """The changed parts of a Model: ``{field: (before, after)}`` for collections and top fields."""

    changes: tuple[tuple[str, object, object], ...]

    @classmethod
    def between(cls, before: Model, after: Model) -> "ModelDiff":
        changes = []
        for name in _COLLECTIONS + _TOP:
            b, a = getattr(before, name), getattr(after, name)
            if b != a:
                changes.append((name, b, a))
        return cls(tuple(changes))

    def is_empty(self) -> bool:
        return not self.changes

    def apply(self, model: Model, forward: bool = True) -> Model:
        values = {name: (a if forward else b) for name, b, a in self.changes}
        return dataclasses.replace(model, **values)

    def then(self, later: "ModelDiff") -> "ModelDiff":
        """This diff followed by ``later``, as one diff (first "before", last "after")."""
        merged = {name: [b, a] for name, b, a in self.changes}
        for name, b, a in later.changes:
            if name in merged:
                merged[name][1] = a
            else:
                merged[name] = [b, a]
        order = _COLLECTIONS + _TOP
        return ModelDiff(tuple((n, merged[n][0], merged[n][1])
                               for n in order if n in merged and merged[n][0] != merged[n][1]))


def _merge_id(key) -> int:
    # QUndoCommand.id() must be an int; -1 means "never merge".
    if key is None:
        return -1
    return zlib.crc32(repr(key).encode("utf-8")) & 0x3FFFFFFF


class ModelCommand(QUndoCommand):
    """One edit: a diff applied to the document's model.

    ``document`` is the :class:`app.document.Document` (the model owner, not a view). ``text`` is the
    history entry shown in the Edit menu ("Move m1", "Delete 3 elements").
    """

    def __init__(self, document, diff: ModelDiff, text: str, merge_key=None):
        super().__init__(text)
        self._document = document
        self.diff = diff
        self.merge_key = merge_key
        self._id = _merge_id(merge_key)

    def redo(self):
        self._document._set_model(self.diff.apply(self._document.model, forward=True))

    def undo(self):
        self._document._set_model(self.diff.apply(self._document.model, forward=False))

    def id(self) -> int:  # noqa: A003 - Qt's name
        return self._id

    def mergeWith(self, other) -> bool:  # noqa: N802 - Qt's name
        if not isinstance(other, ModelCommand) or other.merge_key != self.merge_key \
                or self.merge_key is None:
            return False
        self.diff = self.diff.then(other.diff)
        if self.diff.is_empty():
            self.setObsolete(True)
        return True


class AddCommand(ModelCommand):
    """Add masses, anchors, springs or dashpots."""


class MoveCommand(ModelCommand):
    """Move nodes; consecutive moves of the same nodes merge into one entry."""


class ConnectCommand(ModelCommand):
    """Join two nodes with a new spring or dashpot."""


class DeleteCommand(ModelCommand):
    """Remove elements; removing a node also removes its springs, dashpots and initial conditions."""


class PropertyCommand(ModelCommand):
    """Change fields of one element or top fields of the model."""


class PasteCommand(ModelCommand):
    """Insert copies of elements under fresh ids."""
