"""The ``springwright`` command.

    springwright                     open the desktop program on a built-in example
    springwright FILE                open a model file
    springwright solve FILE [--json] print the mode table (or JSON)
    springwright report FILE -o OUT.png   write the PNG report with no window

Bad input is one line on stderr naming the file and the problem, exit code 2, no traceback.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import sys
from pathlib import Path

CAUTION = ("A lumped model is an approximation: confirm results by test or detailed analysis;"
           " local codes and licensed engineering practice govern.")


class _Parser(argparse.ArgumentParser):
    def error(self, message):  # one line, exit 2, like every other bad input
        from solver.errors import one_line

        self.exit(2, f"springwright: {one_line(message)}\n")


def _fail(message: str, code: int = 2) -> int:
    from solver.errors import one_line

    print(f"springwright: {one_line(message)}", file=sys.stderr)
    return code


def _load(path: str):
    """(model, None), or (None, the one-line message) for any file that is not a valid model."""
    from solver import ModelError, load_model
    from solver.errors import one_line

    try:
        return load_model(path), None
    except ModelError as exc:   # load_model's message starts with the file's name
        text = str(exc)
        name = one_line(path)
        return None, text if text.startswith(name) else f"{name}: {text}"


def _output_problem(out: Path) -> str | None:
    """Why the report cannot be written to ``out`` (checked before the costly rendering)."""
    folder = out.parent if str(out.parent) else Path(".")
    if out.is_dir():
        return "is a folder; give the PNG file to write, e.g. -o report.png"
    if not folder.is_dir():
        return f"the folder {folder} does not exist"
    if out.exists() and not out.is_file():
        return "is not a regular file; give the PNG file to write"
    if not os.access(folder, os.W_OK | os.X_OK) or (out.exists() and not os.access(out, os.W_OK)):
        return "no permission to write there"
    return None


def _num(value: float):
    """JSON has no inf/NaN: give null there."""
    value = float(value)
    return value if math.isfinite(value) else None


def solve_json(analysis) -> dict:
    """The machine-readable result of ``springwright solve --json`` (DESIGN.md section 5).

    Ids stay where README gives them; labels are added beside them (``model_labels`` for every
    element, ``dof_labels`` beside ``dofs``, ``conflict_labels`` beside ``conflicts``,
    ``margin_conflicts`` with the words of each conflict) and the warnings read by label.
    """
    from solver.margins import margin_check
    from app.results.margin_rows import solve_json_keys
    from app.results.names import dof_name, labels, names
    from app.results.verdicts import verdicts

    modal = analysis.modal
    model = analysis.model
    pct = modal.effective_mass_percent
    margins = margin_check(model, modal)
    said = verdicts(model, margins)
    shown = names(model)
    modes_out = []
    for i in range(modal.n_modes):
        n = i + 1
        z = modal.zero_mode(n)
        entry = {
            "index": n,
            "frequency_hz": _num(modal.frequencies_hz[i]),
            "omega_rad_s": _num(modal.omegas[i]),
            "period_s": _num(modal.periods_s[i]),
            "zero_frequency": z is not None,
            "shape": [_num(v) for v in modal.shapes[:, i]],
            "effective_mass_kg": {d: _num(v[i]) for d, v in modal.effective_mass.items()},
            "effective_mass_percent": {d: _num(v[i]) for d, v in pct.items()},
            "participation_factor": {d: _num(v[i]) for d, v in modal.participation.items()},
            "strain_energy_fraction": {k: _num(v) for k, v in
                                       analysis.energy.strain_energy_fraction(n).items()},
            "kinetic_energy_fraction": {k: _num(v) for k, v in
                                        analysis.energy.kinetic_energy_fraction(n).items()},
            "repeated_with": [m for m in modal.repeated_group(n) if m != n],
            "conflicts": list(dict.fromkeys(c.source_id for c in margins.conflicts if c.mode == n)),
            "conflict_labels": list(dict.fromkeys(v.source for v in said if v.mode == n)),
            "margin_conflicts": [{"source": v.source_id, "label": v.source, "order": v.order,
                                  "inside_source": v.inside, "low_hz": _num(v.low_hz),
                                  "high_hz": _num(v.high_hz), "lower_to_hz": _num(v.lower_to_hz),
                                  "raise_to_hz": _num(v.raise_to_hz), "text": v.sentence}
                                 for v in said if v.mode == n],
        }
        if z is not None:
            entry["zero_cause"] = z.cause
            entry["zero_kind"] = z.kind
        modes_out.append(entry)
    return {
        "model": model.name,
        "kind": model.kind,
        "dofs": [[mid, d] for mid, d in modal.dofs],
        "dof_labels": [dof_name(model, mid, d, shown) for mid, d in modal.dofs],
        "model_labels": labels(model),
        "total_mass_kg": {d: _num(v) for d, v in modal.total_mass.items()},
        "modes": modes_out,
        "margin_percent": model.margin_percent,
        "warnings": list(analysis.warnings) + [v.sentence for v in said],
        "caution": CAUTION,
        **solve_json_keys(model, modal),    # "margins" (the margin table), "interference"
    }


def solve_table(analysis) -> str:
    """The human-readable mode table of ``springwright solve``: elements by label, numbers in the
    window's format (:mod:`app.text.numbers`), margin verdicts in the window's words."""
    from solver.margins import margin_check
    from app.results.margin_rows import solve_text_lines
    from app.results.names import names
    from app.results.verdicts import all_clear, verdicts
    from app.text.numbers import FREQ_SIG, number, percent, quantity
    from app.text.units import count

    modal = analysis.modal
    model = analysis.model
    shown = names(model)
    unit = "kg m^2" if model.kind == "torsion" else "kg"
    lines = [f"Model: {model.name or '(unnamed)'}   kind: {model.kind}"
             + (f" along {model.axis}" if model.kind == "line" else "")
             + f"   {count(len(model.masses), 'mass', 'masses')},"
               f" {count(len(model.springs), 'spring')}, {modal.system.n_dof} DOF"]
    if modal.n_modes == 0:
        lines.append(modal.message or "no modes")
        return "\n".join(lines)
    dirs = list(modal.effective_mass)
    pct = modal.effective_mass_percent
    cum = modal.cumulative_percent
    head = f"{'mode':>4}  {'f (Hz)':>12}  {'w (rad/s)':>12}  {'T (s)':>10}"
    for d in dirs:
        head += f"  {'Meff ' + d + ' %':>10}  {'cum %':>6}"
    head += "  notes"
    lines += ["", head, "-" * len(head)]
    margins = margin_check(model, modal)
    said = verdicts(model, margins)
    for i in range(modal.n_modes):
        n = i + 1
        row = (f"{n:>4}  {number(modal.frequencies_hz[i], FREQ_SIG):>12}"
               f"  {number(modal.omegas[i], FREQ_SIG):>12}  {number(modal.periods_s[i]):>10}")
        for d in dirs:
            row += f"  {percent(pct[d][i]):>10}  {percent(cum[d][i]):>6}"
        notes = []
        z = modal.zero_mode(n)
        if z is not None:
            notes.append(f"zero frequency ({z.kind}): {z.cause}")
        group = modal.repeated_group(n)
        if group and z is None:
            notes.append("repeated with " + ", ".join(str(m) for m in group if m != n))
        dom = analysis.energy.dominant_spring(n)
        if dom and z is None:
            share = 100 * analysis.energy.strain_energy_fraction(n)[dom]
            notes.append(f"most strain in {shown.get(dom, dom)} ({percent(share, 0)} %)")
        for v in said:
            if v.mode == n:
                notes.append(f"{v.relation} {v.source}"
                             + (f" order {v.order:g}" if v.order is not None else ""))
        row += "  " + "; ".join(notes)
        lines.append(row)
    lines.append("")
    lines.append("total mass free to move: " + ", ".join(
        f"{d} {quantity(modal.total_mass[d], unit)}" for d in dirs))
    for w in analysis.warnings:
        lines.append(f"warning: {w}")
    for v in said:
        lines.append(f"margin: {v.sentence}")
    if model.excitations and margins.ok:
        lines.append(f"margin: {all_clear(model, margins)}")
    lines += solve_text_lines(model, modal)
    lines.append("")
    lines.append(CAUTION)
    return "\n".join(lines)


def cmd_solve(args) -> int:
    from solver import ModelError, analyse

    model, err = _load(args.file)
    if err:
        return _fail(err)
    try:
        analysis = analyse(model)
    except ModelError as exc:
        return _fail(f"{args.file}: {exc}")
    text = json.dumps(solve_json(analysis), indent=2, allow_nan=False) if args.json \
        else solve_table(analysis)
    try:
        print(text)
        sys.stdout.flush()
    except BrokenPipeError:   # `springwright solve FILE | head`: the reader has what it wanted
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
    return 0


def cmd_report(args) -> int:
    from solver import ModelError, analyse
    from solver.errors import one_line

    model, err = _load(args.file)
    if err:
        return _fail(err)
    out = Path(args.output)
    problem = _output_problem(out) if args.output else "no output file given"
    if problem:
        return _fail(f"{args.output}: cannot write the report: {problem}")
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    try:
        from app.report import render_report

        analysis = analyse(model)
        if out.suffix.lower() != ".png":
            print(f"note: {one_line(str(out))} gets PNG data (the report is always a PNG)",
                  file=sys.stderr)
        render_report(model, analysis, out)
    except ModelError as exc:
        return _fail(f"{args.file}: {exc}")
    except OSError as exc:
        return _fail(f"{args.output}: cannot write the report ({exc.strerror or exc})")
    print(f"report written to {args.output}")
    return 0


def main(argv=None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    if argv and argv[0] in ("solve", "report"):
        parser = _Parser(prog="springwright", description="Lumped spring-mass vibration tool")
        sub = parser.add_subparsers(dest="command", required=True)
        p = sub.add_parser("solve", help="print the mode table of a model file")
        p.add_argument("file")
        p.add_argument("--json", action="store_true", help="print JSON instead of a table")
        p = sub.add_parser("report", help="write the PNG report of a model file")
        p.add_argument("file")
        p.add_argument("-o", "--output", required=True, help="PNG file to write")
        args = parser.parse_args(argv)
        try:
            return cmd_solve(args) if args.command == "solve" else cmd_report(args)
        except Exception as exc:   # a bug, not the user's input: one line, the details on request
            if os.environ.get("SPRINGWRIGHT_DEBUG"):
                raise
            from solver.errors import shown

            return _fail(f"internal error on {args.file}: {type(exc).__name__}:"
                         f" {shown(str(exc), 200)} (set SPRINGWRIGHT_DEBUG=1 for the traceback;"
                         " please report it)", code=1)
    parser = _Parser(prog="springwright",
                     description="Open the Springwright desktop program (on a built-in example"
                                 " when no FILE is given). Also: springwright solve FILE [--json],"
                                 " springwright report FILE -o OUT.png")
    parser.add_argument("file", nargs="?")
    args = parser.parse_args(argv)
    # One BLAS thread in the window (set before numpy loads): a second thread spinning beside the
    # UI, the solve worker or other programs on a busy 2-core machine made dense solves 4-8x
    # slower, not faster (bench/edit_bench.py)
    os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
    if args.file is not None:
        model, err = _load(args.file)
        if err:
            return _fail(err)
    from app.gui import run

    return run(args.file)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
