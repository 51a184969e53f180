"""The model file's JSON Schema compiled into plain Python checks.

A general JSON Schema validator walks its schema for every value it checks, about 100 µs per
element of a model file: 20 s for a file at the element limit. The schema here uses a small part of
draft 2020-12, so it is compiled once into closures (a few µs per element) that stop at the first
problem and say where it is as a JSON path. Keywords outside that part are refused when compiling,
so the schema cannot grow a rule this module would silently skip. ``tests/solver/test_bad_input.py``
checks that this agrees with the ``jsonschema`` package (the reference implementation) on
thousands of mutated files.

Semantics follow the JSON Schema 2020-12 validation vocabulary: ``number`` is any int or float but
not a bool; ``integer`` also takes a float with no fractional part; ``const``/``enum`` compare as
JSON does (``1 == 1.0``, ``true != 1``); a ``pattern`` is searched, not anchored, and its ``$``
matches only at the very end (as in ECMA-262, where Python's ``$`` also matches before a final
newline).
"""

from __future__ import annotations

import re
from collections.abc import Callable

from .errors import shown

Path = tuple
Check = Callable[[object, Path], None]

_ANNOTATIONS = {"$schema", "$id", "title", "description", "$defs", "$comment", "default"}


class Invalid(Exception):
    """The first problem found: ``path`` (JSON path parts) and ``problem`` (text)."""

    def __init__(self, path: Path, problem: str):
        super().__init__(problem)
        self.path = tuple(path)
        self.problem = problem


class SchemaUnsupported(Exception):
    """The schema uses a keyword this compiler does not implement."""


def _NOOP(v, p):
    return None


_PLAIN = frozenset({int, float, str, bool, type(None), list, dict})
# exact types that pass a type check at once (subclasses take the slower general test)
_FAST_TYPES = {"number": (int, float), "integer": (int,), "string": (str,), "object": (dict,),
               "array": (list,), "boolean": (bool,), "null": (type(None),)}

_TYPE_WORDS = {"number": "a number", "integer": "a whole number", "string": "a text (string)",
               "object": "an object {...}", "array": "a list [...]", "boolean": "true or false",
               "null": "null"}


def _is_type(value, name: str) -> bool:
    if name == "number":
        return isinstance(value, (int, float)) and not isinstance(value, bool)
    if name == "integer":
        return (isinstance(value, int) and not isinstance(value, bool)) or (
            isinstance(value, float) and value.is_integer())
    if name == "string":
        return isinstance(value, str)
    if name == "object":
        return isinstance(value, dict)
    if name == "array":
        return isinstance(value, list)
    if name == "boolean":
        return isinstance(value, bool)
    if name == "null":
        return value is None
    raise SchemaUnsupported(f"type {name!r}")


def json_equal(a, b) -> bool:
    """Equality as JSON Schema defines it: numbers by value, booleans apart from numbers."""
    if isinstance(a, bool) or isinstance(b, bool):
        return type(a) is type(b) and a == b
    if _is_type(a, "number") and _is_type(b, "number"):
        return a == b
    if isinstance(a, list) and isinstance(b, list):
        return len(a) == len(b) and all(json_equal(x, y) for x, y in zip(a, b))
    if isinstance(a, dict) and isinstance(b, dict):
        return a.keys() == b.keys() and all(json_equal(a[k], b[k]) for k in a)
    return type(a) is type(b) and a == b


def _key(value):
    """A hashable key equal for JSON-equal values (for uniqueItems)."""
    if isinstance(value, bool):
        return ("b", value)
    if _is_type(value, "number"):
        return ("n", value)
    if isinstance(value, list):
        return ("l", tuple(_key(v) for v in value))
    if isinstance(value, dict):
        return ("d", frozenset((k, _key(v)) for k, v in value.items()))
    return (type(value).__name__, value)


def _ecma_pattern(pattern: str) -> re.Pattern:
    # ECMA-262 `$` (no multiline flag) matches only at the end; Python's also before a final "\n"
    if pattern.endswith("$") and not pattern.endswith("\\$"):
        pattern = pattern[:-1] + r"\Z"
    return re.compile(pattern)


class Compiler:
    """Compiles a schema (a dict) into a check ``check(value, path)`` raising :class:`Invalid`.

    ``describe(value)`` gives the text of a value in messages; ``special(value)`` may return the
    problem with a value that is not plain JSON at all (a number beyond double precision, a
    duplicated key), checked wherever a value is examined.
    """

    def __init__(self, root: dict, describe=shown, special=lambda value: None):
        self.root = root
        self.describe = describe
        self.special = special
        self._refs: dict[str, Check] = {}

    def compile(self, schema=None) -> Check:
        return self._compile(self.root if schema is None else schema)

    # ------------------------------------------------------------------ helpers
    def _ref(self, ref: str) -> Check:
        if ref not in self._refs:
            if not ref.startswith("#/"):
                raise SchemaUnsupported(f"$ref {ref!r} (only local references)")
            target = self.root
            for part in ref[2:].split("/"):
                target = target[part.replace("~1", "/").replace("~0", "~")]
            holder: list[Check] = []
            self._refs[ref] = lambda v, p: holder[0](v, p)   # while compiling (recursion)
            holder.append(self._compile(target))
            self._refs[ref] = holder[0]
        return self._refs[ref]

    def _compile(self, schema) -> Check:
        if schema is True:
            return lambda v, p: None
        if schema is False:
            def never(v, p):
                raise Invalid(p, "no value is allowed here")
            return never
        unknown = set(schema) - _ANNOTATIONS - _KEYWORDS
        if unknown:
            raise SchemaUnsupported(", ".join(sorted(unknown)))
        checks: list[Check] = []
        for keyword in _ORDER:
            if keyword in schema:
                c = getattr(self, "_kw_" + keyword.lstrip("$"))(schema[keyword], schema)
                if c is not _NOOP:
                    checks.append(c)
        special = self.special
        # (a model file has ~10^6 values: one call per value and keyword, nothing more)
        if len(checks) == 1:
            only = checks[0]

            def check(value, path):
                if type(value) not in _PLAIN:
                    problem = special(value)
                    if problem:
                        raise Invalid(path, problem)
                only(value, path)
        else:
            def check(value, path):
                if type(value) not in _PLAIN:
                    problem = special(value)
                    if problem:
                        raise Invalid(path, problem)
                for c in checks:
                    c(value, path)
        return check

    # ------------------------------------------------------------------ keywords
    def _kw_ref(self, ref, schema) -> Check:
        return self._ref(ref)

    def _kw_type(self, types, schema) -> Check:
        names = [types] if isinstance(types, str) else list(types)
        for n in names:
            _is_type(None, n)   # refuses an unknown type name now
        # the allowed range and the unit (from the description) belong in the same message
        words = " or ".join(_TYPE_WORDS[n] for n in names) + "".join(
            f" {op} {self.describe(schema[k])}" for k, op in _BOUNDS if k in schema) + _unit(schema)
        describe = self.describe
        fast = frozenset(t for n in names for t in _FAST_TYPES[n])

        def check(v, p):
            if type(v) not in fast and not any(_is_type(v, n) for n in names):
                raise Invalid(p, f"must be {words}, got {describe(v)}")
        return check

    def _kw_const(self, const, schema) -> Check:
        describe = self.describe

        def check(v, p):
            if not json_equal(v, const):
                raise Invalid(p, f"{describe(v)} is not allowed (allowed: {describe(const)})")
        return check

    def _kw_enum(self, values, schema) -> Check:
        describe = self.describe
        allowed = ", ".join(describe(c) for c in values)

        def check(v, p):
            if not any(json_equal(v, c) for c in values):
                raise Invalid(p, f"{describe(v)} is not allowed (allowed: {allowed})")
        return check

    def _bound(op, word):   # a factory used in the class body, deleted below
        def kw(self, limit, schema) -> Check:
            describe, unit = self.describe, _unit(schema)

            def check(v, p):
                if _is_type(v, "number") and not op(v, limit):
                    raise Invalid(p, f"must be {word} {describe(limit)}{unit}, got {describe(v)}")
            return check
        return kw

    _kw_minimum = _bound(lambda v, m: v >= m, ">=")
    _kw_maximum = _bound(lambda v, m: v <= m, "<=")
    _kw_exclusiveMinimum = _bound(lambda v, m: v > m, ">")
    _kw_exclusiveMaximum = _bound(lambda v, m: v < m, "<")
    del _bound

    def _kw_minLength(self, n, schema) -> Check:
        def check(v, p):
            if isinstance(v, str) and len(v) < n:
                raise Invalid(p, "must not be empty" if n == 1 else
                              f"must have at least {n} characters")
        return check

    def _kw_maxLength(self, n, schema) -> Check:
        def check(v, p):
            if isinstance(v, str) and len(v) > n:
                raise Invalid(p, f"has {len(v)} characters; at most {n} are allowed")
        return check

    def _kw_pattern(self, pattern, schema) -> Check:
        rx, describe = _ecma_pattern(pattern), self.describe
        # a person reads the schema's description of the value, not the regular expression
        what = schema.get("description")
        problem = f"is not {what}" if isinstance(what, str) else "is not in the form allowed here"

        def check(v, p):
            if isinstance(v, str) and not rx.search(v):
                raise Invalid(p, f"{describe(v)} {problem}")
        return check

    def _kw_minItems(self, n, schema) -> Check:
        def check(v, p):
            if isinstance(v, list) and len(v) < n:
                raise Invalid(p, f"must list at least {n} item{'s' if n != 1 else ''}")
        return check

    def _kw_maxItems(self, n, schema) -> Check:
        def check(v, p):
            if isinstance(v, list) and len(v) > n:
                raise Invalid(p, f"lists {len(v)} items; at most {n} are allowed")
        return check

    def _kw_uniqueItems(self, unique, schema) -> Check:
        describe = self.describe

        def check(v, p):
            if unique and isinstance(v, list):
                seen = set()
                for i, item in enumerate(v):
                    k = _key(item)
                    if k in seen:
                        raise Invalid(p + (i,), f"{describe(item)} is listed twice")
                    seen.add(k)
        return check

    def _kw_items(self, sub, schema) -> Check:
        item = self._compile(sub)

        def check(v, p):
            if isinstance(v, list):
                for i, x in enumerate(v):
                    item(x, p + (i,))
        return check

    def _kw_maxProperties(self, n, schema) -> Check:
        def check(v, p):
            if isinstance(v, dict) and len(v) > n:
                raise Invalid(p, f"has {len(v)} keys; at most {n} are allowed")
        return check

    def _kw_required(self, names, schema) -> Check:
        describe = self.describe

        def check(v, p):
            if isinstance(v, dict):
                for n in names:
                    if n not in v:
                        raise Invalid(p, f"{describe(n)} is required")
        return check

    def _kw_additionalProperties(self, sub, schema) -> Check:
        known = set(schema.get("properties", {}))
        extra = self._compile(sub)
        allowed = ", ".join(sorted(known))
        describe = self.describe

        def check(v, p):
            if not isinstance(v, dict) or known.issuperset(v):
                return
            for k in v:
                if k in known:
                    continue
                if sub is False:
                    raise Invalid(p, f"unknown key {describe(k)}"
                                  + (f" (allowed: {allowed})" if allowed else ""))
                extra(v[k], p + (k,))
        return check

    def _kw_properties(self, props, schema) -> Check:
        subs = [(k, self._compile(s)) for k, s in props.items()]

        def check(v, p):
            if isinstance(v, dict):
                for k, sub in subs:
                    if k in v:
                        sub(v[k], p + (k,))
        return check

    def _kw_propertyNames(self, sub, schema) -> Check:
        name = self._compile(sub)
        describe = self.describe

        def check(v, p):
            if isinstance(v, dict):
                for k in v:
                    if not isinstance(k, str):
                        raise Invalid(p, f"key {describe(k)} is not a text")
                    try:
                        name(k, p)
                    except Invalid as exc:
                        raise Invalid(p, f"key {exc.problem}") from None
        return check

    def _kw_allOf(self, subs, schema) -> Check:
        checks = [self._compile(s) for s in subs]

        def check(v, p):
            for c in checks:
                c(v, p)
        return check

    def _kw_not(self, sub, schema) -> Check:
        inner = self._compile(sub)
        only = sub.get("required") if isinstance(sub, dict) and set(sub) == {"required"} else None
        describe = self.describe

        def check(v, p):
            try:
                inner(v, p)
            except Invalid:
                return
            if only and len(only) == 1:
                raise Invalid(p, f"{describe(only[0])} is not allowed here")
            raise Invalid(p, "is not allowed in this form")
        return check

    def _kw_if(self, cond, schema) -> Check:
        test = self._compile(cond)
        then = self._compile(schema.get("then", True))
        other = self._compile(schema.get("else", True))
        reason = _condition_text(cond, self.describe)

        def check(v, p):
            try:
                test(v, ())
            except Invalid:
                branch, why = other, reason[1]
            else:
                branch, why = then, reason[0]
            try:
                branch(v, p)
            except Invalid as exc:
                raise Invalid(exc.path, exc.problem + (f" ({why})" if why else "")) from None
        return check

    def _kw_then(self, sub, schema) -> Check:   # compiled with "if"
        self._compile(sub)
        return _NOOP

    _kw_else = _kw_then

    def _kw_oneOf(self, subs, schema) -> Check:
        return self._alternatives(subs, exactly_one=True)

    def _kw_anyOf(self, subs, schema) -> Check:
        return self._alternatives(subs, exactly_one=False)

    def _alternatives(self, subs, exactly_one: bool) -> Check:
        branches = [self._compile(s) for s in subs]
        # forms told apart by a constant ("model": "modal", "type": "band"): the discriminator
        tags = {}
        for i, s in enumerate(subs):
            for k, v in (s.get("properties", {}) if isinstance(s, dict) else {}).items():
                if isinstance(v, dict) and "const" in v:
                    tags.setdefault(k, {})[i] = v["const"]
        key = next((k for k, t in tags.items() if len(t) == len(subs)), None)
        describe = self.describe

        def check(v, p):
            errors, ok = [], 0
            for b in branches:
                try:
                    b(v, p)
                    ok += 1
                    if not exactly_one:
                        return
                except Invalid as exc:
                    errors.append(exc)
            if ok == 1 or (ok and not exactly_one):
                return
            if ok > 1:
                raise Invalid(p, "matches more than one of the allowed forms")
            if key is not None and isinstance(v, dict):
                allowed = ", ".join(describe(c) for c in tags[key].values())
                if key not in v:
                    raise Invalid(p, f"{describe(key)} is required (one of {allowed})")
                meant = [i for i, c in tags[key].items() if json_equal(v[key], c)]
                if meant:
                    raise errors[meant[0]]
                raise Invalid(p + (key,), f"{describe(v[key])} is not allowed (allowed: {allowed})")
            raise min(errors, key=lambda e: -len(e.path))
        return check


_BOUNDS = [("minimum", ">="), ("exclusiveMinimum", ">"), ("maximum", "<="),
           ("exclusiveMaximum", "<")]


def _unit(schema) -> str:
    """`` (kg; 0 makes a massless junction)`` from a value's description, or ""."""
    text = schema.get("description") if isinstance(schema, dict) else None
    return f" ({text})" if isinstance(text, str) and len(text) < 80 else ""


def _condition_text(cond, describe) -> tuple[str, str]:
    """('because kind is "torsion"', 'because kind is not "torsion"') for an if on one const."""
    if isinstance(cond, dict) and set(cond) == {"required"} and len(cond["required"]) == 1:
        k = cond["required"][0]
        return f"as {k} is given", f"as {k} is not given"
    props = cond.get("properties", {}) if isinstance(cond, dict) else {}
    if len(props) == 1:
        (k, sub), = props.items()
        if isinstance(sub, dict) and "const" in sub:
            c = describe(sub["const"])
            return f"as {k} is {c}", f"as {k} is not {c}"
    return "", ""


# keyword order: what a value is before what it holds, so the first message is the most telling
_ORDER = ["$ref", "type", "const", "enum", "minimum", "maximum", "exclusiveMinimum",
          "exclusiveMaximum", "minLength", "maxLength", "pattern", "minItems", "maxItems",
          "uniqueItems", "items", "maxProperties", "required", "additionalProperties",
          "propertyNames", "properties", "oneOf", "anyOf", "allOf", "not", "if", "then", "else"]
_KEYWORDS = set(_ORDER)


def compile_schema(schema: dict, describe=shown, special=lambda value: None) -> Check:
    """A check ``check(value, path=())`` that raises :class:`Invalid` at the first problem."""
    check = Compiler(schema, describe, special).compile()
    return lambda value, path=(): check(value, tuple(path))
