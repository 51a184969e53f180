"""Autosave to a recovery file, and the check on start for work a crash left behind.

A couple of seconds after the last edit (and every ~30 s while edits stay unsaved) the model is
written (atomically, with solver.save_model) to ``recovery.json`` in the per-user application data folder, with a small
side file naming the document's own path. A clean save or a clean exit removes both. On start, a
recovery file newer than the last clean exit means the program did not end cleanly with unsaved
work, so the window offers to restore it.
"""

from __future__ import annotations

import json
import os
import time
from pathlib import Path

from PySide6.QtCore import QObject, QSettings, QStandardPaths, QTimer, Signal

from solver.errors import ModelError
from solver.io import load_model, save_model, write_atomic

AUTOSAVE_MS = 30_000
#: Quiet time after an edit before it is written to the recovery file.
AFTER_EDIT_MS = 2_000


def recovery_folder() -> Path:
    folder = Path(QStandardPaths.writableLocation(QStandardPaths.AppDataLocation))
    return folder


class Recovery(QObject):
    #: why an autosave was not written, for the status bar (a model no model file can hold)
    status_message = Signal(str)

    def __init__(self, document, settings: QSettings, folder: Path | None = None,
                 interval_ms: int = AUTOSAVE_MS, after_edit_ms: int = AFTER_EDIT_MS,
                 parent=None):
        super().__init__(parent)
        self.document = document
        self.settings = settings
        self.folder = Path(folder) if folder is not None else recovery_folder()
        self.timer = QTimer(self)
        self.timer.setInterval(interval_ms)
        self.timer.timeout.connect(self.autosave)
        self.timer.start()
        self.soon = QTimer(self)            # debounced: a drag or typing is written once
        self.soon.setSingleShot(True)
        self.soon.setInterval(after_edit_ms)
        self.soon.timeout.connect(self.autosave)
        self._told = None   # the refusal last reported, so the timer does not repeat it
        document.model_changed.connect(lambda _m: self.soon.start())
        document.dirty_changed.connect(self._on_dirty_change)

    @property
    def model_path(self) -> Path:
        return self.folder / "recovery.json"

    @property
    def meta_path(self) -> Path:
        return self.folder / "recovery-meta.json"

    def autosave(self) -> bool:
        """Write the recovery file if there are unsaved edits. True when written."""
        if not self.document.dirty:
            return False
        model = self.document.model
        if getattr(self, "_written", None) is model and self.model_path.exists():
            return True       # this very model is on disk already (the periodic tick)
        try:
            self.folder.mkdir(parents=True, exist_ok=True)
            save_model(model, self.model_path)
            path = self.document.path
            write_atomic(self.meta_path, json.dumps({"path": str(path) if path else None,
                                                     "time": time.time()}))
        except OSError:
            return False  # autosave is a comfort; a full disk must not interrupt work
        except ModelError as exc:
            # save_model refuses a model too large to load back: autosave cannot protect this
            # work, which the user must know (said once, not on every timer tick)
            message = f"Autosave not written: {exc}"
            if message != self._told:
                self._told = message
                self.status_message.emit(message)
            return False
        self._told = None
        self._written = model
        return True

    def clear(self) -> None:
        self._written = None
        for p in (self.model_path, self.meta_path):
            try:
                p.unlink()
            except OSError:
                pass

    def _on_dirty_change(self, dirty: bool) -> None:
        if not dirty:
            self.clear()

    def mark_clean_exit(self) -> None:
        self.clear()
        self.settings.setValue("recovery/last_clean_exit", time.time())

    def pending(self):
        """(Model, original path or None) of a recovery file left by an unclean exit, else None."""
        if not self.model_path.exists():
            return None
        last_exit = float(self.settings.value("recovery/last_clean_exit", 0.0) or 0.0)
        if os.path.getmtime(self.model_path) <= last_exit:
            return None
        try:
            model = load_model(self.model_path)
        except ModelError:
            return None
        path = None
        try:
            meta = json.loads(self.meta_path.read_text("utf-8"))
            path = Path(meta["path"]) if meta.get("path") else None
        except (OSError, ValueError, KeyError, TypeError):
            pass
        return model, path
