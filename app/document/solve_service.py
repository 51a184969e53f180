"""Solve the document's model after each edit, debounced, off the UI thread when it is large.

Edits come in bursts (a drag, typing), so a solve starts ~60 ms after the last change. Small
models (up to :data:`THREAD_DOF_LIMIT` DOFs) are solved at once on the UI thread: a dense eigensolve
of a few hundred DOFs takes milliseconds, less than a thread hand-off costs in latency. Larger ones
go to a worker thread, which is safe without locks because the Model is immutable: the worker holds
its own snapshot. Every solve carries a generation number, and a result whose generation is not the
latest is dropped, so a slow old solve can never overwrite a newer one.
"""

from __future__ import annotations

import traceback

from PySide6.QtCore import QObject, QRunnable, QThreadPool, QTimer, Signal

from solver.errors import ModelError

#: Above this many degrees of freedom the solve runs in a worker thread.
THREAD_DOF_LIMIT = 500
DEBOUNCE_MS = 60


def analyse(model):
    """``solver.analyse(model)``: the bundle of results the views take."""
    import solver

    return solver.analyse(model)


def dof_count(model) -> int:
    """Upper estimate of the DOFs of a model (unlocked directions of every mass)."""
    n_dir = len(model.directions)
    return sum(n_dir - len(m.fixed) for m in model.masses)


class _Relay(QObject):
    """Carries a worker's result back to the UI thread (queued signal)."""

    done = Signal(int, object, str)


class _SolveJob(QRunnable):
    def __init__(self, generation, model, relay):
        super().__init__()
        self.generation, self.model, self.relay = generation, model, relay
        self.setAutoDelete(True)

    def run(self):
        try:
            result = analyse(self.model)
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
                 thread_dof_limit: int = THREAD_DOF_LIMIT, parent=None):
        super().__init__(parent)
        self._timer = QTimer(self)
        self._timer.setSingleShot(True)
        self._timer.setInterval(delay_ms)
        self._timer.timeout.connect(self._start)
        self.thread_dof_limit = thread_dof_limit
        self._model = None
        self._generation = 0
        self._pending = False
        self._running = 0
        self._relay = _Relay(self)
        self._relay.done.connect(self._on_done)
        self._pool = QThreadPool(self)
        self._pool.setMaxThreadCount(1)
        self.last_analysis = None
        self.last_error = ""
        self._live = False
        if document is not None:
            document.model_changed.connect(self.request)
            self.request(document.model)

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
        """Solve ``model`` once edits pause for the debounce interval."""
        self._model = model
        self._generation += 1
        self._set_pending(True)
        self._timer.start()

    def solve_now(self) -> None:
        """Skip the debounce wait (tests, export)."""
        if self._timer.isActive():
            self._timer.stop()
            self._start()

    def offer(self, model, analysis) -> bool:
        """Take results computed elsewhere (the tune panel solves small models at once while a
        slider is dragged) if they are for the latest model; the debounced solve is then skipped.
        True when taken."""
        if model is not self._model or analysis is None:
            return False
        self._timer.stop()
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
        if dof_count(model) > self.thread_dof_limit:
            self._pool.start(_SolveJob(generation, model, self._relay))
            return
        try:
            result, error = analyse(model), ""
        except ModelError as exc:
            result, error = None, str(exc)
        except Exception:
            result, error = None, "internal error while solving:\n" + traceback.format_exc(limit=4)
        self._on_done(generation, result, error)

    def _on_done(self, generation: int, result, error: str):
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
        self._generation += 1
        self._pool.clear()
        self._pool.waitForDone(5000)
