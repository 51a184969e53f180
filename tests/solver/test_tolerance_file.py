"""The ``tolerance`` key on springs, dashpots and masses (issue 15): loaded, validated with a
one-line message naming element, field and range, saved back unchanged; files without it load
as before."""

from __future__ import annotations

import json

import pytest

import solver
from solver import ModelError, ModelFileError
from solver.model import Spring, Tolerance

BASE = {"format": "springwright-model", "version": 1, "kind": "line",
        "masses": [{"id": "m1", "x": 0, "y": 0, "mass": 2, "tolerance": {"percent": 5}}],
        "anchors": [{"id": "g", "x": -1, "y": 0}],
        "springs": [{"id": "s1", "label": "Mount", "a": "g", "b": "m1", "k": 1000,
                     "tolerance": {"percent": 20, "distribution": "normal"}}],
        "dampers": [{"id": "d1", "a": "g", "b": "m1", "c": 3,
                     "tolerance": {"percent": 10, "distribution": "triangular"}}]}


def _load(tmp_path, data):
    path = tmp_path / "m.json"
    path.write_text(json.dumps(data), "utf-8")
    return solver.load_model(path)


def test_tolerances_load_and_round_trip(tmp_path):
    """DESIGN.md section 4 (common practice): new keys are optional and save then load is the
    identity; the default distribution is uniform."""
    model = _load(tmp_path, BASE)
    assert model.masses[0].tolerance == Tolerance(5.0, "uniform")
    assert model.springs[0].tolerance == Tolerance(20.0, "normal")
    assert model.dampers[0].tolerance == Tolerance(10.0, "triangular")
    solver.save_model(model, tmp_path / "b.json")
    assert solver.load_model(tmp_path / "b.json") == model
    plain = json.loads(json.dumps(BASE))
    for key in ("masses", "springs", "dampers"):
        del plain[key][0]["tolerance"]
    assert all(el.tolerance is None for el in
               _load(tmp_path, plain).masses + _load(tmp_path, plain).springs)
    assert "tolerance" not in solver.dumps_model(_load(tmp_path, plain))


@pytest.mark.parametrize("value, words", [
    ({"percent": 100}, r"springs\[0\]\.tolerance\.percent.*Mount.*< 100"),
    ({"percent": 0}, r"springs\[0\]\.tolerance\.percent.*> 0"),
    ({"percent": 5, "distribution": "gaussian"}, r"tolerance\.distribution.*uniform"),
    ({"percent": 5, "sigma": 2}, r"tolerance.*sigma"),
    ("10 %", r"tolerance.*object"),
])
def test_bad_tolerances_refused_in_one_line(tmp_path, value, words):
    """Common practice: a bad value is refused naming element, field and allowed range."""
    data = json.loads(json.dumps(BASE))
    data["springs"][0]["tolerance"] = value
    with pytest.raises(ModelFileError, match=words) as info:
        _load(tmp_path, data)
    assert "\n" not in str(info.value)


def test_constructor_refuses_out_of_range():
    """The model itself refuses what the file would (common practice)."""
    with pytest.raises(ModelError, match=r'spring "s": tolerance percent must be above 0'):
        Spring("s", "a", "b", 1.0, tolerance={"percent": 150})
    with pytest.raises(ModelError, match="distribution must be one of"):
        Tolerance(5, "beta")
