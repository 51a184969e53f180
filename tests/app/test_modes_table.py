import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

import csv

import numpy as np
import pytest
from PySide6.QtCore import Qt

import solver
from app.docks.modes_table import ModesTable, mode_table_csv, mode_table_rows

from _models_for_views import td3s, chain


def test_rows_match_solver_modes():
    """TD-3S (REFERENCES.md 2; Rao ch. 5): w = 20 and 34.64102 rad/s; table rows are solver.modes."""
    model = td3s()
    a = solver.analyse(model)
    rows = mode_table_rows(a)
    ref = solver.modes(model)
    assert len(rows) == ref.n_modes == 2
    np.testing.assert_allclose([r["frequency_hz"] for r in rows], ref.frequencies_hz, rtol=1e-12)
    np.testing.assert_allclose([r["omega_rad_s"] for r in rows], [20.0, 34.64102], rtol=1e-6)
    assert rows[-1]["cumulative_percent"]["x"] == pytest.approx(100.0)


def test_zero_mode_flagged_with_cause():
    """TD-FREE (REFERENCES.md 2, math): two masses, one spring, no anchor: a rigid zero mode."""
    m = solver.Model(kind="line", masses=(solver.Mass("a", 0, 0, 2), solver.Mass("b", 1, 0, 2)),
                     springs=(solver.Spring("k", "a", "b", 800),))
    rows = mode_table_rows(solver.analyse(m))
    assert rows[0]["zero_frequency"] and rows[0]["zero_kind"] == "rigid"
    assert rows[0]["zero_cause"] and rows[0]["zero_cause"] in rows[0]["flags"]
    assert rows[1]["omega_rad_s"] == pytest.approx(28.28427, rel=1e-6)


def test_csv_round_trips_numbers(tmp_path, qtbot):
    """common practice: CSV export keeps 12 significant digits (rtol 1e-11 on re-reading: exact
    to far more than any display shows) and names each column's unit."""
    a = solver.analyse(chain(6))
    table = ModesTable()
    qtbot.addWidget(table)
    table.set_analysis(a)
    path = tmp_path / "modes.csv"
    table.to_csv(path)
    with open(path, encoding="utf-8") as fh:
        recs = list(csv.DictReader(fh))
    assert len(recs) == a.modal.n_modes
    np.testing.assert_allclose([float(r["frequency_hz"]) for r in recs], a.modal.frequencies_hz,
                               rtol=1e-11, atol=0)
    np.testing.assert_allclose([float(r["effective_mass_x_kg"]) for r in recs],
                               a.modal.effective_mass["x"], rtol=1e-11, atol=1e-14)


def test_click_row_emits_mode_selected(qtbot):
    """common practice: clicking a mode's row selects it for animation (mode numbers from 1)."""
    table = ModesTable()
    qtbot.addWidget(table)
    table.resize(700, 300)
    table.show()
    table.set_analysis(solver.analyse(td3s()))
    view = table.view
    rect = view.visualRect(view.model().index(1, 1))
    with qtbot.waitSignal(table.mode_selected, timeout=1000) as blocker:
        qtbot.mouseClick(view.viewport(), Qt.MouseButton.LeftButton, pos=rect.center())
    assert blocker.args == [2]
    assert table.selected_mode() == 2


def test_select_mode_does_not_echo_and_stale_marks(qtbot):
    """common practice: programmatic selection does not re-emit; stale results are marked."""
    table = ModesTable()
    qtbot.addWidget(table)
    table.set_analysis(solver.analyse(td3s()))
    with qtbot.assertNotEmitted(table.mode_selected):
        table.select_mode(1)
    assert table.selected_mode() == 1
    table.set_stale(True)
    assert table.is_stale() and not table._banner.isHidden()
    table.set_analysis(solver.analyse(td3s()))
    assert not table.is_stale() and table.selected_mode() == 1


def test_clipboard_is_tab_separated(qtbot):
    """common practice: spreadsheet paste wants tab-separated rows with a header."""
    table = ModesTable()
    qtbot.addWidget(table)
    a = solver.analyse(td3s())
    table.set_analysis(a)
    text = table.copy_to_clipboard()
    lines = text.strip().split("\n")
    assert len(lines) == 1 + a.modal.n_modes
    assert lines[0].split("\t")[:2] == ["mode", "frequency_hz"]
    assert text == mode_table_csv(a, delimiter="\t")


@pytest.mark.parametrize("n", [3, 60, 200])
def test_number_columns_fit_every_row_as_qt_measures_them(qtbot, n):
    """The number columns are fitted from their longest texts only (speed); each is still at
    least as wide as Qt's own measure of every row (QTableView.sizeHintForColumn: nothing cut
    or elided, common practice), on a chain whose numbers differ in length from row to row, and
    again after an edit made some numbers longer."""
    table = ModesTable()
    qtbot.addWidget(table)
    table.resize(900, 400)
    table.show()
    qtbot.waitExposed(table)
    import dataclasses

    model = chain(n)
    stiffer = dataclasses.replace(model, springs=tuple(
        dataclasses.replace(sp, k=sp.k * (1.2345e3 if i % 3 else 1.0))
        for i, sp in enumerate(model.springs)))
    for m in (model, stiffer):
        table.set_analysis(solver.analyse(m))
        view, hdr = table.view, table.view.horizontalHeader()
        notes = table._model.columnCount() - 1
        for c in range(notes):
            assert hdr.sectionSize(c) >= max(view.sizeHintForColumn(c), hdr.sectionSizeHint(c)), c


def test_a_palette_switch_recolours_the_table_at_once(qtbot):
    """common practice: a light/dark switch restyles every view at once, not at the next edit:
    the out-of-date cells take the dark style's grey as soon as the palette changes."""
    from PySide6.QtGui import QColor, QPalette
    from PySide6.QtWidgets import QApplication

    from app.drawing.style import DARK, LIGHT

    table = ModesTable()
    qtbot.addWidget(table)
    table.show()
    table.set_analysis(solver.analyse(td3s()))
    table.set_stale(True)
    index = table._model.index(0, 1)
    role = Qt.ItemDataRole.ForegroundRole
    app = QApplication.instance()
    old = QPalette(app.palette())
    assert table._model.data(index, role).name() == LIGHT.undeformed.name()
    pal = QPalette(old)
    pal.setColor(QPalette.ColorRole.Window, QColor("#202020"))
    app.setPalette(pal)
    try:
        qtbot.waitUntil(lambda: table._model.data(index, role).name() == DARK.undeformed.name(),
                        timeout=5000)
    finally:
        app.setPalette(old)


def test_every_role_of_a_cell_in_one_call_matches_data(qtbot):
    """Qt (QAbstractItemModel::multiData: the default fills each role with data()): the table's
    one-call answer gives, for every cell and every role a delegate asks, what data() gives
    (text, alignment, colours, tooltip), on a model with a mode inside an excitation band, and
    an unanswered role is left empty. The delegate (which asks for its seven roles in one
    span) reads the same text as data()."""
    from PySide6.QtCore import QModelRoleData, QModelRoleDataSpan, Qt
    from PySide6.QtWidgets import QStyleOptionViewItem

    from solver.model import Excitation

    table = ModesTable()
    qtbot.addWidget(table)
    table.show()
    model = td3s()
    f1 = solver.modes(model).frequencies_hz[1]
    model = model.with_changes(excitations=(Excitation(id="band", type="band", f_min_hz=f1 * 0.9,
                                                       f_max_hz=f1 * 1.1),))
    table.set_analysis(solver.analyse(model))
    m = table._model
    roles = [Qt.ItemDataRole.DisplayRole, Qt.ItemDataRole.FontRole,
             Qt.ItemDataRole.TextAlignmentRole, Qt.ItemDataRole.ForegroundRole,
             Qt.ItemDataRole.CheckStateRole, Qt.ItemDataRole.DecorationRole,
             Qt.ItemDataRole.BackgroundRole, Qt.ItemDataRole.ToolTipRole]
    tinted = 0
    for r in range(m.rowCount()):
        for c in range(m.columnCount()):
            index = m.index(r, c)
            cells = [QModelRoleData(role) for role in roles]
            for cell in cells:        # PySide makes a span of one QModelRoleData
                m.multiData(index, QModelRoleDataSpan(cell))
            for role, cell in zip(roles, cells):
                want = m.data(index, role)
                assert cell.data() == want, (r, c, role)
            tinted += cells[6].data() is not None
            opt = QStyleOptionViewItem()
            table.view.itemDelegate().initStyleOption(opt, index)
            assert opt.text == m.data(index, Qt.ItemDataRole.DisplayRole)
    assert tinted == m.columnCount()          # the one mode in the band: its whole row


def _analyses_for_widths():
    """Pairs of analyses of the same shape whose numbers change length: chains stiffened and
    softened, a free-free chain (zero modes, infinite periods), a planar frame (two directions),
    a model with a source band (flagged rows with notes)."""
    import dataclasses

    from solver.model import Anchor, Excitation, Mass, Model, Spring

    out = []
    for n in (3, 60, 200):
        base = chain(n)
        for factor in (1.2345e3, 1e-4, 1.01):
            other = dataclasses.replace(base, springs=tuple(
                dataclasses.replace(sp, k=sp.k * (factor if i % 3 else 1.0))
                for i, sp in enumerate(base.springs)))
            out.append((base, other))
    free = Model(kind="line", masses=tuple(Mass(f"m{i}", i, 0, 1.0 + i) for i in range(8)),
                 springs=tuple(Spring(f"s{i}", f"m{i}", f"m{i + 1}", 5e3 * (i + 1))
                               for i in range(7)))
    out.append((free, dataclasses.replace(free, masses=tuple(
        dataclasses.replace(m, mass=m.mass * 37.0) for m in free.masses))))
    frame = Model(kind="planar", anchors=(Anchor("g", 0, 0), Anchor("h", 2, 0)),
                  masses=(Mass("a", 0, 1, 2.0), Mass("b", 2, 1, 3.0), Mass("c", 1, 2, 0.5)),
                  springs=(Spring("s1", "g", "a", 1e4), Spring("s2", "h", "b", 2e4),
                           Spring("s3", "a", "b", 5e3), Spring("s4", "a", "c", 8e3),
                           Spring("s5", "b", "c", 3e3)))
    out.append((frame, dataclasses.replace(frame, springs=tuple(
        dataclasses.replace(sp, k=sp.k * 1e3) for sp in frame.springs))))
    banded = dataclasses.replace(chain(20), excitations=(
        Excitation(id="e1", type="band", label="Motor", f_min_hz=0.9, f_max_hz=1.5),))
    out.append((banded, dataclasses.replace(banded, masses=tuple(
        dataclasses.replace(m, mass=m.mass * 4.0) for m in banded.masses))))
    return out


def test_width_check_without_writing_numbers_is_the_written_one(qtbot):
    """Counting against the written text: whether any cell of new results is longer than the
    widths the columns were fitted to, decided from width bounds and only the rows past them
    written, is what writing every cell and measuring it says (for the old widths, and for each
    column's width one character short, where it must say longer)."""
    from app.docks.modes_table import _ModesModel

    checked = 0
    for first, second in _analyses_for_widths():
        a, b = solver.analyse(first), solver.analyse(second)
        for old, new in ((a, b), (b, a)):
            model = _ModesModel()
            model.set_analysis(old)
            cells = model.all_cells()
            chars = [max(len(r[c]) for r in cells) for c in range(len(cells[0]))]
            model.set_analysis(new)
            new_cells = mode_table_cells_of(new)
            longest = [max(len(r[c]) for r in new_cells) for c in range(len(chars))]
            assert model.longer_than(chars) == any(n > c for n, c in zip(longest, chars))
            for c in range(len(chars)):
                if longest[c] > 0:
                    short = list(longest)
                    short[c] -= 1
                    assert model.longer_than(short)
                assert not model.longer_than(longest)
            assert model.all_cells() == new_cells
            checked += 1
    assert checked >= 20


def mode_table_cells_of(analysis):
    from app.results.mode_rows import mode_table_cells

    return mode_table_cells(analysis)


def test_an_update_writes_the_rows_shown_not_every_row(qtbot):
    """common practice (a view formats what it shows): after new results of the same shape
    whose numbers are no longer than before, the table has written the text of the rows on
    screen only, and every row asked for reads as mode_table_cells writes it."""
    import dataclasses

    table = ModesTable()
    qtbot.addWidget(table)
    table.resize(700, 300)
    table.show()
    qtbot.waitExposed(table)
    model = chain(200)
    table.set_analysis(solver.analyse(model))
    softer = dataclasses.replace(model, springs=tuple(
        dataclasses.replace(sp, k=sp.k * 0.999) for sp in model.springs))
    new = solver.analyse(softer)
    table.set_analysis(new)
    assert all(cells is None for cells in table._model._cells)    # nothing grew: none written
    table.view.viewport().update()
    qtbot.waitUntil(lambda: any(cells is not None for cells in table._model._cells))
    written = [r for r, cells in enumerate(table._model._cells) if cells is not None]
    assert len(written) < 60
    expected = mode_table_cells_of(new)
    for r in (0, 57, 199):
        idx = table._model.index(r, 1)
        assert table._model.data(idx) == expected[r][1]


def test_rows_made_when_asked_flag_the_rows_with_notes(qtbot):
    """Counting: the table's rows are made when first asked for, and the rows it lists as
    having notes are exactly those with a zero frequency, a repeated frequency or a margin
    verdict (twin uncoupled oscillators: a repeated pair; a free chain: a zero mode; a source
    band: verdicts), so a column of notes is measured from them alone."""
    from solver.model import Anchor, Mass, Model, Spring

    from app.results.mode_rows import ModeRows

    twins = Model(kind="line", anchors=(Anchor("g", 0, 0),),
                  masses=(Mass("a", 1, 0, 2.0), Mass("b", 2, 0, 2.0), Mass("c", 3, 0, 5.0)),
                  springs=(Spring("s1", "g", "a", 1e4), Spring("s2", "g", "b", 1e4),
                           Spring("s3", "g", "c", 3e4)))
    kinds = set()
    for _first, second in _analyses_for_widths() + [(twins, twins)]:
        rows = ModeRows(solver.analyse(second))
        assert all(r is None for r in rows._rows)             # none made yet
        made = list(rows)
        noted = [i for i, r in enumerate(made)
                 if r["zero_frequency"] or r["repeated_with"] or r["verdicts"]]
        assert rows.flagged == noted
        kinds.update(k for r in made for k in ("zero_frequency", "repeated_with", "verdicts")
                     if r[k])
    assert kinds == {"zero_frequency", "repeated_with", "verdicts"}
