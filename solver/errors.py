"""Errors a user can cause. Messages name the element, the field and what is allowed.

Messages are one printable line whatever a file holds: :func:`one_line` escapes line breaks,
control and format characters and lone surrogates (printable text in any script, emoji
included, is shown as it is), and :func:`shown` gives a value in JSON notation (``null``,
``true``, ``"x"``, the notation of the file) in a few dozen characters (a 10 MB string or an
integer of 5,000 digits does not end up in a message whole). Every :class:`ModelError` message
is made one line and at most :data:`MESSAGE_MAX` characters when the error is raised.
"""

from __future__ import annotations

import json
import math
import numbers as _numbers

#: the longest value shown in a message, in characters
SHOWN_MAX = 60
#: the longest message of a ModelError, in characters (a message quotes ids of up to 200
#: characters and values of up to SHOWN_MAX; anything longer is cut)
MESSAGE_MAX = 1200


class ModelError(ValueError):
    """The model is not valid or cannot be analysed as asked (bad value, unknown id, unreachable target).

    ``path`` is where in the model file the bad value sits, as JSON path parts
    (``("springs", 3, "k")``), when the error comes from a value a file can hold; ``()`` otherwise.
    """

    def __init__(self, message: str = "", path=()):
        super().__init__(capped(one_line(message)))
        self.path = tuple(path)


class ModelFileError(ModelError):
    """A model file cannot be read: not JSON, not a Springwright model, or an invalid model.

    A subclass of :class:`ModelError`, so one ``except ModelError`` catches both. The message is
    one line: ``<file>: <JSON path>: <problem and what is allowed>``.
    """


def one_line(text: str) -> str:
    """``text`` with every character that is not printable escaped (``\\n``, ``\\x1b``,
    ``\\u2028``, ``\\udc80``...): it prints as one line and cannot move a terminal's cursor."""
    text = str(text)
    if text.isprintable():
        return text
    out = []
    for ch in text:
        if ch.isprintable():
            out.append(ch)
        elif ch in "\n\r\t":
            out.append({"\n": "\\n", "\r": "\\r", "\t": "\\t"}[ch])
        else:
            code = ord(ch)
            out.append(f"\\x{code:02x}" if code < 0x100 else
                       f"\\u{code:04x}" if code < 0x10000 else f"\\U{code:08x}")
    return "".join(out)


def capped(text: str, limit: int = MESSAGE_MAX) -> str:
    """``text`` cut to ``limit`` characters (ending in ``…``)."""
    return text if len(text) <= limit else text[: limit - 1] + "…"


def shown(value, limit: int = SHOWN_MAX) -> str:
    """A short, one-line text of a value for a message, in JSON notation as the file writes it
    (``null``, ``true``, ``"abc"``, ``{"a": 1}``; ``"abc…`` past ``limit``)."""
    if isinstance(value, int) and not isinstance(value, bool) and value.bit_length() > 200:
        # repr() of an integer past 4,300 digits raises ValueError; its size says enough
        digits = int(value.bit_length() * math.log10(2)) + 1
        return f"{'minus ' if value < 0 else ''}a whole number of about {digits} digits"
    if isinstance(value, (list, tuple)) and len(value) > 10:
        return f"a list of {len(value)} items"
    if isinstance(value, dict) and len(value) > 10:
        return f"an object of {len(value)} keys"
    if isinstance(value, str) and len(value) > 2 * limit:
        # cut before encoding: a 20 MB text costs nothing here
        return one_line(json.dumps(value[: 2 * limit], ensure_ascii=False))[: limit - 1] + "…"
    text = one_line(_json_text(value))
    return text if len(text) <= limit else text[: limit - 1] + "…"


def _json_text(value) -> str:
    """JSON notation of a value where it has one (numpy numbers as plain numbers), else repr."""
    if isinstance(value, _numbers.Integral) and not isinstance(value, bool):
        return str(int(value))
    if isinstance(value, _numbers.Real) and not isinstance(value, bool) and \
            type(value) is not float:
        try:
            value = float(value)
        except (TypeError, ValueError, OverflowError):
            pass
    try:
        if value is None or isinstance(value, (bool, str, int, float, list, tuple, dict)):
            return json.dumps(value, ensure_ascii=False)
    except (TypeError, ValueError, RecursionError):
        pass   # a container holding something JSON has no notation for: repr below
    try:
        return repr(value)
    except Exception:   # noqa: BLE001  (a value whose repr fails still gets a message)
        return f"<{type(value).__name__}>"


def is_number(value) -> bool:
    """True for real numbers (int, float, numpy floats and ints); False for bool, text, None."""
    t = type(value)
    if t is float or t is int:
        return True
    return isinstance(value, _numbers.Real) and not isinstance(value, bool) and \
        t.__name__ != "bool_"


def number(value, what: str, kind=float):
    """``kind(value)`` (float or complex), or a ModelError naming ``what`` when it is not a number."""
    if isinstance(value, (str, bytes)) or value is None or isinstance(value, bool):
        raise ModelError(f"{what} must be a number, got {shown(value)}")
    try:
        return kind(value)
    except (TypeError, ValueError, OverflowError):
        raise ModelError(f"{what} must be a number, got {shown(value)}") from None


def numbers(values, what: str):
    """A float ndarray of ``values``, or a ModelError naming ``what`` when they are not numbers."""
    import numpy as np

    try:
        arr = np.asarray(values)
        if arr.dtype.kind not in "biuf":
            raise TypeError
        return np.asarray(arr, float)
    except (TypeError, ValueError, OverflowError):
        raise ModelError(f"{what} must be numbers, got {shown(values, 80)}") from None


def mode_number(mode, n_modes: int, who: str) -> int:
    """``mode`` as an int from 1 to ``n_modes``, or a ModelError naming ``who`` and the range
    (a mode number 0 or -1 would otherwise pick the last mode by Python's negative indexing)."""
    if not (_finite_number(mode) and float(mode) == int(mode)) or not 1 <= int(mode) <= n_modes:
        have = f"the model has {n_modes} mode{'s' if n_modes != 1 else ''}" if n_modes else \
            "the model has no modes"
        raise ModelError(f"{who}: mode must be a whole number from 1 to {max(n_modes, 1)}"
                         f" ({have}), got {shown(mode)}")
    return int(mode)


# ------------------------------------------------------------------ arguments of public functions
# What each argument name of the public solver functions must be; a bad one is a ModelError
# naming the function and the argument before the function runs (so that a TypeError deep inside
# numpy stays a sign of a bug, never of a user's value).
_WHOLE = {"count", "mode"}
_SCALARS = {"f1_hz", "f2_hz", "zeta1", "zeta2", "target_hz", "value", "margin_percent",
            "f_min_hz", "f_max_hz", "prominence", "asd"}
_REAL_ARRAYS = {"freqs_hz", "times"}
_COMPLEX_ARRAYS = {"values", "transfer", "transmissibility"}
_INITIAL = {"x0", "v0"}
_RESULT_NEEDS = {"result": ("system", "shapes", "eigenvalues"),
                 "modal": ("frequencies_hz", "is_zero")}


def _finite_number(value) -> bool:
    return _real(value) and math.isfinite(float(value))


def _real(value) -> bool:
    """A real number a double can hold (NaN and inf included: functions say why they refuse)."""
    if not is_number(value):
        return False
    try:
        float(value)
    except (OverflowError, TypeError, ValueError):
        return False
    return True


def _array_problem(value, complex_ok: bool) -> str | None:
    import numpy as np

    try:
        arr = np.asarray(value)
    except (TypeError, ValueError, OverflowError):
        return "must be numbers"
    if arr.dtype.kind not in ("iufc" if complex_ok else "iuf"):
        return "must be numbers" + ("" if complex_ok else " (real)")
    # responses may be infinite (an undamped resonance); frequencies, times, states may not
    if not complex_ok and not np.all(np.isfinite(arr)):
        return "must be finite numbers"
    return None


def _argument_problem(name: str, value) -> str | None:
    from .assemble import System
    from .model import Model
    from .modes import ModalResult

    if name == "model" and not isinstance(value, Model):
        return "must be a solver.Model"
    if name == "model_or_system" and not isinstance(value, (Model, System)):
        return "must be a solver.Model or a System from assemble()"
    # a result is taken by what it offers (tests and scripts pass light stand-ins)
    if name in ("result", "modal") and not isinstance(value, ModalResult) and not all(
            hasattr(value, a) for a in _RESULT_NEEDS[name]):
        return "must be a ModalResult from modes()"
    if name in _WHOLE and not (_finite_number(value) and float(value) == int(value)):
        return "must be a whole number"
    if name == "mode" and value < 1:
        return "must be a whole number from 1 (mode 1 is the lowest)"
    if name in _SCALARS and not _real(value):
        return "must be a number"
    if name in _REAL_ARRAYS or name in _COMPLEX_ARRAYS:
        problem = _array_problem(value, name in _COMPLEX_ARRAYS)
        if problem is None and name in ("freqs_hz", "times") and getattr(
                __import__("numpy").asarray(value), "ndim", 0) > 1:
            problem = "must be a list of numbers"
        return problem
    if name in _INITIAL:
        from collections.abc import Mapping

        if isinstance(value, Mapping):
            return None if all(_finite_number(v) for v in value.values()) else \
                "must map (mass id, direction) to finite numbers"
        return _array_problem(value, False)
    return None


def checked_arguments(func=None, **rules):
    """Decorator for public solver functions: arguments are checked by name (``model``,
    ``count``, ``freqs_hz``...) and a bad one raises :class:`ModelError` naming the function,
    the argument and what it must be. ``None`` passes where it is the default. ``rules`` checks
    an argument as another name would be (``model="model_or_system"``)."""
    import functools
    import inspect

    if func is None:
        return functools.partial(checked_arguments, **rules)
    sig = inspect.signature(func)
    names = [(n, rules.get(n, n)) for n in sig.parameters if rules.get(n, n) in _CHECKED]
    # (model argument, result argument) pairs whose result must be of that model
    models = [n for n, r in names if r in ("model", "model_or_system")]
    results = [n for n, r in names if r in ("result", "modal")]
    pairs = [(m, r) for m in models[:1] for r in results]

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        bound = sig.bind(*args, **kwargs)   # a wrong call is a TypeError, as for any function
        for name, rule in names:
            if name not in bound.arguments:
                continue
            value = bound.arguments[name]
            if value is None and sig.parameters[name].default is None:
                continue
            problem = _argument_problem(rule, value)
            if problem:
                raise ModelError(f"{func.__name__}: {name} {problem}, got {shown(value)}")
        if pairs:
            _check_same_model(func.__name__, bound.arguments, pairs)
        return func(*args, **kwargs)
    return wrapper


def _check_same_model(func_name: str, arguments: dict, pairs) -> None:
    """A result (``result=``, ``modal=``) passed beside a model must be that model's: its modes
    would otherwise be used for another model's matrices (a shape error deep in numpy, or,
    worse, wrong numbers with no error at all). The same Model object, or an equal one (a copy
    that came back from a worker process), is accepted. A stand-in without ``system`` (tests
    pass bare frequencies) cannot be checked and is taken as it is."""
    from .assemble import System

    for model_name, result_name in pairs:
        given, result = arguments.get(model_name), arguments.get(result_name)
        system = getattr(result, "system", None)
        if given is None or result is None or not isinstance(system, System):
            continue
        if given is system or given is system.model:
            continue
        model = given.model if isinstance(given, System) else given
        if model is system.model or model == system.model:
            continue
        raise ModelError(f"{func_name}: {result_name} holds the modes of another model, not of"
                         f" {model_name}; solve this model (solver.modes) and pass that result")


_CHECKED = ({"model", "model_or_system", "result", "modal"} | _WHOLE | _SCALARS | _REAL_ARRAYS
            | _COMPLEX_ARRAYS | _INITIAL)
