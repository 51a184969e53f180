"""Solve the document's model after each edit, debounced, off the UI thread when it is large.

A single edit (a typed value, a drag's release, an undo) is solved on the next turn of the event
loop, so its results are painted with no added wait; attached with ``immediate`` (the main
window does so after every view has connected to the document) a small model is solved within
the edit itself, and the edit and its results reach the screen in one paint. Edits that come in
a burst (keys held down, undo pressed repeatedly, a slider on a large model) are debounced: the
solve starts :data:`DEBOUNCE_MS` after the last one.

Small models (up to :data:`THREAD_DOF_LIMIT` DOFs) are solved on the UI thread: a dense
eigensolve of that size takes a few milliseconds. Larger ones are handed by a worker thread to a
worker process (:mod:`app.results.offload`; scipy's eigensolver keeps the interpreter lock while
it runs, so in a thread it froze the window). That is safe without locks because the Model is
immutable: the worker holds its own snapshot. Every solve carries a generation number, and a
result whose generation is not the latest is dropped, so a slow old solve can never overwrite a
newer one.

The analyses of the last few models are kept (:data:`CACHE_SIZE`): an undo, a redo or an edit
typed back to an earlier value gives a model equal to one already solved, and its results come
back without a new solve. Models are immutable values, so an equal model has the same results.
A line or torsion model moved on the page (a mass dragged) is solved no more either: where its
nodes are drawn enters neither its matrices nor any text of its results (a planar model's
positions set its springs' directions), so the results of the model as it was are those of the
moved one (:func:`physics_key`), handed out with the moved model in them.
"""

from __future__ import annotations

import dataclasses
import time
import traceback
from collections import OrderedDict

from PySide6.QtCore import QObject, QRunnable, QThreadPool, QTimer, Signal

from solver.errors import ModelError
from app.results.offload import dof_count

#: Above this many degrees of freedom the solve runs in the worker process (a dense solve of
#: this size takes ~10-30 ms on a loaded machine; beyond it the UI thread would stall visibly).
THREAD_DOF_LIMIT = 250
#: Debounce of a burst of edits (ms): an edit within this time of the previous one waits this
#: long for the next.
DEBOUNCE_MS = 60
#: Analyses of this many recent models are kept for undo, redo and values typed back.
CACHE_SIZE = 8


def analyse(model):
    """The bundle of results the views take (:func:`app.results.offload.analyse`: every mode
    of a model up to a few hundred DOFs, the lowest ones of a larger model)."""
    from app.results import offload

    return offload.analyse(model)




_PLACE = ("x", "y")
#: physics_key's memos: (node, its fields but the position) by id, (model, key) by id (the
#: objects are kept, so an id is never taken for another object's)
_UNPLACED: dict = {}
_KEYS: OrderedDict = OrderedDict()


def physics_key(model):
    """What a line or torsion model's results depend on: the model with its masses' and
    anchors' positions on the page left out (hashable); None for a planar model, whose
    positions give its springs' directions, or for a model that cannot be hashed."""
    if getattr(model, "kind", "planar") == "planar":
        return None
    known = _KEYS.get(id(model))
    if known is not None and known[0] is model:
        return known[1]
    if len(_UNPLACED) > 50_000:
        _UNPLACED.clear()

    def unplaced(node):
        # an edit replaces the elements it touches and keeps the others (the same objects)
        found = _UNPLACED.get(id(node))
        if found is None or found[0] is not node:
            found = _UNPLACED[id(node)] = (node, (type(node),) + tuple(
                getattr(node, f.name) for f in dataclasses.fields(node) if f.name not in _PLACE))
        return found[1]

    key = tuple((f.name, tuple(unplaced(n) for n in getattr(model, f.name)))
                if f.name in ("masses", "anchors") else (f.name, getattr(model, f.name))
                for f in dataclasses.fields(model))
    try:
        hash(key)
    except TypeError:
        key = None
    _KEYS[id(model)] = (model, key)
    while len(_KEYS) > 2 * CACHE_SIZE:
        _KEYS.popitem(last=False)
    return key


def rebound(analysis, model):
    """``analysis`` of a model with the same :func:`physics_key` as ``model``, with ``model``
    in it (in the system its modes belong to as well)."""
    if analysis.model is model:
        return analysis
    system = dataclasses.replace(analysis.system, model=model)
    modal = dataclasses.replace(analysis.modal, system=system)
    return dataclasses.replace(analysis, model=model, system=system, modal=modal)


def same_solve(a, b) -> bool:
    """True when analyses ``a`` and ``b`` are one solve's numbers (handed out again for an
    equal model, or by :func:`rebound` for one moved on the page): every number and text of
    their modes is the same, only the models may differ in where their nodes are drawn."""
    if a is b:
        return True
    if a is None or b is None:
        return False
    return (a.modal.eigenvalues is b.modal.eigenvalues and a.energy is b.energy
            and a.sensitivity is b.sensitivity and a.warnings == b.warnings)


class _Relay(QObject):
    """Carries a worker's result back to the UI thread (queued signal)."""

    done = Signal(int, object, str)


class _SolveJob(QRunnable):
    def __init__(self, generation, model, relay, latest):
        super().__init__()
        self.generation, self.model, self.relay, self.latest = generation, model, relay, latest
        self.setAutoDelete(True)

    def run(self):
        if self.latest() != self.generation:
            return     # queued behind a solve and overtaken by a newer edit: never needed
        try:
            from app.results import offload

            result = offload.run(offload.analyse, self.model)
            # the views tell current results by the identity of their model: the process sent
            # back an equal copy, so the analysis gets the document's model object again
            result = dataclasses.replace(result, model=self.model)
            self.relay.done.emit(self.generation, result, "")
        except ModelError as exc:
            self.relay.done.emit(self.generation, None, str(exc))
        except Exception:  # a bug in the solver: report it, never kill the worker silently
            self.relay.done.emit(self.generation, None, "internal error while solving:\n"
                                 + traceback.format_exc(limit=4))


class SolveService(QObject):
    """Debounced solves of ``document.model``.

    Signals
    -------
    results_ready(Analysis)
        Results for the current model.
    solve_failed(str)
        The model cannot be analysed; the message says why (views keep the last results, marked
        out of date).
    pending_changed(bool)
        True while the shown results are older than the model.
    live_changed(bool)
        True while a continuous gesture (a slider drag) is changing the model many times a
        second. Views that are costly to refresh (the response plot, the free-response table)
        hold their update until it ends; the modes table, canvas and mode animation follow live.
    """

    results_ready = Signal(object)
    solve_failed = Signal(str)
    pending_changed = Signal(bool)
    live_changed = Signal(bool)

    def __init__(self, document=None, delay_ms: int = DEBOUNCE_MS,
                 thread_dof_limit: int = THREAD_DOF_LIMIT, parent=None, immediate: bool = False):
        super().__init__(parent)
        # _timer starts a solve (0 ms: on the next event-loop turn, so the signals of one edit
        # are all handled first); _burst_timer holds it back while edits keep coming
        self._timer = QTimer(self)
        self._timer.setSingleShot(True)
        self._timer.setInterval(0)
        self._timer.timeout.connect(self._start)
        self._burst_timer = QTimer(self)
        self._burst_timer.setSingleShot(True)
        self._burst_timer.setInterval(delay_ms)
        self._burst_timer.timeout.connect(lambda: self._timer.start())
        self._last_request = -1e9
        self._cache: OrderedDict = OrderedDict()
        self._by_physics: OrderedDict = OrderedDict()
        self.thread_dof_limit = thread_dof_limit
        self.immediate = bool(immediate)
        self._model = None
        self._generation = 0
        self._pending = False
        self._running = 0
        # the pool first: as a child it is then destroyed first, waiting for a running solve
        # while the relay that solve reports through still exists
        self._pool = QThreadPool(self)
        self._pool.setMaxThreadCount(1)
        self._relay = _Relay(self)
        self._relay.done.connect(self._on_done)
        self.last_analysis = None
        self.last_error = ""
        self._live = False
        if document is not None:
            self.attach(document)

    def attach(self, document, immediate: bool | None = None) -> None:
        """Follow ``document.model_changed`` and solve its current model. With ``immediate``,
        connect it after every view has connected: a small model is then solved inside the
        edit's signal, after the views have taken the new model."""
        if immediate is not None:
            self.immediate = bool(immediate)
        document.model_changed.connect(self.request)
        self._document = document
        if document.model.masses:
            self.request(document.model)
        else:
            # nothing to solve yet (a new window): after the debounce interval, so the window
            # paints before the solver's numerical libraries are loaded
            self._model = document.model
            self._generation += 1
            self._set_pending(True)
            self._burst_timer.start()

    def connect_last(self) -> None:
        """Connect to the attached document's ``model_changed`` again, after every handler
        connected since (a view built later, such as a panel made when its tab is first shown,
        then takes an edit's model before the solve of a small model hands it the results, as
        the views built with the window do)."""
        document = getattr(self, "_document", None)
        if document is None:
            return
        document.model_changed.disconnect(self.request)
        document.model_changed.connect(self.request)

    @property
    def pending(self) -> bool:
        return self._pending

    def _set_pending(self, value: bool):
        if value != self._pending:
            self._pending = value
            self.pending_changed.emit(value)

    @property
    def live(self) -> bool:
        """True during a continuous gesture (see ``live_changed``)."""
        return self._live

    def set_live(self, live: bool) -> None:
        """Mark the start (True) or end (False) of a continuous gesture."""
        live = bool(live)
        if live != self._live:
            self._live = live
            self.live_changed.emit(live)

    def request(self, model) -> None:
        """Solve ``model``: on the next event-loop turn after a single edit, or once a burst of
        edits pauses for the debounce interval."""
        self._model = model
        self._generation += 1
        self._set_pending(True)
        now = time.monotonic()
        burst = (now - self._last_request) * 1000.0 < self._burst_timer.interval()
        self._last_request = now
        if self._timer.isActive():
            return          # a solve starts on this turn anyway, and takes the latest model
        if burst or self._burst_timer.isActive():
            self._burst_timer.start()
        elif (self.immediate and not self._live and self._timer.interval() == 0
              and dof_count(model) <= self.thread_dof_limit):
            self._start()
        else:
            self._timer.start()

    def repeat_results(self, model) -> bool:
        """Deliver the results of ``model`` again when they are already in (a small model is
        solved inside the signal that brought it, so a view that cleared itself afterwards, on
        Open or New, gets them back). True when delivered."""
        last = self.last_analysis
        if self._pending or last is None or getattr(last, "model", None) is not model:
            return False
        self.results_ready.emit(last)
        return True

    def solve_now(self) -> None:
        """Skip the debounce wait (tests, export)."""
        if self._timer.isActive() or self._burst_timer.isActive():
            self._timer.stop()
            self._burst_timer.stop()
            self._start()

    def cached(self, model):
        """The analysis of a model equal to ``model``, or of the same line or torsion model
        placed elsewhere on the page (:func:`physics_key`), solved recently (its ``model`` is
        ``model`` itself), or None."""
        try:
            found = self._cache.get(model)
        except TypeError:      # an unhashable field: no reuse, never an error
            return None
        if found is not None:
            self._cache.move_to_end(model)
        else:
            key = physics_key(model)
            found = self._by_physics.get(key) if key is not None else None
            if found is None:
                return None
            self._by_physics.move_to_end(key)
        return rebound(found, model)

    def _remember(self, analysis) -> None:
        model = getattr(analysis, "model", None)
        if model is None:
            return
        try:
            self._cache[model] = analysis
        except TypeError:
            return
        self._cache.move_to_end(model)
        while len(self._cache) > CACHE_SIZE:
            self._cache.popitem(last=False)
        key = physics_key(model)
        if key is not None:
            self._by_physics[key] = analysis
            self._by_physics.move_to_end(key)
            while len(self._by_physics) > CACHE_SIZE:
                self._by_physics.popitem(last=False)

    def offer(self, model, analysis) -> bool:
        """Take results computed elsewhere (the tune panel solves small models at once while a
        slider is dragged) if they are for the latest model; the debounced solve is then skipped.
        True when taken."""
        if model is not self._model or analysis is None:
            return False
        self._timer.stop()
        self._burst_timer.stop()
        self._on_done(self._generation, analysis, "")
        return True

    def wait(self, msecs: int = 30000) -> bool:
        """Block until no solve is queued or running (tests, export). True when idle."""
        from PySide6.QtCore import QCoreApplication, QElapsedTimer

        self.solve_now()
        clock = QElapsedTimer()
        clock.start()
        while self._pending and clock.elapsed() < msecs:
            self._pool.waitForDone(20)
            QCoreApplication.processEvents()
        return not self._pending

    def _start(self):
        generation, model = self._generation, self._model
        if model is None:
            return
        hit = self.cached(model)
        if hit is not None:
            self._on_done(generation, hit, "")
            return
        if dof_count(model) > self.thread_dof_limit:
            self._pool.start(_SolveJob(generation, model, self._relay, lambda: self._generation))
            return
        try:
            result, error = analyse(model), ""
        except ModelError as exc:
            result, error = None, str(exc)
        except Exception:
            result, error = None, "internal error while solving:\n" + traceback.format_exc(limit=4)
        # the pause that ends a burst counts from here: edits that queued up while this solve
        # held the event loop arrive together once it returns (keys held down on a slow
        # machine), and each would otherwise be solved on its own
        self._last_request = time.monotonic()
        self._on_done(generation, result, error)

    def _on_done(self, generation: int, result, error: str):
        if result is not None:
            self._remember(result)    # right for its model even when that is no longer current
        if generation != self._generation:
            return  # stale: the model changed while this solve ran
        self._set_pending(False)
        if result is None:
            self.last_error = error
            self.solve_failed.emit(error)
        else:
            self.last_analysis, self.last_error = result, ""
            self.results_ready.emit(result)

    def shutdown(self):
        self._timer.stop()
        self._burst_timer.stop()
        self._generation += 1
        self._pool.clear()
        self._pool.waitForDone(5000)
