"""Motion view frames: the cached and vectorised paths draw what the reference painter draws.

An animation frame paints the layout at rest from a cached pixmap and (without labels) every
spring and mass from numpy arrays. These tests render the same deformed model both ways and
compare the pixels: the reference is :func:`app.drawing.sketch.paint_sketch`, one element at a
time, as the report draws it.
"""

import dataclasses

import numpy as np
import pytest
from PySide6.QtGui import QImage, QPainter

import solver
from solver.model import Anchor, Damper, Mass, Model, Spring
from app.docks.motion_panel import LABEL_LIMIT, MotionView
from app.drawing.sketch import fit_scale, paint_sketch
from app.drawing.style import current_style


def _chain(n):
    rng = np.random.default_rng(1)
    masses = tuple(Mass(f"m{i}", 0.3 * (i + 1), 0.0, float(rng.uniform(0.5, 3.0)))
                   for i in range(n))
    springs = (Spring("s0", "g", "m0", 5e4),) + tuple(
        Spring(f"s{i}", f"m{i - 1}", f"m{i}", float(rng.uniform(2e4, 8e4))) for i in range(1, n))
    return Model(kind="line", masses=masses, anchors=(Anchor("g", 0.0, 0.0),), springs=springs)


def _lattice():
    """A 7 x 7 planar lattice with a locked mass, a massless junction and a dashpot."""
    masses, springs, anchors = [], [], []
    for r in range(7):
        anchors.append(Anchor(f"g{r}", 0.0, 0.3 * r))
        for c in range(7):
            masses.append(Mass(f"m{r}_{c}", 0.3 * (c + 1), 0.3 * r, 1.0 + 0.1 * c))
            left = f"g{r}" if c == 0 else f"m{r}_{c - 1}"
            springs.append(Spring(f"sx{r}_{c}", left, f"m{r}_{c}", 3e4))
            if r:
                springs.append(Spring(f"sy{r}_{c}", f"m{r - 1}_{c}", f"m{r}_{c}", 4e4))
    masses[3] = dataclasses.replace(masses[3], fixed=("y",))
    masses[9] = dataclasses.replace(masses[9], mass=0.0)
    return Model(kind="planar", masses=tuple(masses), anchors=tuple(anchors),
                 springs=tuple(springs), dampers=(Damper("c1", "m0_0", "m1_1", 5.0),))


def _pixels(img: QImage) -> np.ndarray:
    img = img.convertToFormat(QImage.Format.Format_ARGB32)
    a = np.frombuffer(img.constBits(), np.uint8).reshape(img.height(), img.bytesPerLine())
    return a[:, : img.width() * 4].reshape(img.height(), img.width(), 4).astype(int)


@pytest.mark.parametrize("model", [_chain(12), _chain(60), _lattice()],
                         ids=["12 masses, labels", "60 masses", "planar lattice"])
def test_frame_matches_reference_painter(qtbot, model):
    """common practice: a faster way to draw the same frame must not change the picture. Every
    pixel of a mode-shape frame (mode 2) agrees with paint_sketch's to within 8 of 255 levels
    (no pixel may differ more; antialiasing noise aside they are identical)."""
    view = MotionView()
    qtbot.addWidget(view)
    view.resize(620, 400)
    view.set_model(model)
    lay = view.layout_()
    shape = solver.modes(model).node_displacement(2)
    view.displacements, view.scale = shape, fit_scale(lay, shape, 0.12)
    view.caption = view.hint = ""
    shown = view.grab().toImage()
    st = current_style(view.palette())
    ref = QImage(shown.size(), QImage.Format.Format_ARGB32_Premultiplied)
    ref.fill(st.background)
    p = QPainter(ref)
    paint_sketch(p, model, lay.rect, shape, view.scale, st, undeformed=True,
                 labels=len(model.masses) <= LABEL_LIMIT, layout=lay)
    p.end()
    a, b = _pixels(shown), _pixels(ref)
    assert a.shape == b.shape
    diff = np.abs(a - b).max(axis=2)
    assert diff.max() <= 8
    # and the frame is not blank: the model is drawn in it
    assert (np.abs(a - _pixels(_blank(shown, st))).max(axis=2) > 64).sum() > 500


@pytest.mark.parametrize("model", [_chain(12), _lattice()], ids=["12 masses", "planar lattice"])
def test_tinted_frame_with_labels_matches_reference_painter(qtbot, model):
    """common practice: the cached-and-vectorised frame draws the energy tint (springs by strain
    energy, masses by kinetic energy, shares below 0.5 % in the soft ink), a highlighted mass
    and spring, and the labels exactly where paint_sketch draws them: every pixel within 8 of
    255 levels."""
    rng = np.random.default_rng(4)
    ids = [el.id for el in model.springs + model.masses]
    energy = {i: float(f) for i, f in zip(ids, rng.uniform(0.0, 1.0, len(ids)))}
    energy[model.springs[1].id] = 0.001
    highlight = {model.springs[2].id}
    view = MotionView()
    qtbot.addWidget(view)
    view.resize(620, 400)
    view.set_model(model)
    lay = view.layout_()
    shape = solver.modes(model).node_displacement(2)
    view.displacements, view.scale = shape, fit_scale(lay, shape, 0.12)
    view.energy = energy
    view.caption = view.hint = ""
    st = current_style(view.palette())
    labels = len(model.masses) <= LABEL_LIMIT
    from app.drawing.sketch import can_paint_fast, paint_labels_layer, paint_moving_layer
    assert can_paint_fast(model, shape, labels, energy, highlight)
    shown = view.grab().toImage()
    # the same frame with the highlight, drawn the fast way by hand
    fast = QImage(shown.size(), QImage.Format.Format_ARGB32_Premultiplied)
    fast.fill(st.background)
    p = QPainter(fast)
    from app.drawing.sketch import paint_static_layer
    paint_static_layer(p, lay, st)
    paint_labels_layer(p, lay, labels, st, energy)
    paint_moving_layer(p, lay, shape, view.scale, st, energy=energy, highlight=highlight)
    p.end()
    for picture, lit in ((shown, None), (fast, highlight)):
        ref = QImage(shown.size(), QImage.Format.Format_ARGB32_Premultiplied)
        ref.fill(st.background)
        p = QPainter(ref)
        paint_sketch(p, model, lay.rect, shape, view.scale, st, undeformed=True, energy=energy,
                     labels=labels, layout=lay, highlight=lit)
        p.end()
        a, b = _pixels(picture), _pixels(ref)
        assert np.abs(a - b).max(axis=2).max() <= 8
    # the tint is drawn: the tinted frame differs from the untinted one
    view.energy = None
    plain = _pixels(view.grab().toImage())
    assert (np.abs(_pixels(shown) - plain).max(axis=2) > 32).sum() > 200


def _blank(like: QImage, st) -> QImage:
    img = QImage(like.size(), QImage.Format.Format_ARGB32_Premultiplied)
    img.fill(st.background)
    return img


def test_static_layer_follows_a_geometry_edit(qtbot):
    """common practice: the cached picture of the layout at rest is redrawn when a mass moves
    (the drawing's geometry changed), and kept when only a stiffness changed."""
    model = _chain(60)
    view = MotionView()
    qtbot.addWidget(view)
    view.resize(620, 400)
    view.set_model(model)
    lay = view.layout_()
    shape = solver.modes(model).node_displacement(1)
    view.displacements, view.scale = shape, fit_scale(lay, shape, 0.12)
    view.grab()
    first = view._static[1]
    stiffer = model.with_changes(put=[dataclasses.replace(model.springs[5], k=9e4)])
    view.set_model(stiffer)
    assert view.layout_() is lay           # same geometry: layout kept
    view.grab()
    assert view._static[1] is first
    moved = model.with_changes(put=[dataclasses.replace(model.masses[5], x=1.55)])
    view.set_model(moved)
    assert view.layout_() is not lay
    view.grab()
    assert view._static[1] is not first
