"""Energy tint of the canvas: where each mode stores its energy.

For the selected mode, each spring is drawn in the colour of its share of the mode's strain energy
and each mass filled with the colour of its share of the kinetic energy (``Analysis.energy``;
colours from :meth:`app.style.Style.energy_color`). The share is added to each item's tooltip, and
a small legend (the colour ramp, 0 to 100 %) sits in the canvas corner while the tint is on.
The tint is a look of the items only: it never touches the model.
"""

from __future__ import annotations

from PySide6.QtCore import QEvent, QObject, QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QLinearGradient, QPainter, QPen
from PySide6.QtWidgets import QWidget

from .mass_item import MassItem
from .spring_item import SpringItem
from app.drawing.style import current_style


class EnergyLegend(QWidget):
    """The energy colour ramp with its ends labelled; overlays the canvas's bottom-left corner."""

    def __init__(self, parent=None):
        super().__init__(parent)
        self.setObjectName("energy_legend")
        self.setAttribute(Qt.WidgetAttribute.WA_TransparentForMouseEvents)
        self.mode = 1
        self.setFixedSize(250, 58)

    def paintEvent(self, event):  # noqa: N802
        st = current_style()
        p = QPainter(self)
        p.setRenderHint(QPainter.RenderHint.Antialiasing)
        bg = QColor(st.panel)
        bg.setAlpha(230)
        p.setPen(QPen(st.ink_soft, 0.8))
        p.setBrush(bg)
        p.drawRoundedRect(QRectF(0.5, 0.5, self.width() - 1, self.height() - 1), 4, 4)
        p.setPen(st.ink)
        p.drawText(QRectF(8, 3, self.width() - 16, 16), int(Qt.AlignmentFlag.AlignLeft),
                   f"Energy share in mode {self.mode}")
        bar = QRectF(8, 21, self.width() - 16, 10)
        grad = QLinearGradient(bar.topLeft(), bar.topRight())
        for i in range(11):
            grad.setColorAt(i / 10, st.energy_color(i / 10))
        p.setPen(QPen(st.ink_soft, 0.6))
        p.setBrush(grad)
        p.drawRect(bar)
        p.setPen(st.ink_soft)
        f = p.font()
        f.setPointSizeF(max(6.0, f.pointSizeF() - 1.5))
        p.setFont(f)
        p.drawText(QPointF(bar.left(), bar.bottom() + 12), "0 %")
        p.drawText(QRectF(bar.left(), bar.bottom() + 1, bar.width(), 14),
                   int(Qt.AlignmentFlag.AlignHCenter), "spring: strain, mass: kinetic")
        p.drawText(QRectF(bar.left(), bar.bottom() + 1, bar.width(), 14),
                   int(Qt.AlignmentFlag.AlignRight), "100 %")
        p.end()


class _Corner(QObject):
    """Keeps the legend in the bottom-left corner of the view as it resizes."""

    def __init__(self, legend, view):
        super().__init__(view)
        self.legend, self.view = legend, view
        view.installEventFilter(self)

    def eventFilter(self, obj, event):  # noqa: N802
        if event.type() == QEvent.Type.Resize:
            self.place()
        return False

    def place(self):
        self.legend.move(8, max(0, self.view.height() - self.legend.height() - 8))


class EnergyTint:
    """Tints the items of a :class:`app.canvas.ModelScene` by energy share in one mode."""

    def __init__(self, scene, view=None):
        self.scene = scene
        self.enabled = False
        self.mode = 1
        self.analysis = None
        self._tinted = False           # some item carries a tint or an energy tooltip
        self._legend_state = None
        self.legend = EnergyLegend(view) if view is not None else None
        self._corner = _Corner(self.legend, view) if view is not None else None
        if self.legend is not None:
            self.legend.hide()

    def set_enabled(self, on: bool):
        self.enabled = bool(on)
        self.refresh()

    def show(self, analysis, mode: int | None = None):
        """Tint for ``analysis`` (the current results) and ``mode`` (from 1)."""
        self.analysis = analysis
        if mode is not None:
            self.mode = int(mode)
        self.refresh()

    def shares(self) -> tuple[dict, dict]:
        """(strain share by spring id, kinetic share by mass id) of the current mode, or ({}, {})."""
        a = self.analysis
        if a is None or not 1 <= self.mode <= a.modal.n_modes:
            return {}, {}
        return (a.energy.strain_energy_fraction(self.mode),
                a.energy.kinetic_energy_fraction(self.mode))

    def refresh(self):
        # Only what changed is touched: an update() of every item would repaint the whole
        # canvas after each solve (1000 items), and the tint is off most of the time.
        if not self.enabled and not self._tinted:
            self._refresh_legend()
            return
        st = current_style()
        strain, kinetic = self.shares() if self.enabled else ({}, {})
        a = self.analysis
        model = a.model if a is not None else None
        doc_model = self.scene.document.model
        stale = model is not doc_model
        for eid, item in self.scene.links.items():
            if not isinstance(item, SpringItem):
                continue
            share = strain.get(eid)
            color = st.energy_color(share) if share is not None and not stale else None
            tip = item.tooltip_text(item.element)
            if color is not None:
                tip += f"\nstrain energy in mode {self.mode}: {100 * share:.1f} %"
            self._apply(item, color, tip)
        for eid, item in self.scene.nodes.items():
            if not isinstance(item, MassItem):
                continue
            share = kinetic.get(eid)
            color = st.energy_color(share) if share is not None and not stale else None
            tip = item.tooltip_text(item.element, doc_model)
            if color is not None:
                tip += f"\nkinetic energy in mode {self.mode}: {100 * share:.1f} %"
            self._apply(item, color, tip)
        self._tinted = self.enabled
        self._refresh_legend()

    @staticmethod
    def _apply(item, color, tip):
        old = getattr(item, "energy_color", None)
        if (old is None) != (color is None) or (color is not None and old != color):
            item.energy_color = color
            item.update()
        if item.toolTip() != tip:
            item.setToolTip(tip)

    def _refresh_legend(self):
        if self.legend is None:
            return
        state = (self.enabled, self.mode)
        if state == self._legend_state:
            return
        self._legend_state = state
        self.legend.mode = self.mode
        self.legend.setVisible(self.enabled)
        if self._corner is not None:
            self._corner.place()
        self.legend.update()


__all__ = ["EnergyTint", "EnergyLegend"]
