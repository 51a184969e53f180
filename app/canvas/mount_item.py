"""A mount point of a rigid body: a small ring on the body, dragged to move the attachment.

The ring is a child of its body's :class:`MassItem`, so it turns and moves with the body when a
mode is animated. It shows the offset (m, body frame) that its springs and dashpots share; a drag
is a preview (the links follow it) and the scene turns the release into one document edit that
moves every attachment at that offset. It never changes the model itself.
"""

from __future__ import annotations

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QBrush, QPainterPath, QPen
from PySide6.QtWidgets import QGraphicsItem, QGraphicsObject

from app.drawing.style import current_style

_R = 4.5


class MountItem(QGraphicsObject):
    """The mount point at ``offset`` (m) of body ``body_id``."""

    def __init__(self, body_item, offset: tuple[float, float]):
        super().__init__(body_item)
        self.body_item = body_item
        self.body_id = body_item.element_id
        self.offset = offset
        # moved by its own mouse handlers, not Qt's item dragging: that would move the selected
        # body instead (a child of a selected movable item is carried, not dragged)
        self.setFlags(QGraphicsItem.ItemSendsGeometryChanges)
        self.setZValue(3)
        self.setAcceptHoverEvents(True)
        self.put_back()

    def rest_pos(self) -> QPointF:
        """Where the model puts the ring (body coordinates: scene units, y down)."""
        k = self.body_item.mapper.px_per_m
        return QPointF(self.offset[0] * k, -self.offset[1] * k)

    def put_back(self) -> None:
        """Back on the model's offset (a drag the model refused, or no drag)."""
        self.setFlag(QGraphicsItem.ItemSendsGeometryChanges, False)
        self.setPos(self.rest_pos())
        self.setFlag(QGraphicsItem.ItemSendsGeometryChanges, True)
        self.setToolTip(self._tip())

    def _tip(self) -> str:
        from app.text.units import show

        system = getattr(self.scene(), "unit_system", "SI") if self.scene() else "SI"
        return (f"mount point of {self.body_id} at dx {show(self.offset[0], 'length', system)},"
                f" dy {show(self.offset[1], 'length', system)}: drag to move it; start or end"
                " a spring here to attach it")

    def dragged_offset(self) -> tuple[float, float]:
        """The offset (m, body frame) the ring shows now, on the grid when the body snaps."""
        k = self.body_item.mapper.px_per_m
        return (round(self.pos().x() / k, 9), round(-self.pos().y() / k, 9))

    def moved(self) -> bool:
        return self.pos() != self.rest_pos()

    def boundingRect(self) -> QRectF:  # noqa: N802
        return QRectF(-_R - 2, -_R - 2, 2 * _R + 4, 2 * _R + 4)

    def shape(self) -> QPainterPath:
        path = QPainterPath()
        path.addEllipse(QPointF(0, 0), _R + 2, _R + 2)
        return path

    def paint(self, painter, option, widget=None):
        st = current_style()
        pen = QPen(st.accent if self.moved() else st.mass_edge, st.line_width)
        pen.setCosmetic(True)
        painter.setPen(pen)
        painter.setBrush(QBrush(st.background))
        painter.drawEllipse(QPointF(0, 0), _R, _R)
        painter.drawPoint(QPointF(0, 0))

    def mousePressEvent(self, event):  # noqa: N802 - Qt's name
        if event.button() != Qt.MouseButton.LeftButton:
            event.ignore()
            return
        event.accept()

    def mouseMoveEvent(self, event):  # noqa: N802 - Qt's name
        self.setPos(self.parentItem().mapFromScene(event.scenePos()))
        self.update()
        event.accept()

    def mouseReleaseEvent(self, event):  # noqa: N802 - Qt's name
        event.accept()

    def itemChange(self, change, value):  # noqa: N802 - Qt's name
        if change == QGraphicsItem.ItemPositionChange and isinstance(value, QPointF):
            if self.body_item.snap:
                # on the model's grid measured from the body's centre
                g = self.body_item.mapper.grid_m * self.body_item.mapper.px_per_m
                return QPointF(round(value.x() / g) * g, round(value.y() / g) * g)
        if change == QGraphicsItem.ItemPositionHasChanged and self.scene() is not None:
            self.scene().node_item_moved(self.body_item)
        return super().itemChange(change, value)
