"""DESIGN.md section 3: solver/ is pure numpy/scipy; it never imports Qt, pyqtgraph or app."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
VENV_BIN = Path(sys.executable).parent


def test_lint_imports_contract_kept():
    """import-linter's forbidden contract in pyproject.toml (solver -> PySide6, shiboken6,
    pyqtgraph, app) is kept."""
    exe = VENV_BIN / "lint-imports"
    if not exe.exists():
        exe = ROOT / ".venv" / "bin" / "lint-imports"
    p = subprocess.run([str(exe)], cwd=ROOT, capture_output=True, text=True, timeout=300)
    assert p.returncode == 0, p.stdout + p.stderr
    assert "0 broken" in p.stdout and "KEPT" in p.stdout


def test_importing_solver_loads_no_qt():
    """Importing solver (and running a solve) in a fresh interpreter loads no PySide6, shiboken6,
    pyqtgraph or app module."""
    code = (
        "import json, sys\n"
        "import solver\n"
        "m = solver.Model(masses=(solver.Mass('m', 1.0, 0.0, 2.0),),"
        " anchors=(solver.Anchor('A', 0.0, 0.0),), springs=(solver.Spring('s', 'A', 'm', 800.0),))\n"
        "solver.analyse(m); solver.free_response(m, [0.0, 0.1], x0={('m', 'x'): 0.01})\n"
        "bad = [n for n in sys.modules if n.split('.')[0] in"
        " ('PySide6', 'shiboken6', 'pyqtgraph', 'app')]\n"
        "print(json.dumps(bad))\n"
    )
    p = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True,
                       timeout=120)
    assert p.returncode == 0, p.stderr
    assert json.loads(p.stdout.strip().splitlines()[-1]) == []


def test_layer_contracts_are_checked():
    """Issue: app/ shows its layers. pyproject.toml holds the layers contract and the two
    forbidden contracts (report, command line -> docks), and lint-imports reports every one of
    them as kept (common practice: an import contract keeps an architecture true)."""
    exe = VENV_BIN / "lint-imports"
    if not exe.exists():
        exe = ROOT / ".venv" / "bin" / "lint-imports"
    p = subprocess.run([str(exe)], cwd=ROOT, capture_output=True, text=True, timeout=300)
    out = " ".join(p.stdout.split())
    assert "app is layered" in out and "the report never reaches a dock" in out
    assert "the command line imports no dock" in out
    assert p.stdout.count("KEPT") >= 4


def test_main_window_imports_its_panels_directly():
    """No dynamic __import__ of panels is left in the window (the layer check must see every
    import)."""
    src = (ROOT / "app" / "main_window.py").read_text(encoding="utf-8")
    assert "__import__" not in src and "importlib" not in src
