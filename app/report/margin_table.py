"""The report's margin table (drawn by :func:`paint_margin_table` under the margin check chart):
every reported elastic mode against every source and order, with its separation, pass or fail and
the nearest frequency clear of every source (:mod:`app.results.margin_rows`, the window's words).
"""

from __future__ import annotations

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFontMetricsF, QPen

from solver.margin_table import margin_table

from app.report.page import MAX_REPORTED_MODES
from app.results import margin_rows

#: Rows drawn at most (a model with many modes and sources says how many were left out).
MAX_ROWS = 60


def paint_margin_table(pg, model, analysis, max_modes: int = MAX_REPORTED_MODES) -> None:
    """Draw the table at ``pg.y`` (the modes the report shows, at most :data:`MAX_ROWS` rows)."""
    st = pg.st
    d = pg.dpi
    table = margin_table(model, analysis.modal)
    all_rows = margin_rows.cells(model, table)
    rows = [r for r in all_rows if r.mode <= max_modes][:MAX_ROWS]
    if not table.ok:      # when every mode clears, the margin check above has just said so
        pg.paragraph(margin_rows.summary(model, table), 8.5, st.error)
    if not rows:
        return
    header = margin_rows.HEADERS
    pt = 7.5
    f, fb = pg.font(pt), pg.font(pt, True)
    fm, fmb = QFontMetricsF(f), QFontMetricsF(fb)
    pad = 0.04 * d
    widths = [max([fm.horizontalAdvance(r.cells[c]) for r in rows]
                  + [fmb.horizontalAdvance(header[c])]) + 2 * pad for c in range(len(header))]
    total_w = pg.right - pg.left
    scale = min(1.0, total_w / sum(widths))
    widths = [w * scale for w in widths]
    spare = total_w - sum(widths)
    widths[4] += spare * 0.5     # give the room left to the text columns
    widths[-1] += spare * 0.5
    head_h = fmb.lineSpacing() + 2 * pad
    row_h = fm.lineSpacing() + 1.2 * pad
    x0, y = pg.left, pg.y
    p = pg.p
    p.fillRect(QRectF(x0, y, total_w, head_h), st.panel)
    right = {0, 1}
    x = x0
    for c, title in enumerate(header):
        align = Qt.AlignmentFlag.AlignRight if c in right else Qt.AlignmentFlag.AlignLeft
        pg.text(QRectF(x + pad, y + pad, widths[c] - 2 * pad, head_h - pad), title, pt, True,
                st.ink, align)
        x += widths[c]
    y += head_h
    p.setPen(QPen(st.ink, max(1.0, 0.005 * d)))
    p.drawLine(QPointF(x0, y), QPointF(x0 + total_w, y))
    flags = int(Qt.TextFlag.TextSingleLine)
    for i, r in enumerate(rows):
        if i % 2 == 1:
            p.fillRect(QRectF(x0, y, total_w, row_h), QColor("#f4f3ef"))
        x = x0
        p.setFont(f)
        for c, s in enumerate(r.cells):
            align = Qt.AlignmentFlag.AlignRight if c in right else Qt.AlignmentFlag.AlignLeft
            p.setPen(QPen(st.ink if r.passes else st.error))
            shown = fm.elidedText(s, Qt.TextElideMode.ElideRight, widths[c] - 2 * pad)
            p.drawText(QRectF(x + pad, y, widths[c] - 2 * pad, row_h),
                       int(align | Qt.AlignmentFlag.AlignVCenter) | flags, shown)
            x += widths[c]
        y += row_h
    p.setPen(QPen(st.ink_soft, max(1.0, 0.004 * d)))
    p.drawLine(QPointF(x0, y), QPointF(x0 + total_w, y))
    pg.y = y + 0.04 * d
    left_out = len(all_rows) - len(rows)
    if left_out:
        pg.paragraph(f"{left_out} more rows (higher modes) are not shown; springwright solve"
                     " --json lists every row.", 7.5, st.ink_soft)
    pg.paragraph("Separation: distance of the natural frequency from the nearest edge of the"
                 " source's own frequencies, in % of that edge's frequency (the margin widens a"
                 f" source to [low × (1 − {table.margin_percent:g} %), high × (1 +"
                 f" {table.margin_percent:g} %)]). Nearest clear: the nearest frequency clear of"
                 " every source at once.", 7.5, st.ink_soft)


__all__ = ["paint_margin_table"]
