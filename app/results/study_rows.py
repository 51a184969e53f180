"""What the Study panel, the report and the command line show of a tolerance study: rows of the
percentile table (labels, not ids), the clearing probabilities in words, the corners, the JSON.
No widgets."""

from __future__ import annotations

from app.results.names import labels, names
from app.text.numbers import FREQ_SIG, hz, number


def _f(value) -> str:
    return number(value, FREQ_SIG)


def _pct(p) -> str:
    if p is None:
        return "-"
    v = 100 * p
    if v in (0.0, 100.0) or 1 <= v <= 99:
        return f"{v:.1f} %"
    return f"{v:.2g} %" if v < 1 else f"{v:.2f} %"   # small shares keep two digits


def parameter_lines(result) -> list[str]:
    """One line per toleranced value: ``Isolator pad: k +-20 % (normal, 3-sigma bound)``."""
    table = names(result.model)
    out = []
    for p in result.parameters:
        extra = ", 3-sigma bound" if p.distribution == "normal" else ""
        out.append(f"{table.get(p.element_id, p.element_id)}: {p.field} +-{number(p.percent)} %"
                   f" ({p.distribution}{extra})")
    return out


#: Column headers of the percentile table (Hz).
HEADERS = ("Mode", "Nominal (Hz)", "5 % (Hz)", "50 % (Hz)", "95 % (Hz)", "Mean (Hz)",
           "Std (Hz)", "First-order std (Hz)", "Worst low (Hz)", "Worst high (Hz)",
           "P(clear all)")


def table_rows(result) -> list[tuple[str, ...]]:
    """Cells of the percentile table, one row per mode."""
    rows = []
    for m in result.modes:
        p5, p50, p95 = m.percentiles_hz
        rows.append((str(m.mode), _f(m.nominal_hz), _f(p5), _f(p50), _f(p95), _f(m.mean_hz),
                     number(m.std_hz), number(m.first_order_std_hz), _f(m.corner_low_hz),
                     _f(m.corner_high_hz),
                     "0 Hz mode" if m.zero else _pct(m.clear_all_probability)))
    return rows


def clearing_lines(result) -> list[str]:
    """Per mode and source: ``mode 2 clears Motor (1,480 rpm) in 93.1 % of samples``."""
    table = names(result.model)
    out = []
    for m in result.modes:
        if m.zero:
            continue
        for sid, p in m.clear_probability.items():
            n = result.n_samples
            if p in (0.0, 1.0):
                # rule of three (common practice): none in N seen still allows up to ~3/N
                err = (f"{'all' if p == 1.0 else 'none'} of {n:,}; the true share"
                       f" {'failing' if p == 1.0 else 'clearing'} may still be up to"
                       f" {_pct(min(1.0, 3.0 / n))}")
            else:
                err = f"+-{_pct(result.probability_error(p))}"
            out.append(f"mode {m.mode} clears {table.get(sid, sid)} with the"
                       f" {number(result.model.margin_percent)} % margin in {_pct(p)} of"
                       f" samples ({err})")
    return out


def corner_lines(result) -> list[str]:
    """The worst-case corners in words (which values at which bound)."""
    table = names(result.model)
    out = []
    for m in result.modes:
        if m.zero:
            continue
        ups = [table.get(i, i) for i, s in m.corner_high.items() if s > 0]
        downs = [table.get(i, i) for i, s in m.corner_high.items() if s < 0]
        side = "; ".join(x for x in (("up: " + ", ".join(ups)) if ups else "",
                                     ("down: " + ", ".join(downs)) if downs else "") if x)
        out.append(f"mode {m.mode}: {_f(m.corner_low_hz)} to {hz(m.corner_high_hz)} at the"
                   f" corners (highest with {side or 'no value'}; lowest the opposite)")
    return out


def study_text(result) -> str:
    """The whole study as plain text lines (the command line's output)."""
    lines = [f"Tolerance study of {result.model.name or 'the model'}: {result.n_samples:,}"
             f" samples (seed {result.seed}, chunk {result.chunk}, {result.method})"]
    lines += ["Tolerances:"] + ["  " + x for x in parameter_lines(result)]
    rows = [HEADERS] + table_rows(result)
    widths = [max(len(r[i]) for r in rows) for i in range(len(HEADERS))]
    lines.append("")
    for r in rows:
        lines.append("  ".join(c.rjust(w) for c, w in zip(r, widths)))
    clear = clearing_lines(result)
    if clear:
        lines += ["", "Probability of clearing each source:"] + ["  " + x for x in clear]
    lines += ["", "Worst-case corners (each value at its bound; verified by a solve):"]
    lines += ["  " + x for x in corner_lines(result)]
    lines += ["", "Notes:"] + ["  " + x for x in result.notes]
    return "\n".join(lines)


def study_json(result) -> dict:
    """JSON-ready dict of a study (ids with their labels; Hz)."""
    lab = labels(result.model)
    return {
        "model": result.model.name, "samples": result.n_samples, "requested": result.n_requested,
        "seed": result.seed, "chunk": result.chunk, "method": result.method,
        "complete": result.complete, "percentiles_from": result.percentiles_from,
        "tolerances": [{"id": p.element_id, "label": lab.get(p.element_id, p.element_id),
                        "element": p.kind, "scales": p.field, "percent": p.percent,
                        "distribution": p.distribution} for p in result.parameters],
        "modes": [{"mode": m.mode, "nominal_hz": m.nominal_hz, "zero_frequency": m.zero,
                   "percentiles_hz": {"5": m.percentiles_hz[0], "50": m.percentiles_hz[1],
                                      "95": m.percentiles_hz[2]},
                   "mean_hz": m.mean_hz, "std_hz": m.std_hz, "min_hz": m.min_hz,
                   "max_hz": m.max_hz,
                   "first_order": {"mean_hz": m.first_order_mean_hz,
                                   "std_hz": m.first_order_std_hz},
                   "worst_case": {"low_hz": m.corner_low_hz, "high_hz": m.corner_high_hz,
                                  "high_corner": m.corner_high},
                   "clear_probability": m.clear_probability,
                   "clear_all_probability": m.clear_all_probability,
                   "crossed_fraction": m.crossed_fraction} for m in result.modes],
        "notes": list(result.notes),
    }


__all__ = ["HEADERS", "clearing_lines", "corner_lines", "parameter_lines", "study_json",
           "study_text", "table_rows"]
