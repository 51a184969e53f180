"""How a message names an element for a person: by its label, with its id beside it.

``spring "Isolator pad" (s4)`` when the label differs from the id, ``spring "s4"`` when it does
not. The id stays in every message because scripts, files and the JSON output use ids: a person
who reads a label must still be able to find the element in the file. A label is free text of up
to 1000 characters with line breaks allowed, so it is written on one line (:func:`one_line`) and
cut to :data:`LABEL_SHOWN` characters; a message stays one short line whatever the label holds.

This module imports nothing from the model, so the model's own validation can use it.
"""

from __future__ import annotations

from .errors import one_line

#: The most characters of a label a message shows (a longer one ends in "…").
LABEL_SHOWN = 40

#: The trade word for each element class, as messages use it.
_KIND = {"Mass": "mass", "Anchor": "anchor", "Spring": "spring", "Damper": "dashpot",
         "Excitation": "excitation", "Gear": "gear"}


def quoted(element_id: str, label: str | None = None) -> str:
    """``"Isolator pad" (s4)``, or ``"s4"`` when there is no label or it equals the id."""
    element_id = one_line(element_id)
    if not label or label == element_id:
        return f'"{element_id}"'
    text = one_line(label)
    if len(text) > LABEL_SHOWN:
        text = text[: LABEL_SHOWN - 1] + "…"
    return f'"{text}" ({element_id})'


def named(el, kind: str | None = None) -> str:
    """``spring "Isolator pad" (s4)`` for an element (a Mass, Spring...); ``kind`` replaces the
    word for its type (``"disc"`` for a mass of a torsion model)."""
    kind = kind or _KIND.get(type(el).__name__, type(el).__name__.lower())
    return f"{kind} {quoted(el.id, el.label)}"


def quoted_id(model, element_id: str) -> str:
    """:func:`quoted` for the element of ``model`` with this id (just ``"id"`` when no element
    has it)."""
    el = model.find(element_id)
    return quoted(element_id, el.label if el is not None else None)


def named_id(model, element_id: str, kind: str | None = None) -> str:
    """:func:`named` for the element of ``model`` with this id; ``kind "id"`` (or ``"id"``
    without a ``kind``) when no element has it."""
    el = model.find(element_id)
    if el is None:
        return f"{kind} {quoted(element_id)}" if kind else quoted(element_id)
    return named(el, kind)


__all__ = ["LABEL_SHOWN", "named", "named_id", "quoted", "quoted_id"]
