"""Bad input of every kind: each file is loaded, or refused with one line naming the file, the place
and the problem (exit 2 on the command line), never a hang, a traceback or another exception.

Sources: DESIGN.md sections 4 and 5 (the file format and the command line's contract); RFC 8259
(JSON: no NaN or Infinity, UTF-8, an optional byte-order mark may be ignored, duplicate keys are
unpredictable); JSON Schema 2020-12 with the ``jsonschema`` package as the reference validator;
POSIX (a FIFO blocks on open, /dev/zero never ends); common practice (atomic saves keep the
file's permissions).
"""

from __future__ import annotations

import io
import json
import math
import os
import stat
import subprocess
import sys
from contextlib import redirect_stderr, redirect_stdout
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import solver
import solver.io
import solver.schema_check
from solver import (
    Anchor,
    Damper,
    Damping,
    Excitation,
    Initial,
    Mass,
    Model,
    ModelError,
    ModelFileError,
    Spring,
)
from solver.model import HUGE, TINY

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT / "tests"))
import fuzz_files  # the fuzzer, shared with `make fuzz`

CORPUS = ROOT / "tests" / "corpus"
EXPECTED = json.loads((CORPUS / "expected.json").read_text("utf-8"))
GOOD = ROOT / "assets" / "examples" / "instrument_shelf.json"
CAP = 10.0   # seconds a single file may take, far above the ~0.1 s any of these needs


class _Os:
    """The os module as solver.io sees it, with some functions replaced (the real module stays
    untouched for everything else in the test run)."""

    def __init__(self, **replaced):
        self.__dict__.update(replaced)

    def __getattr__(self, name):
        return getattr(os, name)


def _one_line(text: str) -> bool:
    return bool(text) and text.isprintable()


def _refusal(path) -> str:
    with fuzz_files.time_cap(CAP), pytest.raises(ModelFileError) as info:
        solver.load_model(path)
    msg = str(info.value)
    assert _one_line(msg), repr(msg)
    return msg


def _cli(*argv):
    """``springwright ARGV`` in-process: (exit code, stdout, stderr)."""
    from app import cli

    out, err = io.StringIO(), io.StringIO()
    with fuzz_files.time_cap(CAP), redirect_stdout(out), redirect_stderr(err):
        try:
            rc = cli.main([str(a) for a in argv])
        except SystemExit as exc:
            rc = exc.code
    return rc, out.getvalue(), err.getvalue()


def _assert_cli_works(path, tmp_path):
    """``solve``, ``solve --json`` and ``report`` of an accepted file: exit 0, nothing on
    stderr, the table in printable lines (no terminal escapes), the JSON valid."""
    for extra in ((), ("--json",)):
        rc, out, err = _cli("solve", path, *extra)
        assert rc == 0 and err == "", (extra, rc, err)
        assert all(line.isprintable() for line in out.splitlines()), out
        if extra:
            json.loads(out)
    png = tmp_path / "report.png"
    rc, out, err = _cli("report", path, "-o", png)
    assert rc == 0 and err == "" and png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n", (rc, err)


def _assert_cli_refuses(path, *extra):
    rc, out, err = _cli("solve", path, *extra)
    assert rc == 2, (rc, err)
    assert out == ""
    assert err.endswith("\n") and _one_line(err[:-1]), repr(err)
    assert "Traceback" not in err
    return err


# ------------------------------------------------------------------ the fixed corpus
@pytest.mark.parametrize("name", sorted(EXPECTED), ids=lambda n: n[:-5])
def test_corpus_file(name, tmp_path):
    """DESIGN.md section 4 and RFC 8259: each nasty file of tests/corpus is loaded (and then saves
    and loads back as the same model) or refused naming the file, the JSON path (or line and
    column) and the problem; the command line gives the same one line with exit code 2."""
    path = CORPUS / name
    want = EXPECTED[name]
    if want in ("load", "solve"):
        with fuzz_files.time_cap(CAP):
            model = solver.load_model(path)
            out = tmp_path / "again.json"
            solver.save_model(model, out)
            assert solver.load_model(out) == model
            assert solver.dumps_model(solver.load_model(out)) == out.read_text("utf-8")
        if want == "solve":
            _assert_cli_works(path, tmp_path)
        return
    msg = _refusal(path)
    assert msg.startswith(f"{path}: "), msg
    if want["place"]:
        assert msg[len(f"{path}: "):].startswith(want["place"]), (want["place"], msg)
    for word in want["words"]:
        assert word in msg, (word, msg)
    for word in want.get("absent", ()):
        assert word not in msg, (word, msg)
    assert len(msg) < 600, msg
    err = _assert_cli_refuses(path, "--json")
    assert err == f"springwright: {msg}\n"


# ------------------------------------------------------------------ generated large files
def _base():
    return json.loads(GOOD.read_text("utf-8"))


def _write(tmp_path, name, data) -> Path:
    path = tmp_path / name
    path.write_text(data if isinstance(data, str) else json.dumps(data), "utf-8")
    return path


def test_element_count_is_capped_before_validation(tmp_path):
    """DESIGN.md section 4 (a limit stated in solver.model.MAX_ELEMENTS): a file with more
    elements than a model may have is refused quickly, with the count and the limit."""
    data = _base()
    data["masses"] = [{}] * (solver.model.MAX_ELEMENTS + 1)
    msg = _refusal(_write(tmp_path, "many.json", data))
    assert "top level" in msg and f"{solver.model.MAX_ELEMENTS:,}" in msg


def test_many_containers_refused_before_parsing(tmp_path):
    """common practice (bound memory before parsing): a file of a million empty lists would take
    ~60 MB as Python objects; it is refused from its text, naming the count."""
    path = tmp_path / "lists.json"
    path.write_bytes(b'{"format": "springwright-model", "name": [' + b"[]," * 1_000_000 + b"[]]}")
    msg = _refusal(path)
    assert "JSON objects and lists" in msg


def test_braces_inside_strings_do_not_count(tmp_path):
    """math (counting): braces inside labels are text, not containers; a file whose labels hold
    more braces than the container limit still loads when its elements are within the limits."""
    data = _base()
    data["masses"][0]["label"] = "{" * 1000
    n = solver.io.MAX_CONTAINERS // 1000 + 1
    data["anchors"] += [{"id": f"g{i}", "label": "[" * 1000, "x": float(i), "y": -1.0}
                        for i in range(n)]
    with fuzz_files.time_cap(CAP):
        model = solver.load_model(_write(tmp_path, "braces.json", data))
    assert len(model.anchors) == len(_base()["anchors"]) + n


def test_size_limit_checked_before_reading(tmp_path, monkeypatch):
    """DESIGN.md section 4 (limit solver.io.MAX_FILE_BYTES, 32 MiB): a larger file is refused
    from its size without being read, and an 8 GiB sparse file costs nothing."""
    reads = []
    monkeypatch.setattr(solver.io, "os", _Os(read=lambda *a: reads.append(a) or b""))
    big = tmp_path / "big.json"
    with open(big, "wb") as fh:
        fh.truncate(solver.io.MAX_FILE_BYTES + 1)
    # one byte over: the exact counts, not "32.0 MiB ... limited to 32.0 MiB"
    assert "33,554,433 bytes; model files are limited to 33,554,432 bytes" in _refusal(big)
    sparse = tmp_path / "sparse.json"
    with open(sparse, "wb") as fh:
        fh.truncate(8 * 1024 ** 3)
    assert "8.0 GiB" in _refusal(sparse)
    assert reads == []


def test_file_that_grows_past_the_limit_while_read(tmp_path, monkeypatch):
    """POSIX (/proc files report size 0): reading stops past the limit whatever stat said."""
    monkeypatch.setattr(solver.io, "MAX_FILE_BYTES", 1000)
    path = tmp_path / "proc-like.json"
    path.write_bytes(b" " * 5000)
    def zero_size(st):
        return os.stat_result((st.st_mode, st.st_ino, st.st_dev, st.st_nlink, st.st_uid,
                               st.st_gid, 0, int(st.st_atime), int(st.st_mtime),
                               int(st.st_ctime)))

    monkeypatch.setattr(solver.io, "os", _Os(stat=lambda p: zero_size(os.stat(p)),
                                             fstat=lambda fd: zero_size(os.fstat(fd))))
    with pytest.raises(ModelFileError, match="more than"):
        solver.io.read_file_bytes(path, limit=1000)


# ------------------------------------------------------------------ special files
@pytest.fixture(scope="module")
def specials(tmp_path_factory):
    return dict(fuzz_files.special_files(tmp_path_factory.mktemp("special")))


@pytest.mark.parametrize("which, words", [
    ("fifo", ["named pipe", "not a model file"]),
    ("symlink to /dev/zero", ["device"]),
    ("symlink to /dev/urandom", ["device"]),
    ("directory", ["folder"]),
    ("missing", ["cannot read", "No such file"]),
    ("through a file", ["cannot read"]),
    ("too long a name", ["cannot read"]),
    ("empty path", ["no file name"]),
    ("dangling symlink", ["cannot read"]),
    ("symlink loop", ["cannot read"]),
    ("8 GB sparse file", ["GiB", "limited"]),
    ("65 MB of spaces", ["65.0 MiB", "limited"]),
    ("name 'new\\nline.json'", ["new\\nline.json", 'unknown key "bad"']),
    ("name 'tab\\tand\\x1b[31mesc.json'", ["tab\\tand\\x1b[31mesc.json"]),
    ("name 'sep\\u2028.json'", ["sep\\u2028.json"]),
    ("name 'bidi\\u202e.json'", ["bidi\\u202e.json"]),
    ("name with bytes that are not UTF-8", ["bad\\udcff\\udcfe name.json", "line 1"]),
    ("empty file", ["empty"]),
])
def test_special_files_refused_in_one_line(specials, which, words):
    """POSIX: a FIFO blocks on open and /dev/zero never ends, so both are refused from stat
    before opening; every refusal is one printable line (escaped line breaks, control and
    format characters, undecodable bytes in names) with exit code 2 on the command line."""
    if which not in specials:
        pytest.skip(f"{which} not available here")
    path = specials[which]
    msg = _refusal(path)
    for w in words:
        assert w in msg, (w, msg)
    _assert_cli_refuses(path)


def test_file_that_vanishes_or_is_locked(tmp_path, monkeypatch):
    """POSIX: the file can go, or be locked, between stat and open; still one line."""
    path = tmp_path / "gone.json"
    path.write_bytes(GOOD.read_bytes())
    for err in (FileNotFoundError(2, "No such file or directory"),
                PermissionError(13, "Permission denied")):
        def fail(*a, err=err):
            raise err
        with monkeypatch.context() as m:
            m.setattr(solver.io, "os", _Os(open=fail))
            msg = _refusal(path)
        assert err.strerror in msg and str(path) in msg


def test_fifo_swapped_in_after_stat(tmp_path, monkeypatch):
    """POSIX: opening non-blocking and checking the open file again catches a path replaced by a
    FIFO after the first check (otherwise the open would block for ever)."""
    path = tmp_path / "swap.json"
    os.mkfifo(path)
    real = os.stat(GOOD)
    monkeypatch.setattr(solver.io, "os", _Os(stat=lambda p: real))
    assert "named pipe" in _refusal(path)


def test_subprocess_special_files(specials):
    """DESIGN.md section 5 through a real process: exit 2, nothing on stdout, one line on
    stderr, no traceback, for a FIFO, /dev/zero and a name with a line break."""
    env = {**os.environ, "PYTHONPATH": str(ROOT), "QT_QPA_PLATFORM": "offscreen"}
    for which in ("fifo", "symlink to /dev/zero", "name 'new\\nline.json'"):
        p = subprocess.run([sys.executable, "-m", "app.cli", "solve", specials[which]],
                           capture_output=True, timeout=60, env=env, check=False)
        err = p.stderr.decode("utf-8", "replace")
        assert p.returncode == 2 and p.stdout == b"", (which, p.returncode, err)
        assert err.count("\n") == 1 and err.endswith("\n") and "Traceback" not in err, err


# ------------------------------------------------------------------ report output paths
@pytest.mark.parametrize("case", ["folder", "missing folder", "fifo", "no permission"])
def test_report_bad_output_path(tmp_path, monkeypatch, case):
    """DESIGN.md section 5: `springwright report FILE -o OUT` with an output it cannot write gives
    one line naming OUT, exit 2, before any rendering."""
    out = {"folder": tmp_path, "missing folder": tmp_path / "no" / "r.png",
           "fifo": tmp_path / "pipe.png", "no permission": tmp_path / "r.png"}[case]
    if case == "fifo":
        os.mkfifo(out)
    if case == "no permission":   # root may write anywhere: ask os.access to say no
        monkeypatch.setattr(os, "access", lambda *a, **k: False)
    rc, stdout, err = _cli("report", GOOD, "-o", out)
    assert rc == 2 and stdout == "", (rc, err)
    assert err.count("\n") == 1 and str(out) in err and "cannot write the report" in err, err


def test_cli_argument_errors_are_one_line():
    """DESIGN.md section 5: a missing argument is one line on stderr, exit 2."""
    for argv in (["solve"], ["report", str(GOOD)], ["solve", str(GOOD), "--colour"]):
        rc, out, err = _cli(*argv)
        assert rc == 2 and out == "" and err.count("\n") == 1, (argv, err)


# ------------------------------------------------------------------ the public API
@pytest.mark.parametrize("make", [
    lambda: Mass("m", 0, 0, 10 ** 400),
    lambda: Mass("m", "1", 0, 1),
    lambda: Mass("m", 0, 0, 1, fixed=None),
    lambda: Mass("m", 0, 0, 1, fixed="x"),
    lambda: Mass("m", 0, 0, 1, fixed=(1,)),
    lambda: Mass("m", 0, 0, 1, label=5),
    lambda: Mass("m", 0, 0, 1, label="\ud800"),
    lambda: Mass("m\n", 0, 0, 1),
    lambda: Mass("m", math.nan, 0, 1),
    lambda: Mass("m", 2 * HUGE, 0, 1),
    lambda: Mass(["m"], 0, 0, 1),
    lambda: Mass("m", 0, 0, complex(1, 1)),
    lambda: Anchor("A", None, 0),
    lambda: Spring("s", "a", "b", True),
    lambda: Spring("s", "a", 5, 1.0),
    lambda: Damper("d", "a", "b", float("inf")),
    lambda: Damping("modal", ratio=0.1, mode_ratios=[(1,)]),
    lambda: Damping("modal", ratio=0.1, mode_ratios=[(1, 0.1), (1, 0.2)]),
    lambda: Damping("modal", ratio=0.1, mode_ratios=[(float("inf"), 0.1)]),
    lambda: Damping("modal", ratio=0.1, mode_ratios=5),
    lambda: Damping(["modal"]),
    lambda: Excitation("e", "speed", rpm=100, orders=5),
    lambda: Excitation("e", "speed", rpm=100, orders=[1.0] * 101),
    lambda: Excitation("e", {"speed"}, rpm=100),
    lambda: Initial("m", displacement=[("x",)]),
    lambda: Initial("m", displacement=[("x", 1), ("x", 2)]),
    lambda: Initial("m", velocity={"x": 10 ** 400}),
    lambda: Model(masses=5),
    lambda: Model(masses=(1, 2)),
    lambda: Model(masses=[Anchor("A", 0, 0)]),
    lambda: Model(damping="none"),
    lambda: Model(name=5),
    lambda: Model(kind=["line"]),
    lambda: Model(margin_percent=10 ** 400),
    lambda: solver.model_from_dict({"format": "springwright-model", "version": 1,
                                    "kind": "line", "masses": ({"id": "m"},)}),
    lambda: solver.model_from_dict({"format": "springwright-model", "version": 1,
                                    "kind": "line", "masses": [{"id": "m", "x": math.nan,
                                                                "y": 0, "mass": 1}]}),
    lambda: solver.model_from_dict({"format": "springwright-model", "version": 1, "kind": "line",
                                    "damping": {"model": "modal", "mode_ratios": {1: 0.1}}}),
    lambda: solver.model_from_dict([1, 2]),
    lambda: solver.load_model(None),
    lambda: solver.load_model("a\x00b.json"),
    lambda: solver.save_model(Model(), 5),
    lambda: solver.save_model(Model(), ""),
])
def test_constructors_raise_only_model_error(make):
    """DESIGN.md section 3: a bad value given to a constructor or the file functions is a
    ModelError (ModelFileError for files) with a one-line message, never TypeError, ValueError,
    OverflowError or UnicodeError."""
    with pytest.raises(ModelError) as info:
        make()
    assert type(info.value) in (ModelError, ModelFileError)
    assert _one_line(str(info.value)), str(info.value)


def test_python_true_is_not_a_number():
    """Python counts True as 1; a model must not (JSON Schema 2020-12: a boolean is not a
    number)."""
    for make in (lambda: Mass("m", 0, 0, True), lambda: Model(margin_percent=False),
                 lambda: Excitation("e", "speed", rpm=True)):
        with pytest.raises(ModelError, match="must be a number"):
            make()


def test_element_count_capped_in_the_model(monkeypatch):
    """The cap holds for models built in code too, so every model can be saved and loaded."""
    monkeypatch.setattr(solver.model, "MAX_ELEMENTS", 50)
    masses = [Mass(f"m{i}", float(i), 0.0, 1.0) for i in range(30)]
    anchors = [Anchor(f"a{i}", float(i), 1.0) for i in range(21)]
    Model(masses=masses, anchors=anchors[:20])
    with pytest.raises(ModelError, match="51 elements.*at most 50"):
        Model(masses=masses, anchors=anchors)


def test_save_keeps_permissions_and_follows_links(tmp_path):
    """common practice for atomic saves: the replaced file keeps its permissions, and a symbolic
    link keeps pointing at the (replaced) file it named."""
    model = solver.load_model(GOOD)
    target = tmp_path / "real.json"
    solver.save_model(model, target)
    os.chmod(target, 0o640)
    link = tmp_path / "link.json"
    link.symlink_to(target)
    solver.save_model(model.with_changes(name="second"), link)
    assert link.is_symlink()
    assert stat.S_IMODE(os.stat(target).st_mode) == 0o640
    assert solver.load_model(target).name == "second"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["link.json", "real.json"]


def test_oversized_model_saved_compact_or_refused(tmp_path, monkeypatch):
    """Round trip (DESIGN.md section 4): what save_model writes, load_model reads: a model over
    the size limit when indented is written compact (no spaces, no key at its default), and one
    over it even then is refused with a ModelError instead of writing a file that cannot be
    loaded."""
    model = solver.load_model(GOOD)
    indented = solver.dumps_model(model)
    compact = solver.io._json_text(solver.model_to_dict(model, minimal=True), None)
    assert json.loads(compact) == solver.model_to_dict(model, minimal=True)
    monkeypatch.setattr(solver.io, "MAX_FILE_BYTES", len(compact) + 10)
    assert len(indented) > solver.io.MAX_FILE_BYTES
    path = tmp_path / "m.json"
    solver.save_model(model, path)
    assert path.read_text("utf-8") == compact
    assert solver.load_model(path) == model
    monkeypatch.setattr(solver.io, "MAX_FILE_BYTES", len(compact) - 10)
    with pytest.raises(ModelError, match="compactly"):
        solver.save_model(model, tmp_path / "n.json")
    assert not (tmp_path / "n.json").exists()


def test_file_at_the_limit_saves_and_loads_back(tmp_path, monkeypatch):
    """Round trip at the size limit (found by review: a 30.1 MiB file of 200,000 masses with
    values written 1e15 loaded, and saving it gave 38.1 MiB, because 1e15 was written
    1000000000000000.0). The same construction with the limit scaled down: a compact file just
    under the limit, numbers in short forms, every optional key left out, loads; save_model
    writes it within the limit and it loads back equal (math: the shortest decimal form of a
    double, RFC 8259 number grammar)."""
    # every number already in its shortest form and nothing optional: the tightest case
    parts = [f'{{"id":"m{i:05d}","label":"{"L" * 100}","x":1e15,"y":-1e-7,"mass":2}}'
             for i in range(800)]
    raw = ('{"format":"springwright-model","version":1,"kind":"line","masses":['
           + ",".join(parts) + "]}").encode()
    monkeypatch.setattr(solver.io, "MAX_FILE_BYTES", len(raw))
    src = tmp_path / "at-limit.json"
    src.write_bytes(raw)
    model = solver.load_model(src)
    out = tmp_path / "saved.json"
    solver.save_model(model, out)
    assert out.read_bytes() == raw   # the same text: the file was already in shortest form
    assert solver.load_model(out) == model
    assert '"x":1e15' in out.read_text("utf-8")


@pytest.mark.parametrize("v, text", [
    (1e15, "1e15"), (1e-5, "1e-5"), (0.0001, "1e-4"), (36000.0, "36000"), (-0.0, "-0.0"),
    (0.0, "0"), (5e-324, "5e-324"), (1.7976931348623157e308, "1.7976931348623157e308"),
    (0.1, "0.1"), (123456789012345.0, "123456789012345"), (-2.5e-7, "-2.5e-7")])
def test_numbers_written_in_their_shortest_form(v, text):
    """math (IEEE 754 and the shortest round-trip decimal, as Python's repr finds it): each
    value is written in the fewest characters that read back as exactly that double."""
    assert solver.io.number_text(v) == text
    assert float(text) == v and math.copysign(1, float(text)) == math.copysign(1, v)


@settings(max_examples=int(os.environ.get("SW_EXAMPLES", "60")) * 5, deadline=None)
@given(st.floats(allow_nan=False, allow_infinity=False))
def test_number_text_is_never_longer_than_any_json_form(v):
    """math: number_text(v) reads back as v, and no JSON number that the model file's parser
    reads as v (Python's json: "-0" is the integer 0) is shorter: checked against repr (the
    shortest digits), and every %.Ng / %.Ne form that round-trips."""
    def same(text):
        back = float(json.loads(text))
        return back == v and math.copysign(1, back) == math.copysign(1, v)

    text = solver.io.number_text(v)
    assert same(text)
    forms = [repr(v)] + [f"{v:.{n}g}" for n in range(1, 18)] + [f"{v:.{n}e}" for n in range(17)]
    for form in forms:
        if same(form):
            # JSON has no "1." or "+" in exponents; "e+05" and "e05" have a shorter form "e5"
            short = form.replace("e+", "e").replace("e-0", "e-").replace("e0", "e")
            assert len(text) <= len(short), (v, text, form)


def test_save_refuses_a_target_that_is_not_a_regular_file(tmp_path):
    """POSIX (found by review: the atomic rename put a regular file in place of a FIFO, and of
    /dev/full when run as root): save_model refuses a FIFO, a folder or a link to a device with
    a one-line ModelFileError and leaves it as it is."""
    model = solver.load_model(GOOD)
    fifo = tmp_path / "pipe.json"
    os.mkfifo(fifo)
    link = tmp_path / "null.json"
    link.symlink_to("/dev/null")
    folder = tmp_path / "dir.json"
    folder.mkdir()
    for target, words in ((fifo, "named pipe"), (link, "device"), (folder, "folder")):
        with pytest.raises(ModelFileError, match=words) as info:
            solver.save_model(model, target)
        assert _one_line(str(info.value)) and str(target) in str(info.value)
    assert stat.S_ISFIFO(os.stat(fifo).st_mode) and stat.S_ISCHR(os.stat(link).st_mode)
    assert folder.is_dir() and [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []


# ------------------------------------------------------------------ round trip, property test
def _mostly(good, odd, nasty):
    """``good`` most of the time, ``odd`` (accepted) often, ``nasty`` (refused) now and then."""
    return st.integers(0, 49).flatmap(lambda i: nasty if i == 0 else odd if i < 10 else good)


# any code point (lone surrogates too, now and then), and values chosen to break naive code
_TEXT = _mostly(st.text(st.characters(blacklist_categories=("Cs",)), max_size=12),
                st.one_of(st.sampled_from(["", "line\nbreak", "\x00", "\u202e", "\U0001F600",
                                           "x" * 1000]),
                          st.text(st.characters(blacklist_categories=()), max_size=12)),
                st.sampled_from(["\ud800", "a\udfffb", "x" * 1001]))
_ID = _mostly(st.text(st.characters(blacklist_categories=("Cc", "Cf", "Cs", "Co", "Cn", "Zl",
                                                          "Zp")), min_size=1, max_size=8)
              .filter(str.strip),
              st.sampled_from([" m ", "Ø", "x" * 200, "\U0001F600"]),
              st.sampled_from(["\n", "a\tb", "x" * 201, " "]))
_RANGED = st.one_of(st.just(0.0), st.floats(TINY, HUGE), st.sampled_from([TINY, HUGE]))
# a tolerance or none; now and then one out of range (refused with a ModelError)
_TOLERANCE = _mostly(st.one_of(st.none(), st.builds(
                         dict, percent=st.floats(1e-300, 99.999),
                         distribution=st.sampled_from(["uniform", "normal", "triangular"]))),
                     st.sampled_from([{"percent": 5e-324}, {"percent": 99.99999999999999}]),
                     st.sampled_from([{"percent": 100}, {"percent": 0.0},
                                      {"percent": 5, "distribution": "Normal"}]))
_COORD = st.one_of(st.floats(-HUGE, HUGE), st.sampled_from([-0.0, 1e-300, -HUGE]))


def _ok_id(s):
    return s.strip() != "" and s.isprintable()


def _ok_text(s):
    try:
        s.encode("utf-8")
    except UnicodeEncodeError:
        return False
    return True


@st.composite
def any_models(draw):
    """A model of any kind with odd ids, labels (any code point, lone surrogates included) and
    numbers across the whole accepted range, or the ModelError refusing it."""
    kind = draw(st.sampled_from(["line", "planar", "torsion"]))
    ids = draw(st.lists(_ID, min_size=2, max_size=7, unique=True))
    n_mass = draw(st.integers(1, len(ids) - 1))
    masses = [Mass(ids[i], draw(_COORD), draw(_COORD), draw(_RANGED), label=draw(_TEXT),
                   fixed=tuple(draw(st.lists(st.sampled_from(["x", "y", "theta"]), unique=True))),
                   tolerance=draw(_TOLERANCE))
              for i in range(n_mass)]
    anchors = [Anchor(ids[i], draw(_COORD), draw(_COORD), label=draw(_TEXT))
               for i in range(n_mass, len(ids) - 1)]
    nodes = [el.id for el in masses + anchors]
    springs = []
    for j in range(draw(st.integers(0, 4))):
        # now and then a spring to itself (refused)
        a, b = draw(st.sampled_from(nodes)), draw(_mostly(st.just(None), st.just(None),
                                                          st.sampled_from(nodes)))
        b = b or draw(st.sampled_from([n for n in nodes if n != a] or nodes))
        springs.append(Spring(f"{ids[-1]}{j}", a, b, draw(st.floats(TINY, HUGE)),
                              k_t=draw(_RANGED), label=draw(_TEXT), tolerance=draw(_TOLERANCE)))
    damping = draw(st.sampled_from([
        Damping(), Damping("modal", ratio=draw(st.floats(0, 10)),
                           mode_ratios=tuple(draw(st.dictionaries(
                               st.integers(1, 50), st.floats(0, 1), max_size=3)).items())),
        Damping("rayleigh", alpha=draw(st.floats(0, HUGE)), beta=draw(st.floats(0, 1)))]))
    excitations = [Excitation(f"{ids[-1]}e", "speed", label=draw(_TEXT),
                              rpm=draw(st.floats(1e-3, 1e6)),
                              orders=tuple(draw(st.lists(st.floats(0.01, 100), min_size=1,
                                                         max_size=4))))]
    axis = draw(st.sampled_from(["x", "y"]))
    dirs = solver.directions_for(kind, axis)
    initial = [Initial(masses[0].id, displacement=((dirs[0], draw(_COORD)),),
                       velocity=((dirs[-1], draw(_COORD)),))]
    return Model(kind=kind, name=draw(_TEXT), axis=axis,
                 masses=masses, anchors=anchors, springs=springs, damping=damping,
                 excitations=excitations, margin_percent=draw(st.floats(0, 99.9)),
                 initial=initial, loads=draw(st.one_of(st.none(), _loads())))


_TABLE_VALUE = st.one_of(st.floats(1e-12, 1e12), st.sampled_from([1e-12, 1e12, 5e-324, 2e12]))


@st.composite
def _loads(draw):
    """Load definitions (solver.load_cases) across their accepted ranges, now and then just past
    them (refused with a ModelError)."""
    def table():
        xs = draw(st.lists(_TABLE_VALUE, min_size=1, max_size=5, unique=True))
        xs = sorted(xs) if draw(st.integers(0, 9)) else xs   # now and then out of order
        return tuple((x, draw(_TABLE_VALUE)) for x in xs)

    shape = draw(st.sampled_from(["half-sine", "sawtooth", "trapezoid"]))
    duration = draw(st.floats(1e-7, 1e3))
    edges = (draw(st.floats(1e-9, duration / 2)), draw(st.floats(1e-9, duration / 2))) \
        if shape == "trapezoid" else (0.0, 0.0)
    return solver.Loads(
        direction=draw(st.sampled_from(["x", "y"])),
        random=draw(st.one_of(st.none(), st.builds(solver.RandomVibration, st.just(table())))),
        shock=draw(st.one_of(st.none(), st.just(solver.ShockPulse(
            shape, draw(st.floats(1e-9, 1e7)), duration, *edges)))),
        spectrum=draw(st.one_of(st.none(), st.builds(
            solver.DesignSpectrum, st.sampled_from(["frequency", "period"]), st.just(table())))),
        srs_q=draw(st.floats(0.5, 1000)))


def _attempt(data):
    try:
        return data.draw(any_models()), None
    except ModelError as exc:
        return None, exc


@settings(max_examples=int(os.environ.get("SW_EXAMPLES", "60")), deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow])
@given(st.data())
def test_round_trip_is_the_identity_for_every_accepted_model(tmp_path_factory, data):
    """DESIGN.md section 4, common practice: for every model the constructors accept (all three
    kinds, any unicode in labels and names, numbers across the accepted ranges, -0.0 and
    subnormals), save_model then load_model gives an equal model, and saving that gives the same
    text. A model they refuse (a lone surrogate in a text, an unprintable or too long id, a
    spring to itself, a zero-length planar spring, colliding ids) is refused with a ModelError
    and a one-line message, nothing else."""
    model, refused = _attempt(data)
    if refused is not None:
        assert type(refused) is ModelError and _one_line(str(refused))
        return
    for el in model.masses + model.anchors + model.springs + model.excitations:
        assert _ok_id(el.id) and _ok_text(el.label)
    assert _ok_text(model.name)
    path = tmp_path_factory.mktemp("rt") / "model.json"
    solver.save_model(model, path)
    text = path.read_text("utf-8")
    back = solver.load_model(path)
    assert back == model
    for a, b in zip(back.masses, model.masses):   # -0.0 == 0.0, so compare signs too
        assert [math.copysign(1, v) for v in (a.x, a.y)] == [math.copysign(1, v)
                                                             for v in (b.x, b.y)]
    solver.save_model(back, path)
    assert path.read_text("utf-8") == text == solver.dumps_model(back)


def test_refused_texts_are_the_ones_the_rules_name():
    """The refusals the property test allows happen for exactly those inputs: a lone surrogate
    (U+D800) in a label, a line break in an id; the same values without them are accepted."""
    with pytest.raises(ModelError, match="surrogate"):
        Mass("m", 0, 0, 1, label="a\ud800")
    with pytest.raises(ModelError, match="printable"):
        Anchor("a\nb", 0, 0)
    assert Mass("m", 0, 0, 1, label="a\U0001F600\u202e\n").label == "a\U0001F600\u202e\n"


# ------------------------------------------------------------------ the schema compiler
def _plain(raw: bytes):
    """The JSON value of raw bytes as the reference parser reads them, or None."""
    def refuse(text):
        raise ValueError(text)
    try:
        return json.loads(raw.decode("utf-8"), parse_constant=refuse)
    except (ValueError, RecursionError):
        return None


def test_schema_compiler_agrees_with_jsonschema():
    """JSON Schema 2020-12 with the `jsonschema` package as the reference implementation: the
    compiled check accepts exactly the files jsonschema accepts, over 1,500 fuzzed files (the
    mutations of tests/fuzz_files.py) and the corpus. One known difference is left out: the
    reference uses Python's `$`, which also matches before a final line break (see
    test_ecma_dollar_matches_only_at_the_end)."""
    import jsonschema

    reference = jsonschema.Draft202012Validator(solver.schema())
    check = solver.schema_check.compile_schema(solver.schema())
    raws = [raw for _, raw in fuzz_files.cases(seed=2024, count=1500, big=False)]
    raws += [p.read_bytes() for p in sorted(CORPUS.glob("*.json"))
             if p.name != "mode-ratio-key-newline.json"]
    compared = disagree = 0
    for raw in raws:
        if len(raw) > 200_000:   # the reference takes ~0.1 ms an element
            continue
        data = _plain(raw)
        if data is None:
            continue
        try:
            check(data)
            ours = True
        except solver.schema_check.Invalid:
            ours = False
        theirs = reference.is_valid(data)
        compared += 1
        if ours != theirs:
            disagree += 1
            print("disagree:", ours, theirs, raw[:300])
    assert compared > 900
    assert disagree == 0


def test_schema_compiler_refuses_unknown_keywords():
    """A keyword the compiler does not implement is refused when compiling, never skipped."""
    with pytest.raises(solver.schema_check.SchemaUnsupported):
        solver.schema_check.compile_schema({"type": "object", "dependentRequired": {"a": ["b"]}})


def test_ecma_dollar_matches_only_at_the_end():
    """ECMA-262 (the regex dialect of JSON Schema): `$` without the multiline flag matches only
    at the end of the text, so a mode number "1\\n" is not a mode number."""
    check = solver.schema_check.compile_schema({"type": "string", "pattern": "^[1-9]$"})
    check("1")
    with pytest.raises(solver.schema_check.Invalid):
        check("1\n")


# ------------------------------------------------------------------ the fuzzer, a fixed sample
def test_fuzzer_sample(tmp_path):
    """DESIGN.md section 5 over 150 generated bad files (a fixed seed of tests/fuzz_files.py:
    type swaps, deletions, huge and special numbers, BOMs, invalid UTF-8, duplicate keys, lone
    surrogates, random bytes) through load_model and the command line's main(): each is loaded
    (and round-trips) or refused in one line naming the file, within the time cap."""
    res = fuzz_files.run(seed=11, count=150, cap=CAP, n_subprocess=0, specials=False)
    assert res["failures"] == [], res["failures"][:5]
    assert res["api"]["refused"] > 60 and res["api"]["loaded"] > 5, res["api"]


# ------------------------------------------------------------------ public functions, bad arguments
_PUBLIC = ["assemble", "modes", "analyse", "energy_fractions", "sensitivities", "free_response",
           "harmonic_response", "base_transmissibility", "find_peaks", "rms_over_band",
           "isolation_efficiency", "damped_modes", "rayleigh_coefficients", "margin_check",
           "source_bands", "retune", "sweep", "rank_elements", "with_value"]
_BAD_ARGS = [None, True, "x", "1.5", 1e400, math.nan, 10 ** 400, [], {}, [1, "a"], object(),
             {"x": 1}, [[1]], -1, 2.5]


def test_public_functions_raise_only_model_error():
    """DESIGN.md section 3: every public solver function given a bad value for any one argument
    (None, a bool, text, NaN, an int past a double, an empty or mixed list, a stray object)
    raises ModelError with a one-line message, or works; never TypeError, ValueError,
    OverflowError, AttributeError or IndexError."""
    import inspect

    model = solver.load_model(GOOD)
    res = solver.modes(model)
    good = dict(model=model, model_or_system=model, count=None, method="auto", result=res,
                times=[0.0, 0.5, 1.0], x0=None, v0=None, damped=True, freqs_hz=[1.0, 2.0],
                forces={("shelf", "y"): 1.0}, output="displacement", direction="y",
                relative=False, values=[1.0, 2.0], prominence=None, transfer=[1.0, 1.0],
                asd=1.0, f_min_hz=1.0, f_max_hz=2.0, transmissibility=[0.5, 2.0], f1_hz=1.0,
                zeta1=0.02, f2_hz=10.0, zeta2=0.02, modal=res, margin_percent=None,
                element_id="mounts", mode=1, target_hz=5.0, field="k", value=100.0, sparse=None)
    calls = 0
    for name in _PUBLIC:
        func = getattr(solver, name)
        params = list(inspect.signature(func).parameters)
        for p in params:
            for bad in _BAD_ARGS:
                kwargs = {q: good[q] for q in params if q in good} | {p: bad}
                calls += 1
                with fuzz_files.time_cap(CAP):
                    try:
                        func(**kwargs)
                    except ModelError as exc:
                        assert _one_line(str(exc)), (name, p, bad, str(exc))
                    except Exception as exc:   # noqa: BLE001  (what the test looks for)
                        raise AssertionError(f"{name}({p}={bad!r}): {type(exc).__name__}:"
                                             f" {exc}") from None
    assert calls > 900


def test_cli_argument_with_a_line_break_is_one_line():
    """DESIGN.md section 5: an unknown option holding a line break is still one line."""
    rc, out, err = _cli("solve", str(GOOD), "--x\ny")
    assert rc == 2 and out == "" and err.count("\n") == 1 and "\\n" in err, err


# ------------------------------------------------------------------ results of another model
def _two_models():
    a = solver.load_model(GOOD)
    b = solver.load_model(ROOT / "assets" / "examples" / "camera_bracket.json")
    return a, b


@pytest.mark.parametrize("call", [
    lambda a, b, rb: solver.harmonic_response(a, [1.0, 2.0], {("shelf", "y"): 1.0},
                                              method="modal", result=rb),
    lambda a, b, rb: solver.base_transmissibility(a, [1.0, 2.0], "y", method="modal",
                                                  result=rb),
    lambda a, b, rb: solver.free_response(a, [0.0, 1.0], result=rb),
    lambda a, b, rb: solver.margin_check(a, rb),
    lambda a, b, rb: solver.margin_table(a, rb),
    lambda a, b, rb: solver.interference(a, rb),
    lambda a, b, rb: solver.harmonic_response(solver.assemble(a), [1.0], {("shelf", "y"): 1.0},
                                              method="modal", result=rb),
], ids=["harmonic", "base", "free", "margin_check", "margin_table", "interference", "system"])
def test_result_of_another_model_is_refused(call):
    """DESIGN.md section 3 (found by review: a numpy matmul ValueError, or, for free_response
    and margin_check, the other model's modes used with no error and wrong numbers): a
    precomputed result must belong to the model it is passed with; otherwise a one-line
    ModelError naming the function and the argument."""
    a, b = _two_models()
    with pytest.raises(ModelError, match="another model") as info:
        call(a, b, solver.modes(b))
    assert type(info.value) is ModelError and _one_line(str(info.value))


def test_result_of_an_equal_model_is_used():
    """An equal copy of the model (what comes back from a worker process) is the same model:
    its result is accepted, and the modal response with it equals the direct solve (an
    independent algorithm: dynamic stiffness per frequency) to rtol 1e-9."""
    import copy

    a, _ = _two_models()
    twin = copy.deepcopy(a)
    assert twin == a and twin is not a
    freqs = [0.5, 3.0, 40.0]
    modal = solver.harmonic_response(a, freqs, {("shelf", "y"): 1.0}, method="modal",
                                     result=solver.modes(twin))
    direct = solver.harmonic_response(a, freqs, {("shelf", "y"): 1.0}, method="direct")
    assert modal == pytest.approx(direct, rel=1e-9, abs=0)


@pytest.mark.parametrize("call", [
    lambda m: solver.reachable_range(m, "mounts", 0),
    lambda m: solver.reachable_range(m, "mounts", -1),
    lambda m: solver.reachable_range(m, "mounts", 3),
    lambda m: solver.retune(m, "mounts", -1, 5.0),
    lambda m: solver.retune(m, "mounts", 3, 5.0),
    lambda m: solver.rank_elements(m, 0),
    lambda m: solver.rank_elements(m, 3),
    lambda m: solver.modes(m).shape(0),
    lambda m: solver.modes(m).shape(1.5),
    lambda m: solver.energy_fractions(solver.modes(m)).strain_energy_fraction(0),
    lambda m: solver.energy_fractions(solver.modes(m)).dominant_spring(-1),
    lambda m: solver.sensitivities(solver.modes(m)).group_sum(3),
])
def test_mode_numbers_checked_by_range(call):
    """Mode numbers run from 1 to the number of modes (the instrument shelf has 2); found by
    review: mode 0 gave an IndexError in the limits, -1 a scipy ValueError, and Python's
    negative indexing would silently pick the last mode. Each is a ModelError naming the
    function, not a number of the wrong mode."""
    model = solver.load_model(GOOD)
    with pytest.raises(ModelError, match="mode") as info:
        call(model)
    assert type(info.value) is ModelError and _one_line(str(info.value))


def test_reachable_range_speaks_in_its_own_name():
    """A message starts with the function the user called (found by review: reachable_range's
    said "retune:")."""
    model = solver.load_model(GOOD)
    for mode in (0, 3):
        with pytest.raises(ModelError, match=r"^reachable_range: "):
            solver.reachable_range(model, "mounts", mode)


# ------------------------------------------------------------------ command line, found by review
@pytest.mark.parametrize("case, words", [
    ("name over 255 bytes", ["too long"]),
    ("symlink loop", ["loops"]),
    ("dangling symlink", ["does not exist"]),
    ("device", ["not a regular file"]),
])
def test_report_output_refused_in_one_line_with_the_reason(tmp_path, case, words):
    """POSIX (found by review: a name over 255 bytes ended in an OSError traceback with exit 1;
    a link that loops or dangles, named other than .png, gave a note and then an error with no
    reason): each is refused before rendering, in one line with the reason, exit 2."""
    out = {"name over 255 bytes": tmp_path / ("r" * 300 + ".png"),
           "symlink loop": tmp_path / "loop.x", "dangling symlink": tmp_path / "dangling.x",
           "device": Path("/dev/null")}[case]
    if case == "symlink loop":
        out.symlink_to(out)
    if case == "dangling symlink":
        out.symlink_to(tmp_path / "nowhere" / "r.png")
    rc, stdout, err = _cli("report", GOOD, "-o", out)
    assert rc == 2 and stdout == "" and err.count("\n") == 1, (rc, err)
    assert all(w in err for w in words), err


def test_report_written_under_the_names_own_bytes(tmp_path):
    """POSIX file names are bytes (found by review: -o r\\xff.png wrote r\\xef\\xbf\\xbd.png
    and said it wrote r\\xff.png): the PNG is written under exactly the bytes given, and the
    line saying so is printable (the odd byte escaped)."""
    name = os.fsdecode(os.fsencode(str(tmp_path)) + b"/r\xff.png")
    rc, out, err = _cli("report", GOOD, "-o", name)
    assert rc == 0 and err == "", err
    assert os.listdir(os.fsencode(str(tmp_path))) == [b"r\xff.png"]
    assert out.isprintable() or out.endswith("\n") and out[:-1].isprintable(), out
    rc, out, err = _cli("report", GOOD, "-o", tmp_path / "r\nx.png")
    assert rc == 0 and out.count("\n") == 1 and "r\\nx.png" in out


def test_solve_table_escapes_control_characters():
    """A name or label may hold ESC, BEL, CR and LF (the file allows them); the command line's
    table prints them escaped, so no terminal escape sequence runs and each row stays one
    line (found by review: a name could clear the screen and fake a line)."""
    rc, out, err = _cli("solve", CORPUS / "control-chars-in-names.json")
    assert rc == 0 and err == ""
    assert all(line.isprintable() for line in out.splitlines())
    assert "\\x1b[2J" in out and "\\nfake: line" in out and "Mass\\rX" not in out.replace(
        "Mass\\\\rX", "")


def test_file_name_starting_with_a_dash_gets_a_hint(tmp_path, monkeypatch):
    """argparse reads -x.json as an option: the one-line error says to write -- or ./ before
    such a file name (found by review: only "the following arguments are required: file")."""
    monkeypatch.chdir(tmp_path)
    (tmp_path / "-x.json").write_bytes(GOOD.read_bytes())
    rc, out, err = _cli("solve", "-x.json")
    assert rc == 2 and err.count("\n") == 1 and '"--"' in err and "./" in err, err
    rc, out, err = _cli("solve", "--", "-x.json")
    assert rc == 0, err
    rc, out, err = _cli("solve", str(GOOD), "--colour")
    assert rc == 2 and '"--"' not in err, err


def test_messages_are_capped(tmp_path):
    """A 20 MB key in "initial" (found by review: a 20,000,107-character line) gives a
    message of at most MESSAGE_MAX characters after the file name, with no component the
    file does not hold (no ".mass_id")."""
    data = _base()
    data["initial"] = {"k" * 20_000_000: {"y": 1.0}}
    msg = _refusal(_write(tmp_path, "long-key.json", data))
    assert len(msg) < solver.errors.MESSAGE_MAX + len(str(tmp_path)) + 20
    assert "mass_id" not in msg and "20000000 characters" in msg


def test_report_curves_cut_to_the_box_and_thinned():
    """Liang-Barsky clipping and per-column thinning (math) against a brute-force reference:
    every drawn point lies in the box; in each pixel column the drawn lines cover the same
    vertical extent as the original curve's vertices inside the box; and a curve of 100,000
    points far outside the box above and below gives at most a few points per column."""
    from app.report.response import plot_lines

    rng = np.random.default_rng(3)
    box = (10.0, 410.0, 20.0, 220.0)
    x = np.sort(rng.uniform(0, 420, 5000))
    y = 120 + 400 * np.sin(x / 7) * rng.uniform(0.2, 1.2, len(x))
    y[rng.integers(0, len(x), 50)] = np.nan
    lines = plot_lines(x, y, *box)
    pts = np.vstack(lines)
    assert np.all((pts[:, 0] >= box[0] - 1e-9) & (pts[:, 0] <= box[1] + 1e-9))
    assert np.all((pts[:, 1] >= box[2] - 1e-9) & (pts[:, 1] <= box[3] + 1e-9))
    inside = np.isfinite(y) & (x >= box[0]) & (x <= box[1]) & (y >= box[2]) & (y <= box[3])
    for col in np.unique(np.floor(x[inside])):
        orig = y[inside & (np.floor(x) == col)]
        drawn = pts[np.floor(pts[:, 0]) == col, 1]
        assert drawn.min() <= orig.min() + 1e-9 and drawn.max() >= orig.max() - 1e-9
    far = np.where(np.arange(100_000) % 2, 1e12, -1e12)
    thin = plot_lines(np.linspace(10, 410, 100_000), far, *box)
    assert sum(len(line) for line in thin) <= 8 * 400
