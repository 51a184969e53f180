"""A mass drawn as a block sized by its mass (a disc in a torsion model), with an axis arrow on a line.

A rigid body (a planar mass with an inertia) is a box round its mount points with a
centre-of-mass mark; each mount point is a child :class:`MountItem`, so the body, its rings and
the springs on them turn together when a mode is animated (the turn is a display transform).
When the body is selected, its elastic centre (``solver.bodies.body_coupling``) is marked too.
"""

from __future__ import annotations

import math

from PySide6.QtCore import QPointF, QRectF
from PySide6.QtGui import QBrush, QPainterPath, QTransform

from app.drawing import bodies, shapes
from app.drawing.style import current_style

from .mount_item import MountItem
from .node_item import NodeItem

_BASE = 28.0


class MassItem(NodeItem):
    """One mass of the model (``element`` is a :class:`solver.Mass`)."""

    def update_from(self, element, model, reference_mass: float = 1.0):
        self.kind = model.kind
        self.axis = model.axis
        self.reference_mass = reference_mass
        self.is_body = bodies.is_body(model, element)
        self.mount_offsets = list(bodies.mount_points(model).get(element.id, ())) \
            if self.is_body else []
        self.elastic_centre = bodies.elastic_centre(model, element.id) if self.is_body else None
        self.coupling_text = bodies.coupling_statement(model, element.id) if self.is_body else ""
        self._path = self._symbol(element)
        self._bounds = None              # boundingRect, made again from the new symbol
        self._sync_mounts()
        self._arrow_path = None          # made once per symbol: paints and label keys reuse it
        super().update_from(element, model)

    def _sync_mounts(self) -> None:
        """One ring per mount point; rings of offsets no longer used go."""
        have = getattr(self, "mounts", None)
        if have is None:
            have = self.mounts = {}
        for off in list(have):
            if off not in self.mount_offsets:
                item = have.pop(off)
                item.setParentItem(None)
                if item.scene() is not None:
                    item.scene().removeItem(item)
        for off in self.mount_offsets:
            if off in have:
                have[off].put_back()
            else:
                have[off] = MountItem(self, off)

    def half_extents(self) -> tuple[float, float]:
        """Half width and half height of the symbol (scene units), at rest."""
        r = self._path.boundingRect()
        return r.width() / 2, r.height() / 2

    def attach_scene_point(self, offset) -> QPointF:
        """Scene point of the attachment at ``offset`` (m, body frame): on the ring (which may
        be being dragged), moved and turned with the body's display transform."""
        ring = getattr(self, "mounts", {}).get(tuple(offset))
        if ring is not None:
            local = ring.pos()
        else:
            k = self.mapper.px_per_m
            local = QPointF(offset[0] * k, -offset[1] * k)
        return self.mapToScene(local)

    def set_display_offset(self, dx: float, dy: float, turn: float | None = None) -> None:
        """As :meth:`NodeItem.set_display_offset`; a body is turned by ``turn`` rad
        (counter-clockwise with y up, so clockwise in Qt's y-down terms) about its centre."""
        if not getattr(self, "is_body", False):
            super().set_display_offset(dx, dy, turn)
            return
        self._display_offset = QPointF(dx, dy)
        self.display_turn = turn
        t = QTransform.fromTranslate(dx, dy)
        if turn:
            t.rotateRadians(-turn)
        self.setTransform(t)
        self.update()

    def _symbol(self, element) -> QPainterPath:
        c = QPointF(0, 0)
        path = QPainterPath()
        if self.is_body:
            side = shapes.mass_block_side(element.mass, _BASE, self.reference_mass)
            k = self.mapper.px_per_m
            ex = max((abs(o[0]) for o in self.mount_offsets), default=0.0) * k
            ey = max((abs(o[1]) for o in self.mount_offsets), default=0.0) * k
            hw, hh = max(side / 2, ex + 6), max(side / 2, ey + 6)
            path.addRect(QRectF(-hw, -hh, 2 * hw, 2 * hh))
            return path
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
        # kept: Qt asks every item for it on every paint of the canvas, even a small region
        # (200 masses: ~550 calls a paint); made again when update_from changes the symbol
        r = getattr(self, "_bounds", None)
        if r is None:
            r = self._path.boundingRect().adjusted(-12, -4, 4, 14)
            if getattr(self, "elastic_centre", None) is not None:
                k = self.mapper.px_per_m
                e = QPointF(self.elastic_centre[0] * k, -self.elastic_centre[1] * k)
                r = r.united(QRectF(e.x() - 10, e.y() - 10, 20, 20))
            self._bounds = r
        return r

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
        if getattr(self, "is_body", False):
            outline, filled = shapes.centre_of_mass_path(QPointF(0, 0), 5.0)
            painter.setBrush(QBrush())
            painter.drawPath(outline)
            painter.setBrush(QBrush(st.accent if selected else st.mass_edge))
            painter.drawPath(filled)
            if selected and self.elastic_centre is not None:
                # where a force through it translates the body without turning it
                k = self.mapper.px_per_m
                e = QPointF(self.elastic_centre[0] * k, -self.elastic_centre[1] * k)
                painter.setPen(self.pen(st.warning))
                painter.setBrush(QBrush())
                painter.drawPath(shapes.elastic_centre_path(e, 5.0))
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
        if getattr(self, "is_body", False):
            text = (f"rigid body {element.label} ({element.id}): {element.mass:.6g} kg,"
                    f" {element.inertia:.6g} kg m² about its centre{locked}")
            if self.coupling_text:
                text += f"\n{self.coupling_text}"
            return text
        return f"{what} {element.label} ({element.id}): {element.mass:.6g} {unit}{locked}"
