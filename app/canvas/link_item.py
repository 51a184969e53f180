"""Base of the two-ended items (springs, dashpots): drawn between two node items."""

from __future__ import annotations

import math

from PySide6.QtCore import QLineF, QPointF, QRectF, Signal
from PySide6.QtGui import QPainterPath, QPainterPathStroker, QPen
from PySide6.QtWidgets import QGraphicsItem, QGraphicsObject, QGraphicsSimpleTextItem

from app.drawing.style import current_style

from .node_item import ITEM_CACHE


def _edge_inset(node_item, u: QPointF) -> float:
    """Distance from a node's centre to its outline along unit vector ``u`` (scene axes)."""
    if getattr(node_item, "is_body", False):
        hw, hh = node_item.half_extents()
        ts = [h / abs(c) for h, c in ((hw, u.x()), (hh, u.y())) if abs(c) > 1e-12]
        return min(ts) if ts else 0.0
    half = getattr(node_item, "half_size", lambda: 0.0)()
    if half <= 0:
        return 0.0
    if getattr(node_item, "kind", "") == "torsion":
        return half
    m = max(abs(u.x()), abs(u.y()))
    return half / m if m > 0 else half


class LinkItem(QGraphicsObject):
    """A spring or dashpot between node items ``a_item`` and ``b_item``; ``offset`` (scene units)
    shifts it sideways so links in parallel between the same nodes stay apart."""

    remove_requested = Signal(str)

    def __init__(self, element, a_item, b_item):
        super().__init__()
        self.setFlags(QGraphicsItem.ItemIsSelectable)
        self.setZValue(1)
        self.setCacheMode(ITEM_CACHE)
        self.label_item = QGraphicsSimpleTextItem(self)
        self.offset = 0.0
        self._path = QPainterPath()
        self._bounds = None
        self.energy_color = None
        self.set_element(element, a_item, b_item)

    def set_element(self, element, a_item, b_item):
        self.element = element
        self.element_id = element.id
        self.a_item, self.b_item = a_item, b_item
        self.label_item.setText(element.label)
        self.label_item.setBrush(current_style().label)
        self.setToolTip(self.tooltip_text(element))
        self.refresh()

    def tooltip_text(self, element) -> str:
        return element.label

    def build_path(self, p1: QPointF, p2: QPointF) -> QPainterPath:
        raise NotImplementedError

    def _end(self, which: str):
        """(scene point, True when it is an attachment point off a body's centre)."""
        item = self.a_item if which == "a" else self.b_item
        offset = tuple(getattr(self.element, f"{which}_offset", (0.0, 0.0)))
        if offset != (0.0, 0.0) and hasattr(item, "attach_scene_point"):
            return item.attach_scene_point(offset), True
        return item.shown_pos(), False

    def endpoints(self) -> tuple[QPointF, QPointF]:
        (c1, on_a), (c2, on_b) = self._end("a"), self._end("b")
        line = QLineF(c1, c2)
        length = line.length()
        if length == 0:
            return c1, c2
        u = QPointF(line.dx() / length, line.dy() / length)
        n = QPointF(-u.y(), u.x())
        off = QPointF(n.x() * self.offset, n.y() * self.offset)
        # an end on a mount point starts right there; a centre end starts at the block's edge
        i1 = 0.0 if on_a else _edge_inset(self.a_item, u)
        i2 = 0.0 if on_b else _edge_inset(self.b_item, u)
        if i1 + i2 > 0.8 * length:  # nodes overlap: draw centre to centre
            i1 = i2 = 0.0
        return (QPointF(c1.x() + u.x() * i1, c1.y() + u.y() * i1) + off,
                QPointF(c2.x() - u.x() * i2, c2.y() - u.y() * i2) + off)

    def refresh(self, label: bool = True):
        """Redraw between the nodes' current (possibly dragged) positions; ``label=False``
        keeps the label where it was placed (an animation frame)."""
        self.prepareGeometryChange()
        p1, p2 = self.endpoints()
        self._path = self.build_path(p1, p2)
        self._bounds = None
        if not label:
            self.update()
            return
        mid = QPointF((p1.x() + p2.x()) / 2, (p1.y() + p2.y()) / 2)
        dx, dy = p2.x() - p1.x(), p2.y() - p1.y()
        L = math.hypot(dx, dy) or 1.0
        # Labels go on the side the link is offset to, so two links in parallel label apart.
        side = -1.0 if self.offset < 0 else 1.0
        nx, ny = -dy / L * side, dx / L * side
        if abs(ny) >= abs(nx):  # nearly horizontal link: label above/below, centred
            nx, ny = 0.0, (1.0 if ny > 0 else -1.0)
        else:
            nx, ny = (1.0 if nx > 0 else -1.0), 0.0
        w = self.label_item.boundingRect().width()
        h = self.label_item.boundingRect().height()
        x = mid.x() + nx * 14 - (w if nx < 0 else (w / 2 if nx == 0 else 0))
        y = mid.y() + ny * 14 - (h if ny < 0 else (h / 2 if ny == 0 else 0))
        self.label_item.setPos(x, y)
        self.update()

    def symbol_rect(self) -> QRectF:
        """The drawn coil or piston (scene coordinates: the item sits at the origin)."""
        return self._path.boundingRect()

    def boundingRect(self) -> QRectF:  # noqa: N802
        # kept until the path is built again (Qt asks on every paint, see MassItem)
        r = self._bounds
        if r is None:
            r = self._bounds = self._path.boundingRect().adjusted(-8, -8, 8, 8)
        return r

    def shape(self) -> QPainterPath:
        stroker = QPainterPathStroker()
        stroker.setWidth(10)
        return stroker.createStroke(self._path)

    def paint(self, painter, option, widget=None):
        st = current_style()
        color = st.accent if self.isSelected() else (self.energy_color or st.ink)
        pen = QPen(color, st.line_width * (1.6 if self.isSelected() else 1.0))
        pen.setCosmetic(True)
        painter.setPen(pen)
        painter.drawPath(self._path)
