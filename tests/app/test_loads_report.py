"""The report's loads section: present when the model defines loads, with every mass and spring
by label, each load's tables and the cautions; absent otherwise; a model the loads cannot be
solved for says so in the report instead of failing.

Sources: DESIGN.md section 7 and the brief (outputs carry the caution that a lumped linear model is
an estimate and that standards, codes and licensed practice govern); the numbers are the
solver's (checked against published formulas in tests/solver/test_loads.py).
"""

import os

os.environ.setdefault("QT_QPA_PLATFORM", "offscreen")

from pathlib import Path

import pytest
from PySide6.QtGui import QImage

import solver
from app.report import render_report
from app.report.page import _Page
from solver.load_cases import Loads, ShockPulse

RACK = Path(__file__).resolve().parents[2] / "assets" / "examples" / "equipment_rack.json"


@pytest.fixture
def texts(monkeypatch):
    """Every text the report draws (through the page helpers)."""
    seen = []
    real = _Page.text

    def text(self, rect, s, *args, **kw):
        seen.append(s)
        return real(self, rect, s, *args, **kw)

    monkeypatch.setattr(_Page, "text", text)
    return seen


def test_loads_section_with_labels_tables_and_cautions(tmp_path, texts):
    model = solver.load_model(RACK)
    info = render_report(model, None, tmp_path / "r.png", dpi=100)
    img = QImage(str(tmp_path / "r.png"))
    assert not img.isNull() and img.height() == info["height"]
    body = "\n".join(texts)
    for words in ("Loads: random vibration, shock and design spectrum", "input 2.6 g RMS",
                  "Miles' equation", "Shock: half-sine 15 g, 11 ms", "SRSS", "CQC",
                  "90 % of the mass", "Level 3 (display)", "Spring", "Force (N RMS)",
                  "Qualification testing and seismic design", "licensed engineering practice"):
        assert words in body, words


def test_no_loads_no_section(tmp_path, texts):
    model = solver.load_model(RACK).with_changes(loads=None)
    render_report(model, None, tmp_path / "r.png", dpi=100)
    assert not any("Loads:" in t for t in texts)


def test_loads_that_cannot_be_solved_are_said_in_the_report(tmp_path, texts):
    """A free-floating model (no anchor) cannot be driven by base motion: the report says why in
    one sentence and still carries the caution."""
    model = solver.load_model(RACK)
    model = model.with_changes(remove=["base"],
                               loads=Loads(shock=ShockPulse("half-sine", 10, 0.01)))
    render_report(model, None, tmp_path / "r.png", dpi=100)
    body = "\n".join(texts)
    assert "could not be solved" in body and "rigid body" in body
    assert "licensed engineering practice" in body
