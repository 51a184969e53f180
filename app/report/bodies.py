"""The report's section on rigid bodies (how bounce, sway and rock couple on their mounts, where
the elastic centre lies) and gear stages (the equivalent system referred to one shaft)."""

from __future__ import annotations

from PySide6.QtCore import QPointF, Qt
from PySide6.QtGui import QFontMetricsF, QPen

from app.drawing import bodies
from app.report.page import _Page
from app.text.numbers import quantity

#: Bodies stated one by one at most (the rest are counted: the CLI's JSON has them all).
MAX_BODIES = 20


def section_title(model) -> str | None:
    """The section's heading, None when the model has no body and no gear stage."""
    has_bodies, has_gears = bool(model.bodies), bool(model.gears) and model.kind == "torsion"
    if has_bodies and has_gears:
        return "Rigid bodies and gear stages"
    if has_bodies:
        return "Rigid bodies on mounts"
    if has_gears:
        return "Gear stages"
    return None


def section_lines(model) -> list[str]:
    """The section's statements, in order: one per body, then the referred system."""
    lines = []
    for m in model.bodies[:MAX_BODIES]:
        text = bodies.coupling_statement(model, m.id)
        what = f"{quantity(m.mass, 'kg')}, {quantity(m.inertia, 'kg m²')} about its centre"
        lines.append(f"{text[0].upper() + text[1:]} ({what})." if text
                     else f"{m.label} ({m.id}): {what}.")
    more = len(model.bodies) - MAX_BODIES
    if more > 0:
        lines.append(f"{more} more rigid bodies are not stated here (springwright solve --json"
                     " lists every mode).")
    lines += [s[0].upper() + s[1:] for s in bodies.referred_statements(model)]
    return lines


def paint_bodies(pg: _Page, model) -> None:
    """Bullets under the heading (drawn by the caller), then a line on how to read them."""
    st = pg.st
    indent = 0.18 * pg.dpi
    for s in section_lines(model):
        pg.p.setPen(QPen(st.ink))
        pg.p.setBrush(st.ink)
        r = 0.025 * pg.dpi
        cy = pg.y + 0.5 * QFontMetricsF(pg.font(8.5)).lineSpacing()
        pg.p.drawEllipse(QPointF(pg.left + 0.07 * pg.dpi, cy), r, r)
        pg.p.setBrush(Qt.BrushStyle.NoBrush)
        pg.paragraph(s, 8.5, st.ink, indent)
    if model.bodies:
        pg.paragraph("Bounce is motion along the mounts' main line of action, sway across it,"
                     " rock the turn about the centre of mass. A force through the elastic"
                     " centre moves the body without turning it; with the elastic centre off the"
                     " centre of mass, bounce or sway and rock share modes. Effective mass under"
                     " theta is in kg m² about each body's centre.", 7.5, st.ink_soft)
    if model.kind == "torsion" and model.gears:
        pg.paragraph("Frequencies are the same on every shaft; each disc's shape is given on its"
                     " own shaft's angle.", 7.5, st.ink_soft)
