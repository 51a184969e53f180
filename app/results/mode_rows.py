"""The mode table as plain rows and text (no widgets): shared by the Modes dock, the report,
the CSV export and the command line.

:func:`mode_table_rows` turns an analysis into one dict per mode; :func:`mode_table_cells` into
display text; :func:`mode_table_csv` into CSV with full-precision numbers.
"""

from __future__ import annotations

import csv
import io

import numpy as np

from app.results.verdicts import verdicts
from app.text.numbers import (FREQ_SIG, csv_number, number, number_widths, percent,
                               percent_widths)
from app.text.units import KINDS

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


def _mass_kind(model) -> str:
    return "inertia" if model.kind == "torsion" else "mass"


def mode_table_rows(analysis) -> list[dict]:
    """One dict per mode, in ascending frequency.

    Keys: ``mode`` (from 1), ``frequency_hz``, ``omega_rad_s``, ``period_s`` (inf for a zero
    mode), ``effective_mass`` {direction: kg (kg m^2 in torsion)}, ``effective_mass_percent`` and
    ``cumulative_percent`` {direction: %}, ``zero_frequency`` (bool), ``zero_kind`` ("rigid",
    "mechanism" or ""), ``zero_cause`` (plain words), ``repeated_with`` (tuple of the other mode
    numbers of a repeated group), ``verdicts`` (:class:`app.results.verdicts.Verdict` per source
    the mode is too close to: the solver's margin check, so the table, the report and the command
    line agree), ``near_excitation`` (their texts: "inside Sine test band (20 to 200 Hz): move it
    below 17 Hz or above 230 Hz"), ``flags`` (all of that as one line of text).
    """
    return list(ModeRows(analysis))


class ModeRows:
    """The rows of :func:`mode_table_rows` as a sequence that makes each row's dict when it is
    first asked for (a view shows a screenful of a table of hundreds of modes, rebuilt on every
    edit); the per-mode lookups (zero modes, repeated groups, margin verdicts) are made at once.
    ``flagged`` lists the rows with notes (a zero mode, a repeated group, a verdict)."""

    def __init__(self, analysis):
        self._rows: list = []
        self.flagged: list[int] = []
        #: the directions of the effective-mass columns
        self.dirs: list[str] = []
        if analysis is None:
            return
        modal = _modal(analysis)
        model = _model(analysis)
        dirs = self.dirs = _directions(analysis)
        # plain floats and per-mode lookups made once: float(x) of an array element is the
        # element's own value, as tolist() gives
        self._f = modal.frequencies_hz.tolist()
        self._w = modal.omegas.tolist()
        self._T = modal.periods_s.tolist()
        self._pct = {d: v.tolist() for d, v in modal.effective_mass_percent.items()}
        self._cum = {d: v.tolist() for d, v in modal.cumulative_percent.items()}
        self._eff = {d: np.asarray(modal.effective_mass[d]).tolist() for d in dirs}
        zero = self._zero = {}
        for z in modal.zero_modes:
            zero.setdefault(z.mode, z)         # the first, as ModalResult.zero_mode finds it
        group_of = self._group_of = {}
        for g in modal.repeated:
            for n in g:
                group_of.setdefault(n, g)      # the first group holding n (repeated_group)
        from solver.margins import margin_check

        margin = verdicts(model, margin_check(model, modal))
        by_mode = self._by_mode = {}
        for v in margin:
            by_mode.setdefault(v.mode, []).append(v)
        self._rows = [None] * modal.n_modes
        self.flagged = sorted(
            n - 1 for n in set(zero) | set(by_mode) | {n for n, g in group_of.items()
                                                        if any(m != n for m in g)}
            if 1 <= n <= modal.n_modes)

    def __len__(self) -> int:
        return len(self._rows)

    def __iter__(self):
        return (self[i] for i in range(len(self._rows)))

    def __getitem__(self, i: int) -> dict:
        row = self._rows[i]
        if row is None:
            row = self._rows[i] = self._row(i)
        return row

    def _row(self, i: int) -> dict:
        dirs = self.dirs
        n = i + 1
        z = self._zero.get(n)
        group = tuple(g for g in self._group_of.get(n, ()) if g != n)
        mine = self._by_mode.get(n, [])
        near = [f"{v.relation} {v.what}: {v.way_out}" for v in mine]
        flags = []
        if z is not None:
            flags.append(f"zero frequency ({z.kind}): {z.cause}")
        if group:
            flags.append("repeated with mode " + ", ".join(str(g) for g in group)
                         + " (shapes are one choice among many)")
        flags.extend(near)
        return {
            "mode": n,
            "frequency_hz": self._f[i],
            "omega_rad_s": self._w[i],
            "period_s": self._T[i],
            "effective_mass": {d: self._eff[d][i] for d in dirs},
            "effective_mass_percent": {d: self._pct[d][i] for d in dirs},
            "cumulative_percent": {d: self._cum[d][i] for d in dirs},
            "zero_frequency": z is not None,
            "zero_kind": z.kind if z is not None else "",
            "zero_cause": z.cause if z is not None else "",
            "repeated_with": group,
            "verdicts": mine,
            "near_excitation": near,
            "flags": "; ".join(flags),
        }


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
    if row["verdicts"]:
        # the closest call first: inside a band before within a margin
        first = min(row["verdicts"], key=lambda v: not v.inside)
        more = len(row["verdicts"]) - 1
        parts.append(first.short + (f" (+{more} more)" if more else ""))
    return ", ".join(parts)


def mode_table_cells(analysis, rows: list[dict] | None = None, short_flags: bool = True) -> list[list[str]]:
    """Rows of display text (rounded for reading); flags short or in full."""
    rows = mode_table_rows(analysis) if rows is None else rows
    dirs = _directions(analysis) if analysis is not None else []
    return [mode_row_cells(r, dirs, short_flags) for r in rows]


def mode_row_cells(r: dict, dirs, short_flags: bool = True) -> list[str]:
    """The display text of one row of :func:`mode_table_rows` (the columns of
    :func:`mode_table_header` for the directions ``dirs``)."""
    cells = [str(r["mode"]), number(r["frequency_hz"], FREQ_SIG),
             number(r["omega_rad_s"], FREQ_SIG), number(r["period_s"])]
    share, total = r["effective_mass_percent"], r["cumulative_percent"]
    for d in dirs:
        cells.append(percent(share[d]))
        cells.append(percent(total[d]))
    if not short_flags:
        cells.append(r["flags"])
    elif r["zero_frequency"] or r["repeated_with"] or r["verdicts"]:
        cells.append(_short_flags(r))
    else:
        cells.append("")               # nothing to flag (most modes)
    return cells


def mode_column_widths(analysis, rows: ModeRows) -> list:
    """For each column of :func:`mode_table_cells` (short flags), an array of a count of
    characters each row's text never exceeds, computed without writing the numbers
    (:func:`app.text.numbers.number_widths`); the notes column's counts are exact (only the
    ``rows.flagged`` have notes). A table asks on every edit whether a column must widen."""
    modal = _modal(analysis)
    n = len(rows)
    widths = [np.full(n, len(str(n)), np.int64),
              number_widths(modal.frequencies_hz, FREQ_SIG),
              number_widths(modal.omegas, FREQ_SIG),
              number_widths(modal.periods_s)]
    pct, cum = modal.effective_mass_percent, modal.cumulative_percent
    for d in _directions(analysis):
        widths += [percent_widths(pct[d]), percent_widths(cum[d])]
    notes = np.zeros(n, np.int64)
    for i in rows.flagged:
        notes[i] = len(_short_flags(rows[i]))
    return widths + [notes]


_CSV_UNIT = {"kg": "kg", "kg m²": "kg_m2", "lb": "lb", "lb in²": "lb_in2"}


def _csv_mass_unit(analysis, system: str) -> str:
    label = KINDS[_mass_kind(_model(analysis))].label(system)
    return _CSV_UNIT.get(label, label.replace(" ", "_"))


def _csv_header(analysis, system: str = "SI") -> list[str]:
    """Every column names its unit (``_hz``, ``_kg``, ``_percent``)."""
    unit = _csv_mass_unit(analysis, system)
    head = ["mode", "frequency_hz", "omega_rad_s", "period_s"]
    for d in _directions(analysis):
        head += [f"effective_mass_{d}_{unit}", f"effective_mass_percent_{d}",
                 f"cumulative_percent_{d}"]
    head += ["zero_frequency", "repeated_with", "notes"]
    return head


def _csv_records(analysis, system: str = "SI") -> list[list]:
    dirs = _directions(analysis)
    factor = KINDS[_mass_kind(_model(analysis))].factor(system)
    recs = []
    for r in mode_table_rows(analysis):
        rec = [r["mode"], csv_number(r["frequency_hz"]), csv_number(r["omega_rad_s"]),
               csv_number(r["period_s"])]
        for d in dirs:
            rec += [csv_number(r["effective_mass"][d] / factor),
                    csv_number(r["effective_mass_percent"][d]),
                    csv_number(r["cumulative_percent"][d])]
        rec += ["yes" if r["zero_frequency"] else "no",
                " ".join(str(g) for g in r["repeated_with"]), r["flags"]]
        recs.append(rec)
    return recs


def mode_table_csv(analysis, delimiter: str = ",", system: str = "SI") -> str:
    """The mode table as CSV text: 12 significant digits (:func:`app.text.numbers.csv_number`),
    every column's unit in its header; effective masses in the display ``system``'s unit."""
    buf = io.StringIO()
    writer = csv.writer(buf, delimiter=delimiter, lineterminator="\n")
    if analysis is not None:
        writer.writerow(_csv_header(analysis, system))
        writer.writerows(_csv_records(analysis, system))
    return buf.getvalue()


def write_mode_table_csv(analysis, path, system: str = "SI") -> None:
    """Write :func:`mode_table_csv` to ``path`` (UTF-8)."""
    with open(path, "w", encoding="utf-8", newline="") as fh:
        fh.write(mode_table_csv(analysis, system=system))
