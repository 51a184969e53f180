"""The names a person reads for a model's elements: their labels, never their ids.

A label is free text and two elements may share one (two "Isolator" pads); where they do, the id
is added in brackets so every name shown still points at one element.
"""

from __future__ import annotations


def _elements(model):
    return (list(model.masses) + list(model.anchors) + list(model.springs) + list(model.dampers)
            + list(model.excitations))


#: The tables of the last few models (by identity: a Model is immutable), so the many callers
#: of one edit's update (every choice of a list names its element) build it once.
_RECENT: list = []


def names(model) -> dict[str, str]:
    """``{id: name shown}`` for every mass, anchor, spring, dashpot and excitation source (the
    caller must not change the dict returned: it is shared)."""
    for m, table in _RECENT:
        if m is model:
            return table
    table = _names(model)
    _RECENT.insert(0, (model, table))
    del _RECENT[4:]
    return table


def _names(model) -> dict[str, str]:
    els = _elements(model)
    count: dict[str, int] = {}
    for e in els:
        count[e.label] = count.get(e.label, 0) + 1
    return {e.id: (e.label if count[e.label] == 1 or e.label == e.id else f"{e.label} ({e.id})")
            for e in els}


def name_of(model, element_id: str) -> str:
    """The name shown for one element (the id itself when no element has it)."""
    return names(model).get(element_id, element_id)


def dof_name(model, mass_id: str, direction: str, table=None) -> str:
    """A degree of freedom as read: ``Unit under test``, or ``Camera x`` when a mass moves in more
    than one direction."""
    table = names(model) if table is None else table
    name = table.get(mass_id, mass_id)
    return f"{name} {direction}" if len(model.directions) > 1 else name


def labels(model) -> dict[str, str]:
    """``{id: label}`` as written in the model file (for machine-readable output)."""
    return {e.id: e.label for e in _elements(model)}


__all__ = ["dof_name", "labels", "name_of", "names"]
