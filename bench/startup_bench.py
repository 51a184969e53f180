"""Startup benchmark: process start to the window's first paint, against bare imports.

Run:  .venv/bin/python bench/startup_bench.py [--repeats N] [--importtime]
(offscreen; no screen needed; settings and recovery files go to a temporary folder)

Each case is a fresh Python process; the time is from just before the parent starts it to the
moment the child reports (``time.monotonic``, one clock for every process on the machine):

- *python*: ``python -c pass`` (the interpreter alone);
- *import solver*: ``python -c "import solver"``;
- *bare Qt window*: ``import PySide6.QtWidgets``, a QApplication and an empty QMainWindow shown,
  to its first paint;
- *springwright*: the ``springwright`` command with no file (``app.cli.main([])``: the built-in
  example), to the first paint of the main window, and to the first paint that shows the
  example's results (the modes table filled).

The child reports through a paint-event filter installed when the application's event loop starts
(``QApplication.exec`` is wrapped; the program itself is unchanged). The goal: first paint < 1 s
on a quiet machine; the ratios to the bare Qt window and to ``import solver`` are printed.
``--importtime`` prints the slowest imports of the program's start (``python -X importtime``).
"""

from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent

_HOOK = r"""
import sys, time
from PySide6.QtCore import QEvent, QObject, QTimer
from PySide6.QtWidgets import QApplication, QMainWindow

class _Watch(QObject):
    first = None
    def eventFilter(self, obj, event):
        if event.type() == QEvent.Type.Paint:
            win = obj.window() if hasattr(obj, "window") else None
            if isinstance(win, QMainWindow):
                now = time.monotonic()
                if self.first is None:
                    self.first = now
                    print("FIRST", repr(now), flush=True)
                a = getattr(win, "analysis", None)
                if not hasattr(win, "solver") or (a is not None and a.model.masses):
                    print("RESULTS", repr(now), flush=True)
                    QTimer.singleShot(0, QApplication.instance().quit)
        return False

_watch = _Watch()
_exec = QApplication.exec
def _exec_watched(self=None):
    app = QApplication.instance()
    app.installEventFilter(_watch)
    QTimer.singleShot(20000, app.quit)
    return _exec()
QApplication.exec = _exec_watched
"""

CASES = {
    "python": "import time; print('FIRST', repr(time.monotonic()))",
    "import solver": "import solver, time; print('FIRST', repr(time.monotonic()))",
    "bare Qt window": _HOOK + r"""
app = QApplication([])
w = QMainWindow()
w.resize(1400, 880)
w.show()
QApplication.exec()
""",
    # the hook imports PySide6.QtWidgets first: the program imports it anyway before its window
    # can paint, so the total to first paint is the same
    "springwright": _HOOK + r"""
from app.cli import main
main([])
""",
}


def run_case(code: str, env: dict) -> dict:
    t0 = time.monotonic()
    out = subprocess.run([sys.executable, "-c", code], env=env, cwd=ROOT, capture_output=True,
                         text=True, timeout=60)
    marks = {}
    for line in out.stdout.splitlines():
        parts = line.split()
        if len(parts) == 2 and parts[0] in ("FIRST", "RESULTS") and parts[0] not in marks:
            marks[parts[0]] = float(parts[1]) - t0
    if "FIRST" not in marks:
        raise RuntimeError(f"no paint reported:\n{out.stdout}\n{out.stderr}")
    return marks


def child_env() -> dict:
    env = dict(os.environ)
    # a user's Python caches compiled modules (.pyc); a shell with PYTHONDONTWRITEBYTECODE set
    # would compile ~80 of the program's modules from source at every start (~0.2 s): the
    # warm-up run writes the cache, and every measured start reads it, as a user's second does
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    home = tempfile.mkdtemp(prefix="springwright-startup-")
    env.update(QT_QPA_PLATFORM="offscreen", PYTHONPATH=str(ROOT),
               XDG_CONFIG_HOME=os.path.join(home, "config"),
               XDG_DATA_HOME=os.path.join(home, "data"),
               XDG_CACHE_HOME=os.path.join(home, "cache"))
    return env


def import_profile(env: dict, top: int = 25) -> None:
    code = "from app.cli import main; import app.gui, app.main_window"
    out = subprocess.run([sys.executable, "-X", "importtime", "-c", code], env=env, cwd=ROOT,
                         capture_output=True, text=True, timeout=60)
    rows = []
    for line in out.stderr.splitlines():
        if not line.startswith("import time:") or "self [us]" in line:
            continue
        self_us, cum_us, name = line.split(":", 1)[1].split("|")
        rows.append((int(cum_us), int(self_us), name.rstrip()))
    rows.sort(reverse=True)
    print("slowest imports (cumulative ms) of app.cli + app.gui + app.main_window:")
    for cum, self_, name in rows[:top]:
        print(f"  {cum / 1e3:8.1f} {self_ / 1e3:8.1f}  {name}")


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--importtime", action="store_true")
    args = ap.parse_args(argv)
    env = child_env()
    if args.importtime:
        import_profile(env)
        return
    results: dict[str, list[dict]] = {k: [] for k in CASES}
    run_case(CASES["springwright"], env)      # warm the file and bytecode caches once
    for _ in range(args.repeats):
        for name, code in CASES.items():      # interleaved: the machine's load hits all alike
            results[name].append(run_case(code, env))
    med = {name: {k: statistics.median(r[k] for r in rs if k in r)
                  for k in ("FIRST", "RESULTS") if any(k in r for r in rs)}
           for name, rs in results.items()}
    qt = med["bare Qt window"]["FIRST"]
    imp = med["import solver"]["FIRST"]
    print(f"Startup, fresh process to report, offscreen, medians of {args.repeats}")
    print(f"{'case':>16} | {'first paint':>11} | {'x bare Qt':>9} | {'x import solver':>15} |"
          f" {'with results':>12}")
    print("-" * 78)
    for name, m in med.items():
        first = m["FIRST"]
        res = f"{m['RESULTS'] * 1e3:9.0f} ms" if "RESULTS" in m and name == "springwright" else ""
        print(f"{name:>16} | {first * 1e3:8.0f} ms | {first / qt:9.2f} | {first / imp:15.2f} |"
              f" {res:>12}")
    print("first paint: process start to the first paint event of the main window (python and"
          " import solver: to the end of the import); goal < 1 s on a quiet machine")


if __name__ == "__main__":
    main()
