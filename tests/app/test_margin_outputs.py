"""The margin table and the interference crossings in `springwright solve` (text and --json) and in
the report. Values are worked by hand from the model (single masses on k = m (2 pi f)^2, math);
the separation rule is common practice (REFERENCES.md section 9)."""

import json
import math
import subprocess
import sys
from pathlib import Path

import pytest

import solver
from solver import Anchor, Excitation, Mass, Model, Spring

CLI = Path(sys.executable).with_name("springwright")
FAN = Path(__file__).resolve().parents[2] / "assets" / "examples" / "fan_drive.json"


def _model():
    """Modes at 17.5 and 45 Hz; Fan 1200 rpm orders 1, 2 (20, 40 Hz); Drive 600 to 3000 rpm
    order 3 (30 to 150 Hz); margin 15 %."""
    masses, anchors, springs = [], [], []
    for i, f in enumerate((17.5, 45.0)):
        masses.append(Mass(id=f"m{i}", x=float(i), y=1.0, mass=2.0, label=f"Part {i + 1}"))
        anchors.append(Anchor(id=f"g{i}", x=float(i), y=0.0))
        springs.append(Spring(id=f"s{i}", a=f"g{i}", b=f"m{i}", k=2.0 * (2 * math.pi * f) ** 2))
    return Model(name="outputs", masses=tuple(masses), anchors=tuple(anchors),
                 springs=tuple(springs), margin_percent=15.0,
                 excitations=(Excitation(id="fan", type="speed", label="Fan", rpm=1200.0,
                                         orders=(1.0, 2.0)),
                              Excitation(id="vfd", type="speed", label="Drive", rpm_min=600.0,
                                         rpm_max=3000.0, orders=(3.0,))))


def _run(*args):
    return subprocess.run([str(CLI), *map(str, args)], capture_output=True, text=True,
                          timeout=120)


@pytest.fixture
def model_file(tmp_path):
    p = tmp_path / "outputs.json"
    solver.save_model(_model(), p)
    return p


def test_solve_json_adds_margins_and_keeps_every_key(model_file):
    """Hand values: 17.5 Hz is (20 - 17.5) / 20 = 12.5 % below Fan x1 -> FAIL at 15 %, and
    (30 - 17.5) / 30 = 41.67 % below Drive x3 (30 to 150 Hz) -> pass; 45 Hz is (45 - 40) / 40 =
    12.5 % above Fan x2 -> FAIL, and inside Drive x3, min((45 - 30) / 30, (150 - 45) / 150) = 50 %
    from its nearer edge -> FAIL; Drive x3 meets 45 Hz at 60 x 45 / 3 = 900 rpm (inside 600 to
    3000) and 17.5 Hz at 350 rpm (outside). rtol 1e-8 (eigen-solver round-off)."""
    p = _run("solve", model_file, "--json")
    assert p.returncode == 0, p.stderr
    out = json.loads(p.stdout)
    for key in ("model", "kind", "dofs", "dof_labels", "model_labels", "total_mass_kg", "modes",
                "margin_percent", "warnings", "caution", "margins", "interference"):
        assert key in out, key
    m = out["margins"]
    assert m["margin_percent"] == 15.0 and m["ok"] is False
    rows = {(r["mode"], r["source"], r["order"]): r for r in m["rows"]}
    assert len(rows) == 2 * 3
    r = rows[(1, "fan", 1.0)]
    assert (r["label"], r["position"], r["passes"]) == ("Fan", "below", False)
    assert r["separation_percent"] == pytest.approx(12.5, rel=1e-8)
    r = rows[(2, "fan", 2.0)]
    assert (r["position"], r["passes"]) == ("above", False)
    assert r["separation_percent"] == pytest.approx(12.5, rel=1e-8)
    r = rows[(1, "vfd", 3.0)]
    assert (r["position"], r["passes"]) == ("below", True)
    assert r["separation_percent"] == pytest.approx(125 / 3, rel=1e-8)
    r = rows[(2, "vfd", 3.0)]
    assert (r["position"], r["passes"]) == ("inside", False)
    assert (r["low_hz"], r["high_hz"]) == pytest.approx((30.0, 150.0), rel=1e-12)
    assert r["separation_percent"] == pytest.approx(50.0, rel=1e-8)
    (c,) = [c for c in out["interference"]["crossings"] if c["in_range"]]
    assert (c["source"], c["label"], c["order"], c["mode"]) == ("vfd", "Drive", 3.0, 2)
    assert c["rpm"] == pytest.approx(900.0, rel=1e-8)
    (o,) = [c for c in out["interference"]["crossings"]
            if c["source"] == "vfd" and not c["in_range"]]
    assert (o["mode"], o["rpm"]) == (1, pytest.approx(350.0, rel=1e-8))


def test_solve_text_prints_the_table_and_the_crossing(model_file):
    """The text output carries the same table, by label, with the verdicts in words."""
    p = _run("solve", model_file)
    assert p.returncode == 0, p.stderr
    text = p.stdout
    assert "Margin table (margin 15 %" in text
    assert "12.5 % below" in text and "12.5 % above" in text and "FAIL" in text
    assert "3 of 6 checks fail the 15 % margin (modes 1, 2)" in text
    assert "× Drive order 3 at 900 rpm, inside the operating range" in text
    assert "vfd" not in text


def test_report_has_the_interference_diagram_only_with_a_speed(qapp, tmp_path):
    """The report grows by the diagram section when a speed source exists: the same model with
    its speed sources replaced by a band gives a shorter page (rendered, not assumed)."""
    from app.report import render_report

    with_speed = _model()
    band_only = Model(**{**{f: getattr(with_speed, f) for f in ("name", "masses", "anchors",
                                                                "springs", "margin_percent")},
                         "excitations": (Excitation(id="b", type="band", f_min_hz=5.0,
                                                    f_max_hz=9.0),)})
    a = render_report(with_speed, None, tmp_path / "a.png", dpi=60)
    b = render_report(band_only, None, tmp_path / "b.png", dpi=60)
    assert a["height"] > b["height"] + 2.5 * 60   # the chart alone is 2.8 in high


def test_report_of_the_fan_example(tmp_path):
    """The invented fan example renders with its margin table and diagram (smoke: a page at
    least A4 high, written)."""
    p = _run("report", FAN, "-o", tmp_path / "fan.png")
    assert p.returncode == 0, p.stderr
    assert (tmp_path / "fan.png").stat().st_size > 10_000


def test_no_advice_below_zero_hz():
    """A band from 0 to 10 Hz at 15 % keeps out (0, 11.5) Hz (common practice): a 2 Hz mode is
    told to go above 11.5 Hz, never 'below 0 Hz' (no positive frequency below clears it)."""
    from app.results.verdicts import verdicts

    m = Model(masses=(Mass("m", 0.0, 1.0, 2.0, label="Cabinet"),),
              anchors=(Anchor("g", 0.0, 0.0),),
              springs=(Spring("s", "g", "m", 2.0 * (2 * math.pi * 2.0) ** 2),),
              excitations=(Excitation(id="floor", type="band", label="Floor", f_min_hz=0.0,
                                      f_max_hz=10.0),))
    (v,) = verdicts(m, solver.margin_check(m, solver.modes(m)))
    assert "below 0" not in v.sentence and "below 0" not in v.short
    assert "above 11.5 Hz" in v.sentence and "move above 11.5 Hz" in v.short
