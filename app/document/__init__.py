"""The document layer: the current model and its undo history, autosave and recovery, and the
solve service that turns each model into results for the views. No widgets."""

from app.document.document import Document

__all__ = ["Document"]
