"""Errors a user can cause. Messages name the element, the field and what is allowed."""


class ModelError(ValueError):
    """The model is not valid or cannot be analysed as asked (bad value, unknown id, unreachable target)."""


class ModelFileError(ModelError):
    """A model file cannot be read: not JSON, not a Springwright model, or an invalid model.

    A subclass of :class:`ModelError`, so one ``except ModelError`` catches both.
    """
