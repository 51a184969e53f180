"""The canvas view: zoom with the wheel about the cursor, pan with the middle button, fit to view."""

from __future__ import annotations

from PySide6.QtCore import Qt
from PySide6.QtGui import QPainter
from PySide6.QtWidgets import QGraphicsView

from app.drawing.pixmap_room import ViewportRoom

from .scene import Mode

_MAX_FIT_ZOOM = 2.5
#: Room for the canvas items' pixmaps (``node_item.ITEM_CACHE``; :mod:`app.drawing.pixmap_room`),
#: in viewports' worth of pixels:
#: each item keeps its visible part, and items overlap (labels, links' margins). Qt's default of
#: 10 MB is less than a 200-mass canvas needs on a large window: pixmaps were then thrown out
#: and drawn again on every repaint, slower than no pixmaps (bench/tune_bench.py: a slider step
#: 172 ms without them, 235 ms with 10 MB, 146 ms with room).
_CACHE_VIEWPORTS = 8


class CanvasView(QGraphicsView):
    def __init__(self, scene, parent=None):
        super().__init__(scene, parent)
        self.setRenderHints(QPainter.Antialiasing | QPainter.TextAntialiasing)
        self.setTransformationAnchor(QGraphicsView.AnchorUnderMouse)
        self.setResizeAnchor(QGraphicsView.AnchorViewCenter)
        self.setViewportUpdateMode(QGraphicsView.BoundingRectViewportUpdate)
        # the grid is drawn once per zoom or scroll, not on every repaint of the items over it
        self.setCacheMode(QGraphicsView.CacheBackground)
        self.setAcceptDrops(False)  # files dropped here go to the main window
        self._pan_from = None
        # an area selects what it encloses, not every spring it touches
        self.setRubberBandSelectionMode(Qt.ContainsItemShape)
        scene.mode_changed.connect(self._on_mode_change)
        self._on_mode_change(scene.mode)
        self._pixmap_room = ViewportRoom("canvas", self.viewport(), _CACHE_VIEWPORTS)

    def focusNextPrevChild(self, next_: bool) -> bool:  # noqa: N802
        """Tab walks the model's elements first; past the last one focus moves on as usual."""
        scene = self.scene()
        if scene is not None and hasattr(scene, "cycle") and scene.cycle(next_):
            return True
        return super().focusNextPrevChild(next_)

    def changeEvent(self, event):  # noqa: N802
        from PySide6.QtCore import QEvent

        if event.type() == QEvent.Type.PaletteChange:   # light/dark switch: redraw the grid
            self.resetCachedContent()
            scene = self.scene()
            if scene is not None and hasattr(scene, "restyle"):
                scene.restyle()         # and the items, whose colours are set when synced
        super().changeEvent(event)

    def _on_mode_change(self, mode):
        if mode == Mode.SELECT:
            self.setDragMode(QGraphicsView.RubberBandDrag)
            self.viewport().setCursor(Qt.ArrowCursor)
        else:
            self.setDragMode(QGraphicsView.NoDrag)
            self.viewport().setCursor(Qt.CrossCursor)

    def zoom_by(self, factor: float):
        current = self.transform().m11()
        factor = max(0.02 / current, min(factor, 40.0 / current))
        self.scale(factor, factor)

    def wheelEvent(self, event):  # noqa: N802
        steps = event.angleDelta().y() / 120.0
        if steps:
            self.zoom_by(1.15 ** steps)
        event.accept()

    def fit(self):
        """Show the whole model, with a margin, at no more than a comfortable zoom."""
        scene = self.scene()
        rect = scene.itemsBoundingRect()
        if rect.isNull() or rect.isEmpty():
            self.resetTransform()
            self.centerOn(0, 0)
            return
        pad = max(rect.width(), rect.height()) * 0.12 + 30
        self.fitInView(rect.adjusted(-pad, -pad, pad, pad), Qt.KeepAspectRatio)
        if self.transform().m11() > _MAX_FIT_ZOOM:
            self.resetTransform()
            self.scale(_MAX_FIT_ZOOM, _MAX_FIT_ZOOM)
            self.centerOn(rect.center())

    def mousePressEvent(self, event):  # noqa: N802
        if event.button() == Qt.MiddleButton:
            self._pan_from = event.position()
            self.viewport().setCursor(Qt.ClosedHandCursor)
            event.accept()
            return
        super().mousePressEvent(event)

    def mouseMoveEvent(self, event):  # noqa: N802
        if self._pan_from is not None:
            delta = event.position() - self._pan_from
            self._pan_from = event.position()
            self.horizontalScrollBar().setValue(self.horizontalScrollBar().value() - int(delta.x()))
            self.verticalScrollBar().setValue(self.verticalScrollBar().value() - int(delta.y()))
            event.accept()
            return
        super().mouseMoveEvent(event)

    def mouseReleaseEvent(self, event):  # noqa: N802
        if event.button() == Qt.MiddleButton and self._pan_from is not None:
            self._pan_from = None
            self._on_mode_change(self.scene().mode)
            event.accept()
            return
        super().mouseReleaseEvent(event)
