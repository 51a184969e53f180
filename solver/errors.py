"""Errors a user can cause. Messages name the element, the field and what is allowed."""


class ModelError(ValueError):
    """The model is not valid or cannot be analysed as asked (bad value, unknown id, unreachable target)."""


class ModelFileError(ModelError):
    """A model file cannot be read: not JSON, not a Springwright model, or an invalid model.

    A subclass of :class:`ModelError`, so one ``except ModelError`` catches both.
    """


def number(value, what: str, kind=float):
    """``kind(value)`` (float or complex), or a ModelError naming ``what`` when it is not a number."""
    if isinstance(value, (str, bytes)) or value is None or isinstance(value, bool):
        raise ModelError(f"{what} must be a number, got {value!r}")
    try:
        return kind(value)
    except (TypeError, ValueError):
        raise ModelError(f"{what} must be a number, got {value!r}") from None


def numbers(values, what: str):
    """A float ndarray of ``values``, or a ModelError naming ``what`` when they are not numbers."""
    import numpy as np

    try:
        arr = np.asarray(values)
        if arr.dtype.kind not in "biuf":
            raise TypeError
        return np.asarray(arr, float)
    except (TypeError, ValueError):
        raise ModelError(f"{what} must be numbers, got {values!r:.80}") from None
