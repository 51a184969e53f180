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
        text += f" (or {hz(other)})"
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


def crossing_sentence(model, c, shown=None) -> str:
    """``mode 2 (57.43 Hz) × Drive speed order 2 at 1722.82 rpm`` (an interference crossing)."""
    shown = names(model) if shown is None else shown
    return (f"mode {c.mode} ({hz(c.frequency_hz)}) × {shown.get(c.source_id, c.source_id)}"
            f" order {c.order:g} at {number(c.rpm, FREQ_SIG)} rpm")


def solve_json_keys(model, modal) -> dict:
    """The keys ``springwright solve --json`` adds for the margin table and the interference
    diagram: ``margins`` (``margin_percent``, ``ok``, ``keep_out_hz`` as [lo, hi] pairs, ``rows``
    as :func:`json_rows`) and ``interference`` (``rpm_max``, ``hz_max``, ``crossings`` with
    ``mode``, ``frequency_hz``, ``source``, ``label``, ``order``, ``rpm``, ``in_range``,
    ``margin_rpm_low``, ``margin_rpm_high``, ``text``)."""
    from solver.interference import interference
    from solver.margin_table import margin_table

    table = margin_table(model, modal)
    data = interference(model, modal)
    shown = names(model)
    return {
        "margins": {"margin_percent": table.margin_percent, "ok": table.ok,
                    "keep_out_hz": [[lo, hi] for lo, hi in table.keep_out],
                    "rows": json_rows(model, table)},
        "interference": {
            "rpm_max": data.rpm_max, "hz_max": data.hz_max,
            "crossings": [{"mode": c.mode, "frequency_hz": c.frequency_hz,
                           "source": c.source_id, "label": shown.get(c.source_id, c.source_id),
                           "order": c.order, "rpm": c.rpm, "in_range": c.in_range,
                           "margin_rpm_low": c.margin_rpm_low,
                           "margin_rpm_high": c.margin_rpm_high,
                           "text": crossing_sentence(model, c, shown)} for c in data.crossings]},
    }


def solve_text_lines(model, modal) -> list[str]:
    """The margin table and the crossings inside the operating ranges for the text output of
    ``springwright solve`` (no lines for a model without sources)."""
    if not model.excitations:
        return []
    from solver.interference import interference
    from solver.margin_table import margin_table

    table = margin_table(model, modal)
    out = ["", f"Margin table (margin {table.margin_percent:g} %; separation from the nearest"
               " edge of each source's own frequencies):"]
    out += text_table(model, table) if table.rows else []
    out.append(summary(model, table))
    data = interference(model, modal)
    if data.lines:
        inside = data.in_range
        out.append("")
        out.append("Interference (order lines against natural frequencies):")
        if inside:
            shown = names(model)
            out += [f"  {crossing_sentence(model, c, shown)}, inside the operating range"
                    for c in inside]
        else:
            out.append("  no order line crosses a natural frequency inside the operating range")
    return out


__all__ = ["HEADERS", "MarginCells", "TOOLTIPS", "cells", "clear_text", "crossing_sentence",
           "json_rows", "order_text", "separation_text", "solve_json_keys", "solve_text_lines",
           "summary", "text_table"]
