"""The mode table as plain rows and text (no widgets): shared by the Modes dock, the report,
the CSV export and the command line.

:func:`mode_table_rows` turns an analysis into one dict per mode; :func:`mode_table_cells` into
display text; :func:`mode_table_csv` into CSV with full-precision numbers.
"""

from __future__ import annotations

import csv
import io
import math

_DIR_SYMBOL = {"x": "x", "y": "y", "theta": "θ"}


def _modal(analysis):
    """The ModalResult inside an Analysis (or the ModalResult itself)."""
    return getattr(analysis, "modal", analysis)


def _model(analysis):
    m = getattr(analysis, "model", None)
    return m if m is not None else _modal(analysis).model


def _directions(analysis) -> list[str]:
    modal = _modal(analysis)
    model = _model(analysis)
    dirs = [d for d in model.directions if d in modal.effective_mass]
    return dirs + [d for d in modal.effective_mass if d not in dirs]


def _excitation_hits(model, margin, mode: int) -> list[str]:
    """Sources (with order) whose margin-widened interval holds ``mode``: the solver's margin
    check (:func:`solver.margin_check`), so the table, the report and the command line agree."""
    labels = {e.id: e.label for e in model.excitations}
    hits = []
    for c in margin.for_mode(mode):
        name = labels.get(c.source_id, c.source_id)
        if c.order is not None:
            hits.append(f"{name} order {c.order:g} ({c.low_hz:.4g} Hz)")
        else:
            hits.append(f"{name} ({c.low_hz:.4g} to {c.high_hz:.4g} Hz)")
    return hits


def mode_table_rows(analysis) -> list[dict]:
    """One dict per mode, in ascending frequency.

    Keys: ``mode`` (from 1), ``frequency_hz``, ``omega_rad_s``, ``period_s`` (inf for a zero
    mode), ``effective_mass`` {direction: kg (kg m^2 in torsion)}, ``effective_mass_percent`` and
    ``cumulative_percent`` {direction: %}, ``zero_frequency`` (bool), ``zero_kind`` ("rigid",
    "mechanism" or ""), ``zero_cause`` (plain words), ``repeated_with`` (tuple of the other mode
    numbers of a repeated group), ``near_excitation`` (list of texts: sources within the model's
    separation margin), ``flags`` (all of that as one line of text).
    """
    if analysis is None:
        return []
    modal = _modal(analysis)
    model = _model(analysis)
    dirs = _directions(analysis)
    f = modal.frequencies_hz
    w = modal.omegas
    T = modal.periods_s
    pct = modal.effective_mass_percent
    cum = modal.cumulative_percent
    rows = []
    from solver.margins import margin_check

    margin = margin_check(model, modal)
    for i in range(modal.n_modes):
        n = i + 1
        z = modal.zero_mode(n)
        group = tuple(g for g in modal.repeated_group(n) if g != n)
        near = _excitation_hits(model, margin, n)
        flags = []
        if z is not None:
            flags.append(f"zero frequency ({z.kind}): {z.cause}")
        if group:
            flags.append("repeated with mode " + ", ".join(str(g) for g in group)
                         + " (shapes are one choice among many)")
        if near:
            flags.append(f"within {model.margin_percent:g} % of " + "; ".join(near))
        rows.append({
            "mode": n,
            "frequency_hz": float(f[i]),
            "omega_rad_s": float(w[i]),
            "period_s": float(T[i]),
            "effective_mass": {d: float(modal.effective_mass[d][i]) for d in dirs},
            "effective_mass_percent": {d: float(pct[d][i]) for d in dirs},
            "cumulative_percent": {d: float(cum[d][i]) for d in dirs},
            "zero_frequency": z is not None,
            "zero_kind": z.kind if z is not None else "",
            "zero_cause": z.cause if z is not None else "",
            "repeated_with": group,
            "near_excitation": near,
            "flags": "; ".join(flags),
        })
    return rows


def mode_table_header(analysis) -> list[str]:
    """Column headings (with units) matching :func:`mode_table_cells`."""
    head = ["Mode", "Frequency (Hz)", "ω (rad/s)", "Period (s)"]
    for d in _directions(analysis) if analysis is not None else []:
        s = _DIR_SYMBOL.get(d, d)
        head += [f"Eff. mass {s} (%)", f"Cumul. {s} (%)"]
    head.append("Notes")
    return head


def _short_flags(row: dict) -> str:
    parts = []
    if row["zero_frequency"]:
        parts.append(f"0 Hz: {row['zero_kind']}")
    if row["repeated_with"]:
        parts.append("repeated")
    if row["near_excitation"]:
        first = row["near_excitation"][0].split(" (")[0]
        more = len(row["near_excitation"]) - 1
        parts.append(f"in margin of {first}" + (f" (+{more})" if more else ""))
    return ", ".join(parts)


def _fmt_num(v: float, digits: int = 5) -> str:
    if math.isinf(v):
        return "∞"
    if v == 0:
        return "0"
    return f"{v:.{digits}g}"


def mode_table_cells(analysis, rows: list[dict] | None = None, short_flags: bool = True) -> list[list[str]]:
    """Rows of display text (rounded for reading); flags short or in full."""
    rows = mode_table_rows(analysis) if rows is None else rows
    dirs = _directions(analysis) if analysis is not None else []
    out = []
    for r in rows:
        cells = [str(r["mode"]), _fmt_num(r["frequency_hz"]), _fmt_num(r["omega_rad_s"]),
                 _fmt_num(r["period_s"])]
        for d in dirs:
            cells += [f"{r['effective_mass_percent'][d]:.2f}", f"{r['cumulative_percent'][d]:.2f}"]
        cells.append(_short_flags(r) if short_flags else r["flags"])
        out.append(cells)
    return out


def _csv_header(analysis) -> list[str]:
    head = ["mode", "frequency_hz", "omega_rad_s", "period_s"]
    for d in _directions(analysis):
        head += [f"effective_mass_{d}", f"effective_mass_percent_{d}", f"cumulative_percent_{d}"]
    head += ["zero_frequency", "repeated_with", "notes"]
    return head


def _csv_records(analysis) -> list[list]:
    dirs = _directions(analysis)
    recs = []
    for r in mode_table_rows(analysis):
        rec = [r["mode"], repr(r["frequency_hz"]), repr(r["omega_rad_s"]),
               "inf" if math.isinf(r["period_s"]) else repr(r["period_s"])]
        for d in dirs:
            rec += [repr(r["effective_mass"][d]), repr(r["effective_mass_percent"][d]),
                    repr(r["cumulative_percent"][d])]
        rec += ["yes" if r["zero_frequency"] else "no",
                " ".join(str(g) for g in r["repeated_with"]), r["flags"]]
        recs.append(rec)
    return recs


def mode_table_csv(analysis, delimiter: str = ",") -> str:
    """The mode table as CSV text with full-precision numbers (SI units named in the header)."""
    buf = io.StringIO()
    writer = csv.writer(buf, delimiter=delimiter, lineterminator="\n")
    if analysis is not None:
        writer.writerow(_csv_header(analysis))
        writer.writerows(_csv_records(analysis))
    return buf.getvalue()


def write_mode_table_csv(analysis, path) -> None:
    """Write :func:`mode_table_csv` to ``path`` (UTF-8)."""
    with open(path, "w", encoding="utf-8", newline="") as fh:
        fh.write(mode_table_csv(analysis))
