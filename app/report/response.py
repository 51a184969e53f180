"""The report's forced-response section: a log-log magnitude plot drawn with QPainter and the
peaks of each curve (called by :func:`app.report.render_report`)."""

from __future__ import annotations

import numpy as np
from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QPen, QPolygonF

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
    for v, text in _report_ticks(f[0], f[-1]):
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
    # curves: cut to the box and thinned to what its pixels can show before Qt strokes them
    # (a curve 1e12 times below the box, stroked and then clipped, took Qt 28 s to draw)
    p.save()
    p.setClipRect(box)
    lx0, lx1 = np.log10(f[0]), np.log10(f[-1])
    for i, (c, m) in enumerate(zip(response.curves, mags)):
        with np.errstate(divide="ignore", invalid="ignore"):
            px = box.left() + (np.log10(f) - lx0) / (lx1 - lx0) * box.width()
            py = box.bottom() - (np.log10(m) - y0) / (y1 - y0) * box.height()
        p.setPen(QPen(st.trace(i), max(1.5, 0.009 * d)))
        pad = 0.02 * d   # the pen's width: a line just outside still shows its edge
        for line in plot_lines(px, py, box.left() - pad, box.right() + pad, box.top() - pad,
                               box.bottom() + pad):
            p.drawPolyline(QPolygonF([QPointF(x, y) for x, y in line]))
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


def plot_lines(x, y, x_min: float, x_max: float, y_min: float, y_max: float) -> list:
    """The polyline through points (x, y) (pixels; NaN breaks it) cut to the rectangle and
    thinned for drawing: a list of (n, 2) arrays.

    Each segment is clipped to the rectangle (Liang-Barsky; a segment leaving it ends on its
    edge, one crossing it keeps the part inside), so no point far outside is ever stroked; then
    within each pixel column only the first, last, lowest and highest point of a run are kept
    (M4 aggregation), which draws the same pixels as the full curve. Parts entirely outside are
    dropped; ``x`` must be ascending (a frequency axis).
    """
    x = np.asarray(x, float)
    y = np.asarray(y, float)
    if len(x) < 2:
        return []
    x0, y0, x1, y1 = x[:-1], y[:-1], x[1:], y[1:]
    ok = np.isfinite(x0) & np.isfinite(y0) & np.isfinite(x1) & np.isfinite(y1)
    dx, dy = x1 - x0, y1 - y0
    t0 = np.zeros(len(x0))
    t1 = np.ones(len(x0))
    with np.errstate(divide="ignore", invalid="ignore"):
        for p, q in ((-dx, x0 - x_min), (dx, x_max - x0), (-dy, y0 - y_min), (dy, y_max - y0)):
            ok &= ~((p == 0) & (q < 0))          # parallel to this edge and outside it
            r = q / p
            t0 = np.where(p < 0, np.maximum(t0, r), t0)
            t1 = np.where(p > 0, np.minimum(t1, r), t1)
    ok &= t0 <= t1
    idx = np.flatnonzero(ok)
    if not len(idx):
        return []
    sx, sy = x0[idx] + t0[idx] * dx[idx], y0[idx] + t0[idx] * dy[idx]
    ex, ey = x0[idx] + t1[idx] * dx[idx], y0[idx] + t1[idx] * dy[idx]
    # a segment continues the previous line when that one ended, unclipped, at its start
    joined = np.zeros(len(idx), bool)
    joined[1:] = (idx[1:] == idx[:-1] + 1) & (t1[idx[:-1]] >= 1) & (t0[idx[1:]] <= 0)
    lines = []
    starts = np.flatnonzero(~joined)
    stops = np.r_[starts[1:], len(idx)]
    for a, b in zip(starts, stops):
        xs = np.concatenate([[sx[a]], ex[a:b]])
        ys = np.concatenate([[sy[a]], ey[a:b]])
        lines.append(_thinned(xs, ys))
    if len(lines) > 64:   # a curve darting in and out of the box: thousands of short pieces
        lines = _merged_columns(lines)
    return lines


def _merged_columns(lines: list) -> list:
    """Pieces that stay within one pixel column replaced by the union of their vertical
    extents in that column (they paint the same pixels as those vertical lines)."""
    keep, spans = [], []
    for line in lines:
        col = np.floor(line[:, 0])
        if col[0] == col[-1] and np.all(col == col[0]):
            spans.append((col[0], line[:, 1].min(), line[:, 1].max()))
        else:
            keep.append(line)
    spans.sort()
    merged: list[list[float]] = []
    for col, lo, hi in spans:
        if merged and merged[-1][0] == col and lo <= merged[-1][2]:
            merged[-1][2] = max(merged[-1][2], hi)
        else:
            merged.append([col, lo, hi])
    keep += [np.array([[c + 0.5, lo], [c + 0.5, hi]]) for c, lo, hi in merged]
    return keep


def _thinned(xs: np.ndarray, ys: np.ndarray) -> np.ndarray:
    """(n, 2) points of an x-ascending polyline keeping per pixel column the first, last,
    lowest and highest point, in their order along the line."""
    if len(xs) <= 8:
        return np.column_stack([xs, ys])
    col = np.floor(xs).astype(np.int64)
    order = np.lexsort((ys, col))               # by column, then by y within the column
    first_in_col = np.r_[True, col[order][1:] != col[order][:-1]]
    last_in_col = np.r_[col[order][1:] != col[order][:-1], True]
    starts = np.r_[True, col[1:] != col[:-1]]   # along the line: first and last of each run
    ends = np.r_[col[1:] != col[:-1], True]
    keep = np.zeros(len(xs), bool)
    keep[order[first_in_col]] = True
    keep[order[last_in_col]] = True
    keep |= starts | ends
    return np.column_stack([xs[keep], ys[keep]])


def _report_ticks(lo: float, hi: float) -> list[tuple[float, str]]:
    """Frequency-axis ticks that fit the page: 1-2-5 labels over a few decades, decades only
    over more, and over many only every second or third decade labelled (a model with modes
    from 1e-5 Hz to 1e12 Hz spans 18 decades, whose 54 labels would overwrite each other)."""
    decades = np.log10(hi / lo)
    if decades <= 4:
        return decade_ticks(lo, hi)
    ticks = decade_ticks(lo, hi, labelled=(1,))
    if decades <= 10:
        return ticks
    every = int(np.ceil(decades / 10))
    out = []
    for v, text in ticks:
        if text:   # the decades, every ``every``-th of them labelled
            e = int(round(np.log10(v)))
            out.append((v, text if e % every == 0 else ""))
    return out


#: Peaks listed at most (the strongest; the Response panel lists every one).
MAX_PEAK_ROWS = 16


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
    left_out = max(0, len(rows) - MAX_PEAK_ROWS)
    if left_out:   # the strongest peaks, in their order (curve, then frequency)
        size = [float(pk.amplitude) for _, pk in rows]
        strongest = sorted(range(len(rows)), key=lambda i: -size[i] if size[i] == size[i]
                           else np.inf)
        rows = [rows[i] for i in sorted(strongest[:MAX_PEAK_ROWS])]
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
    if left_out:
        pg.paragraph(f"The {MAX_PEAK_ROWS} highest peaks are listed; {left_out} lower ones are"
                     " not (the Response panel lists every peak).", 7.0, st.ink_soft)
    pg.paragraph("Damping ratio from the half-power bandwidth / (2 f): valid for light damping"
                 " and well separated peaks; — where the curve does not fall to peak/√2 on both"
                 " sides.", 7.0, st.ink_soft)
