"""Start the desktop program: ``run(path)`` opens the window on a model file or a built-in example."""

from __future__ import annotations

import sys
from pathlib import Path

import app

ASSETS = Path(app.__file__).resolve().parent.parent / "assets"
#: The model shown when the program starts without a file.
DEFAULT_EXAMPLE = "shaker_fixture.json"


def example_path() -> Path | None:
    folder = ASSETS / "examples"
    preferred = folder / DEFAULT_EXAMPLE
    if preferred.exists():
        return preferred
    found = sorted(folder.glob("*.json")) if folder.is_dir() else []
    return found[0] if found else None


def run(path=None, argv=None) -> int:
    """Create the application, open the window on ``path`` (or the example), show it, run it.

    Without a file the window is shown first and the example opened once it has painted: the
    example's schema check, solve and every view's update need not hold back the first frame.
    """
    from PySide6.QtWidgets import QApplication

    from .main_window import MainWindow

    qapp = QApplication.instance() or QApplication(list(argv) if argv is not None else sys.argv)
    qapp.setApplicationName("Springwright")
    qapp.setOrganizationName("Springwright")
    window = MainWindow()
    collect_when_idle(window)
    opened = False
    if path is not None:
        opened = window.open_path(path, ask=False)
    window.show()
    if opened:
        _open_done(window)
    else:
        _after_first_paint(window, lambda: _open_example(window))
    return qapp.exec()


def _open_example(window) -> None:
    from solver.errors import ModelError
    from solver.io import load_model

    example = example_path()
    if example is not None and window.document.model.masses == () and not window.document.dirty:
        try:
            # The example opens as an untitled copy, so Save never overwrites the shipped file.
            window.document.new(model=load_model(example))
        except ModelError as exc:
            window.statusBar().showMessage(f"Example not loaded: {exc}", 10000)
    _open_done(window)


def _open_done(window) -> None:
    window.view.fit()
    window.solver.solve_now()
    window.check_recovery()
    # after the first model's results are painted: its full collection (~50 ms) holds nothing up
    from PySide6.QtCore import QTimer

    QTimer.singleShot(1000, freeze_startup_heap)


def freeze_startup_heap() -> None:
    """Move every object made so far (modules, the window's widgets, the numerical libraries
    loaded for the first model) out of the cycle collector's reach: they live as long as the
    program. A full collection then walks only what edits make and drop, a few ms at 1000
    masses instead of ~70 ms at an unforeseeable moment, a stall the user would feel in the
    middle of an edit or an animation (Python's gc.freeze, made for this; bench/edit_bench.py
    measures the window this way)."""
    import gc

    gc.collect()        # what is garbage already is not kept for ever
    gc.freeze()


def collect_when_idle(window):
    """Python's full garbage collections made while ``window`` is idle, not inside an edit or
    a frame (:mod:`app.document.idle_collector`; bench/edit_bench.py measures the window this
    way). Returns the collector."""
    from .document.idle_collector import IdleCollector

    window.idle_collector = IdleCollector(
        window, window.document,
        busy=lambda: (window.solver.pending or window.tune_panel.sweep_pending
                      or window.motion_panel.is_playing()))
    return window.idle_collector


def _after_first_paint(window, then) -> None:
    """Call ``then`` on the event-loop turn after the window's first paint (or after 0.5 s if
    it is not painted, e.g. started minimised)."""
    from PySide6.QtCore import QEvent, QObject, QTimer

    class _Once(QObject):
        done = False

        def fire(self):
            if not self.done:
                self.done = True
                window.removeEventFilter(self)
                QTimer.singleShot(0, then)

        def eventFilter(self, obj, event):  # noqa: N802
            if event.type() == QEvent.Type.Paint:
                self.fire()
            return False

    once = _Once(window)
    window.installEventFilter(once)
    QTimer.singleShot(500, once.fire)
