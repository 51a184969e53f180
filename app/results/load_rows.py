"""What the Loads panel, the report and the command line show of the load cases, computed from
:class:`solver.loads.LoadResults` with no widgets: table rows (names are labels), the text of
``springwright loads`` and its JSON.
"""

from __future__ import annotations

import math

import numpy as np

from app.results.names import dof_name, names
from app.text.numbers import FREQ_SIG, number


def hz(value) -> str:
    """A frequency as a table cell (the unit is in the heading)."""
    return number(value, FREQ_SIG)

#: the columns of each table: (heading, unit)
RANDOM_MASS_COLUMNS = (("Mass", ""), ("Acceleration", "g RMS"), ("3-sigma", "g"),
                       ("Displacement", "m RMS"), ("3-sigma", "m"))
RANDOM_SPRING_COLUMNS = (("Spring", ""), ("Deflection", "m RMS"), ("3-sigma", "m"),
                         ("Force", "N RMS"), ("3-sigma", "N"))
MILES_COLUMNS = (("Mode", ""), ("f", "Hz"), ("Q", ""), ("ASD at f", "g^2/Hz"),
                 ("Eff. mass", "%"), ("Miles", "g RMS"), ("Exact", "g RMS"))
SHOCK_MASS_COLUMNS = (("Mass", ""), ("Peak acceleration", "g"), ("at", "s"),
                      ("Peak displacement", "m"), ("at", "s"))
SHOCK_SPRING_COLUMNS = (("Spring", ""), ("Peak deflection", "m"), ("at", "s"),
                        ("Peak force", "N"), ("at", "s"))
SPECTRUM_MODE_COLUMNS = (("Mode", ""), ("f", "Hz"), ("T", "s"), ("zeta", ""),
                         ("Eff. mass", "%"), ("Sa", "g"))
SPECTRUM_MASS_COLUMNS = (("Mass", ""), ("Acceleration SRSS", "g"), ("CQC", "g"),
                         ("Displacement SRSS", "m"), ("CQC", "m"))
SPECTRUM_SPRING_COLUMNS = (("Spring", ""), ("Deflection SRSS", "m"), ("CQC", "m"),
                           ("Force SRSS", "N"), ("CQC", "N"))


def heading(col) -> str:
    name, unit = col
    return f"{name} ({unit})" if unit else name


def _mass_names(model, outputs) -> list[str]:
    shown = names(model)
    return [dof_name(model, mid, d, shown) for mid, d in outputs]


def _spring_names(model, ids) -> list[str]:
    shown = names(model)
    return [shown.get(s, s) for s in ids]


def random_rows(model, r):
    """(mass rows, spring rows, Miles rows): each row a list of cell texts."""
    masses = [[n, number(a), number(3 * a), number(d), number(3 * d)] for n, a, d in zip(
        _mass_names(model, r.mass_outputs), r.acceleration_grms, r.displacement_rms_m)]
    springs = [[n, number(d), number(3 * d), number(f), number(3 * f)] for n, d, f in zip(
        _spring_names(model, r.springs), r.deflection_rms_m, r.force_rms_n)]
    miles = [[str(c.mode), hz(c.frequency_hz), number(c.q), number(c.asd_g2_hz),
              number(100 * c.effective_mass_fraction, 3), number(c.miles_grms),
              number(c.exact_grms)] for c in r.miles]
    return masses, springs, miles


def shock_rows(model, s):
    """(mass rows, spring rows) of peak values and their times."""
    av, at = s.peaks["acceleration_g"]
    dv, dt = s.peaks["displacement_m"]
    fv, ft = s.peaks["deflection_m"]
    nv, nt = s.peaks["force_n"]
    masses = [[n, number(a), number(ta), number(d), number(td)] for n, a, ta, d, td in zip(
        _mass_names(model, s.mass_outputs), av, at, dv, dt)]
    springs = [[n, number(d), number(td), number(f), number(tf)] for n, d, td, f, tf in zip(
        _spring_names(model, s.springs), fv, ft, nv, nt)]
    return masses, springs


def spectrum_rows(model, p):
    """(mode rows, mass rows, spring rows) of a design-spectrum result."""
    modes = [[str(int(m)), hz(f), number(t), number(z), number(100 * e, 3), number(sa)]
             for m, f, t, z, e, sa in zip(p.modes, p.frequencies_hz, p.periods_s,
                                          p.damping_ratios, p.effective_mass_fraction,
                                          p.pseudo_acceleration_g)]
    masses = [[n, number(a), number(ac), number(d), number(dc)] for n, a, ac, d, dc in zip(
        _mass_names(model, p.mass_outputs), p.srss["acceleration_g"], p.cqc["acceleration_g"],
        p.srss["displacement_m"], p.cqc["displacement_m"])]
    springs = [[n, number(d), number(dc), number(f), number(fc)] for n, d, dc, f, fc in zip(
        _spring_names(model, p.springs), p.srss["deflection_m"], p.cqc["deflection_m"],
        p.srss["force_n"], p.cqc["force_n"])]
    return modes, masses, springs


def modes_for_90_text(p) -> str:
    """``modes to reach 90 % of the mass: x 2 (of 3)`` in words, per direction."""
    parts = []
    for d, n in p.modes_for_90_percent.items():
        parts.append(f"{d}: {n}" if n is not None else
                     f"{d}: not reached ({number(100 * p.mass_fraction[d], 3)} % with every mode)")
    return ("modes needed for 90 % of the mass (lowest first; common practice in building codes,"
            " the local code governs): " + ", ".join(parts))


def pulse_text(pulse) -> str:
    text = f"{pulse.shape} {number(pulse.peak_g)} g, {number(pulse.duration_s * 1e3)} ms"
    if pulse.shape == "trapezoid":
        text += (f" (rise {number(pulse.rise_s * 1e3)} ms, fall"
                 f" {number(pulse.fall_s * 1e3)} ms)")
    return text


def notes(results) -> list[str]:
    """Assumptions and warnings of every load, each once."""
    out = []
    for r in (results.random, results.shock, results.spectrum):
        if r is not None:
            for line in tuple(r.assumptions) + tuple(r.warnings):
                if line not in out:
                    out.append(line)
    return out


def srs_at_modes(results):
    """(mode numbers, frequencies Hz, maximax g) of the pulse's SRS at the model's modes above
    zero frequency, or None without a shock."""
    from solver.loads import shock_response_spectrum

    s = results.shock
    if s is None:
        return None
    f = np.asarray(s.mode_frequencies_hz)
    keep = np.flatnonzero(f > 0)
    if not len(keep):
        return keep + 1, f[keep], np.zeros(0)
    srs = shock_response_spectrum(s.pulse, f[keep], results.loads.srs_q)
    return keep + 1, f[keep], srs.maximax_g


def _table(lines, columns, rows):
    heads = [heading(c) for c in columns]
    widths = [max(len(h), *(len(r[i]) for r in rows)) if rows else len(h)
              for i, h in enumerate(heads)]
    line = "  ".join(h.ljust(w) if i == 0 else h.rjust(w) for i, (h, w) in
                     enumerate(zip(heads, widths)))
    lines += [line, "-" * len(line)]
    for r in rows:
        lines.append("  ".join(c.ljust(w) if i == 0 else c.rjust(w) for i, (c, w) in
                               enumerate(zip(r, widths))))


def load_text_lines(model, results) -> list[str]:
    """The lines ``springwright loads FILE`` prints (labels, numbers in the window's format)."""
    lines = [f"Model: {model.name or '(unnamed)'}   base motion in {results.loads.direction}"]
    r = results.random
    if r is not None:
        masses, springs, miles = random_rows(model, r)
        lines += ["", f"Random vibration: input {number(r.input_grms)} g RMS over"
                      f" {hz(r.frequencies_hz[0])}-{hz(r.frequencies_hz[-1])} Hz"
                      f" ({len(r.frequencies_hz)} frequencies)", ""]
        _table(lines, RANDOM_MASS_COLUMNS, masses)
        lines.append("")
        _table(lines, RANDOM_SPRING_COLUMNS, springs)
        if miles:
            lines += ["", "Miles' equation (hand check) beside the exact integral, per dominant"
                          " mode:"]
            _table(lines, MILES_COLUMNS, miles)
    s = results.shock
    if s is not None:
        masses, springs = shock_rows(model, s)
        lines += ["", f"Shock: {pulse_text(s.pulse)}, exact {s.method} time response over"
                      f" {number(s.times[-1])} s ({len(s.times) - 1} steps)", ""]
        _table(lines, SHOCK_MASS_COLUMNS, masses)
        lines.append("")
        _table(lines, SHOCK_SPRING_COLUMNS, springs)
        at = srs_at_modes(results)
        if at is not None and len(at[0]):
            lines += ["", f"Shock response spectrum (maximax, Q = {number(results.loads.srs_q)})"
                          " at the modes:"]
            _table(lines, (("Mode", ""), ("f", "Hz"), ("SRS", "g")),
                   [[str(int(m)), hz(f), number(a)] for m, f, a in zip(*at)])
    p = results.spectrum
    if p is not None:
        modes, masses, springs = spectrum_rows(model, p)
        lines += ["", f"Design response spectrum (pseudo-acceleration against"
                      f" {p.spectrum.abscissa}): peak modal responses by SRSS and CQC", ""]
        _table(lines, SPECTRUM_MODE_COLUMNS, modes)
        lines += ["", modes_for_90_text(p), ""]
        _table(lines, SPECTRUM_MASS_COLUMNS, masses)
        lines.append("")
        _table(lines, SPECTRUM_SPRING_COLUMNS, springs)
    lines.append("")
    for n in notes(results):
        lines.append(f"note: {n}")
    lines.append(results.caution)
    return lines


def _f(v):
    v = float(v)
    return v if math.isfinite(v) else None


def _fs(values) -> list:
    return [_f(v) for v in np.asarray(values, float).ravel()]


def load_json(model, results) -> dict:
    """The machine-readable result of ``springwright loads FILE --json`` (README)."""
    from app.results.names import labels

    lab = labels(model)
    out: dict = {"model": model.name, "direction": results.loads.direction}

    def mass_entries(outputs, **cols):
        return [{"id": mid, "label": lab.get(mid, mid), "direction": d,
                 **{k: _f(v[i]) for k, v in cols.items()}}
                for i, (mid, d) in enumerate(outputs)]

    def spring_entries(ids, **cols):
        return [{"id": sid, "label": lab.get(sid, sid), **{k: _f(v[i]) for k, v in cols.items()}}
                for i, sid in enumerate(ids)]

    r = results.random
    if r is not None:
        out["random"] = {
            "asd_g2_hz": [list(p) for p in results.loads.random.points],
            "input_grms": _f(r.input_grms),
            "frequency_points": len(r.frequencies_hz),
            "masses": mass_entries(r.mass_outputs, acceleration_grms=r.acceleration_grms,
                                   acceleration_3sigma_g=3 * r.acceleration_grms,
                                   displacement_rms_m=r.displacement_rms_m,
                                   displacement_3sigma_m=3 * r.displacement_rms_m),
            "springs": spring_entries(r.springs, deflection_rms_m=r.deflection_rms_m,
                                      deflection_3sigma_m=3 * r.deflection_rms_m,
                                      force_rms_n=r.force_rms_n,
                                      force_3sigma_n=3 * r.force_rms_n),
            "miles": [{"mode": c.mode, "frequency_hz": _f(c.frequency_hz), "q": _f(c.q),
                       "asd_g2_hz": _f(c.asd_g2_hz),
                       "effective_mass_fraction": _f(c.effective_mass_fraction),
                       "miles_grms": _f(c.miles_grms), "exact_grms": _f(c.exact_grms)}
                      for c in r.miles],
        }
    s = results.shock
    if s is not None:
        p = s.pulse
        pulse = {"shape": p.shape, "peak_g": p.peak_g, "duration_s": p.duration_s}
        if p.shape == "trapezoid":
            pulse.update(rise_s=p.rise_s, fall_s=p.fall_s)
        pk = s.peaks
        at = srs_at_modes(results)
        out["shock"] = {
            "pulse": pulse, "method": s.method, "duration_s": _f(s.times[-1]),
            "steps": len(s.times) - 1,
            "masses": mass_entries(s.mass_outputs, peak_acceleration_g=pk["acceleration_g"][0],
                                   peak_acceleration_time_s=pk["acceleration_g"][1],
                                   peak_displacement_m=pk["displacement_m"][0],
                                   peak_displacement_time_s=pk["displacement_m"][1]),
            "springs": spring_entries(s.springs, peak_deflection_m=pk["deflection_m"][0],
                                      peak_deflection_time_s=pk["deflection_m"][1],
                                      peak_force_n=pk["force_n"][0],
                                      peak_force_time_s=pk["force_n"][1]),
            "srs": {"q": results.loads.srs_q,
                    "frequencies_hz": _fs(results.srs.frequencies_hz),
                    "maximax_g": _fs(results.srs.maximax_g),
                    "at_modes": [{"mode": int(m), "frequency_hz": _f(f), "maximax_g": _f(a)}
                                 for m, f, a in zip(*at)]},
        }
    p = results.spectrum
    if p is not None:
        out["spectrum"] = {
            "abscissa": p.spectrum.abscissa,
            "points": [list(x) for x in p.spectrum.points],
            "modes": [{"mode": int(m), "frequency_hz": _f(f), "period_s": _f(t),
                       "damping_ratio": _f(z), "participation_factor": _f(g),
                       "effective_mass_fraction": _f(e), "pseudo_acceleration_g": _f(sa)}
                      for m, f, t, z, g, e, sa in zip(
                          p.modes, p.frequencies_hz, p.periods_s, p.damping_ratios,
                          p.participation, p.effective_mass_fraction,
                          p.pseudo_acceleration_g)],
            "modes_for_90_percent": dict(p.modes_for_90_percent),
            "mass_fraction": {d: _f(v) for d, v in p.mass_fraction.items()},
            "masses": mass_entries(p.mass_outputs,
                                   acceleration_srss_g=p.srss["acceleration_g"],
                                   acceleration_cqc_g=p.cqc["acceleration_g"],
                                   displacement_srss_m=p.srss["displacement_m"],
                                   displacement_cqc_m=p.cqc["displacement_m"]),
            "springs": spring_entries(p.springs, deflection_srss_m=p.srss["deflection_m"],
                                      deflection_cqc_m=p.cqc["deflection_m"],
                                      force_srss_n=p.srss["force_n"],
                                      force_cqc_n=p.cqc["force_n"]),
        }
    out["notes"] = notes(results)
    out["caution"] = results.caution
    return out


def solve_loads(model):
    """(LoadResults, "") or (None, the one-line reason): the model's loads solved, for the
    Loads panel's worker (thread or process; no Qt here, so the process imports little)."""
    from solver.errors import ModelError
    from solver.loads import load_results

    try:
        return load_results(model), ""
    except ModelError as exc:
        return None, str(exc)


def parse_table_text(text: str, what: str = "table") -> list[tuple[float, float]]:
    """Rows of two numbers from pasted or CSV text: one row a line, the numbers separated by a
    comma, semicolon, tab or spaces; lines that hold no number (a header, a blank line) are
    skipped. Raises ValueError with a one-line message naming the line for a line with one
    number, three, or a word beside a number. The values themselves are checked by the load's
    own definition (rows increasing, values positive)."""
    import re

    rows = []
    for n, line in enumerate(text.splitlines(), start=1):
        parts = [p for p in re.split(r"[,;\t ]+", line.strip()) if p]
        if not parts:
            continue
        values = []
        for p in parts:
            try:
                values.append(float(p))
            except ValueError:
                values.append(None)
        if all(v is None for v in values):
            continue    # a header
        if len(values) != 2 or any(v is None for v in values):
            raise ValueError(f"{what}: line {n} must hold two numbers, got {line.strip()[:60]!r}")
        rows.append((values[0], values[1]))
    if not rows:
        raise ValueError(f"{what}: no rows of two numbers found")
    return rows


__all__ = ["parse_table_text", "load_json", "load_text_lines", "random_rows", "shock_rows",
           "spectrum_rows",
           "srs_at_modes", "modes_for_90_text", "pulse_text", "notes", "heading"]
