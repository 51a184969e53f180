"""GUI tests run offscreen, with settings and app data in a temporary folder (never the user's)."""

import os
import tempfile

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
_HOME = tempfile.mkdtemp(prefix="springwright-test-home-")
for var in ("XDG_CONFIG_HOME", "XDG_DATA_HOME", "XDG_CACHE_HOME"):
    os.environ[var] = os.path.join(_HOME, var.lower())

import pytest  # noqa: E402
from PySide6.QtCore import QSettings  # noqa: E402

from solver.model import Anchor, Mass, Model, Spring  # noqa: E402


@pytest.fixture
def settings(tmp_path):
    return QSettings(str(tmp_path / "settings.ini"), QSettings.IniFormat)


@pytest.fixture
def window(qtbot, settings, tmp_path):
    from app.main_window import MainWindow

    win = MainWindow(settings=settings, recovery_folder=tmp_path / "recovery")
    win._ask_save_changes = lambda: "discard"
    win.errors_shown = []
    win._notify_error = lambda title, message: win.errors_shown.append(message)
    qtbot.addWidget(win)
    win.resize(1200, 800)
    win.show()
    qtbot.waitExposed(win)
    yield win
    win.solver.shutdown()


@pytest.fixture
def two_mass_model():
    """anchor g1 -- s1 -- m1 -- s2 -- m2 on a line along x (SI)."""
    return Model(kind="line", name="two", axis="x",
                 masses=(Mass("m1", 0.2, 0.0, 2.0), Mass("m2", 0.4, 0.0, 1.0)),
                 anchors=(Anchor("g1", 0.0, 0.0),),
                 springs=(Spring("s1", "g1", "m1", 1000.0), Spring("s2", "m1", "m2", 500.0)))
