"""The sketch canvas: scene (model -> items, gestures -> edits), view (zoom, pan) and item classes."""

from .scene import MODE_INFO, Mode, ModelScene
from .view import CanvasView

__all__ = ["CanvasView", "ModelScene", "Mode", "MODE_INFO"]
