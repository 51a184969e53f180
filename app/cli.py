"""The ``springwright`` command.

    springwright                     open the desktop program on a built-in example
    springwright FILE                open a model file
    springwright solve FILE [--json] print the mode table (or JSON)
    springwright report FILE -o OUT.png   write the PNG report with no window
    springwright loads FILE [--json] print the responses to the loads the file defines
    springwright study FILE -n N [--seed S] [--chunk C] [--scheduler ADDRESS] [--json]
                                     tolerance study of the natural frequencies

Bad input is one line on stderr naming the file and the problem, exit code 2, no traceback.
"""

from __future__ import annotations

import argparse
import errno
import json
import math
import os
import stat
import sys

CAUTION = ("A lumped model is an approximation: confirm results by test or detailed analysis;"
           " local codes and licensed engineering practice govern.")


class _Parser(argparse.ArgumentParser):
    #: the arguments being parsed (for the hint on file names that start with "-")
    argv: tuple = ()

    def error(self, message):  # one line, exit 2, like every other bad input
        from solver.errors import capped, one_line

        dashed = [a for a in self.argv[1:] if a.startswith("-") and a not in _OPTIONS
                  and (a.lower().endswith(".json") or os.path.exists(a))]
        if dashed:
            command = " ".join(["springwright", *self.argv[:1], "--"]).replace("  ", " ")
            message += (f" (a file name that starts with \"-\", such as {dashed[0]}, needs"
                        f" \"--\" before it or \"./\" in front: {command} {dashed[0]})")
        self.exit(2, f"springwright: {capped(one_line(message))}\n")


_OPTIONS = {"--json", "-o", "--output", "-h", "--help", "--"}


def _fail(message: str, code: int = 2) -> int:
    from solver.errors import capped, one_line

    print(f"springwright: {capped(one_line(message), 2000)}", file=sys.stderr)
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


def _output_problem(out: str) -> str | None:
    """Why the report cannot be written to ``out`` (checked before the costly rendering)."""
    try:
        st = os.stat(out)
    except FileNotFoundError:
        st = None
        if os.path.islink(out):
            return (f"is a symbolic link to {os.readlink(out)}, which does not exist; give the"
                    " PNG file to write")
    except OSError as exc:
        if exc.errno == errno.ELOOP:
            return "is a symbolic link that loops back on itself; give the PNG file to write"
        if exc.errno == errno.ENAMETOOLONG:
            return "the name is too long for a file (at most 255 bytes in a name)"
        if exc.errno == errno.ENOTDIR:
            return "a part of the path before the file name is a file, not a folder"
        return f"cannot use it ({exc.strerror or exc})"
    except ValueError:   # a NUL character
        return "the name holds a character no file name can have"
    if st is not None and stat.S_ISDIR(st.st_mode):
        return "is a folder; give the PNG file to write, e.g. -o report.png"
    if st is not None and not stat.S_ISREG(st.st_mode):
        return "is not a regular file (a FIFO, device or socket); give the PNG file to write"
    folder = os.path.dirname(out) or "."
    if not os.path.isdir(folder):
        return f"the folder {folder} does not exist"
    try:
        name_max = os.pathconf(folder, "PC_NAME_MAX")
    except (OSError, ValueError):
        name_max = 255
    if len(os.fsencode(os.path.basename(out))) > name_max:
        return (f"the file name is {len(os.fsencode(os.path.basename(out)))} bytes long; file"
                f" names there are limited to {name_max} bytes")
    if not os.access(folder, os.W_OK | os.X_OK) or (st is not None and
                                                     not os.access(out, os.W_OK)):
        return "no permission to write there"
    return None


def _num(value: float):
    """JSON has no inf/NaN: give null there."""
    value = float(value)
    return value if math.isfinite(value) else None


def _nums(values) -> list:
    """A list of floats for JSON, null where a value is not finite (numpy's tolist, not a
    Python call per value: a 100,000-DOF model has millions of them)."""
    import numpy as np

    arr = np.asarray(values, float)
    out = arr.tolist()
    if not np.all(np.isfinite(arr)):
        out = [v if math.isfinite(v) else None for v in out]
    return out


#: Above this many numbers in the modes, ``solve --json`` is written without indentation
#: (json's C encoder; indenting 6 million numbers took 14 s).
JSON_INDENT_MAX = 200_000


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
    energy = analysis.energy
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
            "shape": _nums(modal.shapes[:, i]),
            "effective_mass_kg": {d: _num(v[i]) for d, v in modal.effective_mass.items()},
            "effective_mass_percent": {d: _num(v[i]) for d, v in pct.items()},
            "participation_factor": {d: _num(v[i]) for d, v in modal.participation.items()},
            "strain_energy_fraction": dict(zip(energy.spring_ids, _nums(energy.strain[i]))),
            "kinetic_energy_fraction": dict(zip(energy.mass_ids, _nums(energy.kinetic[i]))),
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
        # "margins" (the margin table), "interference"; a separation from a source at 0 Hz
        # is infinite, which JSON writes as null
        **_finite_json(solve_json_keys(model, modal)),
        **_finite_json(_bodies_and_gears_json(model, modal)),
    }


def _reference_disc(model) -> str:
    """The shaft a geared model is referred to: its first disc (the driver, as drawn)."""
    return model.masses[0].id


def _bodies_and_gears_json(model, modal) -> dict:
    """``bodies`` (rigid bodies' coupling) and ``gears_referred`` (the equivalent system on one
    shaft, and every disc's motion), present only when the model has bodies or gears."""
    from solver import ModelError
    from solver.bodies import body_coupling, referred_system

    out = {}
    if model.bodies:
        out["bodies"] = [{"id": c.body_id, "label": c.label, "coupled": c.coupled,
                          "coupling": c.coefficients,
                          "elastic_centre_m": (list(c.elastic_centre_m)
                                               if c.elastic_centre_m is not None else None),
                          "offset_m": list(c.offset_m) if c.offset_m is not None else None,
                          "stiffness": [_nums(row) for row in c.stiffness],
                          "statement": c.statement}
                         for c in body_coupling(model)]
    if model.gears:
        try:
            ref = referred_system(model, _reference_disc(model))
        except ModelError as exc:   # a loop of disagreeing ratios: said, the modes stand
            out["gears_referred"] = {"error": str(exc)}
            return out
        eq = ref.model
        out["gears_referred"] = {
            "reference": ref.reference,
            "speed_ratios": ref.speed_ratios,
            "inertias_kg_m2": {m.id: m.mass for m in eq.masses},
            "merged": {k: list(v) for k, v in ref.merged.items()},
            "stiffnesses_n_m_rad": {s.id: s.k for s in eq.springs},
            "statements": list(ref.statements),
            # every disc's angle in each mode (a disc tied by a rigid mesh is not in "dofs")
            "all_dofs": [[mid, d] for mid, d in modal.all_dofs],
            "all_shapes": [_nums(modal.all_shapes[:, i]) for i in range(modal.n_modes)],
        }
    return out


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
        return _lines_text(lines)
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
        f"{d} {quantity(modal.total_mass[d], 'kg m^2' if d == 'theta' else unit)}"
        for d in dirs))
    lines += _bodies_and_gears_lines(model)
    for w in analysis.warnings:
        lines.append(f"warning: {w}")
    for v in said:
        lines.append(f"margin: {v.sentence}")
    if model.excitations and margins.ok:
        lines.append(f"margin: {all_clear(model, margins)}")
    lines += solve_text_lines(model, modal)
    lines.append("")
    lines.append(CAUTION)
    return _lines_text(lines)


def _bodies_and_gears_lines(model) -> list:
    """Coupling of each rigid body, and the geared model's equivalent on one shaft."""
    from solver import ModelError
    from solver.bodies import body_coupling, referred_system

    lines = []
    for c in body_coupling(model):
        lines.append(f"body: {c.statement}")
    if model.gears:
        try:
            ref = referred_system(model, _reference_disc(model))
        except ModelError as exc:   # a loop of disagreeing ratios: said, the table stands
            lines.append(f"gears: {exc}")
        else:
            lines += [f"gears: {line}" for line in ref.statements]
    return lines


def _lines_text(lines) -> str:
    """Lines joined for a terminal: names and labels may hold line breaks, ESC, BEL or CR, which
    would break the table or drive the terminal; each line is escaped to one printable line."""
    from solver.errors import one_line

    return "\n".join(one_line(line) for line in lines)


def _finite_json(value):
    """``value`` with every non-finite float replaced by None (JSON has no inf or NaN)."""
    if isinstance(value, float):
        return value if math.isfinite(value) else None
    if isinstance(value, dict):
        return {k: _finite_json(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_finite_json(v) for v in value]
    return value


def _print_text(text: str) -> int:
    """Print a command's output; exit status 0."""
    try:
        print(text)
        sys.stdout.flush()
    except BrokenPipeError:   # `springwright solve FILE | head`: the reader has what it wanted
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
    return 0


def _internal_error(exc, where: str) -> int:
    """A bug, not the user's input: one line, the details on request (exit 1)."""
    if os.environ.get("SPRINGWRIGHT_DEBUG"):
        raise exc
    from solver.errors import shown

    return _fail(f"internal error {where}: {type(exc).__name__}: {shown(str(exc), 200)} (set"
                 " SPRINGWRIGHT_DEBUG=1 for the traceback; please report it)", code=1)


def cmd_solve(args) -> int:
    from solver import ModelError, analyse

    model, err = _load(args.file)
    if err:
        return _fail(err)
    try:
        analysis = analyse(model)
    except ModelError as exc:
        return _fail(f"{args.file}: {exc}")
    if args.json:
        big = analysis.modal.n_modes * (len(analysis.modal.dofs) + len(analysis.model.springs)
                                        + len(analysis.model.masses)) > JSON_INDENT_MAX
        text = json.dumps(solve_json(analysis), indent=None if big else 2, allow_nan=False)
    else:
        text = solve_table(analysis)
    return _print_text(text)


def cmd_report(args) -> int:
    from solver import ModelError, analyse
    from solver.errors import one_line

    model, err = _load(args.file)
    if err:
        return _fail(err)
    out = args.output
    problem = _output_problem(out) if out else "no output file given"
    if problem:
        return _fail(f"{out}: cannot write the report: {problem}")
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    try:
        from app.report import render_report

        analysis = analyse(model)
        # the name goes to the file system as the bytes it came in (os.fsencode), so a name
        # that is not UTF-8 is written as given
        render_report(model, analysis, out)
    except ModelError as exc:
        return _fail(f"{args.file}: {exc}")
    except OSError as exc:
        return _fail(f"{out}: cannot write the report ({exc.strerror or exc})")
    print(f"report written to {one_line(out)}")
    if not out.lower().endswith(".png"):
        print(f"note: {one_line(out)} holds PNG data (the report is always a PNG)",
              file=sys.stderr)
    return 0


def cmd_loads(args) -> int:
    from solver import ModelError
    from solver.loads import load_results

    from app.results.load_rows import load_json, load_text_lines

    model, err = _load(args.file)
    if err:
        return _fail(err)
    if model.loads is None or model.loads.empty:
        return _fail(f"{args.file}: the model defines no loads (add a \"loads\" key with"
                     " random, shock or spectrum; see README)")
    try:
        results = load_results(model)
    except ModelError as exc:
        return _fail(f"{args.file}: {exc}")
    if args.json:
        text = json.dumps(_finite_json(load_json(model, results)), indent=2, allow_nan=False)
    else:
        text = _lines_text(load_text_lines(model, results))
    return _print_text(text)


def cmd_study(argv) -> int:
    """``springwright study FILE -n N ...``: the tolerance study as a table or JSON."""
    parser = _Parser(prog="springwright study",
                     description="Tolerance study: sample the toleranced springs, dashpots and"
                                 " masses, solve every sample, print per mode the percentiles,"
                                 " the probability of clearing each source, the first-order"
                                 " estimate and the worst-case corners")
    parser.add_argument("file")
    parser.add_argument("-n", "--samples", type=int, default=10_000,
                        help="number of samples (default 10,000)")
    parser.add_argument("--seed", type=int, default=0, help="random seed (default 0)")
    parser.add_argument("--chunk", type=int, default=None,
                        help="samples per chunk (the same seed and chunk give the same result)")
    parser.add_argument("--scheduler", default=None,
                        help="Dask scheduler address (tcp://host:8786): run on that cluster")
    parser.add_argument("--json", action="store_true", help="print JSON instead of a table")
    parser.argv = ("study", *argv[1:])
    args = parser.parse_args(argv[1:])
    from solver import ModelError
    from solver.study import tolerance_study

    model, err = _load(args.file)
    if err:
        return _fail(err)
    try:
        result = tolerance_study(model, args.samples, seed=args.seed, chunk=args.chunk,
                                 scheduler=args.scheduler)
    except ModelError as exc:
        return _fail(f"{args.file}: {exc}")
    from app.results.study_rows import study_json, study_text

    if args.json:
        text = json.dumps(_finite_json(study_json(result)), indent=2, allow_nan=False)
    else:
        text = _lines_text(study_text(result).splitlines())
    return _print_text(text)


def main(argv=None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    if argv and argv[0] == "study":
        try:
            return cmd_study(argv)
        except Exception as exc:   # a bug, not the user's input
            return _internal_error(exc, "in study")
    if argv and argv[0] in ("solve", "report", "loads"):
        parser = _Parser(prog="springwright", description="Lumped spring-mass vibration tool")
        sub = parser.add_subparsers(dest="command", required=True)
        p = sub.add_parser("solve", help="print the mode table of a model file")
        p.add_argument("file")
        p.add_argument("--json", action="store_true", help="print JSON instead of a table")
        p = sub.add_parser("loads", help="print the responses to the loads a model file defines")
        p.add_argument("file")
        p.add_argument("--json", action="store_true", help="print JSON instead of tables")
        p = sub.add_parser("report", help="write the PNG report of a model file")
        p.add_argument("file")
        p.add_argument("-o", "--output", required=True, help="PNG file to write")
        parser.argv = sub.choices[argv[0]].argv = tuple(argv)
        args = parser.parse_args(argv)
        try:
            return {"solve": cmd_solve, "report": cmd_report,
                    "loads": cmd_loads}[args.command](args)
        except Exception as exc:   # a bug, not the user's input
            return _internal_error(exc, f"on {args.file}")
    parser = _Parser(prog="springwright",
                     description="Open the Springwright desktop program (on a built-in example"
                                 " when no FILE is given). Also: springwright solve FILE [--json],"
                                 " springwright report FILE -o OUT.png, springwright loads FILE"
                                 " [--json], springwright study FILE -n N")
    parser.add_argument("file", nargs="?")
    parser.argv = ("", *argv)
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
