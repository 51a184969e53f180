"""Document: undo history, dirty flag, save/open round trip and safe failed saves."""

import os
import stat

import pytest

from app.document.document import Document
from solver.io import load_model, save_model


def test_delete_mass_removes_its_springs_in_one_undo_step(qtbot, two_mass_model):
    """Common practice (Qt undo framework): one user action is one history entry."""
    doc = Document(two_mass_model)
    doc.remove(["m1"])
    assert [m.id for m in doc.model.masses] == ["m2"]
    assert doc.model.springs == ()
    assert doc.undo_stack.count() == 1
    doc.undo_stack.undo()
    assert doc.model == two_mass_model


def test_refused_edit_leaves_model_and_history_unchanged(qtbot, two_mass_model):
    """Common practice: an invalid edit raises with the reason and changes nothing."""
    from solver.errors import ModelError

    doc = Document(two_mass_model)
    with pytest.raises(ModelError, match="stiffness k must be positive"):
        doc.set_element("s1", k=-200.0)
    assert doc.model is two_mass_model
    assert doc.undo_stack.count() == 0
    assert not doc.dirty


def test_dirty_flag_follows_edits_undo_and_save(qtbot, tmp_path, two_mass_model):
    """Common practice: dirty after an edit, clean after save and after undoing back to it."""
    doc = Document(two_mass_model)
    seen = []
    doc.dirty_changed.connect(seen.append)
    doc.set_element("m1", mass=3.0)
    assert doc.dirty and seen[-1] is True
    doc.save(tmp_path / "a.json")
    assert not doc.dirty and seen[-1] is False
    doc.undo_stack.undo()
    assert doc.dirty
    doc.undo_stack.redo()
    assert not doc.dirty


def test_save_close_reopen_gives_an_equal_model(qtbot, tmp_path, two_mass_model):
    """Common practice: what is saved is what opens (the file keeps every value exactly)."""
    doc = Document(two_mass_model)
    doc.set_element("s2", k=1234.5678, label="bracket")
    doc.move_nodes({"m2": (0.55, 0.1)})
    path = doc.save(tmp_path / "model.json")
    saved = doc.model
    again = Document()
    again.open(path)
    assert again.model == saved
    assert again.path == path and not again.dirty


def test_save_into_missing_folder_fails_and_keeps_state(qtbot, tmp_path, two_mass_model):
    """Common practice: a failed save raises OSError; the document stays dirty on its old path."""
    doc = Document(two_mass_model)
    doc.save(tmp_path / "old.json")
    doc.set_element("m1", mass=5.0)
    with pytest.raises(OSError):
        doc.save(tmp_path / "no such folder" / "new.json")
    assert doc.dirty
    assert doc.path == (tmp_path / "old.json").resolve()
    assert load_model(tmp_path / "old.json") == two_mass_model


@pytest.mark.skipif(hasattr(os, "geteuid") and os.geteuid() == 0,
                    reason="root can write into read-only folders")
def test_failed_save_in_read_only_folder_leaves_old_file_intact(qtbot, tmp_path, two_mass_model):
    """Common practice (atomic save: temp file + rename): the old file survives a failed save."""
    folder = tmp_path / "ro"
    folder.mkdir()
    target = folder / "m.json"
    save_model(two_mass_model, target)
    before = target.read_bytes()
    doc = Document()
    doc.open(target)
    doc.set_element("m1", mass=9.0)
    folder.chmod(stat.S_IRUSR | stat.S_IXUSR)
    try:
        with pytest.raises(OSError):
            doc.save()
    finally:
        folder.chmod(stat.S_IRWXU)
    assert target.read_bytes() == before
    assert doc.dirty


def test_window_failed_save_reports_and_keeps_old_file(window, tmp_path, two_mass_model):
    """Common practice: the window says why a save failed; the previous file is unchanged."""
    good = tmp_path / "good.json"
    save_model(two_mass_model, good)
    before = good.read_bytes()
    assert window.open_path(good, ask=False)
    window.document.set_element("m2", mass=4.0)
    assert not window.save_to(tmp_path / "missing" / "x.json")
    assert "Not saved" in window.statusBar().currentMessage()
    assert good.read_bytes() == before
    assert window.isWindowModified()


def test_window_title_shows_name_and_dirty_mark(window, tmp_path, two_mass_model):
    """Common practice: title "name[*] — Springwright", the mark shown while unsaved."""
    path = tmp_path / "fixture.json"
    save_model(two_mass_model, path)
    window.open_path(path, ask=False)
    assert window.windowTitle() == "fixture[*] — Springwright"
    assert not window.isWindowModified()
    window.document.set_element("m1", mass=2.5)
    assert window.isWindowModified()


def test_autosave_and_recovery_offer(qtbot, window, tmp_path, two_mass_model, settings):
    """Common practice: unsaved work is autosaved and offered back after an unclean exit."""
    from app.main_window import MainWindow

    window.document.new(model=two_mass_model)
    window.document.set_element("m1", mass=7.0)
    assert window.recovery.autosave()
    assert window.recovery.model_path.exists()
    # the program "crashes" here: a second window starts with the same settings and folder
    again = MainWindow(settings=settings, recovery_folder=tmp_path / "recovery")
    again._ask_save_changes = lambda: "discard"
    qtbot.addWidget(again)
    assert again.check_recovery()
    assert not again.recovery_bar.isHidden()
    again.restore_recovery()
    assert again.document.model.element("m1").mass == 7.0
    assert again.document.dirty
    again.recovery.mark_clean_exit()
    assert again.recovery.pending() is None
    again.solver.shutdown()


_CRASHING_SESSION = r'''
import os, sys
os.environ["QT_QPA_PLATFORM"] = "offscreen"
from pathlib import Path
from PySide6.QtCore import QSettings, QTimer
from PySide6.QtWidgets import QApplication
app = QApplication([])
from app.main_window import MainWindow
folder, ini = Path(sys.argv[1]), sys.argv[2]
w = MainWindow(settings=QSettings(ini, QSettings.IniFormat), recovery_folder=folder)
w.show()
from solver import load_model
w.document.new(model=load_model("assets/examples/shaker_fixture.json"))
w.document.set_element(w.document.model.masses[0].id, mass=4.321)
def crash():
    if (folder / "recovery.json").exists():
        os._exit(3)              # no clean exit, no atexit, no save: a hard crash
t = QTimer(); t.timeout.connect(crash); t.start(50)
QTimer.singleShot(20000, lambda: os._exit(4))   # never reached when autosave works
app.exec()
'''


def test_edit_survives_a_hard_crash(qtbot, tmp_path):
    """Common practice: an edit is on disk within seconds (debounced autosave, not only the
    30 s timer); a process killed without any clean-up leaves it, and the next start offers it
    back with the edited value."""
    import subprocess
    import sys
    from pathlib import Path

    from PySide6.QtCore import QSettings

    from app.main_window import MainWindow

    folder = tmp_path / "recovery"
    ini = tmp_path / "crash.ini"
    root = Path(__file__).resolve().parents[2]
    proc = subprocess.run([sys.executable, "-c", _CRASHING_SESSION, str(folder), str(ini)],
                          cwd=root, capture_output=True, text=True, timeout=60)
    assert proc.returncode == 3, proc.stderr[-2000:]
    again = MainWindow(settings=QSettings(str(ini), QSettings.IniFormat), recovery_folder=folder)
    again._ask_save_changes = lambda: "discard"
    qtbot.addWidget(again)
    assert again.check_recovery() and not again.recovery_bar.isHidden()
    again.restore_recovery()
    assert again.document.model.masses[0].mass == 4.321
    again.recovery.mark_clean_exit()
    again.solver.shutdown()


def test_save_of_a_model_too_large_for_a_file_is_refused_in_the_window(
        qtbot, window, tmp_path, two_mass_model, monkeypatch):
    """DESIGN.md section 3 (errors a user can cause come back as messages, never a traceback):
    save_model refuses a model whose file would be over the load limit (it could not be loaded
    back). Save (Ctrl+S, a real key press) says so in the status bar and the error box, leaves
    the previous file as it was and the model unsaved (dirty)."""
    from PySide6.QtCore import Qt

    import solver.io

    path = tmp_path / "fixture.json"
    save_model(two_mass_model, path)
    before = path.read_bytes()
    assert window.open_path(path, ask=False)
    window.document.set_element("m2", mass=4.0)
    # the real refusal, reached with a limit below this small model's file
    monkeypatch.setattr(solver.io, "MAX_FILE_BYTES", 64)
    window.activateWindow()
    qtbot.keyClick(window, Qt.Key_S, Qt.ControlModifier)
    shown = window.statusBar().currentMessage()
    assert shown.startswith(f"Not saved to {path}") and "over the" in shown, shown
    assert "model file may have" in shown and "previous file is unchanged" in shown
    assert window.errors_shown == [shown]
    assert path.read_bytes() == before
    assert window.document.dirty and window.isWindowModified()


def test_save_refused_with_model_error_keeps_the_model_dirty(window, tmp_path, two_mass_model,
                                                             monkeypatch):
    """Common practice: any ModelError from save_model (here a stand-in raising one) is shown
    with its words, never raised out of the window; the model stays unsaved."""
    import app.document.document as document_module
    from solver.errors import ModelError

    def refuse(model, path):
        raise ModelError("save_model: the model's file would be 40.0 MiB, over the 32.0 MiB a"
                         " model file may have")

    window.document.new(model=two_mass_model)
    window.document.set_element("m1", mass=3.0)
    monkeypatch.setattr(document_module, "save_model", refuse)
    target = tmp_path / "new.json"
    assert not window.save_to(target)
    shown = window.statusBar().currentMessage()
    assert "40.0 MiB" in shown and "Not saved" in shown, shown
    assert not target.exists()
    assert window.document.dirty and window.isWindowModified()
    assert window.document.path is None


def test_autosave_of_a_model_too_large_for_a_file_is_reported_once(qtbot, window, tmp_path,
                                                                  two_mass_model, monkeypatch):
    """DESIGN.md section 6 (autosave and recovery): when save_model refuses the model (its file
    would be over the load limit) the autosave is not written and the status bar says why,
    once rather than on every timer tick; no exception leaves the timer slot."""
    import solver.io

    window.document.new(model=two_mass_model)
    window.document.set_element("m1", mass=7.0)
    monkeypatch.setattr(solver.io, "MAX_FILE_BYTES", 64)
    told = []
    window.recovery.status_message.connect(told.append)
    assert window.recovery.autosave() is False
    assert not window.recovery.model_path.exists()
    assert window.statusBar().currentMessage().startswith("Autosave not written: save_model:")
    assert window.recovery.autosave() is False
    assert len(told) == 1 and "model file may have" in told[0]
    monkeypatch.setattr(solver.io, "MAX_FILE_BYTES", 32 * 1024 * 1024)
    assert window.recovery.autosave() is True
    assert window.recovery.model_path.exists()
