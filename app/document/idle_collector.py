"""Full garbage collections while the window is idle, not in the middle of an edit.

Python's cycle collector runs a full collection (every generation) when enough objects have
survived its young collections. With a 1000-mass model open the window holds ~45,000 objects the
collector must walk (scene items, their paths, the trace list), so a full collection takes
20-40 ms, and one started by an allocation inside an edit or a frame adds all of that to it: the
event-loop probe of bench/edit_bench.py saw the window blocked 85-118 ms at 1000 masses, where
the edits alone block it 50-70 ms (a full collection ran every few edits).

:class:`IdleCollector` leaves the young generations to Python (they are cheap and collect most
cycles) and makes the full collections itself, on a timer: once the model has not changed for
:data:`IDLE_MS`, no mouse button is held and nothing is being solved, or at the latest
:data:`LONGEST_S` after the last one (an animation that plays for minutes still gets them). When
it is stopped (its window closes) Python's own thresholds are back.
"""

from __future__ import annotations

import gc
import time

from PySide6.QtCore import QObject, Qt, QTimer
from PySide6.QtGui import QGuiApplication

#: A full collection waits until the model has not changed for this long (ms) ...
IDLE_MS = 400
#: ... but never longer than this (s) after the last one.
LONGEST_S = 30.0
#: How often (ms) the collector looks whether a full collection is due and the window idle.
TICK_MS = 250
#: The automatic collector's third threshold while the collector runs: never reached, so Python
#: makes no full collection of its own (the count of young collections since the last full one
#: is compared with it).
UNREACHABLE = 1 << 30


#: Python's own thresholds, as they were before the first collector took over, and the
#: collectors running (Python's thresholds come back when the last one stops).
_python_threshold: tuple | None = None
_running: set = set()


class IdleCollector(QObject):
    """Makes Python's full collections when the window is idle (see the module docstring).

    ``document`` is watched for edits (its ``model_changed``); ``busy()`` is True while work
    the user waits for is under way (a solve). Stops itself when its parent is destroyed.
    """

    def __init__(self, parent, document, busy=lambda: False):
        super().__init__(parent)
        global _python_threshold
        self._busy = busy
        if not _running or _python_threshold is None:
            _python_threshold = gc.get_threshold()
        # Python's own rule: a full collection is due once more young (generation 1)
        # collections than this have run since the last one
        self.due_after = _python_threshold[2]
        gc.set_threshold(_python_threshold[0], _python_threshold[1], UNREACHABLE)
        self._key = object()
        _running.add(self._key)
        now = time.monotonic()
        self._last_change = now
        self.last_full = now
        self.full_collections = 0
        document.model_changed.connect(self._on_change)
        self._timer = QTimer(self)
        self._timer.setInterval(TICK_MS)
        self._timer.timeout.connect(self._tick)
        self._timer.start()
        self.destroyed.connect(_release(self._key))

    def _on_change(self, *_args) -> None:
        self._last_change = time.monotonic()

    def idle(self) -> bool:
        """True when no edit came for IDLE_MS, no mouse button is held and nothing is solved."""
        return (time.monotonic() - self._last_change >= IDLE_MS / 1000.0
                and QGuiApplication.mouseButtons() == Qt.MouseButton.NoButton
                and not self._busy())

    def _tick(self) -> None:
        if gc.get_count()[2] <= self.due_after:
            return          # not due (Python also waits for a quarter more long-lived objects)
        if self.idle() or time.monotonic() - self.last_full >= LONGEST_S:
            self.collect()

    def collect(self) -> None:
        """A full collection now."""
        gc.collect()
        self.last_full = time.monotonic()
        self.full_collections += 1

    def stop(self) -> None:
        """No more collections from this one; Python's own thresholds back when no other
        collector runs."""
        self._timer.stop()
        _release(self._key)()


def _release(key):
    # a plain function, not a bound method: it runs while the collector is being destroyed
    def release(*_args):
        _running.discard(key)
        if not _running and _python_threshold is not None and \
                gc.get_threshold()[2] == UNREACHABLE:
            gc.set_threshold(*_python_threshold)
    return release
