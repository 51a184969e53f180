"""A mass drawn as a block sized by its mass (a disc in a torsion model), with an axis arrow on a line."""

from __future__ import annotations

import math

from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QBrush, QPainterPath

from app.drawing import shapes
from app.drawing.style import current_style

from .node_item import NodeItem

_BASE = 28.0


class MassItem(NodeItem):
    """One mass of the model (``element`` is a :class:`solver.Mass`)."""

    def update_from(self, element, model, reference_mass: float = 1.0):
        self.kind = model.kind
        self.axis = model.axis
        self.reference_mass = reference_mass
        self._path = self._symbol(element)
        self._arrow_path = None          # made once per symbol: paints and label keys reuse it
        super().update_from(element, model)

    def _symbol(self, element) -> QPainterPath:
        c = QPointF(0, 0)
        path = QPainterPath()
        if self.kind == "torsion":
            return shapes.disc_path(c, element.mass, base=_BASE / 2, reference=self.reference_mass)
        if element.mass <= 0:
            r = 0.25 * _BASE
            path.addEllipse(c, r / 2, r / 2)
            return path
        path.addRect(shapes.mass_block_rect(c, element.mass, _BASE, self.reference_mass))
        return path

    def _arrow(self) -> QPainterPath:
        if getattr(self, "_arrow_path", None) is None:
            self._arrow_path = self._make_arrow()
        return self._arrow_path

    def _make_arrow(self) -> QPainterPath:
        r = self._path.boundingRect()
        if self.axis == "x":
            return shapes.axis_arrow_path(QPointF(r.left(), r.bottom() + 8), QPointF(1, 0),
                                          length=r.width() * 0.9, head=6)
        return shapes.axis_arrow_path(QPointF(r.left() - 8, r.bottom()), QPointF(0, -1),
                                      length=r.height() * 0.9, head=6)

    def symbol_rect(self) -> QRectF:
        """Block (or disc) with its axis arrow and lock mark: what labels keep off."""
        r = self._path.boundingRect()
        if self.kind == "line" and self.element.mass > 0:
            r = r.united(self._arrow().boundingRect())
        return r

    def half_size(self) -> float:
        return self._path.boundingRect().width() / 2

    def boundingRect(self) -> QRectF:  # noqa: N802
        return self._path.boundingRect().adjusted(-12, -4, 4, 14)

    def shape(self) -> QPainterPath:
        path = QPainterPath()
        path.addRect(self._path.boundingRect().adjusted(-3, -3, 3, 3))
        return path

    def paint(self, painter, option, widget=None):
        st = current_style()
        selected = self.isSelected()
        painter.setPen(self.pen(st.accent if selected else st.mass_edge))
        fill = st.junction if self.element.mass <= 0 else st.mass_fill
        if getattr(self, "energy_color", None) is not None and self.element.mass > 0:
            fill = self.energy_color   # energy tint (app.energy_view): kinetic-energy share
        painter.setBrush(QBrush(st.accent_soft if selected else fill))
        painter.drawPath(self._path)
        turn = getattr(self, "display_turn", None)
        if self.kind == "torsion" and turn is not None:
            # the disc's radius mark turned by the animated angle (counter-clockwise, y up)
            r = self._path.boundingRect().width() / 2
            painter.setPen(self.pen(st.accent))
            painter.drawLine(QPointF(0, 0), QPointF(-r * math.sin(turn), -r * math.cos(turn)))
        if self.kind == "line" and self.element.mass > 0:
            painter.setPen(self.pen(st.ink_soft))
            painter.setBrush(QBrush(st.ink_soft))
            painter.drawPath(self._arrow())
        if self.element.fixed:
            painter.setPen(self.pen(st.warning))
            painter.drawText(self._path.boundingRect().adjusted(0, 0, 0, 0).center() + QPointF(-4, 4),
                             "⊘")

    def tooltip_text(self, element, model) -> str:
        unit = "kg m²" if model.kind == "torsion" else "kg"
        what = "disc" if model.kind == "torsion" else ("junction" if element.mass <= 0 else "mass")
        locked = f"\nlocked: {', '.join(element.fixed)}" if element.fixed else ""
        return f"{what} {element.label} ({element.id}): {element.mass:.6g} {unit}{locked}"
