"""Edit benchmark: one edit to every visible panel updated and painted, in the whole window.

Run:  .venv/bin/python bench/edit_bench.py [--sizes 10,50,200,1000] [--kind chain|lattice]
                                           [--repeats N] [--profile SIZE]
(offscreen; no screen needed)

For models of 10, 50, 200 and 1000 masses (a line chain, or with ``--kind lattice`` a planar
lattice, 2 DOFs per mass) the whole MainWindow is built and shown, and three kinds of edit are
timed, each from the moment it is made to the end of the last paint it causes (every visible
panel: canvas, properties, modes table, motion view, tune plot, response plots):

- *property*: a new stiffness typed into the Properties panel's ``k`` field of the selected spring
  (``editingFinished``, as on Enter);
- *undo*: the Undo action;
- *drag end*: a mass dragged on the canvas and released (the release is timed: the preview
  while dragging is not an edit); each drag ends at a place the mass has not been before (+1,
  -1, +2, -2 ... grid steps from where it started), so no result is reused from an earlier one.

Edits are PAUSE_S (0.4 s) apart, as a person's are (far more, in fact): the window's idle work
after an edit (the Tune curves' pixmaps) is done by the next one, as it is in use. Medians of 9
edits of each kind up to 200 masses, 3 above.

Nothing is skipped: the solve service's debounce, its worker thread and Qt's own update timer are
all inside the time. In the same run, the baselines: bare ``solver.modes(model)``, bare
``solver.analyse(model)`` (modes + energy shares + sensitivities: what the window needs; above
``offload.FULL_SPECTRUM_DOF`` DOFs both for the lowest modes the window computes), a bare
repaint of this same window with the same model and no edit (every visible widget painted
once: the paint an edit cannot avoid; :func:`gui_common.full_repaint`), and, for reference, a repaint of an empty QMainWindow of
the same size. The ratio printed is edit time / (bare analyse + the window's bare repaint); the
goal is <= 2 (and <= 50 ms) up to 200 masses. The ratio to bare analyse + the empty window's
update-to-paint is printed too.

For the largest size an event-loop latency probe runs during the edits: a 5 ms QTimer records how
late each tick fires; the worst lateness is how long the UI thread was blocked.
"""

from __future__ import annotations

import argparse
import cProfile
import pstats
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

import gui_common as gc  # noqa: E402
from PySide6.QtCore import QElapsedTimer, QPointF, QTimer  # noqa: E402
from PySide6.QtWidgets import QApplication  # noqa: E402

import solver  # noqa: E402
from app.document.solve_service import DEBOUNCE_MS  # noqa: E402
from app.results import offload  # noqa: E402

EDITS = ("property", "undo", "drag end")
#: Seconds between two timed edits: longer than the window's idle work after an edit (the Tune
#: sweep's curves keep pixmaps once unchanged for tune_panel.CURVE_CACHE_MS, filled while idle),
#: far shorter than a person takes to type the next value or grab the next mass.
PAUSE_S = 0.4
PROBE_MS = 5


class LatencyProbe:
    """A 5 ms timer; ``worst_ms`` is the largest lateness of a tick (UI thread blocked)."""

    def __init__(self, interval_ms: int = PROBE_MS):
        self.interval = interval_ms
        self.timer = QTimer()
        self.timer.setInterval(interval_ms)
        self.timer.timeout.connect(self._tick)
        self.clock = QElapsedTimer()
        self.gaps: list[float] = []

    def start(self):
        self.gaps = []
        self.clock.start()
        self.timer.start()

    def _tick(self):
        self.gaps.append(self.clock.nsecsElapsed() / 1e6)
        self.clock.restart()

    def stop(self) -> float:
        self.timer.stop()
        return max([g - self.interval for g in self.gaps] + [0.0])


def time_edits(win, model, repeats: int, probe: LatencyProbe | None = None) -> dict:
    """Median seconds per edit kind (and the probe's worst lateness in ms, if given)."""
    n = len(model.masses)
    win.document.new(model=model)
    gc.settle(win)
    springs, masses = model.springs, model.masses
    spring = springs[len(springs) // 2]
    mass = masses[n // 2]
    out: dict = {}
    worst = 0.0

    clock = gc.ResultsClock(win)
    # the unavoidable paint: this window, as it is, repainted whole with no edit (every visible
    # widget drawn once; Qt's raster painting of a 1400x880 window of plots, tables and text)
    out["window_repaint"] = gc.full_repaint(win)

    def timed(action) -> tuple[float, float]:
        nonlocal worst
        # a single edit, as a person makes one: past the solve service's burst window (edits
        # closer together than DEBOUNCE_MS are a burst and wait for it to pause, on purpose),
        # and after the window's idle work (PAUSE_S: a person takes longer to type a value)
        pause = time.perf_counter() + max(1.5 * DEBOUNCE_MS / 1000.0, PAUSE_S)
        while time.perf_counter() < pause:
            QApplication.processEvents()
            time.sleep(0.002)
        if probe is not None:
            probe.start()
        clock.at = None
        t0 = time.perf_counter()
        action()
        shown, end = gc.settle(win, clock=clock)
        if probe is not None:
            worst = max(worst, probe.stop())
        return shown - t0, end - t0

    def med(times):
        return tuple(statistics.median(t[i] for t in times) for i in (0, 1))

    # property edits: a new k typed into the selected spring's field
    win.scene.select_ids([spring.id])
    gc.settle(win)
    field = win.properties.field("k")
    times = []
    for i in range(repeats):
        field.edit.setText(f"{spring.k * (1 + 0.02 * (i + 1)):.6g}")
        times.append(timed(field.edit.editingFinished.emit))
    out["property"] = med(times)

    # undo each of them
    times = [timed(win.act_undo.trigger) for _ in range(repeats)]
    out["undo"] = med(times)

    # drag end: a mass moved to a new place and released (+1, -1, +2 ... grid steps)
    win.scene.select_ids([mass.id])
    gc.settle(win)
    item = win.scene.nodes[mass.id]
    step = win.scene.mapper.grid_m * win.scene.mapper.px_per_m
    times = []
    for i in range(repeats):
        press = QPointF(item.pos())
        win.scene._press_positions = {mass.id: press}
        item.setPos(press + QPointF(0.0, (i + 1) * step * (1 if i % 2 == 0 else -1)))   # the drag preview
        gc.settle(win)

        def release():
            win.scene._finish_move()
            win.scene._press_positions = None

        times.append(timed(release))
    out["drag end"] = med(times)
    if probe is not None:
        out["worst_block_ms"] = worst
    return out


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default="10,50,200,1000")
    ap.add_argument("--kind", choices=("chain", "lattice"), default="chain")
    ap.add_argument("--repeats", type=int, default=0, help="edits of each kind (default by size)")
    ap.add_argument("--profile", type=int, default=0, metavar="SIZE",
                    help="profile the edits at this size with cProfile (top 35 by cumulative)")
    args = ap.parse_args(argv)
    sizes = [int(s) for s in args.sizes.split(",") if s]
    make = gc.chain_model if args.kind == "chain" else gc.lattice_model
    gc.app()
    win = gc.full_window()
    gc.settle(win)
    repaint_sync, repaint_loop = gc.bare_repaint()

    if args.profile:
        model = make(args.profile)
        time_edits(win, model, 2)              # warm up
        prof = cProfile.Profile()
        prof.enable()
        time_edits(win, model, args.repeats or 5)
        prof.disable()
        pstats.Stats(prof).sort_stats("cumulative").print_stats(35)
        pstats.Stats(prof).sort_stats("tottime").print_stats(25)
        win.solver.shutdown()
        return

    rows = []
    largest = max(sizes)
    for n in sizes:
        model = make(n)
        # the same modes the window computes (the lowest ones above FULL_SPECTRUM_DOF DOFs)
        count, _cover = offload.mode_count(solver.assemble(model))
        bare_modes, bare_analyse = gc.bare_solve(model, repeats=9 if n <= 200 else 3,
                                                 count=count)
        # medians of 9 edits up to 200 masses: the machine's speed drifts by tens of percent
        repeats = args.repeats or (9 if n <= 200 else 3)
        probe = LatencyProbe() if n == largest else None
        time_edits(win, model, 1)               # warm up (first paint of each panel, caches)
        res = time_edits(win, model, repeats, probe)
        rows.append((n, len(model.masses), bare_modes, bare_analyse, res))
        print(f"  done {n}", file=sys.stderr, flush=True)
    win.solver.shutdown()

    base_note = (f"bare repaint of an empty {gc.WINDOW_SIZE[0]}x{gc.WINDOW_SIZE[1]} window:"
                 f" repaint() {repaint_sync * 1e3:.2f} ms, update() to paint"
                 f" {repaint_loop * 1e3:.2f} ms")
    print(f"Edit to every visible panel painted, whole window, offscreen, {args.kind}, medians")
    print(base_note)
    print(f"{'masses':>6} | {'modes':>8} {'analyse':>8} {'repaint':>9} | " +
          " | ".join(f"{k + ' shown':>14} {'x':>5} {'complete':>9}" for k in EDITS)
          + " | UI block")
    print("-" * 128)
    for n, nm, bm, ba, res in rows:
        budget = ba + res["window_repaint"]
        cells = " | ".join(f"{res[k][0] * 1e3:12.1f}ms {res[k][0] / budget:5.1f}"
                           f" {res[k][1] * 1e3:7.0f}ms" for k in EDITS)
        block = f"{res['worst_block_ms']:.0f} ms" if "worst_block_ms" in res else ""
        print(f"{nm:>6} | {bm * 1e3:6.2f}ms {ba * 1e3:6.2f}ms {res['window_repaint'] * 1e3:7.2f}ms"
              f" | {cells} | {block}")
    print("shown: edit to the first paint with the new results (every view current, or dimmed"
          " and marked updating); complete: to the last paint (sweep and response curves too)")
    print("repaint: this window with the same model repainted whole, no edit (every visible"
          " widget, median); x = shown / (bare analyse + repaint); goal <= 2 and <= 50 ms up to"
          " 200 masses; at 1000: edit < 300 ms, UI never blocked > 100 ms")
    print("ratio to bare analyse + the empty window's update-to-paint (shown): " + "; ".join(
        f"{nm}: " + ", ".join(f"{res[k][0] / (ba + repaint_loop):.1f}" for k in EDITS)
        for n, nm, bm, ba, res in rows))
    print("ratio to bare solver.modes alone (shown, complete): " + "; ".join(
        f"{nm}: " + ", ".join(f"{res[k][0] / bm:.0f}/{res[k][1] / bm:.0f}" for k in EDITS)
        for n, nm, bm, ba, res in rows))


if __name__ == "__main__":
    main()
