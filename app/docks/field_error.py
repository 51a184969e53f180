"""A text field that shows a refused value in place: a red border, the reason under the field
and in its tooltip; cleared back to the field's own hint. Shared by Properties, the damping
editor and the sources editor."""

from __future__ import annotations

from app.drawing.style import current_style


class InPlaceError:
    """Mixin for a widget with ``edit`` (QLineEdit), ``error_label`` (QLabel) and ``_hint``
    (the tooltip when nothing is refused)."""

    error: str = ""

    def show_error(self, message: str) -> None:
        self.error = message
        c = current_style().error.name()
        self.edit.setStyleSheet(f"QLineEdit {{ border: 2px solid {c}; }}")
        self.error_label.setStyleSheet(f"color: {c};")
        self.error_label.setText(message)
        self.error_label.show()
        self.edit.setToolTip(message)

    def clear_error(self) -> None:
        self.error = ""
        self.edit.setStyleSheet("")
        self.error_label.hide()
        self.edit.setToolTip(self._hint)
