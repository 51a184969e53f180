"""The report's loads section (drawn by :func:`paint_loads` when the model defines loads): for
random vibration the input ASD and each mass's response PSD on log axes, the RMS and 3-sigma
tables and Miles' check; for a shock the shock response spectrum with the modes marked and the
peak tables; for a design spectrum the modes, the modes needed for 90 % of the mass and the SRSS
and CQC tables; then the assumptions and the cautions of these estimates. The numbers come from
:mod:`solver.loads`, the texts from :mod:`app.results.load_rows` (as the window and
``springwright loads`` show them).
"""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFontMetricsF, QPen, QPolygonF

from app.report.response import plot_lines
from app.results import load_rows as lr
from app.results.response_data import decade_ticks
from app.text.numbers import number

#: rows drawn at most in one table (the rest are counted; springwright loads --json has all)
MAX_ROWS = 30
#: response curves drawn at most in the random-vibration plot
MAX_CURVES = 5


def paint_loads(pg, model) -> None:
    """Solve the model's loads and draw them at ``pg.y``."""
    from solver.errors import ModelError
    from solver.loads import load_results

    st = pg.st
    try:
        res = load_results(model)
    except ModelError as exc:
        pg.paragraph(f"The loads could not be solved: {exc}", 8.5, st.error)
        _caution(pg)
        return
    pg.paragraph(f"Base motion in {res.loads.direction} (every anchor together). Accelerations"
                 " are absolute, displacements relative to the base, spring forces axial.",
                 8.5, st.ink)
    r = res.random
    if r is not None:
        pg.paragraph(f"Random vibration: input {number(r.input_grms)} g RMS from"
                     f" {lr.hz(r.frequencies_hz[0])} to {lr.hz(r.frequencies_hz[-1])} Hz.",
                     9, st.ink, bold=True)
        curves = [("input ASD", r.frequencies_hz, r.input_asd)]
        names = lr._mass_names(model, r.mass_outputs)
        order = np.argsort(-r.acceleration_grms)[:MAX_CURVES]
        curves += [(names[i], r.frequencies_hz, r.acceleration_psd[:, i]) for i in sorted(order)]
        _loglog_plot(pg, curves, "frequency (Hz)", "acceleration PSD (g²/Hz)",
                     r.mode_frequencies_hz, dashed_first=True)
        masses, springs, miles = lr.random_rows(model, r)
        _table(pg, lr.RANDOM_MASS_COLUMNS, masses)
        _table(pg, lr.RANDOM_SPRING_COLUMNS, springs)
        if miles:
            pg.paragraph("Miles' equation g RMS = sqrt(π/2 · f · Q · ASD(f)), the trade's hand"
                         " check, beside the exact integral, for each mode with at least 5 % of"
                         " the mass:", 8, st.ink)
            _table(pg, lr.MILES_COLUMNS, miles)
    s = res.shock
    if s is not None:
        pg.paragraph(f"Shock: {lr.pulse_text(s.pulse)}; exact time response ({s.method}) over"
                     f" {number(s.times[-1])} s.", 9, st.ink, bold=True)
        _loglog_plot(pg, [("SRS (maximax, Q = " + number(res.loads.srs_q) + ")",
                           res.srs.frequencies_hz, res.srs.maximax_g)],
                     "natural frequency (Hz)", "shock response spectrum (g)",
                     s.mode_frequencies_hz)
        masses, springs = lr.shock_rows(model, s)
        _table(pg, lr.SHOCK_MASS_COLUMNS, masses)
        _table(pg, lr.SHOCK_SPRING_COLUMNS, springs)
    p = res.spectrum
    if p is not None:
        pg.paragraph(f"Design response spectrum (pseudo-acceleration against"
                     f" {p.spectrum.abscissa}): peak modal responses combined by SRSS and by CQC"
                     " (Der Kiureghian's correlation, each mode's damping).", 9, st.ink,
                     bold=True)
        pts = np.asarray(p.spectrum.points, float)
        from solver.loads import _loglog

        xs = np.geomspace(pts[0, 0], pts[-1, 0], 200)
        period = p.spectrum.abscissa == "period"
        marks = np.asarray(p.frequencies_hz, float)
        if period:
            marks = 1 / marks
        _loglog_plot(pg, [("design spectrum", xs, _loglog(pts, xs))],
                     "period (s)" if period else "frequency (Hz)", "pseudo-acceleration Sa (g)",
                     marks, numbers=[int(m) for m in p.modes])
        modes, masses, springs = lr.spectrum_rows(model, p)
        _table(pg, lr.SPECTRUM_MODE_COLUMNS, modes)
        pg.paragraph(lr.modes_for_90_text(p) + ".", 8, st.ink)
        _table(pg, lr.SPECTRUM_MASS_COLUMNS, masses)
        _table(pg, lr.SPECTRUM_SPRING_COLUMNS, springs)
    for note in lr.notes(res):
        pg.paragraph("Note: " + note, 8, st.ink_soft)
    _caution(pg)


def _caution(pg) -> None:
    from solver.loads import CAUTION

    st = pg.st
    d = pg.dpi
    w = pg.right - pg.left - 0.35 * d
    h = pg.text_height(w, CAUTION, 8.5, True) + 0.16 * d
    box = QRectF(pg.left, pg.y, pg.right - pg.left, h)
    pg.p.fillRect(box, QColor("#fbf3e6"))
    pg.p.fillRect(QRectF(box.left(), box.top(), 0.05 * d, h), st.warning)
    pg.text(box.adjusted(0.2 * d, 0.07 * d, -0.15 * d, -0.07 * d), CAUTION, 8.5, True, st.ink)
    pg.y = box.bottom() + 0.08 * d


def _table(pg, columns, rows) -> None:
    """A plain table at ``pg.y``: bold header, numbers right-aligned, at most MAX_ROWS rows."""
    if not rows:
        return
    st = pg.st
    d = pg.dpi
    shown_rows = rows[:MAX_ROWS]
    header = [lr.heading(c) for c in columns]
    pt = 7.5
    f, fb = pg.font(pt), pg.font(pt, True)
    fm, fmb = QFontMetricsF(f), QFontMetricsF(fb)
    pad = 0.04 * d
    widths = [max([fm.horizontalAdvance(r[c]) for r in shown_rows]
                  + [fmb.horizontalAdvance(header[c])]) + 2 * pad for c in range(len(header))]
    total_w = pg.right - pg.left
    scale = min(1.0, total_w / sum(widths))
    widths = [w * scale for w in widths]
    head_h = fmb.lineSpacing() + 2 * pad
    row_h = fm.lineSpacing() + 1.2 * pad
    x0, y = pg.left, pg.y
    used = sum(widths)
    p = pg.p
    p.fillRect(QRectF(x0, y, used, head_h), st.panel)
    x = x0
    for c, title in enumerate(header):
        align = Qt.AlignmentFlag.AlignLeft if c == 0 else Qt.AlignmentFlag.AlignRight
        pg.text(QRectF(x + pad, y + pad, widths[c] - 2 * pad, head_h - pad), title, pt, True,
                st.ink, align)
        x += widths[c]
    y += head_h
    p.setPen(QPen(st.ink, max(1.0, 0.005 * d)))
    p.drawLine(QPointF(x0, y), QPointF(x0 + used, y))
    flags = int(Qt.TextFlag.TextSingleLine)
    for i, r in enumerate(shown_rows):
        if i % 2 == 1:
            p.fillRect(QRectF(x0, y, used, row_h), QColor("#f4f3ef"))
        x = x0
        p.setFont(f)
        p.setPen(QPen(st.ink))
        for c, s in enumerate(r):
            align = Qt.AlignmentFlag.AlignLeft if c == 0 else Qt.AlignmentFlag.AlignRight
            text = fm.elidedText(s, Qt.TextElideMode.ElideRight, widths[c] - 2 * pad)
            p.drawText(QRectF(x + pad, y, widths[c] - 2 * pad, row_h),
                       int(align | Qt.AlignmentFlag.AlignVCenter) | flags, text)
            x += widths[c]
        y += row_h
    p.setPen(QPen(st.ink_soft, max(1.0, 0.004 * d)))
    p.drawLine(QPointF(x0, y), QPointF(x0 + used, y))
    pg.y = y + 0.06 * d
    if len(rows) > len(shown_rows):
        pg.paragraph(f"{len(rows) - len(shown_rows)} more rows are not shown; springwright loads"
                     " --json lists every one.", 7.5, st.ink_soft)


def _loglog_plot(pg, curves, x_title: str, y_title: str, modes_hz=(),
                 dashed_first: bool = False, numbers=None) -> None:
    """Curves ``(label, x, y)`` on log-log axes at ``pg.y``, the modes marked by dotted lines at
    ``modes_hz`` (x values: frequencies, or periods on a period axis) numbered at the top
    (``numbers``, default 1, 2, ...), the key in a row under the plot."""
    st = pg.st
    d = pg.dpi
    p = pg.p
    box = QRectF(pg.left + 0.62 * d, pg.y + 0.15 * d, pg.right - pg.left - 0.75 * d, 2.2 * d)
    xs = np.concatenate([np.asarray(c[1], float) for c in curves])
    ys = np.concatenate([np.asarray(c[2], float) for c in curves])
    ys = ys[np.isfinite(ys) & (ys > 0)]
    if not len(ys):
        return
    x0, x1 = np.log10(xs.min()), np.log10(xs.max())
    y1 = np.ceil(np.log10(ys.max()))
    y0 = np.floor(np.log10(max(ys.min(), ys.max() * 1e-6)))
    if y1 - y0 < 1:
        y0, y1 = y0 - 1, y1 + 1

    def px(v):
        return box.left() + (np.log10(v) - x0) / (x1 - x0) * box.width()

    def py(v):
        return box.bottom() - (np.log10(v) - y0) / (y1 - y0) * box.height()

    grid = QPen(st.grid, max(1.0, 0.003 * d))
    for v, text in decade_ticks(10 ** x0, 10 ** x1, labelled=(1,) if x1 - x0 > 3 else (1, 2, 5)):
        p.setPen(grid)
        p.drawLine(QPointF(px(v), box.top()), QPointF(px(v), box.bottom()))
        if text:
            pg.text(QRectF(px(v) - 0.3 * d, box.bottom() + 0.03 * d, 0.6 * d, 0.2 * d), text,
                    7, False, st.ink_soft, Qt.AlignmentFlag.AlignHCenter)
    step = max(1, int(np.ceil((y1 - y0) / 6)))
    for e in range(int(y0), int(y1) + 1, step):
        p.setPen(grid)
        p.drawLine(QPointF(box.left(), py(10.0 ** e)), QPointF(box.right(), py(10.0 ** e)))
        pg.text(QRectF(box.left() - 0.6 * d, py(10.0 ** e) - 0.08 * d, 0.55 * d, 0.2 * d),
                number(10.0 ** e), 7, False, st.ink_soft, Qt.AlignmentFlag.AlignRight)
    p.setPen(QPen(st.ink_soft, max(1.0, 0.005 * d)))
    p.drawRect(box)
    marks = np.asarray(modes_hz, float)
    for n, f in zip(numbers if numbers is not None else range(1, len(marks) + 1), marks):
        if f <= 0 or not (10 ** x0 <= f <= 10 ** x1):
            continue
        p.setPen(QPen(st.warning, max(1.0, 0.004 * d), Qt.PenStyle.DotLine))
        p.drawLine(QPointF(px(f), box.top()), QPointF(px(f), box.bottom()))
        if n <= 20:
            pg.text(QRectF(px(f) - 0.15 * d, box.top() - 0.15 * d + 0.05 * d * ((n - 1) % 2),
                           0.3 * d, 0.15 * d), str(n), 6.5, False, st.warning,
                    Qt.AlignmentFlag.AlignHCenter)
    p.save()
    p.setClipRect(box)
    for i, (_label, x, y) in enumerate(curves):
        with np.errstate(divide="ignore", invalid="ignore"):
            y = np.where(np.asarray(y) > 0, y, np.nan)
            qx, qy = px(np.asarray(x, float)), py(y)
        style = Qt.PenStyle.DashLine if dashed_first and i == 0 else Qt.PenStyle.SolidLine
        color = st.ink if dashed_first and i == 0 else st.trace(i)
        p.setPen(QPen(color, max(1.5, 0.008 * d), style))
        pad = 0.02 * d
        for line in plot_lines(qx, qy, box.left() - pad, box.right() + pad, box.top() - pad,
                               box.bottom() + pad):
            p.drawPolyline(QPolygonF([QPointF(a, b) for a, b in line]))
    p.restore()
    pg.text(QRectF(box.left(), box.bottom() + 0.2 * d, box.width(), 0.2 * d), x_title, 7.5,
            False, st.ink, Qt.AlignmentFlag.AlignHCenter)
    p.save()
    p.translate(pg.left + 0.05 * d, box.center().y())
    p.rotate(-90)
    pg.text(QRectF(-box.height() / 2, -0.02 * d, box.height(), 0.2 * d), y_title, 7.5, False,
            st.ink, Qt.AlignmentFlag.AlignHCenter)
    p.restore()
    # the key in a row under the plot, never over a curve
    fm = QFontMetricsF(pg.font(7))
    x, yy = box.left(), box.bottom() + 0.5 * d
    for i, (label, _x, _y) in enumerate(curves):
        w = 0.3 * d + fm.horizontalAdvance(label) + 0.2 * d
        if x + w > box.right() and x > box.left():
            x, yy = box.left(), yy + 0.18 * d
        style = Qt.PenStyle.DashLine if dashed_first and i == 0 else Qt.PenStyle.SolidLine
        color = st.ink if dashed_first and i == 0 else st.trace(i)
        p.setPen(QPen(color, max(1.5, 0.008 * d), style))
        p.drawLine(QPointF(x, yy), QPointF(x + 0.2 * d, yy))
        pg.text(QRectF(x + 0.25 * d, yy - 0.08 * d, w, 0.2 * d), label, 7, False, st.ink)
        x += w
    pg.y = yy + 0.2 * d


__all__ = ["paint_loads"]
