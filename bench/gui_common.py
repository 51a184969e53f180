"""Shared pieces of the whole-window benchmarks (edit_bench, anim_bench): test models, the window,
the baselines measured in the same run, and the wait for "every visible panel updated and painted".

Not a test module: the benchmarks print medians and ratios, they assert nothing (the machines are
shared and noisy).
"""

from __future__ import annotations

import os
import statistics
import sys
import tempfile
import time
from pathlib import Path

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")
# as the program sets it (app/cli.py): one BLAS thread, for the window and the baselines alike
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
ROOT = Path(__file__).resolve().parent.parent
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

import numpy as np  # noqa: E402
from PySide6.QtCore import QEvent, QObject, QSettings  # noqa: E402
from PySide6.QtWidgets import QApplication, QMainWindow, QWidget  # noqa: E402

import solver  # noqa: E402
from solver import Anchor, Mass, Model, Spring  # noqa: E402

#: Window size of every run (a common laptop screen's worth).
WINDOW_SIZE = (1400, 880)


def app() -> QApplication:
    return QApplication.instance() or QApplication([])


def chain_model(n: int, seed: int = 3) -> Model:
    """A line chain: ground -- m0 -- m1 -- ... -- m(n-1), random masses and stiffnesses (SI)."""
    rng = np.random.default_rng(seed)
    masses = tuple(Mass(f"m{i}", 0.3 * (i + 1), 0.0, float(rng.uniform(0.5, 3.0)))
                   for i in range(n))
    springs = [Spring("s0", "g", "m0", 5e4)]
    springs += [Spring(f"s{i}", f"m{i - 1}", f"m{i}", float(rng.uniform(2e4, 8e4)))
                for i in range(1, n)]
    return Model(kind="line", name=f"chain of {n}", masses=masses,
                 anchors=(Anchor("g", 0.0, 0.0),), springs=tuple(springs))


def lattice_model(n: int, seed: int = 5) -> Model:
    """A planar lattice of about ``n`` masses (rows x columns, x and y springs between
    neighbours, the left column anchored): 2 DOFs per mass."""
    rng = np.random.default_rng(seed)
    cols = max(1, int(round(np.sqrt(n))))
    rows = max(1, n // cols)
    masses, springs, anchors = [], [], []
    k = 0

    def sid():
        nonlocal k
        k += 1
        return f"s{k}"

    for r in range(rows):
        anchors.append(Anchor(f"g{r}", 0.0, 0.3 * r))
        for c in range(cols):
            masses.append(Mass(f"m{r}_{c}", 0.3 * (c + 1), 0.3 * r, float(rng.uniform(0.5, 3.0))))
            left = f"g{r}" if c == 0 else f"m{r}_{c - 1}"
            springs.append(Spring(sid(), left, f"m{r}_{c}", float(rng.uniform(2e4, 8e4))))
            if r:
                springs.append(Spring(sid(), f"m{r - 1}_{c}", f"m{r}_{c}",
                                      float(rng.uniform(2e4, 8e4))))
    return Model(kind="planar", name=f"lattice of {len(masses)}", masses=tuple(masses),
                 anchors=tuple(anchors), springs=tuple(springs))


def full_window():
    """The whole MainWindow, settings and recovery in a temporary folder, shown at WINDOW_SIZE."""
    from app.main_window import MainWindow

    folder = Path(tempfile.mkdtemp(prefix="springwright-bench-"))
    w = MainWindow(settings=QSettings(str(folder / "settings.ini"), QSettings.IniFormat),
                   recovery_folder=folder / "recovery")
    w._ask_save_changes = lambda: "discard"
    w._notify_error = lambda title, message: None
    w.resize(*WINDOW_SIZE)
    w.show()
    # as the program does once its first model is open (app.gui.freeze_startup_heap); the
    # libraries' modules are loaded first, as the program's first model loads them
    from app.gui import collect_when_idle, freeze_startup_heap

    solver.analyse(chain_model(3))
    freeze_startup_heap()
    collect_when_idle(w)     # as the program: full collections while idle, not in an edit
    return w


def median_time(fn, repeats: int) -> float:
    times = []
    for _ in range(repeats):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times)


def bare_solve(model, repeats: int = 9, count=None) -> tuple[float, float]:
    """Median seconds of bare ``solver.modes(model, count)`` and of
    ``solver.analyse(model, count)`` (modes, energy shares and sensitivities: what the window
    needs; ``count`` the window's number of modes, None for all)."""
    return (median_time(lambda: solver.modes(model, count=count), repeats),
            median_time(lambda: solver.analyse(model, count=count), repeats))


class PaintWatch(QObject):
    """Counts paint events anywhere in the application (installed on the QApplication)."""

    def __init__(self):
        super().__init__()
        self.paints = 0
        self.by_widget: dict[str, int] = {}
        self.track = False

    def eventFilter(self, obj, event):  # noqa: N802
        if event.type() == QEvent.Type.Paint:
            self.paints += 1
            if self.track:
                name = type(obj).__name__
                self.by_widget[name] = self.by_widget.get(name, 0) + 1
        return False


_WATCH: PaintWatch | None = None


def paint_watch() -> PaintWatch:
    global _WATCH
    if _WATCH is None:
        _WATCH = PaintWatch()
        app().installEventFilter(_WATCH)
    return _WATCH


def busy(win) -> bool:
    """True while the window still has work queued that will change what it shows."""
    if win is None:
        return False
    rp, tp = win.response_panel, win.tune_panel
    return bool(win.solver.pending or rp._timer.isActive() or getattr(rp, "_computing", False)
                or getattr(tp, "sweep_pending", False))


class ResultsClock(QObject):
    """Time (perf_counter) of the last ``results_ready`` of a window's solve service."""

    def __init__(self, win):
        super().__init__()
        self.at = None
        win.solver.results_ready.connect(self._on_results)

    def _on_results(self, _analysis):
        self.at = time.perf_counter()


def settle(win=None, quiet_s: float = 0.03, timeout_s: float = 900.0, clock=None):
    """Process events until the window is idle.

    Returns the time (perf_counter) at the end of the last event pass that painted something or
    left work queued (``complete``); with a ``clock`` (:class:`ResultsClock`), returns
    ``(shown, complete)`` where ``shown`` is the end of the first pass that painted after the
    solve service delivered its results (every view current, or dimmed and marked updating).
    Idle: nothing queued (see :func:`busy`) and no paint event for ``quiet_s`` seconds (Qt
    delivers an update() as a paint on a later pass).
    """
    qapp = app()
    watch = paint_watch()
    last_work = time.perf_counter()
    shown = None
    deadline = last_work + timeout_s
    while True:
        before = watch.paints
        qapp.processEvents()
        now = time.perf_counter()
        working = busy(win)
        painted = watch.paints != before
        if painted and shown is None and clock is not None and clock.at is not None:
            shown = now
        if painted or working:
            last_work = now
        elif now - last_work > quiet_s:
            if clock is None:
                return last_work
            return (shown if shown is not None else last_work), last_work
        if not painted:
            time.sleep(0.0005)   # leave the core to a worker thread
        if now > deadline:
            raise TimeoutError("the window did not settle")


def full_repaint(win, repeats: int = 7) -> float:
    """Median seconds to repaint every visible widget of ``win`` once, with no edit: each one
    marked for update and one event pass (the path an edit's paints take).

    Not ``win.repaint()``: Qt repaints only a window's own dirty area then, and the opaque
    viewports of its scroll areas (canvas, modes table, plots) keep their backing-store pixels
    unpainted: at 200 masses that measured 15 ms of the 49 ms the window's panels take to draw.
    """
    from PySide6.QtWidgets import QWidget

    qapp = app()
    widgets = [w for w in win.findChildren(QWidget) if w.isVisible()] + [win]
    qapp.processEvents()

    def once():
        for w in widgets:
            w.update()
        qapp.processEvents()

    return median_time(once, repeats)


def bare_repaint(repeats: int = 15) -> tuple[float, float]:
    """Median seconds of (a) ``repaint()`` of an empty QMainWindow of WINDOW_SIZE and (b)
    ``update()`` to its paint through the event loop (the same path an edit's repaint takes)."""
    w = QMainWindow()
    w.setCentralWidget(QWidget())
    w.resize(*WINDOW_SIZE)
    w.show()
    settle()
    sync = median_time(w.repaint, repeats)
    times = []
    for _ in range(repeats):
        t = time.perf_counter()
        w.update()
        end = settle(quiet_s=0.02)
        times.append(end - t)
    w.close()
    w.deleteLater()
    settle()
    return sync, statistics.median(times)
