"""Reading and writing model files (JSON, UTF-8, SI units).

Loading checks, in order: the file can be read and is JSON; it says it is a Springwright model of a
version this program knows; it matches the shipped JSON Schema (``schema/model.schema.json``); and
its meaning is valid (ids, references, values) as :class:`~solver.model.Model` checks it. Every
failure is a :class:`ModelFileError` naming the file and the problem.

Saving is atomic: the text goes to a temporary file in the same folder, is flushed to disk, and
replaces the target by rename, so a crash mid-save never leaves a half-written model.
"""

from __future__ import annotations

import json
import os
import tempfile
from functools import lru_cache
from importlib import resources
from pathlib import Path

from .errors import ModelError, ModelFileError
from .model import Anchor, Damper, Damping, Excitation, Initial, Mass, Model, Spring

FORMAT = "springwright-model"
VERSION = 1

_VELOCITY_KEY = {"x": "vx", "y": "vy", "theta": "vtheta"}


@lru_cache(maxsize=1)
def _validator():
    import jsonschema

    text = resources.files(__package__).joinpath("schema/model.schema.json").read_text("utf-8")
    schema = json.loads(text)
    cls = jsonschema.validators.validator_for(schema)
    cls.check_schema(schema)
    return cls(schema)


def schema() -> dict:
    """The model file's JSON Schema (draft 2020-12) as a dict."""
    return _validator().schema


def _where(data, path) -> str:
    """A readable location for a schema error: ``spring "s2" (springs[1])``."""
    parts = list(path)
    if len(parts) >= 2 and isinstance(parts[1], int) and parts[0] in (
            "masses", "anchors", "springs", "dampers", "excitations"):
        what = {"masses": "mass", "anchors": "anchor", "springs": "spring", "dampers": "dashpot",
                "excitations": "excitation"}[parts[0]]
        try:
            el_id = data[parts[0]][parts[1]].get("id")
        except (AttributeError, IndexError, KeyError, TypeError):
            el_id = None
        name = f'{what} "{el_id}"' if isinstance(el_id, str) else f"{what} {parts[1] + 1}"
        rest = ".".join(str(p) for p in parts[2:])
        return f"{name}{' field ' + rest if rest else ''}"
    if parts and parts[0] == "initial" and len(parts) >= 2:
        return f'initial condition of "{parts[1]}"' + (f" field {parts[2]}" if len(parts) > 2 else "")
    return "top level" if not parts else "field " + ".".join(str(p) for p in parts)


def _schema_message(data, error) -> str:
    import jsonschema

    # oneOf failures hide the useful reason one level down: pick the branch that matched best.
    # (best_match may itself descend into a oneOf's branches and pick the wrong one, so the
    # branches are examined on the raw error)
    best = error if error.validator in ("oneOf", "anyOf") else jsonschema.exceptions.best_match(
        [error])
    if best.validator in ("oneOf", "anyOf") and isinstance(best.instance, dict):
        # a missing discriminator ("model" of damping, "type" of an excitation) says it all
        branches = best.schema.get(best.validator, [])
        keys = {k: [] for b in branches for k, v in b.get("properties", {}).items()
                if "const" in v}
        for b in branches:
            for k, v in b.get("properties", {}).items():
                if "const" in v:
                    keys[k].append(v["const"])
        for key, values in keys.items():
            if key not in best.instance:
                return (f"{_where(data, best.absolute_path)}: {key!r} is required (one of"
                        f" {', '.join(map(repr, values))})")
    if best.validator in ("oneOf", "anyOf") and best.context:
        # The branches are told apart by a const ("model": "modal", "type": "band"): report the
        # errors of the branch the file meant, else that the discriminator itself is unknown.
        by_branch: dict = {}
        for e in best.context:
            by_branch.setdefault(e.relative_schema_path[0], []).append(e)
        meant = [errs for errs in by_branch.values()
                 if not any(e.validator == "const" for e in errs)]
        consts = [e for e in best.context if e.validator == "const"]
        if len(meant) == 1:
            best = jsonschema.exceptions.best_match(meant[0])
        elif not meant and len(consts) == len(by_branch):
            allowed = ", ".join(repr(e.schema["const"]) for e in consts)
            return (f"{_where(data, consts[0].absolute_path)}: {consts[0].instance!r} is not"
                    f" allowed (allowed: {allowed})")
        else:
            best = jsonschema.exceptions.best_match(best.context)
    where = _where(data, best.absolute_path)
    v = best.validator
    if v == "additionalProperties":
        allowed = sorted(best.schema.get("properties", {}))
        extra = sorted(set(best.instance) - set(allowed)) if isinstance(best.instance, dict) else []
        return (f"{where}: unknown key {', '.join(repr(e) for e in extra)}"
                f" (allowed: {', '.join(allowed)})")
    if v == "required":
        return f"{where}: {best.message}"
    if v == "not":
        return (f"{where}: a torsion model gives each disc an 'inertia' in kg m^2, other kinds a"
                " 'mass' in kg; do not give both")
    if v in ("const", "enum"):
        allowed = best.schema.get("enum", [best.schema.get("const")])
        return f"{where}: {best.instance!r} is not allowed (allowed: {', '.join(map(repr, allowed))})"
    if v == "type":
        return f"{where}: must be of type {best.schema['type']}, got {best.instance!r}"
    if v in ("minimum", "exclusiveMinimum", "maximum", "exclusiveMaximum"):
        op = {"minimum": ">=", "exclusiveMinimum": ">", "maximum": "<=", "exclusiveMaximum": "<"}[v]
        return f"{where}: must be {op} {best.schema[v]}, got {best.instance!r}"
    return f"{where}: {best.message}"


def model_from_dict(data: dict) -> Model:
    """Build a Model from the parsed JSON of a model file (validated against the schema first).

    Raises :class:`ModelFileError` for anything that is not a valid version-1 model.
    """
    if not isinstance(data, dict):
        raise ModelFileError("the file does not hold a JSON object; a model file starts with '{'")
    if data.get("format") != FORMAT:
        raise ModelFileError(f'this is not a Springwright model: "format" must be "{FORMAT}",'
                             f" got {data.get('format')!r}")
    version = data.get("version")
    # JSON Schema counts 2.0 as an integer, so a float version must be refused here too
    if isinstance(version, (int, float)) and not isinstance(version, bool) and version > VERSION:
        raise ModelFileError(f"the file is format version {version}, newer than this program"
                             f" knows (up to {VERSION}); open it with a newer Springwright")
    validator = _validator()
    error = next(iter(validator.iter_errors(data)), None)
    if error is not None:
        raise ModelFileError(_schema_message(data, error))
    try:
        return _build(data)
    except ModelFileError:
        raise
    except ModelError as exc:
        raise ModelFileError(str(exc)) from None


def _build(data: dict) -> Model:
    kind = data["kind"]
    axis = data.get("axis", "x")
    mass_key = "inertia" if kind == "torsion" else "mass"
    masses = tuple(Mass(id=m["id"], x=m["x"], y=m["y"], mass=m[mass_key],
                        label=m.get("label", ""), fixed=tuple(m.get("fixed", ())))
                   for m in data.get("masses", ()))
    anchors = tuple(Anchor(id=a["id"], x=a["x"], y=a["y"], label=a.get("label", ""))
                    for a in data.get("anchors", ()))
    springs = tuple(Spring(id=s["id"], a=s["a"], b=s["b"], k=s["k"], k_t=s.get("k_t", 0.0),
                           label=s.get("label", "")) for s in data.get("springs", ()))
    dampers = tuple(Damper(id=d["id"], a=d["a"], b=d["b"], c=d["c"], label=d.get("label", ""))
                    for d in data.get("dampers", ()))
    dm = data.get("damping", {"model": "none"})
    damping = Damping(model=dm["model"], ratio=dm.get("ratio", 0.0), alpha=dm.get("alpha", 0.0),
                      beta=dm.get("beta", 0.0),
                      mode_ratios=tuple((int(n), r) for n, r in dm.get("mode_ratios", {}).items()))
    excitations = []
    for e in data.get("excitations", ()):
        if e["type"] == "speed":
            excitations.append(Excitation(id=e["id"], type="speed", label=e.get("label", ""),
                                          rpm=e["rpm"], orders=tuple(e.get("orders", (1.0,)))))
        else:
            excitations.append(Excitation(id=e["id"], type="band", label=e.get("label", ""),
                                          f_min_hz=e["f_min_hz"], f_max_hz=e["f_max_hz"]))
    initial = []
    for mass_id, values in data.get("initial", {}).items():
        disp = tuple((d, values[d]) for d in ("x", "y", "theta") if d in values)
        vel = tuple((d, values[_VELOCITY_KEY[d]]) for d in ("x", "y", "theta")
                    if _VELOCITY_KEY[d] in values)
        initial.append(Initial(mass_id=mass_id, displacement=disp, velocity=vel))
    return Model(kind=kind, name=data.get("name", ""), axis=axis, masses=masses, anchors=anchors,
                 springs=springs, dampers=dampers, damping=damping,
                 excitations=tuple(excitations),
                 margin_percent=data.get("margin_percent", 15.0), initial=tuple(initial))


def model_to_dict(model: Model) -> dict:
    """The JSON-ready dict of a model, in the file layout. Defaults are written only where they
    say something (a label equal to the id, an empty ``fixed`` or a zero ``k_t`` are left out)."""
    mass_key = "inertia" if model.kind == "torsion" else "mass"
    out: dict = {"format": FORMAT, "version": VERSION, "name": model.name, "kind": model.kind}
    if model.kind == "line":
        out["axis"] = model.axis

    def labelled(el, d):
        if el.label != el.id:
            d["label"] = el.label
        return d

    out["masses"] = []
    for m in model.masses:
        d = labelled(m, {"id": m.id})
        d.update({"x": m.x, "y": m.y, mass_key: m.mass})
        if m.fixed:
            d["fixed"] = list(m.fixed)
        out["masses"].append(d)
    out["anchors"] = [labelled(a, {"id": a.id}) | {"x": a.x, "y": a.y} for a in model.anchors]
    out["springs"] = []
    for s in model.springs:
        d = labelled(s, {"id": s.id}) | {"a": s.a, "b": s.b, "k": s.k}
        if s.k_t:
            d["k_t"] = s.k_t
        out["springs"].append(d)
    out["dampers"] = [labelled(d, {"id": d.id}) | {"a": d.a, "b": d.b, "c": d.c}
                      for d in model.dampers]
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
        if e.type == "speed":
            d.update({"rpm": e.rpm, "orders": list(e.orders)})
        else:
            d.update({"f_min_hz": e.f_min_hz, "f_max_hz": e.f_max_hz})
        out["excitations"].append(d)
    out["margin_percent"] = model.margin_percent
    out["initial"] = {}
    for ic in model.initial:
        values = {d: v for d, v in ic.displacement}
        values.update({_VELOCITY_KEY[d]: v for d, v in ic.velocity})
        out["initial"][ic.mass_id] = values
    return out


def load_model(path) -> Model:
    """Read a model file. Raises :class:`ModelFileError` naming the file and the problem."""
    if not isinstance(path, (str, os.PathLike)):
        raise ModelFileError(f"load_model: expected a file path, got {type(path).__name__}")
    path = Path(path)
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise ModelFileError(f"{path}: cannot read the file ({exc.strerror or exc})") from None
    try:
        data = json.loads(raw.decode("utf-8"))
    except UnicodeDecodeError:
        raise ModelFileError(f"{path}: the file is not UTF-8 text") from None
    except json.JSONDecodeError as exc:
        raise ModelFileError(f"{path}: not valid JSON at line {exc.lineno}, column {exc.colno}:"
                             f" {exc.msg}") from None
    except RecursionError:
        raise ModelFileError(f"{path}: the JSON is nested too deeply to be a model") from None
    try:
        return model_from_dict(data)
    except ModelFileError as exc:
        raise ModelFileError(f"{path}: {exc}") from None


def dumps_model(model: Model) -> str:
    """The model file's text (JSON, 2-space indent, trailing newline)."""
    return json.dumps(model_to_dict(model), indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def write_atomic(path, text: str) -> None:
    """Write text to ``path`` atomically: temporary file in the same folder, fsync, rename."""
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise FileNotFoundError(2, f"the folder {folder} does not exist", str(path))
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise


def save_model(model: Model, path) -> None:
    """Write a model file atomically. ``load_model(path) == model`` afterwards."""
    if not isinstance(model, Model):
        raise ModelError(f"save_model: expected a Model, got {type(model).__name__}")
    if not isinstance(path, (str, os.PathLike)):
        raise ModelError(f"save_model: expected a file path, got {type(path).__name__}")
    write_atomic(path, dumps_model(model))
