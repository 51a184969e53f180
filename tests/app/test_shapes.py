import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")


import pytest
from PySide6.QtCore import QPointF

from app.drawing import shapes


def test_coil_path_ends_on_both_points():
    """common practice: a drawn spring starts and ends exactly on its two nodes."""
    p = shapes.coil_path(QPointF(0, 0), QPointF(100, 0), turns=5, width=10)
    assert p.elementAt(0).x == pytest.approx(0) and p.elementAt(0).y == pytest.approx(0)
    last = p.elementAt(p.elementCount() - 1)
    assert (last.x, last.y) == pytest.approx((100, 0))
    r = p.boundingRect()
    assert r.height() == pytest.approx(10, abs=1e-9)  # zig-zag width, peak to peak


def test_coil_path_degenerate_is_a_point():
    """math: a zero-length spring has no direction, so only its point is drawn."""
    p = shapes.coil_path(QPointF(3, 4), QPointF(3, 4))
    assert p.elementCount() == 1


def test_coil_finer_than_a_pixel_is_drawn_straight():
    """common practice (level of detail): a zig-zag whose half-waves are shorter than
    shapes.MIN_PITCH device units cannot be seen, so the spring is a straight line between its
    ends; one just coarser keeps its zig-zag."""
    turns, width = 6, 4.0
    fine = shapes.coil_path(QPointF(0, 0), QPointF(8, 0), turns=turns, width=width)
    assert fine.elementCount() == 2
    assert (fine.elementAt(1).x, fine.elementAt(1).y) == pytest.approx((8, 0))
    # half-waves of (L - 2 lead) / 12, lead = min(0.2 L, max(width, 0.12 L)): above the limit
    coarse_len = shapes.MIN_PITCH * 2 * turns / 0.6 * 1.05
    coarse = shapes.coil_path(QPointF(0, 0), QPointF(coarse_len, 0), turns=turns, width=width)
    assert coarse.elementCount() == 2 * turns + 4
    assert coarse.boundingRect().height() == pytest.approx(width)


def test_mass_block_grows_by_cube_root_and_is_clamped():
    """common practice: block side ~ cbrt(mass) (constant density), clamped to stay on the page."""
    a = shapes.mass_block_rect(QPointF(0, 0), 1.0, base=20).width()
    b = shapes.mass_block_rect(QPointF(0, 0), 8.0, base=20).width()
    assert b / a == pytest.approx(2.0)
    huge = shapes.mass_block_rect(QPointF(0, 0), 1e6, base=20).width()
    tiny = shapes.mass_block_rect(QPointF(0, 0), 1e-6, base=20).width()
    assert huge == pytest.approx(40) and tiny == pytest.approx(13)


def test_anchor_hatching_is_on_the_far_side():
    """common practice (textbook ground symbol): hatches lie on the side away from the model."""
    p = shapes.anchor_path(QPointF(0, 0), 24, normal=QPointF(0, -1))  # model above (y down)
    r = p.boundingRect()
    assert r.top() == pytest.approx(0, abs=1e-9) and r.bottom() > 0


def test_dashpot_and_arrow_span_their_points():
    """common practice: a dashpot joins its ends; an arrow is as long as asked."""
    d = shapes.dashpot_path(QPointF(0, 0), QPointF(0, 80), width=12).boundingRect()
    assert d.top() == pytest.approx(0) and d.bottom() == pytest.approx(80)
    a = shapes.axis_arrow_path(QPointF(0, 0), QPointF(0, -1), 50, 8).boundingRect()
    assert a.top() == pytest.approx(-50)
    assert shapes.disc_path(QPointF(0, 0), 1.0, base=16).boundingRect().width() == \
        pytest.approx(2 * shapes.disc_radius(1.0, 16))
