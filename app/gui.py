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
    """Create the application, open the window on ``path`` (or the example), show it, run it."""
    from PySide6.QtWidgets import QApplication

    from solver.errors import ModelError
    from solver.io import load_model

    from .main_window import MainWindow

    qapp = QApplication.instance() or QApplication(list(argv) if argv is not None else sys.argv)
    qapp.setApplicationName("Springwright")
    qapp.setOrganizationName("Springwright")
    window = MainWindow()
    opened = False
    if path is not None:
        opened = window.open_path(path, ask=False)
    if not opened:
        example = example_path()
        if example is not None:
            try:
                # The example opens as an untitled copy, so Save never overwrites the shipped file.
                window.document.new(model=load_model(example))
            except ModelError as exc:
                window.statusBar().showMessage(f"Example not loaded: {exc}", 10000)
    window.show()
    window.view.fit()
    window.solver.solve_now()
    window.check_recovery()
    return qapp.exec()
