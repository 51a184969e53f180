"""The program freezes its start-up objects out of the cycle collector's reach once the first
model is open (app.gui.freeze_startup_heap): what it made until then is left alone by every
later collection, and garbage made afterwards is still collected (Python's gc.freeze, as its
documentation describes it)."""

import gc
import weakref


class _Node:
    def __init__(self):
        self.other = None


def test_later_cycles_are_still_collected_and_the_startup_heap_is_frozen():
    """A reference cycle made before the freeze and still alive is frozen (counted by
    gc.get_freeze_count, ignored by collections); a cycle made after it and dropped is collected
    by the next collection (weakref goes dead)."""
    from app.gui import freeze_startup_heap

    gc.unfreeze()
    before = _Node()
    before.other = before
    frozen_before = gc.get_freeze_count()
    freeze_startup_heap()
    try:
        assert gc.get_freeze_count() > frozen_before
        assert not any(o is before for o in gc.get_objects())     # out of every generation
        after = _Node()
        after.other = after
        ref = weakref.ref(after)
        del after
        gc.collect()
        assert ref() is None
    finally:
        gc.unfreeze()


def test_full_collections_wait_for_an_idle_window_and_still_come(qtbot, monkeypatch):
    """Python's gc documentation (a full collection runs once the count of young collections
    since the last one passes the third threshold): while the idle collector runs Python makes
    no full collection of its own; when one is due, none is made within IDLE_MS of an edit or
    while a solve is under way, one is made once the window is idle (a dropped reference cycle
    is then freed: its weakref goes dead), and LONGEST_S after the last one it is made even
    while busy. Closing the window gives Python its own thresholds back."""
    import time

    from PySide6.QtCore import QObject, Signal
    from PySide6.QtWidgets import QWidget

    from app.document import idle_collector as ic

    class Doc(QObject):
        model_changed = Signal(object)

    monkeypatch.setattr(ic, "IDLE_MS", 300)
    monkeypatch.setattr(ic, "TICK_MS", 20)
    owner = QWidget()
    doc = Doc()
    busy = {"now": False}
    python_own = gc.get_threshold()
    full = []

    def watch(phase, info):
        if phase == "stop" and info["generation"] == 2:
            full.append(time.monotonic())

    gc.callbacks.append(watch)
    try:
        collector = ic.IdleCollector(owner, doc, busy=lambda: busy["now"])
        assert gc.get_threshold()[2] == ic.UNREACHABLE
        assert gc.get_threshold()[:2] == python_own[:2]

        def churn():
            # young collections until a full one is due, as an edit's allocations make them
            while gc.get_count()[2] <= collector.due_after:
                [[] for _ in range(2000)]

        # an edit: a full collection is due, but not while the model has just changed
        churn()
        doc.model_changed.emit(None)
        edited = time.monotonic()
        cycle = _Node()
        cycle.other = cycle
        ref = weakref.ref(cycle)
        del cycle
        qtbot.waitUntil(lambda: collector.full_collections >= 1, timeout=5000)
        assert full and min(full) - edited >= 0.3 - 0.02
        assert ref() is None
        # busy (a solve under way): none while it lasts, however idle, until LONGEST_S passed
        busy["now"] = True
        churn()
        count = collector.full_collections
        qtbot.wait(500)
        assert collector.full_collections == count
        monkeypatch.setattr(ic, "LONGEST_S", 0.0)
        qtbot.waitUntil(lambda: collector.full_collections > count, timeout=5000)
        owner.deleteLater()
        qtbot.waitUntil(lambda: gc.get_threshold() == python_own, timeout=5000)
    finally:
        gc.callbacks.remove(watch)
        gc.set_threshold(*python_own)


def test_two_collectors_both_collect_and_python_gets_its_thresholds_back_after_both(qtbot):
    """Python's gc documentation (get_threshold / set_threshold): a second window's collector
    takes Python's own rule, not the first one's unreachable threshold; Python's thresholds come
    back only when the last collector stops."""
    from PySide6.QtCore import QObject, Signal

    from app.document import idle_collector as ic

    class Doc(QObject):
        model_changed = Signal(object)

    python_own = gc.get_threshold()
    doc = Doc()
    try:
        first = ic.IdleCollector(None, doc)
        second = ic.IdleCollector(None, doc)
        assert first.due_after == second.due_after == python_own[2]
        assert gc.get_threshold()[2] == ic.UNREACHABLE
        first.stop()
        assert gc.get_threshold()[2] == ic.UNREACHABLE       # the second still runs
        second.collect()
        assert second.full_collections == 1
        second.stop()
        assert gc.get_threshold() == python_own
    finally:
        gc.set_threshold(*python_own)
