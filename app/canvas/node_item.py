"""Base of the node items (masses and anchors): selectable, movable, snapping, with a label."""

from __future__ import annotations

from PySide6.QtCore import QPointF, QRectF, Signal
from PySide6.QtGui import QPen, QTransform
from PySide6.QtWidgets import QGraphicsItem, QGraphicsObject, QGraphicsSimpleTextItem

from app.drawing.style import current_style

from .geometry import Mapper


#: How the canvas items keep their drawing: a pixmap each, in device pixels, drawn again only
#: when the item changes. An edit then repaints the few items it touched from Python and the
#: others from their pixmaps (200 masses: 6.6-6.8 -> 3.4-4.0 ms a property edit or a drag's end,
#: a whole repaint 22 -> 7 ms; 1000 masses 24-27 -> 13-14 ms). Off while a mode plays on the
#: canvas (every item changes every frame: 200 masses 42 -> 62 ms a frame with it on).
ITEM_CACHE = QGraphicsItem.CacheMode.DeviceCoordinateCache


class NodeItem(QGraphicsObject):
    """A drawn node. It shows an element; it is not the element (the Model is in the Document).

    Gestures become requests: a move is previewed by Qt's item dragging and reported by the scene
    on release; ``remove_requested(id)`` asks the owner to delete the element.
    """

    remove_requested = Signal(str)

    def __init__(self, element, model, mapper: Mapper):
        super().__init__()
        self.mapper = mapper
        self.element_id = element.id
        self.snap = True
        self.setFlags(QGraphicsItem.ItemIsSelectable | QGraphicsItem.ItemIsMovable
                      | QGraphicsItem.ItemSendsGeometryChanges)
        self.setAcceptHoverEvents(True)
        self.label_item = QGraphicsSimpleTextItem(self)
        self.setZValue(2)
        self.setCacheMode(ITEM_CACHE)
        self.update_from(element, model)

    def update_from(self, element, model):
        """Show ``element`` of ``model`` (position, size, label)."""
        self.element = element
        self.prepareGeometryChange()
        self.setFlag(QGraphicsItem.ItemSendsGeometryChanges, False)
        self.setPos(self.mapper.to_scene(element.x, element.y))
        self.setFlag(QGraphicsItem.ItemSendsGeometryChanges, True)
        self.label_item.setText(element.label)
        self.label_item.setBrush(current_style().label)
        r = self.boundingRect()
        self.label_item.setPos(r.right() + 3, r.top() - 14)
        self.setToolTip(self.tooltip_text(element, model))
        self.update()

    def tooltip_text(self, element, model) -> str:
        return element.label

    def symbol_rect(self) -> QRectF:
        """The drawn symbol (item coordinates), without the label: what labels keep off."""
        path = getattr(self, "_path", None)
        return path.boundingRect() if path is not None else self.boundingRect()

    def set_display_offset(self, dx: float, dy: float, turn: float | None = None) -> None:
        """Draw the node shifted by (dx, dy) scene units, or a disc turned by ``turn`` rad
        (a mode animated on the canvas), without moving it: ``pos()`` stays the model's
        position, so no edit, snap or undo entry follows. ``turn`` None: no turn mark."""
        self._display_offset = QPointF(dx, dy)
        self.display_turn = turn
        self.setTransform(QTransform.fromTranslate(dx, dy))
        self.update()

    def shown_pos(self) -> QPointF:
        """Where the node is drawn now: its position plus any display offset."""
        off = getattr(self, "_display_offset", None)
        return self.pos() + off if off is not None else self.pos()

    def pen(self, color) -> QPen:
        pen = QPen(color, current_style().line_width)
        pen.setCosmetic(True)
        return pen

    def itemChange(self, change, value):  # noqa: N802 - Qt's name
        if change == QGraphicsItem.ItemPositionChange and self.snap and isinstance(value, QPointF):
            return self.mapper.snap_scene(value)
        if change == QGraphicsItem.ItemPositionHasChanged and self.scene() is not None:
            self.scene().node_item_moved(self)
        return super().itemChange(change, value)
