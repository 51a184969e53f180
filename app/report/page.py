"""The report page: text and box helpers over a painter at print resolution (shared by every
section), and the cautions every report carries."""

from __future__ import annotations

import os

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QFont, QFontMetricsF, QGuiApplication, QPainter, QPen

from app.drawing.style import LIGHT

#: Modes given a thumbnail (and a row in the table); the rest are counted, not drawn.
MAX_REPORTED_MODES = 12
A4_MM = (210.0, 297.0)

CAUTIONS = (
    "A lumped spring-mass model is an approximation of the real assembly. Natural frequencies and "
    "mode shapes from it are estimates: confirm them by test or by detailed analysis before relying "
    "on them.",
    "Stiffness and mass values, boundary conditions and the choice of what to lump decide the "
    "result; check them against drawings, data sheets and measurements.",
    "Where equipment can hurt people if it fails, local codes, standards and licensed engineering "
    "practice govern. This report does not replace them.",
)

_app_ref = None  # keeps a QGuiApplication we had to create alive


def _ensure_app():
    global _app_ref
    if QGuiApplication.instance() is None:
        if not os.environ.get("DISPLAY") and not os.environ.get("WAYLAND_DISPLAY"):
            os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
        _app_ref = QGuiApplication([])


class _Page:
    """Text and box helpers over a painter, sizes in device pixels for a given dpi."""

    def __init__(self, painter: QPainter, dpi: float, width: float):
        self.p = painter
        self.dpi = dpi
        self.px = dpi / 72.0          # pixels per typographic point
        self.width = width
        self.margin = round(0.5 * dpi)
        self.left = self.margin
        self.right = width - self.margin
        self.y = self.margin
        self.st = LIGHT

    def font(self, pt: float, bold=False, family="DejaVu Sans") -> QFont:
        f = QFont(family)
        f.setPixelSize(max(6, round(pt * self.px)))
        f.setBold(bold)
        return f

    def text(self, rect: QRectF, s: str, pt=9.0, bold=False, color=None,
             flags=Qt.AlignmentFlag.AlignLeft | Qt.AlignmentFlag.AlignTop) -> float:
        """Draw wrapped text in rect; returns the height used."""
        f = self.font(pt, bold)
        self.p.setFont(f)
        self.p.setPen(QPen(color or self.st.ink))
        fl = int(flags) | int(Qt.TextFlag.TextWordWrap)
        br = QFontMetricsF(f).boundingRect(rect, fl, s)
        self.p.drawText(rect, fl, s)
        return br.height()

    def text_height(self, width: float, s: str, pt=9.0, bold=False) -> float:
        f = self.font(pt, bold)
        return QFontMetricsF(f).boundingRect(QRectF(0, 0, width, 1e6),
                                             int(Qt.TextFlag.TextWordWrap), s).height()

    def heading(self, s: str):
        self.y += round(0.10 * self.dpi)
        h = self.text(QRectF(self.left, self.y, self.right - self.left, 100), s, 12, True,
                      self.st.ink)
        self.y += h + round(0.02 * self.dpi)
        self.p.setPen(QPen(self.st.accent, max(1.0, 0.008 * self.dpi)))
        self.p.drawLine(QPointF(self.left, self.y), QPointF(self.right, self.y))
        self.y += round(0.07 * self.dpi)

    def paragraph(self, s: str, pt=9.0, color=None, indent=0.0, bold=False):
        w = self.right - self.left - indent
        h = self.text(QRectF(self.left + indent, self.y, w, 1e5), s, pt, bold, color)
        self.y += h + round(0.03 * self.dpi)
