"""The window as a file opened from the command line first shows it (1600 x 1000 screen, no saved
layout): every column, caption, axis title, field and tab reads whole.

common practice: a number that is cut, a title drawn over the tick labels it names or a caption
that ends in "..." is a number or a sentence the user cannot read; a table whose last columns hide
behind a scroll bar hides the effective masses a check needs.
"""

from pathlib import Path

import pyqtgraph as pg
import pytest
from PySide6.QtCore import QSize
from PySide6.QtGui import QFont, QFontMetrics, QPainter, QPicture
from PySide6.QtWidgets import QDockWidget, QTabBar

EXAMPLES = Path(__file__).resolve().parents[2] / "assets" / "examples"
ALL_EXAMPLES = sorted(p.name for p in EXAMPLES.glob("*.json"))


def _settle(qtbot, window):
    window.solver.wait()
    qtbot.waitUntil(lambda: window.analysis is not None
                    and window.analysis.model is window.document.model, timeout=8000)
    qtbot.wait(200)


@pytest.fixture
def first_start(qtbot, settings, tmp_path):
    """``open(name)``: a window opened on an example before it is shown, as ``springwright
    FILE`` does, at its first size on a 1600 x 1000 screen."""
    from app.main_window import MainWindow, first_size

    made = []

    def open_(name=None, settings_=settings):
        win = MainWindow(settings=settings_, recovery_folder=tmp_path / "recovery")
        win._ask_save_changes = lambda: "discard"
        qtbot.addWidget(win)
        made.append(win)
        if name is not None:
            assert win.open_path(EXAMPLES / name, ask=False)
        win.resize(*first_size(QSize(1600, 1000)))
        win.show()
        qtbot.waitExposed(win)
        qtbot.wait(50)
        if name is not None:
            _settle(qtbot, win)
        return win

    yield open_
    for win in made:
        win.solver.shutdown()


# -- 1. the modes table --------------------------------------------------------------------------
def _column_widths(view):
    hdr = view.horizontalHeader()
    return [hdr.sectionSize(c) for c in range(view.model().columnCount())]


def _assert_columns_fit(table):
    """Every column in the viewport; each number column as wide as its widest text (the font's
    own metrics), the notes the rest of the width."""
    view = table.view
    model = view.model()
    widths = _column_widths(view)
    room = view.viewport().width()
    assert sum(widths) <= room, (widths, room)
    assert view.horizontalScrollBar().maximum() == 0
    fm = QFontMetrics(view.font())
    notes = model.columnCount() - 1
    for c in range(notes):
        texts = [str(model.index(r, c).data()) for r in range(model.rowCount())]
        need = max(fm.horizontalAdvance(t) for t in texts)
        assert widths[c] >= need + 4, (c, widths[c], need)
    assert widths[notes] >= room - sum(widths[:notes]) - 1, "the notes take the rest"


@pytest.mark.parametrize("name", ALL_EXAMPLES)
def test_the_modes_table_shows_every_column_at_the_first_size(qtbot, first_start, name):
    """Every example opened from the command line: the columns' widths add up to no more than
    the table's viewport (no horizontal scroll bar) and the notes wrap into taller rows."""
    window = first_start(name)
    _assert_columns_fit(window.modes_table)


def test_the_modes_table_refits_for_a_larger_font(qtbot, first_start):
    """Fonts differ from one desktop to the next: with a font a third larger the columns are
    measured again and still fit."""
    window = first_start("fan_drive.json")
    view = window.modes_table.view
    font = QFont(view.font())
    font.setPointSizeF(font.pointSizeF() * 4 / 3)
    view.setFont(font)
    qtbot.wait(100)
    _assert_columns_fit(window.modes_table)
