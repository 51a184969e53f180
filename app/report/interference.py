"""The report's "Interference diagram" section (drawn by :func:`paint_interference`).

Frequency (Hz) against shaft speed (rpm), both linear from 0: one line per order of every speed
source (``f = order * rpm / 60``), each source's operating range shaded (a single speed is a dashed
upright line), each elastic mode a horizontal line with its margin band ``[f / (1 + p),
f / (1 - p)]`` lightly shaded, and every crossing marked: filled and labelled with its speed inside
the operating range, hollow outside it. The data are :func:`solver.interference.interference`'s;
the section is drawn only when the model has a speed source.
"""

from __future__ import annotations

import math

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QFontMetricsF, QPen

from solver.interference import interference

from app.results.names import names
from app.text.numbers import FREQ_SIG, hz, number, tick_texts

#: Crossings labelled on the chart (the list under it has them all).
MAX_LABELS = 24
#: Natural frequencies and order lines drawn at most, and crossings written out under the chart
#: (a model with hundreds of modes and sources would bury the page; the rest are counted).
MAX_MODES_DRAWN = 40
MAX_LINES_DRAWN = 30
MAX_CROSSING_LINES = 12


def nice_ticks(top: float, target: int = 6) -> tuple[list[float], float]:
    """Tick values 0, s, 2s, ... up to ``top`` with a step s of 1, 2 or 5 x 10^n giving about
    ``target`` intervals; returns (values, step)."""
    if not top > 0:
        return [0.0], 1.0
    raw = top / target
    if not raw > 0:   # top so small (subnormal) that a tenth of it underflows to 0
        return [0.0, top], top
    e = math.floor(math.log10(raw))
    step = min((m * 10.0 ** e for m in (1, 2, 5, 10) if m * 10.0 ** e >= raw), default=raw)
    n = int(math.floor(top / step + 1e-9))
    return [i * step for i in range(n + 1)], step


def _backed(pg, rect: QRectF, text: str, bold: bool, colour, align) -> None:
    """7 pt text on a pale backing, so a line running under a label does not cross its letters."""
    fm = QFontMetricsF(pg.font(7, bold))
    w = fm.horizontalAdvance(text) + 0.03 * pg.dpi
    if align == Qt.AlignmentFlag.AlignRight:
        x = rect.right() - w
    elif align == Qt.AlignmentFlag.AlignHCenter:
        x = rect.center().x() - w / 2
    else:
        x = rect.left()
    pg.p.fillRect(QRectF(x - 0.015 * pg.dpi, rect.top(), w, fm.height()), QColor(255, 255, 255, 200))
    pg.text(rect, text, 7, bold, colour, align)


def spread(items, gap: float, lo: float, hi: float) -> list:
    """``items`` (tuples whose first entry is a position) moved apart so neighbours are at least
    ``gap`` apart, kept in [lo, hi] where there is room; returned sorted by position."""
    items = sorted(items, key=lambda t: t[0])
    pos = [min(max(t[0], lo), hi) for t in items]
    for i in range(1, len(pos)):
        pos[i] = max(pos[i], pos[i - 1] + gap)
    over = pos[-1] - hi if pos else 0.0
    if over > 0:   # pushed past the end: slide the whole run back, never above lo
        pos = [max(lo + i * gap, p - over) for i, p in enumerate(pos)]
    return [(p,) + tuple(t[1:]) for p, t in zip(pos, items)]


def paint_interference(pg, model, analysis) -> bool:
    """Draw the section at ``pg.y``; False (nothing drawn) when the model has no speed source."""
    data = interference(model, analysis.modal)
    if not data.lines:
        return False
    from dataclasses import replace

    full = data   # every crossing inside the operating range is written out below
    modes_cut = max(0, len(data.modes) - MAX_MODES_DRAWN)
    lines_cut = max(0, len(data.lines) - MAX_LINES_DRAWN)
    if modes_cut or lines_cut:
        modes = data.modes[:MAX_MODES_DRAWN]
        lines = data.lines[:MAX_LINES_DRAWN]
        kept = {n for n, _ in modes}
        keys = {(ln.source_id, ln.order) for ln in lines}
        crossings = tuple(c for c in data.crossings
                          if c.mode in kept and (c.source_id, c.order) in keys)
        data = replace(data, modes=modes, lines=lines, crossings=crossings)
    st = pg.st
    d = pg.dpi
    p = pg.p
    shown = names(model)
    box = QRectF(pg.left + 0.62 * d, pg.y + 0.1 * d, pg.right - pg.left - 0.8 * d, 2.8 * d)
    x_max, y_max = data.rpm_max, data.hz_max

    def at(rpm, f):
        return QPointF(box.left() + rpm / x_max * box.width(),
                       box.bottom() - f / y_max * box.height())

    colours = {}
    for ln in data.lines:
        # trace colour 0 is the accent the modes are drawn in: sources take the others
        colours.setdefault(ln.source_id, QColor(st.trace(len(colours) + 1)))
    p.setPen(QPen(st.grid, 1))
    p.setBrush(QColor("#ffffff"))
    p.drawRect(box)
    p.setBrush(Qt.BrushStyle.NoBrush)
    # grid and tick labels: true values in the shared number format
    xs, xstep = nice_ticks(x_max)
    ys, ystep = nice_ticks(y_max, 5)
    grid = QPen(st.grid, max(1.0, 0.003 * d))
    for v, text in zip(xs, tick_texts(xs, xstep)):
        q = at(v, 0)
        p.setPen(grid)
        p.drawLine(QPointF(q.x(), box.top()), QPointF(q.x(), box.bottom()))
        pg.text(QRectF(q.x() - 0.35 * d, box.bottom() + 0.03 * d, 0.7 * d, 0.18 * d), text, 7,
                False, st.ink_soft, Qt.AlignmentFlag.AlignHCenter)
    for v, text in zip(ys, tick_texts(ys, ystep)):
        q = at(0, v)
        p.setPen(grid)
        p.drawLine(QPointF(box.left(), q.y()), QPointF(box.right(), q.y()))
        pg.text(QRectF(box.left() - 0.6 * d, q.y() - 0.08 * d, 0.55 * d, 0.18 * d), text, 7,
                False, st.ink_soft, Qt.AlignmentFlag.AlignRight)
    pg.text(QRectF(box.left(), box.bottom() + 0.2 * d, box.width(), 0.18 * d),
            "shaft speed (rpm)", 7.5, False, st.ink_soft, Qt.AlignmentFlag.AlignHCenter)
    p.save()
    p.translate(pg.left + 0.02 * d, box.center().y())
    p.rotate(-90)
    pg.text(QRectF(-box.height() / 2, 0, box.height(), 0.2 * d), "frequency (Hz)", 7.5, False,
            st.ink_soft, Qt.AlignmentFlag.AlignHCenter)
    p.restore()

    p.save()
    p.setClipRect(box)
    done = set()
    for ln in data.lines:
        if ln.source_id in done:
            continue
        done.add(ln.source_id)
        c = QColor(colours[ln.source_id])
        if ln.rpm_high > ln.rpm_low:
            c.setAlpha(40)
            p.fillRect(QRectF(at(ln.rpm_low, y_max), at(ln.rpm_high, 0)), c)
        else:
            p.setPen(QPen(c, max(1.0, 0.006 * d), Qt.PenStyle.DashLine))
            p.drawLine(at(ln.rpm_low, 0), at(ln.rpm_low, y_max))
    band = QColor(st.accent)
    band.setAlpha(30)
    for n, f in data.modes:
        lo, hi = data.mode_band_hz(f)
        if data.margin_percent > 0:
            p.fillRect(QRectF(at(0, min(hi, y_max)), at(x_max, lo)), band)
        p.setPen(QPen(st.accent, max(1.2, 0.007 * d)))
        p.drawLine(at(0, f), at(x_max, f))
    for ln in data.lines:
        x_end = min(x_max, 60.0 * y_max / ln.order)
        p.setPen(QPen(colours[ln.source_id], max(1.4, 0.008 * d)))
        p.drawLine(at(0, 0), at(x_end, ln.hz_at(x_end)))
    r = 0.035 * d
    for c in data.crossings:
        q = at(c.rpm, c.frequency_hz)
        if c.in_range:
            p.setPen(QPen(QColor("#ffffff"), max(1.0, 0.003 * d)))
            p.setBrush(st.error)
        else:
            p.setPen(QPen(st.ink_soft, max(1.0, 0.004 * d)))
            p.setBrush(Qt.BrushStyle.NoBrush)
        p.drawEllipse(q, r, r)
    p.setBrush(Qt.BrushStyle.NoBrush)
    p.restore()

    # labels inside the box, drawn last so lines never cover them
    for n, f in data.modes:
        q = at(0, f)
        pg.text(QRectF(q.x() + 0.05 * d, q.y() - 0.17 * d, 1.6 * d, 0.16 * d),
                f"mode {n} · {hz(f, 4)}", 7, False, st.accent)
    # order names at the lines' ends, pushed apart where lines end close together
    ends = []
    for ln in data.lines:
        x_end = min(x_max, 60.0 * y_max / ln.order)
        q = at(x_end, ln.hz_at(x_end))
        top = q.y() + 0.03 * d if x_end < x_max else q.y() - 0.19 * d
        ends.append((top, q.x(), f"{shown.get(ln.source_id, ln.source_id)} ×{ln.order:g}",
                     colours[ln.source_id]))
    for top, x, name, colour in spread(ends, 0.17 * d, box.top(), box.bottom() - 0.17 * d):
        _backed(pg, QRectF(x - 1.8 * d - 0.04 * d, top, 1.8 * d, 0.17 * d), name, False, colour,
                Qt.AlignmentFlag.AlignRight)
    for c in [c for c in data.crossings if c.in_range][:MAX_LABELS]:
        q = at(c.rpm, c.frequency_hz)
        w = 0.9 * d
        left = min(max(q.x() - w / 2, box.left()), box.right() - w)
        _backed(pg, QRectF(left, q.y() - 0.2 * d, w, 0.16 * d), f"{number(c.rpm)} rpm", True,
                st.error, Qt.AlignmentFlag.AlignHCenter)

    pg.y = box.bottom() + 0.42 * d
    pg.paragraph(
        f"Lines from the origin: the orders of each shaft speed (f = order × rpm / 60). Upright"
        f" shading: operating range. Horizontal lines: natural frequencies, shaded by the"
        f" {data.margin_percent:g} % margin. Filled dots: crossings inside the operating range"
        f" (the machine runs at a resonance there); hollow dots: crossings outside it.",
        7.5, st.ink_soft)
    if modes_cut or lines_cut:
        pg.paragraph(f"Drawn: the lowest {len(data.modes)} natural frequencies and the first"
                     f" {len(data.lines)} order lines ({modes_cut} frequencies and {lines_cut}"
                     " lines more are not drawn; springwright solve --json lists every"
                     " crossing).", 7.5, st.ink_soft)
    inside = full.in_range
    if inside:
        for c in inside[:MAX_CROSSING_LINES]:
            pg.paragraph(f"✗ Mode {c.mode} ({hz(c.frequency_hz)}) meets"
                         f" {shown.get(c.source_id, c.source_id)} order {c.order:g} at"
                         f" {number(c.rpm, FREQ_SIG)} rpm, inside the operating range.", 8.5,
                         st.error, indent=0.1 * d)
        if len(inside) > MAX_CROSSING_LINES:
            pg.paragraph(f"✗ {len(inside) - MAX_CROSSING_LINES} more crossings inside the"
                         " operating range.", 8.5, st.error, indent=0.1 * d)
    else:
        pg.paragraph("✓ No order line crosses a natural frequency inside the operating range.",
                     8.5, st.accent, indent=0.1 * d)
    if data.modes_above:
        pg.paragraph(f"{data.modes_above} higher mode{'s' if data.modes_above > 1 else ''} above"
                     f" {hz(data.hz_max, 3)} not drawn.", 7.5, st.ink_soft)
    return True


__all__ = ["nice_ticks", "paint_interference", "spread"]
