"""``springwright loads FILE [--json]``: results by label, the cautions, one-line refusals.

Sources: DESIGN.md section 5 (the command line's contract: one line naming the file and the
problem, exit code 2, no traceback); the brief (the JSON keys README documents); the numbers are
checked against the solver's own tests' references elsewhere (tests/solver/test_loads.py), here
the command must print what the solver gives for the file.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

import solver
from app.cli import main

RACK = Path(__file__).resolve().parents[2] / "assets" / "examples" / "equipment_rack.json"


def _run(capsys, *argv):
    rc = main(["loads", *map(str, argv)])
    out, err = capsys.readouterr()
    return rc, out, err


def test_table_names_labels_and_gives_the_caution(capsys):
    """Every mass and spring by its label (never the id alone), each load's section, Miles'
    check, the modes needed for 90 % of the mass, and the caution."""
    rc, out, err = _run(capsys, RACK)
    assert rc == 0 and err == ""
    for words in ("Level 3 (display)", "Posts, lower bay", "Random vibration", "g RMS",
                  "3-sigma", "Miles", "Shock: half-sine 15 g, 11 ms", "Shock response spectrum",
                  "SRSS", "CQC", "90 % of the mass", "x: 2", "licensed engineering practice",
                  "local codes"):
        assert words in out, words


def test_json_holds_what_the_solver_gives(capsys):
    """The JSON's numbers are the solver's for the same file (README documents the keys)."""
    rc, out, err = _run(capsys, RACK, "--json")
    assert rc == 0 and err == ""
    data = json.loads(out)
    model = solver.load_model(RACK)
    ref = solver.load_results(model)
    assert data["direction"] == "x"
    top = data["random"]["masses"][2]
    assert top["id"] == "L3" and top["label"] == "Level 3 (display)"
    assert top["acceleration_grms"] == pytest.approx(ref.random.acceleration_grms[2], rel=1e-12)
    assert top["acceleration_3sigma_g"] == pytest.approx(3 * top["acceleration_grms"])
    assert data["random"]["input_grms"] == pytest.approx(ref.random.input_grms)
    assert {m["mode"] for m in data["random"]["miles"]} == {c.mode for c in ref.random.miles}
    s = data["shock"]["springs"][0]
    assert s["peak_force_n"] == pytest.approx(ref.shock.peaks["force_n"][0][0], rel=1e-12)
    assert len(data["shock"]["srs"]["at_modes"]) == 3
    sp = data["spectrum"]
    assert sp["modes_for_90_percent"] == {"x": 2}
    assert sp["springs"][0]["force_cqc_n"] == pytest.approx(ref.spectrum.cqc["force_n"][0])
    assert "licensed" in data["caution"]


def _write(tmp_path, **changes):
    data = json.loads(RACK.read_text("utf-8"))
    data.update(changes)
    path = tmp_path / "m.json"
    path.write_text(json.dumps(data), "utf-8")
    return path


@pytest.mark.parametrize("changes, words", [
    ({"loads": {}}, ["defines no loads"]),
    ({"loads": {"random": {"asd": [[10, 0.01], [5, 0.01]]}}},
     ["loads.random.asd[1][0]", "row 2", "frequency", "above"]),
    ({"loads": {"shock": {"shape": "trapezoid", "peak_g": 5, "duration_s": 0.01}}},
     ["rise time", "positive"]),
    ({"anchors": [], "springs": [{"id": "post2", "a": "L1", "b": "L2", "k": 1e5},
                                 {"id": "post3", "a": "L2", "b": "L3", "k": 1e5}]},
     ["rigid body", "anchor it"]),
])
def test_refusals_are_one_line_with_exit_2(capsys, tmp_path, changes, words):
    """DESIGN.md section 5: a file with no loads, a bad table or pulse, or a model the base
    cannot carry is one line on stderr naming the file, exit code 2, nothing on stdout."""
    path = _write(tmp_path, **changes)
    rc, out, err = _run(capsys, path)
    assert rc == 2 and out == ""
    assert err.startswith(f"springwright: {path}") and err.count("\n") == 1
    assert "Traceback" not in err
    for w in words:
        assert w in err, (w, err)


def test_a_file_without_loads_still_solves(capsys):
    """Existing files load unchanged: a model with no loads key solves as before."""
    path = RACK.parent / "camera_bracket.json"
    assert solver.load_model(path).loads is None
    assert main(["solve", str(path)]) == 0
    capsys.readouterr()
