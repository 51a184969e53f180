"""The report's table of natural frequencies and effective modal mass."""

from __future__ import annotations

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFontMetricsF, QPen

from app.report.page import _Page
from app.results.mode_rows import mode_table_cells
from app.results.mode_rows import mode_table_header
from app.results.mode_rows import mode_table_rows
from app.text.numbers import hz, percent


def _mode_table(pg: _Page, analysis, n_shown: int, n_total: int):
    st = pg.st
    d = pg.dpi
    if n_total == 0:
        pg.paragraph(analysis.modal.message or "The model has no modes.", 9, st.warning)
        return
    header = mode_table_header(analysis)
    rows = mode_table_rows(analysis)[:n_shown]
    cells = mode_table_cells(analysis, rows)
    pt = 8.0
    f = pg.font(pt)
    fb = pg.font(pt, True)
    fm, fmb = QFontMetricsF(f), QFontMetricsF(fb)
    pad = 0.05 * d
    total_w = pg.right - pg.left
    n_cols = len(header)
    # numeric columns as wide as their widest cell (header may wrap over two lines)
    widths = []
    for c in range(n_cols - 1):
        w_cells = max([fm.horizontalAdvance(r[c]) for r in cells] + [0])
        w = max(w_cells, max(fmb.horizontalAdvance(word) for word in header[c].split()), 0.5 * d)
        # wide enough for the heading to fit on two lines
        while pg.text_height(w, header[c], pt, True) > 2.2 * fmb.lineSpacing():
            w += 0.02 * d
        widths.append(w + 2 * pad)
    widths.append(max(0.8 * d, total_w - sum(widths)))
    scale = min(1.0, total_w / sum(widths))
    widths = [w * scale for w in widths]
    head_h = 2 * fmb.lineSpacing() + 2 * pad
    row_h = fm.lineSpacing() + 1.2 * pad
    x0, y = pg.left, pg.y
    pg.p.fillRect(QRectF(x0, y, total_w, head_h), st.panel)
    x = x0
    for c, title in enumerate(header):
        align = Qt.AlignmentFlag.AlignLeft if c == n_cols - 1 else Qt.AlignmentFlag.AlignRight
        pg.text(QRectF(x + pad, y + pad, widths[c] - 2 * pad, head_h - 2 * pad), title, pt, True,
                st.ink, align | Qt.AlignmentFlag.AlignBottom)
        x += widths[c]
    y += head_h
    pg.p.setPen(QPen(st.ink, max(1.0, 0.006 * d)))
    pg.p.drawLine(QPointF(x0, y), QPointF(x0 + total_w, y))
    wrap = int(Qt.TextFlag.TextWordWrap)
    for i, (r, row) in enumerate(zip(cells, rows)):
        # a long note (a margin verdict and its way out) wraps onto more lines of its row
        note_h = fm.boundingRect(QRectF(0, 0, widths[-1] - 2 * pad, 1e5), wrap, r[-1]).height()
        h = max(row_h, note_h + 1.2 * pad)
        if i % 2 == 1:
            pg.p.fillRect(QRectF(x0, y, total_w, h), QColor("#f4f3ef"))
        x = x0
        for c, s in enumerate(r):
            align = Qt.AlignmentFlag.AlignLeft if c == n_cols - 1 else Qt.AlignmentFlag.AlignRight
            color = st.warning if (c == n_cols - 1 and s) else st.ink
            pg.p.setFont(f)
            pg.p.setPen(QPen(color))
            pg.p.drawText(QRectF(x + pad, y, widths[c] - 2 * pad, h),
                          int(align | Qt.AlignmentFlag.AlignVCenter) | wrap, s)
            x += widths[c]
        y += h
    pg.p.setPen(QPen(st.ink_soft, max(1.0, 0.004 * d)))
    pg.p.drawLine(QPointF(x0, y), QPointF(x0 + total_w, y))
    pg.y = y + 0.04 * d
    if n_total > n_shown:
        hi = float(analysis.modal.frequencies_hz[-1])
        pg.paragraph(f"{n_total - n_shown} higher modes are not shown (up to {hz(hi)}); the"
                     " CSV export lists every mode.", 8, st.ink_soft)
    dirs = [k for k in analysis.modal.effective_mass]
    if dirs:
        cum = analysis.modal.cumulative_percent
        parts = [f"{d}: {percent(cum[d][n_shown - 1])} %" for d in dirs if len(cum[d])]
        pg.paragraph("Effective modal mass of the modes shown, cumulative: " + ", ".join(parts)
                     + ". Effective mass is the share of the mass free to move in a direction that"
                     " takes part in each mode.", 8, st.ink_soft)
