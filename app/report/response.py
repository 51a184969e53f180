"""The report's forced-response section: a log-log magnitude plot drawn with QPainter and the
peaks of each curve (called by :func:`app.report.render_report`)."""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QPainterPath, QPen

from app.results.response_data import decade_ticks
from app.text.numbers import FREQ_SIG, hz, number


def draw_response_section(pg, response) -> None:
    """Plot ``response`` (an app.response_data.ResponseCurves) at ``pg.y`` and list its peaks."""
    st = pg.st
    d = pg.dpi
    p = pg.p
    pg.paragraph(response.title + ". " + _input_sentence(response), 8.5, st.ink)
    box = QRectF(pg.left + 0.62 * d, pg.y + 0.15 * d, pg.right - pg.left - 0.75 * d, 2.5 * d)
    f = response.freqs_hz
    mags = [np.where(c.magnitude > 0, c.magnitude, np.nan) for c in response.curves]
    finite = np.concatenate([m[np.isfinite(m)] for m in mags]) if mags else np.zeros(0)
    if not len(finite):
        pg.paragraph("No finite response to plot.", 8.5, st.warning)
        return
    x0, x1 = np.log10(f[0]), np.log10(f[-1])
    y0 = np.floor(np.log10(max(finite.min(), finite.max() * 1e-6)))
    y1 = np.ceil(np.log10(finite.max()))
    if y1 - y0 < 1:
        y0, y1 = y0 - 1, y1 + 1
    if response.input.kind == "base":
        y0, y1 = min(y0, -1.0), max(y1, 1.0)

    def to_px(fx, ay):
        return QPointF(box.left() + (np.log10(fx) - x0) / (x1 - x0) * box.width(),
                       box.bottom() - (np.log10(ay) - y0) / (y1 - y0) * box.height())

    # excitation sources, shaded under everything
    band = QColor(st.warning)
    band.setAlpha(45)
    for _sid, _order, lo, hi, _lw, _hw in response.bands:
        a, b = max(lo, f[0]), min(hi, f[-1])
        if hi > lo and b > a:
            pa, pb = to_px(a, 10 ** y1), to_px(b, 10 ** y0)
            p.fillRect(QRectF(pa, pb), band)
        elif f[0] < lo < f[-1]:
            p.setPen(QPen(st.warning, max(1.0, 0.006 * d), Qt.PenStyle.DashLine))
            p.drawLine(to_px(lo, 10 ** y0), to_px(lo, 10 ** y1))
    # grid and tick labels
    grid = QPen(st.grid, max(1.0, 0.003 * d))
    label_pt = 7.0
    for v, text in decade_ticks(f[0], f[-1]):
        q = to_px(v, 10 ** y0)
        p.setPen(grid)
        p.drawLine(QPointF(q.x(), box.top()), QPointF(q.x(), box.bottom()))
        if text:
            pg.text(QRectF(q.x() - 0.3 * d, box.bottom() + 0.03 * d, 0.6 * d, 0.2 * d), text,
                    label_pt, False, st.ink_soft, Qt.AlignmentFlag.AlignHCenter)
    for e in range(int(y0), int(y1) + 1):
        q = to_px(f[0], 10.0 ** e)
        p.setPen(grid)
        p.drawLine(QPointF(box.left(), q.y()), QPointF(box.right(), q.y()))
        text = number(10.0 ** e)
        pg.text(QRectF(box.left() - 0.6 * d, q.y() - 0.08 * d, 0.55 * d, 0.2 * d), text,
                label_pt, False, st.ink_soft, Qt.AlignmentFlag.AlignRight)
    if response.input.kind == "base":
        p.setPen(QPen(st.ink_soft, max(1.0, 0.005 * d), Qt.PenStyle.DotLine))
        p.drawLine(to_px(f[0], 1.0), to_px(f[-1], 1.0))
    p.setPen(QPen(st.ink_soft, max(1.0, 0.005 * d)))
    p.drawRect(box)
    # curves, clipped to the box
    p.save()
    p.setClipRect(box)
    for i, (c, m) in enumerate(zip(response.curves, mags)):
        path = QPainterPath()
        pen_down = False
        for fx, a in zip(f, m):
            if not np.isfinite(a):
                pen_down = False
                continue
            q = to_px(fx, a)
            if pen_down:
                path.lineTo(q)
            else:
                path.moveTo(q)
                pen_down = True
        p.setPen(QPen(st.trace(i), max(1.5, 0.009 * d)))
        p.drawPath(path)
    p.restore()
    # axis titles and legend
    pg.text(QRectF(box.left(), box.bottom() + 0.2 * d, box.width(), 0.2 * d), "frequency (Hz)",
            7.5, False, st.ink, Qt.AlignmentFlag.AlignHCenter)
    ylab = response.axis_label("SI")
    p.save()
    p.translate(pg.left + 0.05 * d, box.center().y())
    p.rotate(-90)
    pg.text(QRectF(-box.height() / 2, -0.02 * d, box.height(), 0.2 * d), ylab, 7.5, False, st.ink,
            Qt.AlignmentFlag.AlignHCenter)
    p.restore()
    lx, ly = box.left() + 0.12 * d, box.top() + 0.1 * d
    leg_w = 0.3 * d + max(pg.text_height(10 * d, "x", 7.5) * 0.6 * len(c.label)
                          for c in response.curves)
    leg = QRectF(lx - 0.06 * d, ly - 0.05 * d, leg_w, 0.17 * d * len(response.curves) + 0.06 * d)
    p.fillRect(leg, QColor(255, 255, 255, 225))
    for i, c in enumerate(response.curves):
        yy = ly + 0.17 * d * i + 0.08 * d
        p.setPen(QPen(st.trace(i), max(1.5, 0.009 * d)))
        p.drawLine(QPointF(lx, yy), QPointF(lx + 0.2 * d, yy))
        pg.text(QRectF(lx + 0.25 * d, yy - 0.08 * d, 2 * d, 0.2 * d), c.label, 7.5, False, st.ink)
    pg.y = box.bottom() + 0.45 * d
    _peaks_table(pg, response)


def _input_sentence(response) -> str:
    parts = []
    if response.bands:
        parts.append("Shaded: excitation sources.")
    if response.input.kind == "base":
        parts.append("Dotted: |T| = 1.")
        cross = [f"{k} above {hz(v[-1])}" for k, v in response.crossovers_hz.items() if v]
        if cross:
            parts.append("Isolation (|T| < 1): " + "; ".join(cross) + ".")
    parts.extend(response.notes)
    return " ".join(parts)


def _peaks_table(pg, response) -> None:
    st = pg.st
    d = pg.dpi
    rows = [(c.label, pk) for c in response.curves for pk in c.peaks]
    if not rows:
        pg.paragraph("No resonance peak inside the plotted range.", 8.5, st.ink_soft)
        return
    unit = response.display_unit("SI")[0] or "ratio"
    cols = ("output", "peak (Hz)", f"amplitude ({unit})", "half-power width (Hz)",
            "damping ratio ≈")
    widths = np.array([1.6, 1.2, 1.2, 1.7, 1.4]) * d
    x = pg.left
    h = 0.19 * d
    for text, w in zip(cols, widths):
        pg.text(QRectF(x, pg.y, w - 0.1 * d, h), text, 7.5, True, st.ink,
                Qt.AlignmentFlag.AlignRight if text != "output" else Qt.AlignmentFlag.AlignLeft)
        x += w
    pg.y += h
    pg.p.setPen(QPen(st.grid, max(1.0, 0.004 * d)))
    pg.p.drawLine(QPointF(pg.left, pg.y), QPointF(pg.left + widths.sum(), pg.y))
    pg.y += 0.03 * d
    for label, pk in rows:
        x = pg.left
        vals = (label, number(pk.frequency_hz, FREQ_SIG), number(pk.amplitude),
                number(pk.bandwidth_hz), number(pk.damping_ratio))
        for j, (text, w) in enumerate(zip(vals, widths)):
            pg.text(QRectF(x, pg.y, w - 0.1 * d, h), text, 7.5, False, st.ink,
                    Qt.AlignmentFlag.AlignRight if j else Qt.AlignmentFlag.AlignLeft)
            x += w
        pg.y += h * 0.9
    pg.y += 0.04 * d
    pg.paragraph("Damping ratio from the half-power bandwidth / (2 f): valid for light damping"
                 " and well separated peaks; — where the curve does not fall to peak/√2 on both"
                 " sides.", 7.0, st.ink_soft)
