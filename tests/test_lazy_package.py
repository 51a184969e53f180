"""The solver package loads its submodules on first use (PEP 562) and keeps its public API: each
check runs in a fresh interpreter, so what is loaded is what the statement under test loaded.
Source: DESIGN.md (the public solver API), DEVELOPERS.md "Conventions" (``solver.modes`` is the
function, its module ``sys.modules["solver.modes"]``); PEP 562 (module ``__getattr__``)."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _run(code: str) -> dict:
    p = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True,
                       timeout=120, check=False)
    assert p.returncode == 0, p.stderr
    return json.loads(p.stdout.strip().splitlines()[-1])


def test_import_solver_loads_no_scipy():
    """``import solver`` and the model types load neither scipy nor the eigensolver's code (the
    window paints before them); the first solve loads what it needs and gives the same result
    as the eigenvalues of the 1-DOF oscillator (math: f = sqrt(k/m) / 2 pi)."""
    out = _run(
        "import json, math, sys\n"
        "import solver\n"
        "from solver import Anchor, Mass, Model, Spring, ModelError\n"
        "before = sorted(n for n in sys.modules if n.split('.')[0] == 'scipy')\n"
        "m = Model(masses=(Mass('m', 1.0, 0.0, 2.0),), anchors=(Anchor('A', 0.0, 0.0),),"
        " springs=(Spring('s', 'A', 'm', 800.0),))\n"
        "f = float(solver.modes(m).frequencies_hz[0])\n"
        "print(json.dumps({'before': before, 'f': f, 'exact': math.sqrt(400.0) / (2 * math.pi),"
        " 'after': any(n.split('.')[0] == 'scipy' for n in sys.modules)}))\n")
    assert out["before"] == []
    assert out["after"]
    assert abs(out["f"] - out["exact"]) <= 1e-12 * out["exact"]


def test_public_names_and_function_modules():
    """Every name of ``__all__`` imports with ``from solver import X`` (and ``*``); ``solver.modes``,
    ``solver.assemble``, ``solver.margin_table`` and ``solver.interference`` stay the functions
    whichever way their modules were imported first; ``sys.modules["solver.modes"]`` is the
    module from the start; submodules are reachable as attributes (``solver.io``)."""
    out = _run(
        "import json, sys, types\n"
        "import solver\n"
        "mod_early = sys.modules['solver.modes']\n"
        "import solver.modes, solver.assemble\n"
        "from solver.margin_table import margin_table\n"
        "from solver import interference\n"
        "import solver.interference\n"
        "ns = {}\n"
        "exec('from solver import *', ns)\n"
        "names = {n: hasattr(solver, n) for n in solver.__all__}\n"
        "print(json.dumps({\n"
        "  'all': all(names.values()) and all(n in ns for n in solver.__all__),\n"
        "  'functions': [isinstance(getattr(solver, n), types.FunctionType) for n in\n"
        "                ('modes', 'assemble', 'margin_table', 'interference')],\n"
        "  'module': isinstance(mod_early, types.ModuleType) and mod_early is"
        " sys.modules['solver.modes'] and mod_early.modes is solver.modes,\n"
        "  'io': isinstance(solver.io, types.ModuleType) and solver.io.load_model is"
        " solver.load_model,\n"
        "  'dir': set(solver.__all__) <= set(dir(solver)),\n"
        "}))\n")
    assert out == {"all": True, "functions": [True] * 4, "module": True, "io": True, "dir": True}


def test_unknown_name_is_an_attribute_error():
    """A name the package does not have raises AttributeError (``hasattr`` is False), as for
    any module."""
    out = _run("import json, solver\n"
               "print(json.dumps([hasattr(solver, 'no_such_name'), hasattr(solver, 'modes')]))\n")
    assert out == [False, True]
