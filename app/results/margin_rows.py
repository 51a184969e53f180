"""The margin table in words and cells: what the Sources panel, the report, ``springwright solve``
and its JSON show for :func:`solver.margin_table.margin_table` (no widgets).

Sources are named by their labels (:mod:`app.results.names`), numbers written with
:mod:`app.text.numbers`, so every place reads the same.
"""

from __future__ import annotations

from dataclasses import dataclass

from app.results.names import names
from app.text.numbers import FREQ_SIG, band_text, hz, number

#: Column titles of the margin table, in order.
HEADERS = ("Mode", "f (Hz)", "Source", "Order", "Excitation", "Separation", "Result",
           "Nearest clear")

TOOLTIPS = (
    "Mode number",
    "Natural frequency of the mode",
    "Excitation source (its label)",
    "Order of a shaft speed (multiple of the speed); a band has none",
    "The source's own frequencies: an order's line, or its span over the speed range",
    "Distance from the nearest edge of the source's own frequencies, in % of that edge's"
    " frequency; below, above or inside it",
    "pass: at least the margin away; FAIL: inside the source or within the margin",
    "The nearest frequency that clears every source by the margin (where to move the mode)",
)


@dataclass(frozen=True)
class MarginCells:
    """One row of the table as text (``cells`` in :data:`HEADERS` order) with its flags."""

    mode: int
    source_id: str
    cells: tuple[str, ...]
    passes: bool
    inside: bool


def order_text(order) -> str:
    """``×2`` for an order, ``band`` for a band."""
    return "band" if order is None else f"×{order:g}"


def separation_text(row) -> str:
    """``12.5 % below``, ``3 % inside``, ``on the line`` (a single-speed order exactly hit)."""
    if row.position == "inside" and row.high_hz <= row.low_hz:
        return "on the line"
    return f"{number(row.separation_percent, 3)} % {row.position}"


def clear_text(row) -> str:
    """``clear`` for a mode clear of every source, else the nearest clearing frequency and the
    other way out: ``17 Hz (or 230 Hz)``."""
    if row.clear_hz == row.frequency_hz:
        return "clear"
    other = row.clear_above_hz if row.clear_hz == row.clear_below_hz else row.clear_below_hz
    text = hz(row.clear_hz)
    if other is not None and other != row.clear_hz:
        text += f" (or {number(other, FREQ_SIG)})"
    return text


def cells(model, table) -> list[MarginCells]:
    """Every row of ``table`` (a :class:`solver.margin_table.MarginTable` of ``model``) as text."""
    shown = names(model)
    out = []
    for r in table.rows:
        out.append(MarginCells(
            mode=r.mode, source_id=r.source_id, passes=r.passes, inside=r.position == "inside",
            cells=(str(r.mode), number(r.frequency_hz, FREQ_SIG), shown.get(r.source_id, r.source_id),
                   order_text(r.order), band_text(r.low_hz, r.high_hz), separation_text(r),
                   "pass" if r.passes else "FAIL", clear_text(r))))
    return out


def summary(model, table) -> str:
    """One sentence: how many rows fail, at which margin (empty without sources)."""
    if not model.excitations:
        return ""
    if not table.rows:
        return "No elastic modes to check against the sources."
    bad = table.failing
    modes = sorted({r.mode for r in bad})
    if not bad:
        return (f"Every elastic mode clears every source by at least {table.margin_percent:g} %.")
    which = ", ".join(str(m) for m in modes)
    return (f"{len(bad)} of {len(table.rows)} checks fail the {table.margin_percent:g} % margin"
            f" (mode{'s' if len(modes) > 1 else ''} {which}).")


def text_table(model, table) -> list[str]:
    """The table as fixed-width lines for a terminal (header, rule, rows)."""
    rows = [HEADERS] + [c.cells for c in cells(model, table)]
    widths = [max(len(r[i]) for r in rows) for i in range(len(HEADERS))]
    right = {0, 1}

    def line(r):
        return "  ".join(c.rjust(w) if i in right else c.ljust(w)
                         for i, (c, w) in enumerate(zip(r, widths))).rstrip()

    head = line(HEADERS)
    return [head, "-" * len(head)] + [line(r) for r in rows[1:]]


def json_rows(model, table) -> list[dict]:
    """Machine-readable rows for ``solve --json`` (``margins.rows``): ids and labels, Hz and %."""
    shown = names(model)
    return [{"mode": r.mode, "frequency_hz": r.frequency_hz, "source": r.source_id,
             "label": shown.get(r.source_id, r.source_id), "order": r.order,
             "low_hz": r.low_hz, "high_hz": r.high_hz, "position": r.position,
             "separation_percent": r.separation_percent, "passes": r.passes,
             "clear_hz": r.clear_hz, "clear_below_hz": r.clear_below_hz,
             "clear_above_hz": r.clear_above_hz} for r in table.rows]


__all__ = ["HEADERS", "MarginCells", "TOOLTIPS", "cells", "clear_text", "json_rows",
           "order_text", "separation_text", "summary", "text_table"]
