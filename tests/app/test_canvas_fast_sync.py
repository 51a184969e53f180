"""The canvas refreshes only the items an edit changed (``ModelScene._sync_changed_only``): what
it then shows must equal a canvas drawn afresh from the same model.

Common practice (a cache must never change the picture): after each edit of a random sequence
(values typed, masses and anchors moved, labels renamed, undo and redo), every item of the
canvas has the same position, label text, tooltip, end points and drawn symbol as on a second
canvas of the same document that refreshes every item after every edit, and as on one built from
scratch for the edited model; and no two labels shown overlap. (Where a label sits depends on
where the labels were before, on every canvas: places found earlier are reused, so places are
not compared.)
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from app.canvas.scene import ModelScene
from app.document import Document
from solver.model import Anchor, Damper, Mass, Model, Spring


def _model(n=12, planar=False):
    rng = np.random.default_rng(7)
    masses = tuple(Mass(f"m{i}", 0.4 * (i + 1), 0.2 * (i % 3) if planar else 0.0,
                        float(rng.uniform(0.5, 2.0)), label=f"part {i}") for i in range(n))
    springs = [Spring("s0", "g", "m0", 4e4, label="mount")]
    springs += [Spring(f"s{i}", f"m{i - 1}", f"m{i}", float(rng.uniform(1e4, 5e4)))
                for i in range(1, n)]
    springs.append(Spring("s_end", f"m{n - 1}", "g2", 2e4))
    return Model(kind="planar" if planar else "line", masses=masses,
                 anchors=(Anchor("g", 0.0, 0.0), Anchor("g2", 0.4 * (n + 1), 0.0)),
                 springs=tuple(springs), dampers=(Damper("c1", "m2", "m3", 8.0),))


def _state(scene):
    out = {}
    for eid, item in sorted(scene.nodes.items()) + sorted(scene.links.items()):
        lab = item.label_item
        row = (round(item.pos().x(), 6), round(item.pos().y(), 6), lab.text(), item.toolTip())
        if hasattr(item, "endpoints"):
            row += tuple(round(c, 4) for p in item.endpoints() for c in (p.x(), p.y()))
            # the symbol as drawn (a spring's coil, a dashpot's piston), not only its ends
            drawn = item.mapToScene(item._path)
            row += tuple(round(drawn.elementAt(i).x, 4) for i in range(drawn.elementCount()))
            row += tuple(round(drawn.elementAt(i).y, 4) for i in range(drawn.elementCount()))
        else:
            row += tuple(round(v, 4) for v in item.mapRectToScene(item.boundingRect()).getRect())
        if hasattr(item, "normal"):       # an anchor's hatching faces its neighbour
            row += (round(item.normal.x(), 6), round(item.normal.y(), 6))
        out[eid] = row
    return out


def _edit(doc, rng):
    model = doc.model
    kind = rng.integers(0, 6)
    if kind == 0:
        s = model.springs[rng.integers(len(model.springs))]
        doc.set_element(s.id, k=float(s.k * rng.uniform(0.5, 2.0)))
    elif kind == 1:
        m = model.masses[rng.integers(len(model.masses))]
        doc.move_nodes({m.id: (m.x + float(rng.choice([-0.1, 0.1])), m.y)})
    elif kind == 2:
        a = model.anchors[rng.integers(len(model.anchors))]
        doc.move_nodes({a.id: (a.x, a.y + float(rng.choice([-0.1, 0.1])))})
    elif kind == 3:
        el = (model.masses + model.springs)[rng.integers(len(model.masses) + len(model.springs))]
        doc.set_element(el.id, label=f"renamed {rng.integers(1000)}")
    elif kind == 4 and doc.undo_stack.canUndo():
        doc.undo_stack.undo()
    elif doc.undo_stack.canRedo():
        doc.undo_stack.redo()


@pytest.mark.parametrize("planar", [False, True], ids=["line", "planar"])
def test_fast_refresh_draws_what_a_fresh_canvas_draws(qtbot, planar):
    doc = Document(_model(planar=planar))
    scene = ModelScene(doc)
    full = ModelScene(doc)
    full._sync_changed_only = lambda model: None      # every item refreshed, every edit
    rng = np.random.default_rng(11)
    fast = 0
    real = scene._sync_changed_only

    def counting(model):
        nonlocal fast
        out = real(model)
        fast += out is not None
        return out

    scene._sync_changed_only = counting
    for _ in range(40):
        _edit(doc, rng)
        assert _state(scene) == _state(full) == _state(ModelScene(Document(doc.model)))
        shown = [it.label_item.mapRectToScene(it.label_item.boundingRect())
                 for it in list(scene.nodes.values()) + list(scene.links.values())
                 if it.label_item.isVisible() and it.label_item.text()]
        assert not any(a.intersected(b).width() > 0.5 and a.intersected(b).height() > 0.5
                       for i, a in enumerate(shown) for b in shown[i + 1:])
    assert fast >= 20          # the fast path was taken, not the full one every time


def test_a_changed_mass_value_or_a_new_element_takes_the_full_path(qtbot):
    """A new mass value resizes every block (the reference mass changes); a new element
    changes the structure: both redraw everything, and still match a fresh canvas."""
    doc = Document(_model())
    scene = ModelScene(doc)
    taken = []
    real = scene._sync_changed_only
    scene._sync_changed_only = lambda model: taken.append(real(model)) or taken[-1]
    doc.set_element("m3", mass=9.0)
    assert taken[-1] is None
    assert _state(scene) == _state(ModelScene(Document(doc.model)))
    doc.add([Mass("m_new", 1.0, 1.0, 1.0)])
    assert taken[-1] is None
    assert _state(scene) == _state(ModelScene(Document(doc.model)))
    m = dataclasses.replace(doc.model.element("m_new"), x=1.2)
    doc.move_nodes({m.id: (m.x, m.y)})
    assert taken[-1] is not None
    assert _state(scene) == _state(ModelScene(Document(doc.model)))
    # the last mass moved past the anchor it is tied to: that anchor's hatching turns round
    last = doc.model.element("m11")
    doc.move_nodes({"m11": (doc.model.element("g2").x + 0.5, last.y)})
    assert taken[-1] is not None
    assert _state(scene) == _state(ModelScene(Document(doc.model)))


def test_a_dragged_mass_takes_the_fast_path_and_a_refused_drag_is_put_back(qtbot):
    """A drag moves the item before the edit (its preview): the edit at the release refreshes
    the few items it touches. A preview the model refuses puts the item back where the model
    has it (common practice: a refused edit leaves the model and the picture unchanged)."""
    from PySide6.QtCore import QPointF

    doc = Document(_model())
    scene = ModelScene(doc)
    taken = []
    real = scene._sync_changed_only
    scene._sync_changed_only = lambda model: taken.append(real(model)) or taken[-1]
    item = scene.nodes["m4"]
    start = QPointF(item.pos())
    item.setPos(start + QPointF(14.0, 0.0))           # the preview while dragging
    target = scene.mapper.snapped_model(item.pos(), snap=False)
    doc.move_nodes({"m4": target})
    assert taken[-1] is not None
    assert _state(scene) == _state(ModelScene(Document(doc.model)))
    before = _state(scene)
    item.setPos(item.pos() + QPointF(0.0, 30.0))       # a preview the model will not take
    scene._on_model_change(doc.model)                  # as _finish_move does on a refusal
    assert taken[-1] is None
    assert _state(scene) == before
