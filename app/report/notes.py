"""The report's notes (zero-frequency and repeated modes, warnings) and cautions."""

from __future__ import annotations

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFontMetricsF, QPen

from app.report.page import _Page
from app.report.page import CAUTIONS
from app.results.mode_rows import mode_table_rows
from app.results.source_text import source_summary
from app.text.numbers import band_text, hz


#: Notes written at most, and sources named in the note on them (the rest are counted).
MAX_NOTES = 30
MAX_SOURCES_NAMED = 10


def _notes(pg: _Page, model, analysis, n_shown: int):
    st = pg.st
    modal = analysis.modal
    items = []
    for z in modal.zero_modes:
        items.append((st.warning, f"Mode {z.mode} has zero frequency ({z.kind}): {z.cause}"))
    for g in modal.repeated:
        items.append((st.ink, "Modes " + ", ".join(map(str, g)) + " share one frequency"
                      f" ({hz(float(modal.frequencies_hz[g[0] - 1]))}): their shapes are one"
                      " choice of basis among many; only their combined effective mass is"
                      " meaningful."))
    for r in mode_table_rows(analysis):
        if r["near_excitation"]:
            items.append((st.warning, f"Mode {r['mode']} ({hz(r['frequency_hz'])}) is "
                          + "; ".join(r["near_excitation"]) + "."))
    if model.excitations:
        ex = []
        for e in model.excitations[:MAX_SOURCES_NAMED]:
            if e.type == "speed":
                ex.append(f"{e.label}: {source_summary(e)}")
            else:
                ex.append(f"{e.label}: band {band_text(e.f_min_hz, e.f_max_hz)}")
        more = len(model.excitations) - len(ex)
        items.append((st.ink, "Excitation sources checked (margin "
                      f"{model.margin_percent:g} %): " + "; ".join(ex)
                      + (f"; and {more} more" if more > 0 else "") + "."))
    warnings = list(getattr(analysis, "warnings", ()) or ())
    for w in warnings:
        items.append((st.warning, "Solver: " + str(w)))
    if model.damping.model != "none" or model.dampers:
        items.append((st.ink_soft, "Natural frequencies and shapes are those of the undamped"
                      " model; damping affects the responses, not this table."))
    if not items:
        items.append((st.ink_soft, "No zero-frequency or repeated modes, and no solver warnings."))
    if len(items) > MAX_NOTES:
        more = len(items) - MAX_NOTES + 1
        items = items[:MAX_NOTES - 1] + [(st.ink_soft, f"{more} more notes are not shown"
                                          " (springwright solve prints every one).")]
    indent = 0.18 * pg.dpi
    for color, s in items:
        pg.p.setPen(QPen(color))
        pg.p.setBrush(color)
        r = 0.025 * pg.dpi
        cy = pg.y + 0.5 * QFontMetricsF(pg.font(8.5)).lineSpacing()
        pg.p.drawEllipse(QPointF(pg.left + 0.07 * pg.dpi, cy), r, r)
        pg.p.setBrush(Qt.BrushStyle.NoBrush)
        pg.paragraph(s, 8.5, st.ink if color == st.warning else color, indent)


def _cautions(pg: _Page):
    st = pg.st
    d = pg.dpi
    text = "\n".join(CAUTIONS)
    w = pg.right - pg.left - 0.35 * d
    h = pg.text_height(w, text, 8.5) + 0.22 * d
    box = QRectF(pg.left, pg.y, pg.right - pg.left, h)
    pg.p.fillRect(box, QColor("#fbf3e6"))
    pg.p.fillRect(QRectF(box.left(), box.top(), 0.05 * d, h), st.warning)
    pg.text(box.adjusted(0.2 * d, 0.1 * d, -0.15 * d, -0.1 * d), text, 8.5, False, st.ink)
    pg.y = box.bottom() + 0.05 * d
