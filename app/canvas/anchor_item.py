"""An anchor (ground) drawn as a hatched line facing the model."""

from __future__ import annotations

import math

from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QPainterPath

from app.drawing import shapes
from app.drawing.style import current_style

from .node_item import NodeItem

_SIZE = 30.0


class AnchorItem(NodeItem):
    """One anchor; its hatch faces away from the node it is joined to (``normal`` in scene axes)."""

    def update_from(self, element, model, normal: QPointF | None = None):
        if normal is None:
            normal = QPointF(0, -1) if (model.kind != "line" or model.axis == "y") else QPointF(1, 0)
        self.normal = normal
        self._path = shapes.anchor_path(QPointF(0, 0), _SIZE, normal)
        self._bounds = self._path.boundingRect().adjusted(-4, -4, 4, 4)
        super().update_from(element, model)

    def boundingRect(self) -> QRectF:  # noqa: N802
        return self._bounds          # kept with the path (Qt asks on every paint)

    def shape(self) -> QPainterPath:
        p = QPainterPath()
        p.addRect(self.boundingRect())
        return p

    def paint(self, painter, option, widget=None):
        st = current_style()
        painter.setPen(self.pen(st.accent if self.isSelected() else st.anchor))
        painter.drawPath(self._path)

    def tooltip_text(self, element, model) -> str:
        return f"anchor {element.label} ({element.id}): fixed ground"


def normal_towards(anchor, other) -> QPointF:
    """Unit vector (scene axes, y down) from an anchor towards the node it joins, snapped to the
    nearest of the four screen directions so ground reads as a wall, floor or ceiling."""
    dx, dy = other.x - anchor.x, -(other.y - anchor.y)
    if math.hypot(dx, dy) == 0:
        return QPointF(0, -1)
    if abs(dx) >= abs(dy):
        return QPointF(1 if dx > 0 else -1, 0)
    return QPointF(0, 1 if dy > 0 else -1)
