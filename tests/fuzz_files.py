"""File fuzzer for the model loader and the command line.

Throws malformed model files at :func:`solver.load_model` and at the command line's entry function
(``app.cli.main(["solve", FILE])`` in-process, a few through a real subprocess) and checks the
contract of DESIGN.md section 5 for every one of them:

- exactly one of: the model loads (and then ``save_model`` / ``load_model`` gives it back, with the
  same text on a second save), or a :class:`solver.ModelFileError` whose message is one printable
  line naming the file; on the command line exit 0, or exit 2 with nothing on stdout and one line
  on stderr;
- never another exception, never longer than a per-file time cap, never a MemoryError (the whole
  run has an address-space limit so that a blow-up is an error here, not a swapping machine).

Cases: mutations of the shipped examples (type swaps, deletions, unknown keys, colliding ids,
huge and special numbers, long and odd strings, big arrays), text mutations (truncation, byte
flips, BOMs, invalid UTF-8, NaN literals, duplicate keys, lone surrogates), generated JSON trees,
random bytes, valid models with extreme values (subnormal speeds and band edges, values at the
range limits, control characters and any script in names: `solve`, `solve --json` and, for
some, `report` must succeed, the table in printable lines), and special files (FIFO,
/dev/zero, directories, sparse huge files, odd names, a file at the size limit that must save
and load back). Beside the files: `report -o` to odd outputs (long and non-UTF-8 names, links
that loop or dangle, FIFOs, devices: one line, exit 2, or the file under its own name),
save_model to non-regular targets (refused, the target untouched), and public functions given
a result of another model or a mode number out of range (a ModelError). Messages must be one
printable line of at most 1,200 characters plus the file name, in JSON notation (no Python
``None``/``True``/``'x'``).

    python tests/fuzz_files.py --count 3000 --seed 1      # what `make fuzz` runs (fresh seed)

``tests/solver/test_bad_input.py`` runs a small fixed sample of it in ``make test``.
"""

from __future__ import annotations

import argparse
import contextlib
import copy
import io
import json
import os
import random
import re
import signal
import subprocess
import sys
import tempfile
import time
from collections import Counter
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "assets" / "examples").glob("*.json"))
_SPLITS = "\n\r\v\f\x1c\x1d\x1e\x85\u2028\u2029"


class Raw:
    """A piece of JSON text put into a tree as it is (NaN, 1e400, a lone-surrogate escape...)."""

    def __init__(self, text: str):
        self.text = text


# Values the grammar allows but a model does not, and values that break naive code.
RAW = [
    "1e400", "-1e400", "NaN", "Infinity", "-Infinity", "1" + "0" * 5000, "-" + "9" * 400,
    "1" + "0" * 310, "-0", "0e0", "1e-400", "5e-324", "1.7976931348623157e308", "1e30", "1e31",
    "1e-31", '"\\ud800"', '"a\\udfffb"', '"\\udc00\\ud800"', '"a\\u0000b"', '"line\\nbreak"',
    '"\\u001b[31mred"', '"\\u2028"', '"\\u202e"', '"\\ufeff"', '"\\ud83d\\ude00"', "true",
    "false", "null", "[]", "{}", '""', '" "', '"\\t"', "[" * 3000 + "]" * 3000,
    '{"a": 1, "a": 2}', "2.0", "1.5", "0", "-1", "1e308", "[1, 2, 3]",
]
PY_VALUES = [0, -1, 1, 2.5, -0.0, True, False, None, "", " ", "x", "1.0", "m1", "A", "s1",
             "x" * 100_000, "\n", "a\r\nb", "é", "日本", [], [1], ["x", "x"], ["x", "q"], {},
             {"model": "modal"}, {"x": 1}, 10 ** 20, 10 ** 400, 1e-300, 1e300, "theta",
             [0.1, -0.2], [0, 0], [1, "x"], [[0, 0]], {"percent": 10}, "triangular",
             {"percent": 99.9, "distribution": "normal"}]
KEYS = ["format", "version", "name", "kind", "axis", "masses", "anchors", "springs", "dampers",
        "damping", "excitations", "margin_percent", "initial", "id", "label", "x", "y", "mass",
        "inertia", "fixed", "a", "b", "k", "k_t", "c", "model", "ratio", "alpha", "beta",
        "mode_ratios", "type", "rpm", "orders", "f_min_hz", "f_max_hz", "vx", "vy", "theta",
        "vtheta", "gears", "a_offset", "b_offset", "k_mesh", "tolerance", "percent",
        "distribution", "colour", "", "\n", "1", "0",
        "loads", "direction", "random", "asd", "shock", "shape", "peak_g", "duration_s",
        "rise_s", "fall_s", "spectrum", "abscissa", "points", "srs_q"]


def dumps(tree) -> str:
    """JSON text of a tree that may hold :class:`Raw` pieces (put in after encoding)."""
    raws: list[str] = []

    def swap(node):
        if isinstance(node, Raw):
            raws.append(node.text)
            return f"\x00RAW{len(raws) - 1}\x00"
        if isinstance(node, dict):
            return {k: swap(v) for k, v in node.items()}
        if isinstance(node, list):
            return [swap(v) for v in node]
        return node

    text = json.dumps(swap(tree), ensure_ascii=False)
    for i, raw in enumerate(raws):
        text = text.replace(json.dumps(f"\x00RAW{i}\x00", ensure_ascii=False), raw, 1)
    return text


def _paths(tree):
    out, stack = [], [(tree, ())]
    while stack:
        node, path = stack.pop()
        out.append(path)
        if isinstance(node, dict):
            stack += [(v, path + (k,)) for k, v in node.items()]
        elif isinstance(node, list):
            stack += [(v, path + (i,)) for i, v in enumerate(node)]
    return out


def _get(tree, path):
    for p in path:
        tree = tree[p]
    return tree


def _value(rng: random.Random):
    r = rng.random()
    if r < 0.45:
        return Raw(rng.choice(RAW))
    if r < 0.9:
        return copy.deepcopy(rng.choice(PY_VALUES))
    return _tree(rng, 2)


def _tree(rng: random.Random, depth: int):
    r = rng.random()
    if depth <= 0 or r < 0.4:
        return copy.deepcopy(rng.choice(PY_VALUES[:24]))
    if r < 0.7:
        return {rng.choice(KEYS): _tree(rng, depth - 1) for _ in range(rng.randint(0, 5))}
    return [_tree(rng, depth - 1) for _ in range(rng.randint(0, 4))]


def _examples():
    return [json.loads(p.read_text("utf-8")) for p in EXAMPLES]


def mutate_tree(rng: random.Random, data: dict, big: bool = True) -> str:
    """One to three structural mutations of a model file's tree (``big``: large arrays and
    long texts too, which end the mutations)."""
    for _ in range(rng.choice((1, 1, 1, 2, 3))):
        paths = _paths(data)
        path = rng.choice(paths[1:]) if len(paths) > 1 else ()
        how = rng.choice(["value", "value", "value", "delete", "unknown", "dup_element",
                          "collide", "self", "kind", "stack", "numstr", "planar_zero"]
                         + ["big_array", "long_text"] * big)
        if not path:
            return dumps(_value(rng))
        try:
            if _mutate_once(rng, data, paths, path, how):
                break
        except (TypeError, KeyError, IndexError, AttributeError):
            pass   # the mutation did not fit this (already mutated) tree: the tree stays as it is
    return dumps(data)


def _mutate_once(rng: random.Random, data, paths, path, how) -> bool:
    """One mutation in place; True when it was a large one that ends the series."""
    parent, key = _get(data, path[:-1]), path[-1]
    if how == "value":
        parent[key] = _value(rng)
    elif how == "delete":
        del parent[key]
    elif how == "unknown" and isinstance(parent, dict):
        parent[rng.choice(KEYS + ["extra"])] = _value(rng)
    elif how == "dup_element":
        lists = [k for k in ("masses", "anchors", "springs", "dampers", "excitations",
                             "gears")
                 if isinstance(data.get(k), list) and data[k]]
        if lists:
            k = rng.choice(lists)
            data[k].append(copy.deepcopy(rng.choice(data[k])))
    elif how == "collide":
        ids = [p for p in paths if p and p[-1] in ("id", "a", "b")]
        if len(ids) >= 2:
            p, q = rng.sample(ids, 2)
            _get(data, p[:-1])[p[-1]] = copy.deepcopy(_get(data, q))
    elif how == "self" and isinstance(data.get("springs"), list) and data["springs"]:
        s = rng.choice(data["springs"])
        if isinstance(s, dict):
            s["b"] = s.get("a")
    elif how == "kind":
        data["kind"] = rng.choice(["line", "planar", "torsion", "beam", 1])
    elif how == "stack" and isinstance(data.get("masses"), list):
        # every node at one point: zero-length planar springs
        for el in data["masses"] + list(data.get("anchors") or []):
            if isinstance(el, dict):
                el["x"] = el["y"] = 0.0
    elif how == "numstr" and isinstance(parent[key], (int, float)):
        parent[key] = str(parent[key])
    elif how == "planar_zero":
        data["kind"] = "planar"
    elif how == "big_array":
        n = rng.choice([1000, 1000, 50_000, 250_000])
        k = rng.choice(["masses", "springs", "orders", "fixed", "anchors"])
        item = rng.choice([0, {}, {"id": "m", "x": 0, "y": 0, "mass": 1}, "x"])
        if k in ("orders", "fixed") and isinstance(data.get("excitations"), list) \
                and data["excitations"] and isinstance(data["excitations"][0], dict):
            data["excitations"][0]["orders"] = [1.0] * n
        else:
            data[k] = [copy.deepcopy(item) for _ in range(n)]
        return True
    elif how == "long_text":
        parent[key] = rng.choice(["x", "\u00e9", "\n"]) * rng.choice([300, 20_000, 2_000_000])
        return True
    return False


def mutate_text(rng: random.Random, text: str) -> bytes:
    """One text-level mutation of a model file."""
    raw = text.encode("utf-8")
    how = rng.choice(["truncate", "flip", "insert", "bom", "utf16", "badutf8", "surrogate",
                      "nan", "dupkey", "comment", "quote", "crlf", "pad"])
    if how == "truncate":
        return raw[: rng.randrange(len(raw) + 1)]
    if how == "flip":
        b = bytearray(raw)
        for _ in range(rng.randint(1, 5)):
            b[rng.randrange(len(b))] = rng.randrange(256)
        return bytes(b)
    if how == "insert":
        i = rng.randrange(len(raw) + 1)
        return raw[:i] + bytes(rng.randrange(256) for _ in range(rng.randint(1, 6))) + raw[i:]
    if how == "bom":
        return b"\xef\xbb\xbf" + raw
    if how == "utf16":
        return text.encode(rng.choice(["utf-16", "utf-16-le", "utf-32"]))
    if how == "badutf8":
        i = raw.find(b'"', rng.randrange(len(raw)))
        bad = rng.choice([b"\xff", b"\xc0\x80", b"\xed\xa0\x80", b"\xe9", b"\xf4\x90\x80\x80"])
        return raw[: i + 1] + bad + raw[i + 1:] if i >= 0 else bad + raw
    if how == "surrogate":
        i = raw.find(b'"label": "')
        i = raw.find(b'"name": "') + 9 if i < 0 else i + 10
        return raw[:i] + rng.choice([b"\\ud800", b"\\udfff", b"\\ud800\\u0041"]) + raw[i:]
    if how == "nan":
        return raw.replace(b"0.0", rng.choice([b"NaN", b"Infinity", b"-Infinity", b"1e999"]), 1)
    if how == "dupkey":
        return raw.replace(b'"id": ', b'"id": "dup", "id": ', 1)
    if how == "comment":
        return b"// a model\n" + raw
    if how == "quote":
        return raw.replace(b'"', b"'")
    if how == "crlf":
        return raw.replace(b"\n", b"\r\n")
    return raw + b" " * rng.randint(1, 1000) + rng.choice([b"", b"x", b"{}", b"\x00"])


def random_bytes(rng: random.Random) -> bytes:
    head = rng.choice([b"", b"{", b'{"format": "springwright-model", "version": 1, '])
    return head + bytes(rng.randrange(256) for _ in range(rng.randint(0, 300)))


def generated(rng: random.Random, big: bool = True) -> str:
    tree = {"format": "springwright-model", "version": 1,
            "kind": rng.choice(["line", "planar", "torsion"])} if rng.random() < 0.8 else {}
    for _ in range(rng.randint(0, 6)):
        tree[rng.choice(KEYS)] = _tree(rng, rng.randint(1, 5))
    if rng.random() < 0.1 and big:
        return "[" * rng.choice([100, 1000, 100_000]) + "]" * rng.choice([0, 100_000])
    return dumps(tree)


def cases(seed: int, count: int, big: bool = True):
    """``count`` (name, bytes) pairs, repeatable for a seed (``big``: also files of up to a few
    MB: large arrays, long texts, deep nesting)."""
    rng = random.Random(seed)
    examples = _examples()
    for i in range(count):
        r = rng.random()
        if r < 0.5:
            yield f"tree-{i}", mutate_tree(rng, copy.deepcopy(rng.choice(examples)), big).encode(
                "utf-8", "surrogatepass")
        elif r < 0.75:
            yield f"text-{i}", mutate_text(rng, json.dumps(rng.choice(examples), indent=2))
        elif r < 0.82:
            yield f"gen-{i}", generated(rng, big).encode("utf-8", "surrogatepass")
        elif r < 0.92:
            yield f"extreme-{i}", extreme_valid(rng).encode("utf-8")
        else:
            yield f"bytes-{i}", random_bytes(rng)


def special_files(folder: Path) -> list[tuple[str, str]]:
    """Paths that are not plain small files, or have names that break naive messages."""
    good = (EXAMPLES[0]).read_bytes()
    out = []

    def add(name, path):
        out.append((name, str(path)))

    fifo = folder / "pipe.json"
    os.mkfifo(fifo)
    add("fifo", fifo)
    for dev in ("/dev/zero", "/dev/null", "/dev/urandom"):
        link = folder / f"{Path(dev).name}.json"
        if os.path.exists(dev):
            link.symlink_to(dev)
            add(f"symlink to {dev}", link)
    (folder / "dir.json").mkdir()
    add("directory", folder / "dir.json")
    add("missing", folder / "missing.json")
    add("through a file", folder / "pipe.json" / "x.json")
    add("too long a name", folder / ("n" * 300 + ".json"))
    add("empty path", "")
    (folder / "dangling.json").symlink_to(folder / "nowhere.json")
    add("dangling symlink", folder / "dangling.json")
    (folder / "loop.json").symlink_to(folder / "loop.json")
    add("symlink loop", folder / "loop.json")
    sparse = folder / "sparse.json"
    with open(sparse, "wb") as fh:
        fh.truncate(8 * 1024 ** 3)
    add("8 GB sparse file", sparse)
    big = folder / "big.json"
    with open(big, "wb") as fh:
        fh.write(good[:-2])
        fh.write(b" " * (65 * 1024 ** 2))
        fh.write(good[-2:])
    add("65 MB of spaces", big)
    for name in ("new\nline.json", "tab\tand\x1b[31mesc.json", "sep\u2028.json",
                 "bidi\u202e.json", "-dash.json", " space .json"):
        p = folder / name
        p.write_bytes(good.replace(b'"version": 1', b'"version": 1, "bad": 1'))
        add(f"name {name!r}", p)
    raw_name = os.fsdecode(os.fsencode(str(folder)) + b"/bad\xff\xfe name.json")
    Path(raw_name).write_bytes(b"{")
    add("name with bytes that are not UTF-8", raw_name)
    empty = folder / "empty.json"
    empty.write_bytes(b"")
    add("empty file", empty)
    locked = folder / "locked.json"
    locked.write_bytes(good)
    locked.chmod(0)
    add("no read permission", locked)
    return out


# values a model accepts that stress code downstream of the loader (formats, log axes, ratios)
EXTREME = [5e-324, 1e-320, 2.2250738585072014e-308, 1e-300, 1e-30, 1.0000001e-30, 1e-5, 0.5,
           1.0, 1e15, 1e30, 9.99e29, 1.7976931348623157e308]
ODD_TEXT = ["电机", "\U0001F600", "A\x1b[2J\x1b]0;x\x07", "a\nb", "x\ry", "\u202e", "tab\t",
            "é" * 300, " lead", "\u2028"]


def extreme_valid(rng: random.Random) -> str:
    """A model the loader accepts, with values at the edges of what it accepts: subnormal
    speeds, band edges and orders (their frequencies underflow to 0), ranges from 1e-30 to
    1e30, masses and stiffnesses at the limits, odd names and labels."""
    kind = rng.choice(["line", "planar", "torsion"])
    mass_key = "inertia" if kind == "torsion" else "mass"
    n = rng.randint(1, 6)

    def tiny_or_huge(lo=1e-30, hi=1e30):
        return rng.choice([lo, hi, 1.0, rng.choice([lo * 7, hi / 3, 2.5e-7, 4e6])])

    masses = [{"id": f"m{i}", "x": float(i) if kind != "torsion" else 0.0,
               "y": float(rng.choice([0, i, -i])), mass_key: tiny_or_huge(),
               "label": rng.choice(ODD_TEXT)} for i in range(n)]
    anchors = [{"id": "g", "x": -1.0, "y": -0.5}]
    springs = [{"id": f"s{i}", "a": "g" if i == 0 else f"m{i - 1}", "b": f"m{i}",
                "k": tiny_or_huge(), "label": rng.choice(ODD_TEXT)} for i in range(n)]
    for el in masses + springs:   # tolerances at the edges of their range now and then
        if rng.random() < 0.3:
            el["tolerance"] = {"percent": rng.choice([5e-324, 1e-30, 20.0, 99.99999]),
                               "distribution": rng.choice(["uniform", "normal", "triangular"])}
    ex = []
    for j in range(rng.randint(0, 3)):
        r = rng.random()
        if r < 0.4:
            ex.append({"id": f"e{j}", "type": "speed", "rpm": rng.choice(EXTREME[:-1]),
                       "orders": [rng.choice([1e-30, 1.0, 100.0, 5e-324])]})
        elif r < 0.6:
            lo = rng.choice(EXTREME[:6])
            ex.append({"id": f"e{j}", "type": "speed", "rpm_min": lo, "rpm_max": lo * 1e3 + 1e-300})
        else:
            lo = rng.choice([0.0] + EXTREME[:-2])
            ex.append({"id": f"e{j}", "type": "band", "f_min_hz": lo,
                       "f_max_hz": rng.choice([lo, lo * 2 + 5e-324, 1e30])})
    data = {"format": "springwright-model", "version": 1, "kind": kind,
            "name": rng.choice(ODD_TEXT), "masses": masses, "anchors": anchors, "springs": springs,
            "excitations": ex, "margin_percent": rng.choice([0, 15, 99.9])}
    if rng.random() < 0.5:
        data["damping"] = rng.choice([{"model": "modal", "ratio": rng.choice([5e-324, 0.05, 1e30])},
                                      {"model": "rayleigh", "alpha": 1e-30, "beta": 1e-6}])
    return json.dumps(data, ensure_ascii=False)


def report_outputs(folder: Path) -> list[tuple[str, str, str]]:
    """(name, -o argument, what must happen: "refused" or "written") for odd report outputs."""
    out = []
    fifo = folder / "pipe.png"
    os.mkfifo(fifo)
    out.append(("fifo", str(fifo), "refused"))
    out.append(("folder", str(folder), "refused"))
    out.append(("name over 255 bytes", str(folder / ("r" * 300 + ".png")), "refused"))
    (folder / "loop.png").symlink_to(folder / "loop.png")
    out.append(("symlink loop", str(folder / "loop.png"), "refused"))
    (folder / "loop.x").symlink_to(folder / "loop.x")
    out.append(("symlink loop, not .png", str(folder / "loop.x"), "refused"))
    (folder / "dangling.x").symlink_to(folder / "nowhere" / "r.png")
    out.append(("dangling symlink", str(folder / "dangling.x"), "refused"))
    if os.path.exists("/dev/null"):
        out.append(("device", "/dev/null", "refused"))
    out.append(("missing folder", str(folder / "no" / "r.png"), "refused"))
    out.append(("through a file", str(fifo / "r.png"), "refused"))
    out.append(("name not UTF-8", os.fsdecode(os.fsencode(str(folder)) + b"/r\xff.png"),
                "written"))
    out.append(("line break in name", str(folder / "r\nx.png"), "written"))
    out.append(("escape in name", str(folder / "r\x1b[31m.png"), "written"))
    out.append(("not .png", str(folder / "r.txt"), "written"))
    return out


def check_report_output(model_path: str, out: str, want: str, cap: float) -> str:
    """``springwright report FILE -o OUT`` in-process: one line and exit 2 for an output it
    cannot write, or exit 0 with the PNG under exactly the name given."""
    from app import cli

    stdout, stderr = io.StringIO(), io.StringIO()
    try:
        with time_cap(cap), contextlib.redirect_stdout(stdout), \
                contextlib.redirect_stderr(stderr):
            try:
                rc = cli.main(["report", model_path, "-o", out])
            except SystemExit as exc:
                rc = exc.code
    except Timeout:
        return "report: hang"
    except BaseException as exc:   # noqa: BLE001  (any escape is a finding)
        return f"report: raised {type(exc).__name__}"
    err = stderr.getvalue()
    if want == "refused":
        if rc != 2 or stdout.getvalue() or err.count("\n") != 1 or \
                not _one_printable_line(err[:-1]):
            return f"report -o: expected one-line refusal, got exit {rc}: {err[:200]!r}"
        return "refused"
    if rc != 0:
        return f"report -o: exit {rc}: {err[:200]!r}"
    if not all(_one_printable_line(line) for line in (stdout.getvalue() + err).splitlines()):
        return "report -o: output not printable lines"
    try:
        with open(out, "rb") as fh:   # the name's own bytes (os.fsencode)
            if fh.read(8) != b"\x89PNG\r\n\x1a\n":
                return "report -o: not a PNG"
    except OSError:
        return "report -o: file not written under its name"
    os.unlink(out)
    return "written"


def check_save_targets(folder: Path, model) -> list[str]:
    """save_model to a FIFO, a folder and a link to a device: a ModelError each, target kept."""
    import stat

    import solver

    fifo = folder / "save-pipe.json"
    os.mkfifo(fifo)
    (folder / "save-dir.json").mkdir()
    targets = [fifo, folder / "save-dir.json"]
    if os.path.exists("/dev/null"):
        (folder / "save-null.json").symlink_to("/dev/null")
        targets.append(folder / "save-null.json")
    problems = []
    for target in targets:
        before = os.stat(target).st_mode
        try:
            solver.save_model(model, target)
            problems.append(f"save_model: wrote over {target.name}")
        except solver.ModelError as exc:
            if not _one_printable_line(str(exc)):
                problems.append("save_model: refusal not one line")
        except OSError as exc:
            problems.append(f"save_model: {type(exc).__name__} for {target.name}")
        if stat.S_IFMT(os.stat(target).st_mode) != stat.S_IFMT(before):
            problems.append(f"save_model: replaced {target.name}")
    return problems


def check_api_calls(model, other) -> str | None:
    """Public functions with a result of another model or a mode number out of range must
    raise ModelError (found by review: IndexError, scipy and numpy ValueErrors, and silently
    wrong numbers)."""
    import solver

    if len(model.masses) > 60 or not model.masses:
        return None
    try:
        res, res_other = solver.modes(model), solver.modes(other)
    except solver.ModelError:
        return None
    n = res.n_modes
    calls = [("margin_check", lambda: solver.margin_check(model, res_other)),
             ("free_response", lambda: solver.free_response(model, [0.0, 1.0],
                                                            result=res_other)),
             ("rank_elements 0", lambda: solver.rank_elements(model, 0)),
             ("rank_elements n+1", lambda: solver.rank_elements(model, n + 1)),
             ("shape -1", lambda: res.shape(-1))]
    if model.springs:
        sid = model.springs[0].id
        calls += [("reachable_range 0", lambda: solver.reachable_range(model, sid, 0)),
                  ("reachable_range n+1", lambda: solver.reachable_range(model, sid, n + 1)),
                  ("retune -1", lambda: solver.retune(model, sid, -1, 1.0))]
    if other == model:
        calls = calls[2:]
    for name, call in calls:
        try:
            call()
        except solver.ModelError as exc:
            if not _one_printable_line(str(exc)):
                return f"api call {name}: message not one line"
            continue
        except Exception as exc:   # noqa: BLE001  (what the check looks for)
            return f"api call {name}: {type(exc).__name__}"
        return f"api call {name}: no error"
    return None


# ------------------------------------------------------------------ checks
class Timeout(BaseException):
    """Raised by the per-file timer (a BaseException, so no `except Exception` swallows it)."""


def _alarm(signum, frame):
    raise Timeout()


@contextlib.contextmanager
def time_cap(seconds: float):
    old = signal.signal(signal.SIGALRM, _alarm)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, old)


def _one_printable_line(text: str) -> bool:
    return bool(text) and text.isprintable() and not any(c in text for c in _SPLITS)


# Python's notation where a message should use the file's (JSON): got None, True, 'x', {'a': 1}
_PYTHON_NOTATION = re.compile(r"got (None|True|False)\b|\(allowed: '|\{'[^']*': |^'[^']*' is "
                              r"|key '")
_ESCAPE = re.compile(r"\\u([0-9a-fA-F]{4})")


def _message_problem(msg: str, path: str) -> str | None:
    if not _one_printable_line(msg):
        return "message not one printable line"
    if not _names_file(msg, path):
        return "message does not name the file"
    if len(msg) > 1200 + len(path) + 20:
        return "message over 1,200 characters"
    rest = msg[len(path):] if msg.startswith(path) else msg
    if _PYTHON_NOTATION.search(rest.split(": ", 1)[-1]):
        return "message in Python notation"
    # printable text is shown as it is; only control characters and lone surrogates escaped
    if any(chr(int(h, 16)).isprintable() and not 0xD800 <= int(h, 16) <= 0xDFFF
           for h in _ESCAPE.findall(rest)):
        return "message escapes printable text"
    return None


def _names_file(message: str, path: str) -> bool:
    """Every printable run (3+ characters) of the path's last part shows in the message."""
    base = os.path.basename(path) or path
    runs, cur = [], ""
    for ch in base:
        if ch.isprintable() and ch not in _SPLITS:
            cur += ch
        else:
            runs.append(cur)
            cur = ""
    runs.append(cur)
    return all(r in message for r in runs if len(r) >= 3)


def check_api(path: str, cap: float, scratch: Path, loaded: list | None = None) -> str:
    """Outcome of loading ``path``: 'loaded', 'refused', or a failure name (``loaded`` gets
    the model when it loads)."""
    import solver

    try:
        with time_cap(cap):
            try:
                model = solver.load_model(path)
            except solver.ModelFileError as exc:
                problem = _message_problem(str(exc), path)
                return f"api: {problem}" if problem else "refused"
            try:
                out = scratch / "roundtrip.json"
                solver.save_model(model, out)
                text = out.read_text("utf-8")
                back = solver.load_model(out)
            except Exception as exc:   # noqa: BLE001  (any exception is a finding here)
                return f"round trip: {type(exc).__name__}"
            if back != model:
                return "round trip: model differs"
            if solver.dumps_model(back) != text:
                return "round trip: text differs"
            if loaded is not None:
                loaded.append(model)
            return "loaded"
    except Timeout:
        return "api: hang"
    except MemoryError:
        return "api: MemoryError"
    except RecursionError:
        return "api: RecursionError"
    except Exception as exc:   # noqa: BLE001  (any exception is a finding here)
        return f"api: {type(exc).__name__}"


def check_cli(path: str, cap: float, argv_extra=(), command: str = "solve") -> str:
    """Outcome of ``springwright solve FILE`` (or another command) in-process."""
    from app import cli

    out, err = io.StringIO(), io.StringIO()
    try:
        with time_cap(cap), contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            try:
                rc = cli.main([command, path, *argv_extra])
            except SystemExit as exc:
                rc = exc.code
    except Timeout:
        return "cli: hang"
    except MemoryError:
        return "cli: MemoryError"
    except BaseException as exc:   # noqa: BLE001  (even KeyboardInterrupt-like escapes count)
        return f"cli: raised {type(exc).__name__}"
    return _cli_outcome(rc, out.getvalue(), err.getvalue(), path)


def _cli_outcome(rc, stdout: str, stderr: str, path: str) -> str:
    if "Traceback" in stderr:
        return "cli: traceback"
    if rc == 0:
        if not stdout:
            return "cli: exit 0 with no output"
        if stderr:
            return "cli: exit 0 with text on stderr"
        if not all(line.isprintable() for line in stdout.splitlines()):
            return "cli: table line not printable (control characters reach the terminal)"
        return "loaded"
    if rc != 2:
        return f"cli: exit {rc}"
    if stdout:
        return "cli: output on stdout for a refused file"
    if not stderr.endswith("\n") or not _one_printable_line(stderr[:-1]):
        return "cli: refusal not one printable line"
    if not _names_file(stderr, path):
        return "cli: refusal does not name the file"
    return "refused"


def check_subprocess(path: str, cap: float) -> str:
    env = {**os.environ, "PYTHONPATH": str(ROOT), "QT_QPA_PLATFORM": "offscreen"}
    try:
        p = subprocess.run([sys.executable, "-m", "app.cli", "solve", path], capture_output=True,
                           timeout=cap + 10, env=env, check=False)
    except subprocess.TimeoutExpired:
        return "subprocess: hang"
    stdout = p.stdout.decode("utf-8", "replace")
    stderr = p.stderr.decode("utf-8", "replace")
    return _cli_outcome(p.returncode, stdout, stderr, path).replace("cli:", "subprocess:")


def at_limit_file(path: Path) -> None:
    """A compact file just under the size limit, every number in its shortest form and every
    optional key left out (found by review: such a file loaded and then could not be saved)."""
    import solver.io

    label = "L" * 100
    head = b'{"format":"springwright-model","version":1,"kind":"line","masses":['
    one = len(f'{{"id":"m000000","label":"{label}","x":1e15,"y":1e15,"mass":1e15}},')
    n = min(solver.model.MAX_ELEMENTS, (solver.io.MAX_FILE_BYTES - len(head) - 2) // one)
    with open(path, "wb") as fh:
        fh.write(head)
        fh.write(",".join(f'{{"id":"m{i:06d}","label":"{label}","x":1e15,"y":1e15,"mass":1e15}}'
                          for i in range(n)).encode())
        fh.write(b"]}")


def run(seed: int, count: int, cap: float, n_subprocess: int, specials: bool = True,
        verbose: bool = False, log=print, report_every: int = 40) -> dict:
    """Run the fuzzer; returns counters of outcomes per entry point and the failing cases.

    Every file that loads is also solved (``solve`` or ``solve --json``) and checked against
    the public functions' argument rules; the ``extreme`` ones and every ``report_every``-th
    other one also get a report."""
    import solver

    results = {"api": Counter(), "cli": Counter(), "subprocess": Counter(), "report": Counter(),
               "calls": Counter()}
    other = solver.load_model(EXAMPLES[0])
    failures: list[tuple[str, str, bytes | str]] = []
    started = time.perf_counter()
    with tempfile.TemporaryDirectory(prefix="sw-fuzz-") as tmp:
        tmp = Path(tmp)
        scratch = tmp / "scratch"
        scratch.mkdir()
        items: list[tuple[str, str, bytes | None]] = []
        for name, data in cases(seed, count):
            items.append((name, str(tmp / f"{name}.json"), data))
        if specials:
            (tmp / "special").mkdir()
            items += [(name, path, None) for name, path in special_files(tmp / "special")]
        sub_every = max(1, len(items) // max(n_subprocess, 1)) if n_subprocess else 0
        for i, (name, path, data) in enumerate(items):
            if data is not None:
                Path(path).write_bytes(data)
            t0 = time.perf_counter()
            wheres = ["api", "cli"]
            if sub_every and (i % sub_every == 0 or data is None):
                wheres.append("subprocess")
            loaded: list = []
            for where in wheres:
                outcome = (check_api(path, cap, scratch, loaded) if where == "api" else
                           check_cli(path, cap, ("--json",) if i % 2 else ()) if where == "cli"
                           else check_subprocess(path, cap))
                results[where][outcome] += 1
                if outcome not in ("loaded", "refused"):
                    failures.append((name, outcome, data if data is not None else path))
                    if verbose:
                        log(f"  {name}: {outcome}")
            if loaded and loaded[0].loads is not None:
                # `springwright loads`: results, or a one-line refusal (no loads, a torsion
                # model, a model the base cannot carry)
                outcome = check_cli(path, cap, ("--json",) if i % 2 else (), "loads")
                results["cli"][outcome] += 1
                if outcome not in ("loaded", "refused"):
                    failures.append((name, "loads " + outcome, data if data is not None else path))
            if loaded:
                with time_cap(cap):
                    problem = check_api_calls(loaded[0], other)
                results["calls"][problem or "ModelError"] += 1
                if problem:
                    failures.append((name, problem, data if data is not None else path))
                if name.startswith("extreme") or i % report_every == 0:
                    outcome = check_report_output(path, str(scratch / "r.png"), "written",
                                                  3 * cap)
                    results["report"][outcome] += 1
                    if outcome != "written":
                        failures.append((name, outcome, data if data is not None else path))
            if data is not None:
                Path(path).unlink()
            if verbose and time.perf_counter() - t0 > cap / 2:
                log(f"  slow: {name} {time.perf_counter() - t0:.1f} s")
        if specials:
            outputs = tmp / "outputs"
            outputs.mkdir()
            for name, out, want in report_outputs(outputs):
                outcome = check_report_output(str(EXAMPLES[0]), out, want, 3 * cap)
                results["report"][outcome] += 1
                if outcome != want:
                    failures.append((f"report -o {name}", outcome, out))
            (tmp / "save").mkdir()
            for problem in check_save_targets(tmp / "save", other):
                failures.append(("save_model", problem, ""))
            results["api"]["save targets checked"] += 1
            big = tmp / "at-limit.json"
            at_limit_file(big)
            outcome = check_api(str(big), max(cap, 120.0), scratch)
            results["api"][outcome] += 1
            if outcome != "loaded":
                failures.append(("file at the size limit", outcome, str(big)))
            big.unlink()
    results["seconds"] = time.perf_counter() - started
    results["files"] = len(items)
    results["failures"] = failures
    return results


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--count", type=int, default=2000, help="generated files (default 2000)")
    ap.add_argument("--seed", type=int, default=None, help="random seed (default: fresh)")
    ap.add_argument("--cap", type=float, default=10.0, help="seconds allowed per file")
    ap.add_argument("--subprocess", type=int, default=20,
                    help="files also run through a real subprocess (plus every special file)")
    ap.add_argument("--memory-gb", type=float, default=3.0, help="address-space limit")
    ap.add_argument("--save-failures", type=Path, help="folder to write failing inputs to")
    ap.add_argument("-v", "--verbose", action="store_true")
    args = ap.parse_args(argv)
    seed = args.seed if args.seed is not None else random.SystemRandom().randrange(2 ** 32)
    if args.memory_gb:
        import resource

        limit = int(args.memory_gb * 1024 ** 3)
        resource.setrlimit(resource.RLIMIT_AS, (limit, limit))
    os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
    import app.cli  # noqa: F401
    import solver  # noqa: F401  (imports before the clock starts)

    res = run(seed, args.count, args.cap, args.subprocess, verbose=args.verbose)
    print(f"file fuzzer: seed {seed}, {res['files']} files, {res['seconds']:.1f} s")
    for where in ("api", "cli", "subprocess", "report", "calls"):
        print(f"  {where:>10}: " + ", ".join(f"{k} {v}" for k, v in res[where].most_common()))
    bad = res["failures"]
    if args.save_failures and bad:
        args.save_failures.mkdir(parents=True, exist_ok=True)
        for name, outcome, data in bad:
            if isinstance(data, bytes):
                (args.save_failures / f"{name}.json").write_bytes(data)
    for name, outcome, data in bad[:30]:
        shown = data[:120] if isinstance(data, bytes) else data
        print(f"FAIL {name}: {outcome}: {shown!r}")
    print(f"{len(bad)} failures" if bad else "no failures")
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
