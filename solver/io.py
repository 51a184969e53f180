"""Reading and writing model files (JSON, UTF-8, SI units).

Loading checks, in order, and stops at the first problem: the path names a regular file (a folder,
FIFO or device is refused before it is opened, so nothing blocks or reads forever) of at most
:data:`MAX_FILE_BYTES`; the bytes are UTF-8 (a UTF-8 byte-order mark is allowed) and JSON with no
NaN or Infinity, no number beyond double precision and no key twice in one object; it says it is a
Springwright model of a version this program knows; it has at most :data:`MAX_ELEMENTS` elements;
it matches the shipped JSON Schema (``schema/model.schema.json``, compiled by
:mod:`solver.schema_check`); and its meaning is valid (ids, references, values) as
:class:`~solver.model.Model` checks it. Every failure is a :class:`ModelFileError` whose message is
one line: ``<file>: <JSON path>: <problem and what is allowed>`` (or ``line L, column C`` for text
that is not JSON).

Saving is atomic: the text goes to a temporary file in the same folder, is flushed to disk, and
replaces the target by rename, so a crash mid-save never leaves a half-written model. A saved model
always loads back as the same model.
"""

from __future__ import annotations

import codecs
import errno
import json
import math
import os
import re
import stat
import tempfile
from functools import lru_cache
from importlib import resources
from json.encoder import encode_basestring as _string   # C speed; printable text as it is
from pathlib import Path

from .errors import ModelError, ModelFileError, one_line, shown
from .naming import quoted
from .model import (MAX_ELEMENTS, Anchor, Damper, Damping, Excitation, Gear, Initial, Mass,
                    Model, Spring)
from .schema_check import Invalid, compile_schema

FORMAT = "springwright-model"
VERSION = 1

#: Largest model file read, in bytes (32 MiB). A file at the element limit with plain labels
#: takes about 20 MB; the cap is checked before reading, so a huge file costs nothing.
MAX_FILE_BYTES = 32 * 1024 * 1024

#: JSON objects and arrays a valid file can need (each element, its "fixed" list or "orders",
#: its initial condition): far more means a file built to exhaust memory while parsing.
MAX_CONTAINERS = 4 * MAX_ELEMENTS + 100

_VELOCITY_KEY = {"x": "vx", "y": "vy", "theta": "vtheta"}
_ELEMENT_LISTS = {"masses": "mass", "anchors": "anchor", "springs": "spring",
                  "dampers": "dashpot", "excitations": "excitation", "gears": "gear"}


@lru_cache(maxsize=1)
def _schema_text() -> str:
    return resources.files(__package__).joinpath("schema/model.schema.json").read_text("utf-8")


def schema() -> dict:
    """The model file's JSON Schema (draft 2020-12) as a dict (a fresh copy)."""
    return json.loads(_schema_text())


# ------------------------------------------------------------------ JSON values Python cannot hold
class _BadNumber:
    """A number in the file that is no double: NaN, Infinity, 1e400, an integer of 400 digits."""

    __slots__ = ("text", "why")

    def __init__(self, text: str, why: str):
        self.text, self.why = text, why

    def __repr__(self):
        t = self.text
        return t if len(t) <= 24 else f"{t[:12]}…({len(t)} characters)"


class _Duplicated(dict):
    """An object in which a key appears more than once (JSON parsers differ on which one wins)."""

    key = None


def _parse_float(text: str):
    v = float(text)
    return v if math.isfinite(v) else _BadNumber(
        text, "is beyond the range of double precision (magnitudes up to about 1.8e308)")


def _parse_int(text: str):
    # int() refuses more than 4,300 digits (ValueError), float() would give inf beyond 308
    return int(text) if len(text) <= 300 else _parse_float(text)


def _parse_constant(text: str):
    return _BadNumber(text, "is not a number a model file can hold (JSON has no NaN or Infinity)")


def _pairs(pairs):
    d = dict(pairs)
    if len(d) == len(pairs):
        return d
    seen = set()
    dup = _Duplicated(d)
    for k, _ in pairs:
        if k in seen:
            dup.key = k
            break
        seen.add(k)
    return dup


def _special(value):
    if isinstance(value, _BadNumber):
        return f"{value!r} {value.why}"
    if isinstance(value, _Duplicated):
        return f"the key {shown(value.key)} appears more than once in this object"
    return None


@lru_cache(maxsize=1)
def _check():
    return compile_schema(json.loads(_schema_text()), special=_special)


# ------------------------------------------------------------------ messages
_NAME = re.compile(r"[A-Za-z_][A-Za-z0-9_]*\Z")


def json_path(parts) -> str:
    """``masses[3].mass``, ``initial["m 1"].x``; ``top level`` for the whole file. A key is shown
    as the file writes it (any printable script as it is, control characters escaped) and cut
    to 40 characters."""
    out = ""
    for p in parts:
        if isinstance(p, int):
            out += f"[{p}]"
        elif isinstance(p, str) and len(p) <= 40 and _NAME.match(p):
            out += ("." if out else "") + p
        else:
            text = p if isinstance(p, str) else str(p)
            out += "[" + (_json_str(text) if len(text) <= 40 else _json_str(text[:40])[:-1]
                          + '…"') + "]"
    return one_line(out) or "top level"


def _json_str(text: str) -> str:
    """A text in JSON notation with printable characters of any script left as they are."""
    return json.dumps(text, ensure_ascii=False)


def _labelled(el_id: str, label) -> str:
    """``"Isolator pad" (s4)`` (see :func:`solver.naming.quoted`) for an element of a file not
    yet checked: the id as JSON writes it and at most 60 characters of it, a label only where
    it is text that differs from the id; ``"s4"`` otherwise."""
    text = one_line(_json_str(el_id[:61]))[1:-1]
    if len(text) > 60:
        text = text[:59] + "…"
    if not (isinstance(label, str) and label and label != el_id):
        return f'"{text}"'
    return quoted(text, label)


def _owner(data, path) -> str:
    """``spring "s2"`` (``spring "Isolator pad" (s2)`` where it has a label) for a path inside
    an element, so a message names the element too."""
    if len(path) >= 2 and path[0] in _ELEMENT_LISTS and isinstance(path[1], int):
        try:
            el = data[path[0]][path[1]]
            el_id, label = el.get("id"), el.get("label")
        except (AttributeError, IndexError, KeyError, TypeError):
            el_id = label = None
        if path[2:3] == ("label",):   # the label is the problem: name the element by id
            label = None
        if isinstance(el_id, str) and el_id:
            return f"{_ELEMENT_LISTS[path[0]]} {_labelled(el_id, label)}: "
    if len(path) >= 2 and path[0] == "initial":
        label = None
        masses = data.get("masses")
        if isinstance(masses, list):
            label = next((m.get("label") for m in masses
                          if isinstance(m, dict) and m.get("id") == path[1]), None)
        return f"initial condition of {_labelled(str(path[1]), label)}: "
    return ""


def _for_kind(data, path, problem: str) -> str:
    """The schema lists both "mass" and "inertia" among a mass's keys; a message listing the
    allowed keys names only those this model's kind uses (a planar mass may have both: the
    inertia makes it a rigid body)."""
    kind = data.get("kind")
    if len(path) == 2 and path[0] == "masses" and " (allowed: " in problem:
        other = "mass" if kind == "torsion" else "inertia" if kind != "planar" else None
        head, _, allowed = problem.partition(" (allowed: ")
        keys = [k for k in allowed.rstrip(")").split(", ") if k != other]
        return f"{head} (allowed: {', '.join(keys)})"
    if len(path) == 2 and path[0] == "masses" and problem.startswith('"inertia" is not allowed'):
        return (problem + '; "inertia" is a torsion disc\'s inertia, or a planar rigid body\'s'
                " rotary inertia beside its mass")
    return problem


def _placed(path, message: str) -> str:
    if not path:
        return message
    return f"{json_path(path)}: {message.removeprefix('model: ')}"


def _file_name(path) -> str:
    try:
        return one_line(os.fsdecode(path)) or '""'
    except (TypeError, ValueError):
        return shown(path)


def model_from_dict(data: dict) -> Model:
    """Build a Model from the parsed JSON of a model file (validated against the schema first).

    Raises :class:`ModelFileError` for anything that is not a valid version-1 model; its
    ``path`` holds the JSON path of the problem.
    """
    if not isinstance(data, dict) or isinstance(data, _Duplicated):
        problem = _special(data) or (
            f"a model file holds one JSON object {{...}}, got {shown(data)}")
        raise ModelFileError(f"top level: {problem}")
    fmt = data.get("format")
    if not (isinstance(fmt, str) and fmt == FORMAT):
        raise ModelFileError(f'format: this is not a Springwright model: "format" must be'
                             f' "{FORMAT}", got {shown(fmt)}', ("format",))
    version = data.get("version")
    # JSON Schema counts 2.0 as an integer, so a float version must be refused here too
    if isinstance(version, (int, float)) and not isinstance(version, bool) and version > VERSION:
        which = (f"version {shown(version)}" if abs(version) < 1e6 else
                 f"a version number of {shown(version)}" if isinstance(version, float) else
                 f"a version number with {len(str(version))} digits")
        raise ModelFileError(f"version: the file is of format {which}, newer than this program"
                             f" knows (it reads versions up to {VERSION}); open it with a newer"
                             " Springwright", ("version",))
    # counted before the schema check, whose time grows with the count
    count = sum(len(data[k]) for k in _ELEMENT_LISTS if isinstance(data.get(k), list))
    if count > MAX_ELEMENTS:
        raise ModelFileError(f"top level: the file has {count:,} elements (masses, anchors,"
                             f" springs, dashpots and excitations); a model may have at most"
                             f" {MAX_ELEMENTS:,}")
    try:
        _check()(data)
    except Invalid as exc:
        raise ModelFileError(f"{json_path(exc.path)}: {_owner(data, exc.path)}"
                             f"{_for_kind(data, exc.path, exc.problem)}", exc.path) from None
    try:
        return _build(data)
    except ModelFileError:
        raise
    except ModelError as exc:
        raise ModelFileError(_placed(exc.path, str(exc)), exc.path) from None


def _each(data, key: str, make) -> tuple:
    """Elements of one list, each built by ``make``; a refusal gets the element's JSON path."""
    out = []
    for i, el in enumerate(data.get(key, ())):
        try:
            out.append(make(el))
        except ModelError as exc:
            raise ModelError(str(exc), (key, i) + exc.path) from None
    return tuple(out)


def _build(data: dict) -> Model:
    kind = data["kind"]
    axis = data.get("axis", "x")
    mass_key = "inertia" if kind == "torsion" else "mass"

    def mass(m):
        try:
            return Mass(id=m["id"], x=m["x"], y=m["y"], mass=m[mass_key],
                        label=m.get("label", ""), fixed=tuple(m.get("fixed", ())),
                        inertia=0.0 if kind == "torsion" else m.get("inertia", 0.0),
                        tolerance=m.get("tolerance"))
        except ModelError as exc:   # the Mass calls it "mass" whatever the kind
            if exc.path == ("mass",):
                exc.path = (mass_key,)
            raise

    def excitation(e):
        if e["type"] == "speed":
            return Excitation(id=e["id"], type="speed", label=e.get("label", ""),
                              rpm=e.get("rpm", 0.0), orders=tuple(e.get("orders", (1.0,))),
                              rpm_min=e.get("rpm_min"), rpm_max=e.get("rpm_max"))
        return Excitation(id=e["id"], type="band", label=e.get("label", ""),
                          f_min_hz=e["f_min_hz"], f_max_hz=e["f_max_hz"])

    masses = _each(data, "masses", mass)
    anchors = _each(data, "anchors", lambda a: Anchor(id=a["id"], x=a["x"], y=a["y"],
                                                      label=a.get("label", "")))
    springs = _each(data, "springs", lambda s: Spring(
        id=s["id"], a=s["a"], b=s["b"], k=s["k"], k_t=s.get("k_t", 0.0), label=s.get("label", ""),
        a_offset=_pair(s, "a_offset"), b_offset=_pair(s, "b_offset"),
        tolerance=s.get("tolerance")))
    dampers = _each(data, "dampers", lambda d: Damper(
        id=d["id"], a=d["a"], b=d["b"], c=d["c"], label=d.get("label", ""),
        a_offset=_pair(d, "a_offset"), b_offset=_pair(d, "b_offset"),
        tolerance=d.get("tolerance")))
    gears = _each(data, "gears", lambda g: Gear(
        id=g["id"], a=g["a"], b=g["b"], ratio=g["ratio"], label=g.get("label", ""),
        k_mesh=g.get("k_mesh")))
    excitations = _each(data, "excitations", excitation)
    dm = data.get("damping", {"model": "none"})
    try:
        damping = Damping(model=dm["model"], ratio=dm.get("ratio", 0.0),
                          alpha=dm.get("alpha", 0.0), beta=dm.get("beta", 0.0),
                          mode_ratios=tuple((int(n), r) for n, r in
                                            dm.get("mode_ratios", {}).items()))
    except ModelError as exc:
        raise ModelError(str(exc), ("damping",) + exc.path) from None
    initial = []
    for mass_id, values in data.get("initial", {}).items():
        disp = tuple((d, values[d]) for d in ("x", "y", "theta") if d in values)
        vel = tuple((d, values[_VELOCITY_KEY[d]]) for d in ("x", "y", "theta")
                    if _VELOCITY_KEY[d] in values)
        try:
            initial.append(Initial(mass_id=mass_id, displacement=disp, velocity=vel))
        except ModelError as exc:
            # the file holds the mass id as the key itself, not in a "mass_id" field
            inner = () if exc.path == ("mass_id",) else exc.path
            raise ModelError(str(exc), ("initial", mass_id) + inner) from None
    return Model(kind=kind, name=data.get("name", ""), axis=axis, masses=masses, anchors=anchors,
                 springs=springs, dampers=dampers, damping=damping,
                 excitations=excitations, gears=gears,
                 margin_percent=data.get("margin_percent", 15.0), initial=tuple(initial),
                 loads=_loads_from(data["loads"]) if "loads" in data else None)


def _loads_from(d: dict):
    """solver.load_cases.Loads from the file's ``loads`` object (schema-checked already); a
    refusal gets its JSON path (the file's ``asd`` is the definition's ``points``)."""
    from .load_cases import DesignSpectrum, Loads, RandomVibration, ShockPulse

    def part(key, make):
        if key not in d:
            return None
        try:
            return make(d[key])
        except ModelError as exc:
            inner = exc.path
            if key == "random" and inner[:1] == ("points",):
                inner = ("asd",) + inner[1:]
            raise ModelError(str(exc), ("loads", key) + inner) from None

    random = part("random", lambda r: RandomVibration(points=tuple(map(tuple, r["asd"]))))
    shock = part("shock", lambda p: ShockPulse(shape=p["shape"], peak_g=p["peak_g"],
                                               duration_s=p["duration_s"],
                                               rise_s=p.get("rise_s", 0.0),
                                               fall_s=p.get("fall_s", 0.0)))
    spectrum = part("spectrum", lambda p: DesignSpectrum(abscissa=p["abscissa"],
                                                         points=tuple(map(tuple, p["points"]))))
    try:
        return Loads(direction=d.get("direction", "x"), random=random, shock=shock,
                     spectrum=spectrum, srs_q=d.get("srs_q", 10.0))
    except ModelError as exc:
        raise ModelError(str(exc), ("loads",) + exc.path) from None


def _loads_to(loads, minimal: bool) -> dict:
    """The file's ``loads`` object; ``minimal`` leaves out direction "x" and Q 10."""
    out: dict = {}
    if not (minimal and loads.direction == "x"):
        out["direction"] = loads.direction
    if loads.random is not None:
        out["random"] = {"asd": [list(p) for p in loads.random.points]}
    if loads.shock is not None:
        p = loads.shock
        out["shock"] = {"shape": p.shape, "peak_g": p.peak_g, "duration_s": p.duration_s}
        if p.shape == "trapezoid":
            out["shock"].update({"rise_s": p.rise_s, "fall_s": p.fall_s})
    if loads.spectrum is not None:
        out["spectrum"] = {"abscissa": loads.spectrum.abscissa,
                           "points": [list(p) for p in loads.spectrum.points]}
    if not (minimal and loads.srs_q == 10.0):
        out["srs_q"] = loads.srs_q
    if not out:   # an empty definition is kept as one (it differs from none)
        out["direction"] = loads.direction
    return out


_ORIGIN = (0.0, 0.0)


def _pair(el: dict, key: str):
    value = el.get(key)
    return _ORIGIN if value is None else tuple(value)


def model_to_dict(model: Model, minimal: bool = False) -> dict:
    """The JSON-ready dict of a model, in the file layout. Defaults are written only where they
    say something (a label equal to the id, an empty ``fixed`` or a zero ``k_t`` are left out).

    ``minimal``: every key that holds its default is left out (an empty name or list, axis
    ``x``, no damping, a 15 % margin, orders ``[1]``, a zero ratio), so no file that loads as
    this model is shorter than its compact text (see :func:`dumps_model`).
    """
    mass_key = "inertia" if model.kind == "torsion" else "mass"
    out: dict = {"format": FORMAT, "version": VERSION, "name": model.name, "kind": model.kind}
    if model.kind == "line" or model.axis != "x":   # kept for a switch back to a line model
        out["axis"] = model.axis

    def labelled(el, d):
        if el.label != el.id:
            d["label"] = el.label
        return d

    out["masses"] = []
    for m in model.masses:
        d = labelled(m, {"id": m.id})
        d.update({"x": m.x, "y": m.y, mass_key: m.mass})
        if m.inertia and model.kind == "planar":
            d["inertia"] = m.inertia
        if m.fixed:
            d["fixed"] = list(m.fixed)
        out["masses"].append(_tolerance(m, d))
    out["anchors"] = [labelled(a, {"id": a.id}) | {"x": a.x, "y": a.y} for a in model.anchors]
    out["springs"] = []
    for s in model.springs:
        d = labelled(s, {"id": s.id}) | {"a": s.a, "b": s.b, "k": s.k}
        if s.k_t:
            d["k_t"] = s.k_t
        out["springs"].append(_tolerance(s, _offsets(s, d)))
    out["dampers"] = [_tolerance(d, _offsets(d, labelled(d, {"id": d.id})
                                            | {"a": d.a, "b": d.b, "c": d.c}))
                      for d in model.dampers]
    if model.gears:   # written only when there are any, so older files keep their text
        out["gears"] = []
        for g in model.gears:
            d = labelled(g, {"id": g.id}) | {"a": g.a, "b": g.b, "ratio": g.ratio}
            if g.k_mesh is not None:
                d["k_mesh"] = g.k_mesh
            out["gears"].append(d)
    dm = model.damping
    if dm.model == "modal":
        out["damping"] = {"model": "modal", "ratio": dm.ratio}
        if dm.mode_ratios:
            out["damping"]["mode_ratios"] = {str(n): r for n, r in dm.mode_ratios}
    elif dm.model == "rayleigh":
        out["damping"] = {"model": "rayleigh", "alpha": dm.alpha, "beta": dm.beta}
    else:
        out["damping"] = {"model": "none"}
    out["excitations"] = []
    for e in model.excitations:
        d = labelled(e, {"id": e.id, "type": e.type})
        if e.type == "speed" and e.is_ranged:
            d.update({"rpm_min": e.rpm_min, "rpm_max": e.rpm_max, "orders": list(e.orders)})
        elif e.type == "speed":
            d.update({"rpm": e.rpm, "orders": list(e.orders)})
        else:
            d.update({"f_min_hz": e.f_min_hz, "f_max_hz": e.f_max_hz})
        if minimal and d.get("orders") == [1.0]:
            del d["orders"]
        out["excitations"].append(d)
    out["margin_percent"] = model.margin_percent
    out["initial"] = {}
    for ic in model.initial:
        values = {d: v for d, v in ic.displacement}
        values.update({_VELOCITY_KEY[d]: v for d, v in ic.velocity})
        out["initial"][ic.mass_id] = values
    if model.loads is not None:   # written only when defined, so older files keep their text
        out["loads"] = _loads_to(model.loads, minimal)
    if minimal:
        defaults = {"name": "", "axis": "x", "damping": {"model": "none"}, "margin_percent": 15.0}
        for key in list(out):
            if out[key] in ([], {}) or (key in defaults and out[key] == defaults[key]):
                del out[key]
        for key in ("ratio", "alpha", "beta"):
            if out.get("damping", {}).get(key) == 0:
                del out["damping"][key]
        for key in ("masses", "springs", "dampers"):
            for d in out.get(key, ()):
                if d.get("tolerance", {}).get("distribution") == "uniform":
                    del d["tolerance"]["distribution"]
    return out


def _tolerance(el, d: dict) -> dict:
    """``d`` with the element's tolerance, where it has one (older files keep their text)."""
    if el.tolerance is not None:
        d["tolerance"] = {"percent": el.tolerance.percent,
                          "distribution": el.tolerance.distribution}
    return d


def _offsets(el, d: dict) -> dict:
    """``d`` with the element's attachment offsets, where they are not at the centre."""
    for key in ("a_offset", "b_offset"):
        value = getattr(el, key)
        if value != _ORIGIN:
            d[key] = [float(value[0]), float(value[1])]
    return d


def number_text(v: float, shortest: bool = True) -> str:
    """The shortest JSON text that reads back as exactly ``v`` (a finite float).

    Python's repr gives the fewest significant digits that round-trip, but writes
    ``1000000000000000.0`` for 1e15 and ``1e-05`` for 1e-5. Here the same digits are written
    in whichever of the plain and the exponent form is shorter (``1e15``, ``1e-5``,
    ``36000``, ``10000000000000002``), a whole number without ``.0``, and -0.0 keeps its sign.
    ``shortest=False`` (the indented file a person reads): whole numbers below a million are
    written out (``120000``, not ``1.2e5``).
    """
    if v == 0:
        return "-0.0" if math.copysign(1.0, v) < 0 else "0"
    text = repr(v)
    sign = "-" if v < 0 else ""
    body = text[len(sign):]
    if "e" in body:
        mantissa, _, exp = body.partition("e")
        digits, e = mantissa.replace(".", ""), int(exp)
    else:
        whole, _, frac = body.partition(".")
        frac = frac.rstrip("0")
        if whole != "0":
            digits, e = whole + frac, len(whole) - 1
        else:
            digits = frac.lstrip("0")
            e = -(len(frac) - len(digits)) - 1
    digits = digits.rstrip("0") or "0"
    sci = f"{digits[0]}{'.' + digits[1:] if len(digits) > 1 else ''}e{e}"
    if e >= len(digits) - 1:
        plain = digits + "0" * (e - len(digits) + 1)
        if not shortest and e < 6:
            return sign + plain
    elif e >= 0:
        plain = f"{digits[:e + 1]}.{digits[e + 1:]}"
    else:
        plain = "0." + "0" * (-e - 1) + digits
    return sign + (plain if len(plain) <= len(sci) else sci)


def _json_text(value, indent: str | None) -> str:
    """JSON text of a model dict (plain dicts, lists, texts, floats, ints, bools) with numbers
    in their shortest form (:func:`number_text`); ``indent`` as json.dumps takes it (None:
    compact, no spaces). Printable text of any script is written as it is."""
    parts: list[str] = []
    add = parts.append
    key_sep = ":" if indent is None else ": "
    shortest = indent is None

    def emit(v, level):
        t = type(v)
        if t is str:
            add(_string(v))
        elif t is float:
            if not math.isfinite(v):
                raise ValueError(f"{v!r} has no JSON form")
            add(number_text(v, shortest))
        elif t is bool:
            add("true" if v else "false")
        elif t is int:
            add(str(v))
        elif v is None:
            add("null")
        elif t is dict or t is list:
            items = v.items() if t is dict else v
            if not v:
                add("{}" if t is dict else "[]")
                return
            inner = "," if indent is None else ",\n" + indent * (level + 1)
            add(("{" if t is dict else "[") + ("" if indent is None else inner[1:]))
            for i, item in enumerate(items):
                if i:
                    add(inner)
                if t is dict:
                    add(_string(item[0]))
                    add(key_sep)
                    emit(item[1], level + 1)
                else:
                    emit(item, level + 1)
            add(("" if indent is None else "\n" + indent * level) + ("}" if t is dict else "]"))
        else:
            raise TypeError(f"{type(v).__name__} has no JSON form")

    emit(value, 0)
    return "".join(parts)


def _refuse(name: str, problem: str) -> ModelFileError:
    return ModelFileError(f"{name}: {problem}")


def _kind_of(st: os.stat_result) -> str | None:
    """What a non-regular file is, in words; None for a regular file."""
    mode = st.st_mode
    if stat.S_ISREG(mode):
        return None
    if stat.S_ISDIR(mode):
        return "a folder"
    if stat.S_ISFIFO(mode):
        return "a named pipe (FIFO)"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return "not a regular file"


def _mib(n: int) -> str:
    return f"{n / 1024 ** 2:.1f} MiB" if n < 1024 ** 3 else f"{n / 1024 ** 3:.1f} GiB"


def _size_text(n: int, limit: int) -> str:
    """``the file is 65.0 MiB; model files are limited to 32.0 MiB``, with exact byte counts
    when the two round to the same MiB (a file one byte over the limit)."""
    if _mib(n) == _mib(limit) or n < 1.1 * limit:
        return (f"the file is {n:,} bytes; model files are limited to {limit:,} bytes"
                f" ({_mib(limit)})")
    return f"the file is {_mib(n)}; model files are limited to {_mib(limit)}"


def read_file_bytes(path, limit: int = MAX_FILE_BYTES) -> bytes:
    """The bytes of a regular file of at most ``limit`` bytes, or a ModelFileError.

    A folder, FIFO, device or socket is refused from its ``stat`` before it is opened (opening a
    FIFO blocks until a writer comes; /dev/zero never ends), and the size before reading. The
    open is non-blocking and checked again on the open file, in case the path changed in between;
    reading stops past ``limit`` for files whose size ``stat`` does not tell (/proc).
    """
    name = _file_name(path)
    if isinstance(path, bytes):
        path = os.fsdecode(path)
    if not isinstance(path, (str, os.PathLike)):
        raise ModelFileError(f"load_model: expected a file path, got {type(path).__name__}")
    if not os.fspath(path):
        raise _refuse(name, "no file name given")
    try:
        st = os.stat(path)
    except OSError as exc:
        raise _refuse(name, f"cannot read the file ({exc.strerror or exc})") from None
    except ValueError:   # a NUL character in the name
        raise _refuse(name, "the file name holds a character no file name can have") from None

    def check(st):
        what = _kind_of(st)
        if what:
            raise _refuse(name, f"is {what}, not a model file")
        if st.st_size > limit:
            raise _refuse(name, _size_text(st.st_size, limit))

    check(st)
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_BINARY", 0) | getattr(
        os, "O_CLOEXEC", 0)
    try:
        fd = os.open(path, flags)
    except OSError as exc:
        raise _refuse(name, f"cannot read the file ({exc.strerror or exc})") from None
    try:
        check(os.fstat(fd))
        chunks, total = [], 0
        while True:
            chunk = os.read(fd, min(1 << 20, limit + 1 - total))
            if not chunk:
                break
            chunks.append(chunk)
            total += len(chunk)
            if total > limit:
                raise _refuse(name, f"the file holds more than {limit:,} bytes; model files"
                                    f" are limited to that ({_mib(limit)})")
    except OSError as exc:
        raise _refuse(name, f"cannot read the file ({exc.strerror or exc})") from None
    finally:
        os.close(fd)
    return b"".join(chunks)


_STRING = re.compile(rb'"(?:[^"\\]|\\.)*"', re.S)


#: the JSON decoder's messages in our words (it ends some with "at", meant for its own suffix)
_JSON_PROBLEMS = {
    "Expecting value": "a value (number, text, true, false, null, list or object) is expected"
                       " here",
    "Expecting property name enclosed in double quotes": "a key in double quotes is expected"
                                                         " here (JSON has no comments, single"
                                                         " quotes or trailing commas)",
    "Expecting ',' delimiter": "a comma is expected here",
    "Expecting ':' delimiter": "a colon is expected here",
    "Unterminated string starting at": "the text (string) that starts here is not closed",
    "Invalid \\escape": "an escape that JSON does not have (a backslash starts \\n, \\t,"
                         " \\\\, \\\" or \\u0000 forms)",
    "Invalid \\uXXXX escape": "a \\u escape needs four hexadecimal digits",
    "Extra data": "extra text after the end of the JSON value (a model file holds one object)",
}


def _json_problem(exc: json.JSONDecodeError) -> str:
    if exc.msg == "Invalid control character at":
        ch = exc.doc[exc.pos] if exc.pos < len(exc.doc) else "\x00"
        return (f"control character U+{ord(ch):04X} inside a text (JSON writes it as an escape"
                f" such as \\n or \\u{ord(ch):04x})")
    return _JSON_PROBLEMS.get(exc.msg, exc.msg.removesuffix(" at"))


def parse_json(raw: bytes, name: str):
    """The JSON value of a model file's bytes; a ModelFileError naming the line and column."""
    if raw.startswith(codecs.BOM_UTF8):   # Windows editors write one; RFC 8259 allows ignoring it
        raw = raw[len(codecs.BOM_UTF8):]
    for bom, enc in ((codecs.BOM_UTF32_LE, "UTF-32"), (codecs.BOM_UTF32_BE, "UTF-32"),
                     (codecs.BOM_UTF16_LE, "UTF-16"), (codecs.BOM_UTF16_BE, "UTF-16")):
        if raw.startswith(bom):
            raise _refuse(name, f"the file is {enc} text; model files are UTF-8 (save it as"
                                " UTF-8)")
    if not raw.strip():
        raise _refuse(name, "the file is empty; a model file is a JSON object {...}")
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw.count(b"\n", 0, exc.start) + 1
        col = exc.start - (raw.rfind(b"\n", 0, exc.start) + 1) + 1
        raise _refuse(name, f"line {line}, column {col}: byte 0x{raw[exc.start]:02x} is not"
                            " UTF-8 text; model files are UTF-8") from None
    # Each object costs ~100 bytes of memory for 2 bytes of text: count them before parsing
    # (braces inside strings are taken out only when the quick count is too high).
    if raw.count(b"{") + raw.count(b"[") > MAX_CONTAINERS:
        bare = _STRING.sub(b"", raw)
        n = bare.count(b"{") + bare.count(b"[")
        if n > MAX_CONTAINERS:
            raise _refuse(name, f"the file holds {n:,} JSON objects and lists; a model of at most"
                                f" {MAX_ELEMENTS:,} elements needs far fewer")
    if text.startswith("\ufeff"):
        raise _refuse(name, "line 1, column 1: a second byte-order mark (U+FEFF) follows the"
                            " first; a model file may begin with one at most")
    try:
        return json.loads(text, parse_float=_parse_float, parse_int=_parse_int,
                          parse_constant=_parse_constant, object_pairs_hook=_pairs)
    except json.JSONDecodeError as exc:
        raise _refuse(name, f"line {exc.lineno}, column {exc.colno}: not valid JSON:"
                            f" {_json_problem(exc)}") from None
    except RecursionError:
        raise _refuse(name, "the JSON is nested too deeply to be a model (a model file nests"
                            " four levels)") from None
    except ValueError as exc:
        raise _refuse(name, f"not valid JSON: {shown(str(exc), 120)}") from None


def load_model(path) -> Model:
    """Read a model file.

    Raises :class:`ModelFileError`, and nothing else, for any file that is not a valid model:
    its message is one printable line, ``<file>: <JSON path>: <problem and what is allowed>``.
    Files larger than :data:`MAX_FILE_BYTES` and anything but a regular file are refused
    without reading them.
    """
    raw = read_file_bytes(path)
    name = _file_name(path)
    data = parse_json(raw, name)
    try:
        return model_from_dict(data)
    except ModelFileError as exc:
        raise ModelFileError(one_line(f"{name}: {exc}"), exc.path) from None


def dumps_model(model: Model) -> str:
    """The model file's text (JSON, 2-space indent, trailing newline), numbers in their
    shortest form (:func:`number_text`).

    A model whose indented text would be over :data:`MAX_FILE_BYTES` is written compact: no
    spaces or final line break, and no key that holds its default (``model_to_dict(minimal=True)``). That text is
    never longer than any file that loads as the same model (its texts are escaped only where
    JSON requires it, its numbers have the fewest characters that give the same value, and
    nothing optional is written), so whatever :func:`load_model` accepts, :func:`save_model`
    can write and :func:`load_model` reads back equal.
    """
    text = _json_text(model_to_dict(model), "  ") + "\n"
    if len(text) > MAX_FILE_BYTES // 4 and len(text.encode("utf-8")) > MAX_FILE_BYTES:
        # not even a final line break: a file just at the limit needs every byte
        text = _json_text(model_to_dict(model, minimal=True), None)
    return text


def _not_regular(path) -> str | None:
    """What ``path`` is when it exists and is not a regular file (after symbolic links)."""
    try:
        st = os.stat(path)
    except (OSError, ValueError):
        return None   # missing (a new file), or a name the write itself will refuse
    return _kind_of(st)


def write_atomic(path, text: str) -> None:
    """Write text to ``path`` atomically: temporary file in the same folder, fsync, rename.

    The new file keeps the permissions of the one it replaces (a new file gets the usual ones,
    0666 less the umask); a symbolic link is followed, so the file it points to is replaced.
    """
    path = Path(path)
    if path.is_symlink():
        path = Path(os.path.realpath(path))
    what = _not_regular(path)
    if what:   # the rename would put a regular file in place of a FIFO or device node
        raise OSError(errno.EISDIR if what == "a folder" else errno.EINVAL,
                      f"it is {what}; only a regular file is replaced", str(path))
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise FileNotFoundError(2, f"the folder {folder} does not exist", str(path))
    try:
        mode = stat.S_IMODE(os.stat(path).st_mode)
    except OSError:
        umask = os.umask(0)
        os.umask(umask)
        mode = 0o666 & ~umask
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name[:100]}.", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, mode)
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    try:   # the rename itself is durable once the folder is flushed too
        dir_fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(dir_fd)
    except OSError:
        pass
    finally:
        os.close(dir_fd)


def save_model(model: Model, path) -> None:
    """Write a model file atomically. ``load_model(path) == model`` afterwards.

    Raises :class:`ModelError` for something that is not a Model or a path, or a model too large
    for a model file, and OSError when the file cannot be written.
    """
    if not isinstance(model, Model):
        raise ModelError(f"save_model: expected a Model, got {type(model).__name__}")
    if not isinstance(path, (str, os.PathLike)):
        raise ModelError(f"save_model: expected a file path, got {type(path).__name__}")
    if not os.fspath(path) or "\x00" in os.fsdecode(path):
        raise ModelError(f"save_model: not a usable file name: {shown(os.fspath(path))}")
    what = _not_regular(path)
    if what:
        raise ModelFileError(f"{_file_name(path)}: is {what}, not a regular file; save_model"
                             " writes model files only (it never replaces a folder, FIFO or"
                             " device)")
    text = dumps_model(model)
    if len(text) > MAX_FILE_BYTES // 4 and len(text.encode("utf-8")) > MAX_FILE_BYTES:
        size = len(text.encode("utf-8"))
        raise ModelError(f"save_model: the model's file would be {size:,} bytes even written as"
                         f" compactly as JSON allows, over the {MAX_FILE_BYTES:,} bytes"
                         f" ({_mib(MAX_FILE_BYTES)}) a model file may have; split the model or"
                         " shorten its labels")
    write_atomic(path, text)
