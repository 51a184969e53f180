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
