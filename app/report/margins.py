"""The report's "Frequency margin check" section (drawn by :func:`paint_margin_check`).

A chart with a log frequency axis: each excitation source as a shaded interval (a speed order is a
line) widened by the model's margin, each elastic mode as a vertical tick at its natural
frequency, red where it falls inside a widened interval. Under it, one line per conflict saying
how far the mode must move (:class:`solver.Conflict` ``message``), or a line saying all modes
clear the sources.
"""

from __future__ import annotations

import math

from PySide6.QtCore import QPointF, QRectF, Qt
from PySide6.QtGui import QColor, QPen

from solver.margins import margin_check

from app.results.names import names
from app.results.verdicts import all_clear, verdicts
from app.text.numbers import number


def _nice_decades(lo: float, hi: float) -> list[float]:
    """Tick values 1, 2, 5 x 10^n between lo and hi (Hz)."""
    out = []
    for n in range(math.floor(math.log10(lo)) - 1, math.ceil(math.log10(hi)) + 1):
        for m in (1, 2, 5):
            v = m * 10 ** n
            if lo <= v <= hi:
                out.append(v)
    return out


#: Source intervals drawn as rows, and conflicts written out, at most (the rest are counted).
MAX_BAND_ROWS = 20
MAX_CONFLICT_LINES = 12


def paint_margin_check(pg, model, analysis) -> None:
    """Draw the section on ``pg`` (the report's page helper) below its current ``y``."""
    st = pg.st
    d = pg.dpi
    modal = analysis.modal
    result = margin_check(model, modal)
    bands = result.bands
    freqs = [float(f) for f, z in zip(modal.frequencies_hz, modal.is_zero) if not z and f > 0]
    # a log axis: only positive ends (a band from 0 Hz, or a speed so slow its frequency
    # underflows to 0, is drawn from the left edge)
    ends = [e for b in bands for e in (b[4], b[5]) if e > 0] + freqs
    if not ends:
        pg.paragraph("No elastic modes to check.", 8.5, st.ink_soft)
        return
    lo, hi = min(ends) / 1.5, max(ends) * 1.5
    lab_w = 1.35 * d
    bands_left_out = max(0, len(bands) - MAX_BAND_ROWS)
    bands = bands[:MAX_BAND_ROWS]
    rows = len(bands)
    row_h = 0.17 * d
    plot = QRectF(pg.left + lab_w, pg.y + 0.05 * d, pg.right - pg.left - lab_w,
                  rows * row_h + 0.35 * d)

    def x_of(f):
        f = min(max(f, lo), hi)   # ends outside the axis (0 Hz among them) sit at its edges
        return plot.left() + plot.width() * (math.log10(f) - math.log10(lo)) / \
            (math.log10(hi) - math.log10(lo))

    p = pg.p
    p.setPen(QPen(st.grid, 1))
    p.setBrush(QColor("#ffffff"))
    p.drawRect(plot)
    p.setBrush(Qt.BrushStyle.NoBrush)
    for v in _nice_decades(lo, hi):
        x = x_of(v)
        major = abs(math.log10(v) - round(math.log10(v))) < 1e-9
        p.setPen(QPen(st.grid if not major else QColor("#cfcbc2"), 1))
        p.drawLine(QPointF(x, plot.top()), QPointF(x, plot.bottom()))
        pg.text(QRectF(x - 0.3 * d, plot.bottom() + 0.02 * d, 0.6 * d, 0.15 * d), number(v), 7,
                False, st.ink_soft, Qt.AlignmentFlag.AlignHCenter)
    pg.text(QRectF(plot.left(), plot.bottom() + 0.16 * d, plot.width(), 0.15 * d),
            "frequency (Hz, log scale)", 7, False, st.ink_soft, Qt.AlignmentFlag.AlignHCenter)
    labels = names(model)
    warn = st.warning
    for i, (sid, order, b_lo, b_hi, lo_w, hi_w) in enumerate(bands):
        y = plot.top() + 0.3 * d + i * row_h
        soft = QColor(warn)
        soft.setAlpha(55)
        strong = QColor(warn)
        strong.setAlpha(150)
        band_rect = QRectF(x_of(max(lo_w, lo)), y, x_of(hi_w) - x_of(max(lo_w, lo)), row_h * 0.7)
        p.fillRect(band_rect, soft)
        if b_hi > b_lo:
            p.fillRect(QRectF(x_of(max(b_lo, lo)), y, x_of(b_hi) - x_of(max(b_lo, lo)),
                              row_h * 0.7), strong)
        else:
            p.setPen(QPen(warn, max(1.5, 0.008 * d)))
            p.drawLine(QPointF(x_of(b_lo), y), QPointF(x_of(b_lo), y + row_h * 0.7))
        name = labels.get(sid, sid) + (f" ×{order:g}" if order is not None else "")
        pg.text(QRectF(pg.left, y - 0.01 * d, lab_w - 0.06 * d, row_h), name, 7, False, st.ink,
                Qt.AlignmentFlag.AlignRight)
    # mode ticks across the whole plot height, numbered at the top
    bad = {c.mode for c in result.conflicts}
    n = 0
    for k, (f, z) in enumerate(zip(modal.frequencies_hz, modal.is_zero)):
        if z or f <= 0:
            continue
        n += 1
        mode = k + 1
        x = x_of(float(f))
        color = st.error if mode in bad else st.accent
        p.setPen(QPen(color, max(1.5, 0.007 * d)))
        p.drawLine(QPointF(x, plot.top() + 0.2 * d), QPointF(x, plot.bottom()))
        if len(freqs) <= 30:
            pg.text(QRectF(x - 0.15 * d, plot.top() + 0.03 * d, 0.3 * d, 0.15 * d), f"{mode}",
                    6.5, mode in bad, color, Qt.AlignmentFlag.AlignHCenter)
    pg.y = plot.bottom() + 0.36 * d
    pg.paragraph(f"Vertical lines: natural frequencies (mode numbers above). Shaded: excitation"
                 f" sources (dark: the source itself; light: widened by the {result.margin_percent:g}"
                 " % margin). A mode in the light or dark shade is too close.", 7.5, st.ink_soft)
    if bands_left_out:
        pg.paragraph(f"The first {MAX_BAND_ROWS} source intervals are drawn; {bands_left_out}"
                     " more are checked but not drawn (springwright solve lists every"
                     " conflict).", 7.5, st.ink_soft)
    if result.conflicts:
        said = verdicts(model, result)
        for v in said[:MAX_CONFLICT_LINES]:
            text = v.sentence[0].upper() + v.sentence[1:]
            pg.paragraph(f"✗ {text} (the smaller move: {v.smaller_move})", 8.5, st.error,
                         indent=0.1 * d)
        if len(said) > MAX_CONFLICT_LINES:
            pg.paragraph(f"✗ {len(said) - MAX_CONFLICT_LINES} more conflicts (springwright"
                         " solve lists every one).", 8.5, st.error, indent=0.1 * d)
    else:
        text = all_clear(model, result)
        pg.paragraph(f"✓ {text[0].upper()}{text[1:]}.", 8.5, st.accent, indent=0.1 * d)


__all__ = ["paint_margin_check"]
