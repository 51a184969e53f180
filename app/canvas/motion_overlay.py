"""A mode (or the free response) animated on the main canvas itself.

The Motion panel sends each frame (``MotionPanel.canvas_frame``); this moves the drawn masses by
the frame's displacements, magnified so that the largest displacement of the animation is a third
of the closest spacing between two nodes on the canvas: big enough to read at a glance, small
enough that neighbours never swap places. Discs of a torsion model show a radius mark turned by
the angle (the largest at 55 degrees). A rigid body of a planar model moves by its x and y and
turns by its theta, all times the same magnification (a rigid body's displacement field,
magnified, keeps its shape): the turn drawn is ``theta * magnification / px_per_m`` rad, the
springs follow its mount points, and the corners of its box count in the room a frame may use.
Only the drawing moves (``NodeItem.set_display_offset``);
the model, the items' positions and the undo history are untouched, so editing goes on while it
plays. A caption in the canvas corner names the mode and its frequency.
"""

from __future__ import annotations

import math

from PySide6.QtCore import Qt
from PySide6.QtWidgets import QGraphicsItem, QLabel

from app.drawing.style import current_style

from .mass_item import MassItem
from .node_item import ITEM_CACHE

#: The largest drawn displacement, as a fraction of the closest node spacing on the canvas.
SPACING_FRACTION = 0.33
#: The largest drawn rotation of a disc (rad).
MAX_TURN = math.radians(55)


class CanvasMotion:
    """Moves the items of a :class:`app.canvas.ModelScene` by animation frames."""

    def __init__(self, scene, view=None):
        self.scene = scene
        self.active = False
        self.magnification = 1.0
        self._spacing_key = None
        self._spacing = 1.0
        self.caption = QLabel(view.viewport() if view is not None else None)
        self.caption.setObjectName("canvas_motion_caption")
        self.caption.setAttribute(Qt.WidgetAttribute.WA_TransparentForMouseEvents)
        st = current_style()
        self.caption.setStyleSheet(f"background: {st.panel.name()}; color: {st.ink.name()};"
                                   f" border: 1px solid {st.ink_soft.name()}; padding: 2px 6px;")
        self.caption.move(8, 8)
        self.caption.hide()

    def spacing(self) -> float:
        """Closest distance between two node items (scene units), cached per layout."""
        nodes = self.scene.nodes
        key = tuple((eid, item.pos().x(), item.pos().y()) for eid, item in nodes.items())
        if key != self._spacing_key:
            self._spacing_key = key
            pts = [(item.pos().x(), item.pos().y()) for item in nodes.values()]
            best = math.inf
            if len(pts) <= 2000:
                pts.sort()
                for i, (x, y) in enumerate(pts):
                    for x2, y2 in pts[i + 1:]:
                        if x2 - x >= best:
                            break
                        d = math.hypot(x2 - x, y2 - y)
                        if d > 1e-9:
                            best = min(best, d)
            self._spacing = best if math.isfinite(best) else 40.0
        return self._spacing

    def show_frame(self, displacements: dict, peak: float, caption: str = "",
                   peak_turn: float = 0.0) -> None:
        """Draw the frame ``{mass_id: {direction: value}}`` (m, rad); ``peak`` is the largest
        value of the whole animation (m; rad in torsion), ``peak_turn`` the largest turn of a
        planar rigid body (rad). An empty frame puts every item back."""
        if not displacements or (peak <= 0 and peak_turn <= 0):
            self.clear()
            return
        # every item changes every frame (items made by an edit while it plays too)
        self._cache_items(False)
        self.active = True
        torsion = self.scene.document.model.kind == "torsion"
        ppm = self.scene.mapper.px_per_m
        if torsion:
            self.magnification = MAX_TURN / peak
        else:
            # room used (scene units per metre of magnification): the largest translation, or
            # a translation plus a body's farthest corner swung by its turn
            reach = peak
            if peak_turn > 0:
                corner = max((math.hypot(*item.half_extents()) for item in self.scene.nodes.values()
                              if getattr(item, "is_body", False)), default=0.0)
                reach = peak + corner / ppm * peak_turn
            self.magnification = SPACING_FRACTION * self.spacing() / reach if reach > 0 else 1.0
            if peak_turn > 0:
                self.magnification = min(self.magnification, MAX_TURN * ppm / peak_turn)
        g = self.magnification
        for eid, item in self.scene.nodes.items():
            d = displacements.get(eid)
            if not isinstance(item, MassItem) or not d:
                if getattr(item, "_display_offset", None) is not None:
                    item.set_display_offset(0.0, 0.0)
                continue
            if torsion:
                item.set_display_offset(0.0, 0.0, d.get("theta", 0.0) * g)
            else:
                # model y is up, the scene's y is down; a body turns by the same magnification
                # (g is scene units per metre, so g / ppm is the drawing's true-size factor)
                turn = d.get("theta", 0.0) * g / ppm if getattr(item, "is_body", False) else None
                item.set_display_offset(d.get("x", 0.0) * g, -d.get("y", 0.0) * g, turn)
        for link in self.scene.links.values():
            link.refresh(label=False)      # labels stay where they were placed, at rest
        if caption:
            self._show_caption(caption)

    def _show_caption(self, text: str) -> None:
        """The caption in the canvas's corner, wrapped to the canvas's width (a rigid-body
        mode's cause is longer than a line), never cut."""
        label = self.caption
        room = label.parentWidget().width() - 16 if label.parentWidget() is not None else 600
        # the viewport moves its children when the scene scrolls: back to the corner each time
        label.move(8, 8)
        label.setWordWrap(False)
        label.setText(text)
        if label.sizeHint().width() > room:
            label.setWordWrap(True)
            label.resize(room, label.heightForWidth(room))
        else:
            label.adjustSize()
        label.show()
        label.raise_()

    def clear(self) -> None:
        """Every item back where the model puts it; the caption hidden."""
        self.active = False
        for item in self.scene.nodes.values():
            if getattr(item, "_display_offset", None) is not None:
                item.set_display_offset(0.0, 0.0)
                item._display_offset = None
        for link in self.scene.links.values():
            link.refresh(label=False)
        self._cache_items(True)
        self.caption.hide()

    def _cache_items(self, on: bool) -> None:
        """The canvas items keep a pixmap of their drawing (``node_item.ITEM_CACHE``), or not
        while a mode plays on the canvas."""
        mode = ITEM_CACHE if on else QGraphicsItem.CacheMode.NoCache
        for item in list(self.scene.nodes.values()) + list(self.scene.links.values()):
            if item.cacheMode() != mode:
                item.setCacheMode(mode)

    def drawn_offset(self, node_id: str):
        """The display offset of a node now (scene units), for tests and tooltips."""
        item = self.scene.nodes[node_id]
        return item.shown_pos() - item.pos()

    def drawn_turn(self, node_id: str) -> float:
        """The turn a body (or a disc) is drawn with now (rad, counter-clockwise), 0 at rest."""
        return getattr(self.scene.nodes[node_id], "display_turn", None) or 0.0

    def turn_magnification(self) -> float:
        """Drawn turn per radian of theta: the true-size factor of the drawing (a disc of a
        torsion model: its own magnification)."""
        if self.scene.document.model.kind == "torsion":
            return self.magnification
        return self.magnification / self.scene.mapper.px_per_m


__all__ = ["CanvasMotion", "SPACING_FRACTION", "MAX_TURN"]
