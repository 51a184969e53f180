"""Errors a user can cause. Messages name the element, the field and what is allowed.

Messages are one printable line whatever a file holds: :func:`one_line` escapes line breaks,
control and format characters and lone surrogates, and :func:`shown` gives a value in a few dozen
characters (a 10 MB string or an integer of 5,000 digits does not end up in a message whole).
"""

from __future__ import annotations

import math
import numbers as _numbers

#: the longest value shown in a message, in characters
SHOWN_MAX = 60


class ModelError(ValueError):
    """The model is not valid or cannot be analysed as asked (bad value, unknown id, unreachable target).

    ``path`` is where in the model file the bad value sits, as JSON path parts
    (``("springs", 3, "k")``), when the error comes from a value a file can hold; ``()`` otherwise.
    """

    def __init__(self, message: str = "", path=()):
        super().__init__(message)
        self.path = tuple(path)


class ModelFileError(ModelError):
    """A model file cannot be read: not JSON, not a Springwright model, or an invalid model.

    A subclass of :class:`ModelError`, so one ``except ModelError`` catches both. The message is
    one line: ``<file>: <JSON path>: <problem and what is allowed>``.
    """


def one_line(text: str) -> str:
    """``text`` with every character that is not printable escaped (``\\n``, ``\\x1b``,
    ``\\u2028``, ``\\udc80``...), so that it prints as one line and cannot move a terminal's cursor."""
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


def shown(value, limit: int = SHOWN_MAX) -> str:
    """A short, one-line representation of a value for a message (``'abc…'`` past ``limit``)."""
    if isinstance(value, int) and not isinstance(value, bool) and value.bit_length() > 200:
        # repr() of an integer past 4,300 digits raises ValueError; its size says enough
        digits = int(value.bit_length() * math.log10(2)) + 1
        return f"{'-' if value < 0 else ''}an integer of about {digits} digits"
    if isinstance(value, (list, tuple)) and len(value) > 10:
        return f"a list of {len(value)} items"
    if isinstance(value, dict) and len(value) > 10:
        return f"an object of {len(value)} keys"
    try:
        text = repr(value)
    except Exception:   # a value whose repr itself fails still gets a message
        text = f"<{type(value).__name__}>"
    text = one_line(text)
    return text if len(text) <= limit else text[: limit - 1] + "…"


def is_number(value) -> bool:
    """True for real numbers (int, float, numpy floats and ints); False for bool, text, None."""
    return isinstance(value, _numbers.Real) and not isinstance(value, bool) and \
        type(value).__name__ != "bool_"


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
