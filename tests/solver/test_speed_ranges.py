"""Speed sources over an operating range (rpm_min to rpm_max): the model, the file, the margins.

An order n of a shaft turning at N rev/min excites n N / 60 Hz (math: N / 60 revolutions per
second, n events per revolution); over N_min to N_max it covers [n N_min / 60, n N_max / 60] Hz,
and the margin widens that band as any band: [lo (1 - p), hi (1 + p)] (common practice,
REFERENCES.md section 9).
"""

from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest

import solver
from solver import Anchor, Excitation, Mass, Model, ModelError, ModelFileError, Spring

EXAMPLES = sorted((Path(__file__).resolve().parents[2] / "assets" / "examples").glob("*.json"))


def _file(excitation: dict) -> dict:
    return {"format": "springwright-model", "version": 1, "kind": "line",
            "masses": [{"id": "m", "x": 0.0, "y": 0.0, "mass": 1.0}],
            "anchors": [{"id": "g", "x": -1.0, "y": 0.0}],
            "springs": [{"id": "s", "a": "g", "b": "m", "k": 1000.0}],
            "excitations": [excitation]}


def test_order_bands_of_a_range():
    """600 to 1800 rpm, orders 1, 2.5 -> [10, 30] Hz and [25, 75] Hz (math: n N / 60)."""
    e = Excitation(id="fan", type="speed", rpm_min=600.0, rpm_max=1800.0, orders=(1.0, 2.5))
    assert e.is_ranged
    assert e.speed_range_rpm() == (600.0, 1800.0)
    assert np.allclose(e.frequencies_hz(), ((10.0, 30.0), (25.0, 75.0)), rtol=1e-15, atol=0)
    one = Excitation(id="fan", type="speed", rpm=1450.0, orders=(2.0,))
    assert not one.is_ranged
    assert one.speed_range_rpm() == (1450.0, 1450.0)
    assert np.allclose(one.frequencies_hz(), ((1450.0 / 30.0, 1450.0 / 30.0),), rtol=1e-15,
                       atol=0)


@pytest.mark.parametrize("kw,field,words", [
    (dict(rpm=1500.0, rpm_min=600.0, rpm_max=1800.0), "rpm", "not both"),
    (dict(rpm_min=600.0), "rpm_max", "needs both"),
    (dict(rpm_max=1800.0), "rpm_min", "needs both"),
    (dict(rpm_min=1800.0, rpm_max=600.0), "rpm_max", "below rpm_max"),
    (dict(rpm_min=900.0, rpm_max=900.0), "rpm_max", "below rpm_max"),
    (dict(rpm_min=-10.0, rpm_max=600.0), "rpm_min", "positive"),
    (dict(rpm_min=float("nan"), rpm_max=600.0), "rpm_min", "finite"),
])
def test_ambiguous_or_bad_ranges_are_refused(kw, field, words):
    """Common practice (errors a user can act on): the message names the excitation, the field
    and what is allowed."""
    with pytest.raises(ModelError) as info:
        Excitation(id="drive", type="speed", orders=(1.0,), **kw)
    text = str(info.value)
    assert 'excitation "drive"' in text and field in text and words in text


def test_a_band_takes_no_speed_range():
    """Common practice: a field that does not belong to the source's type is refused by name."""
    with pytest.raises(ModelError, match='excitation "b".*rpm_min.*speed'):
        Excitation(id="b", type="band", f_min_hz=1.0, f_max_hz=2.0, rpm_min=100.0)


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_every_example_loads_and_round_trips_unchanged(path, tmp_path):
    """Old files load unchanged: the file's own JSON comes back key for key, and save + load gives
    an equal Model (math: the format is a bijection on valid models)."""
    data = json.loads(path.read_text("utf-8"))
    model = solver.load_model(path)
    assert solver.model_to_dict(model) == data
    out = tmp_path / path.name
    solver.save_model(model, out)
    assert solver.load_model(out) == model


def test_a_file_with_a_range_round_trips(tmp_path):
    """A speed range is written as rpm_min / rpm_max (no rpm) and read back equal."""
    src = _file({"id": "vfd", "label": "Drive", "type": "speed", "rpm_min": 300,
                 "rpm_max": 1750.5, "orders": [1, 2, 4.5]})
    p = tmp_path / "ranged.json"
    p.write_text(json.dumps(src), "utf-8")
    model = solver.load_model(p)
    e = model.excitations[0]
    assert (e.rpm_min, e.rpm_max, e.orders) == (300.0, 1750.5, (1.0, 2.0, 4.5))
    written = solver.model_to_dict(model)["excitations"][0]
    assert written == {"id": "vfd", "label": "Drive", "type": "speed", "rpm_min": 300.0,
                       "rpm_max": 1750.5, "orders": [1.0, 2.0, 4.5]}
    out = tmp_path / "again.json"
    solver.save_model(model, out)
    assert solver.load_model(out) == model
    assert solver.model_to_dict(solver.load_model(out))["version"] == 1


@pytest.mark.parametrize("excitation,words", [
    ({"id": "vfd", "type": "speed", "rpm": 1500, "rpm_min": 600}, "rpm_min"),
    ({"id": "vfd", "type": "speed", "rpm_min": 600}, "rpm_max"),
    ({"id": "vfd", "type": "speed", "rpm_min": 1800, "rpm_max": 600}, "below rpm_max"),
    ({"id": "vfd", "type": "speed", "rpm_min": 0, "rpm_max": 600}, "rpm_min"),
    ({"id": "vfd", "type": "band", "f_min_hz": 1, "f_max_hz": 2, "rpm_max": 600}, "rpm_max"),
])
def test_bad_ranges_in_a_file_are_refused_by_name(tmp_path, excitation, words):
    """Common practice: one message naming the file, the excitation and the field."""
    p = tmp_path / "bad.json"
    p.write_text(json.dumps(_file(excitation)), "utf-8")
    with pytest.raises(ModelFileError) as info:
        solver.load_model(p)
    text = str(info.value)
    assert str(p) in text and '"vfd"' in text and words in text


def test_schema_describes_the_range():
    """The shipped JSON Schema validates a ranged source and refuses rpm with a range (checked
    with the jsonschema package, the reference implementation of the open standard)."""
    jsonschema = pytest.importorskip("jsonschema")
    schema = solver.schema()
    ok = _file({"id": "vfd", "type": "speed", "rpm_min": 600, "rpm_max": 1800})
    jsonschema.validate(ok, schema)
    jsonschema.validate(_file({"id": "vfd", "type": "speed", "rpm": 1500}), schema)
    for bad in ({"id": "vfd", "type": "speed", "rpm": 1500, "rpm_max": 1800},
                {"id": "vfd", "type": "speed", "rpm_max": 1800},
                {"id": "vfd", "type": "speed"}):
        with pytest.raises(jsonschema.ValidationError):
            jsonschema.validate(_file(bad), schema)


def test_margin_widens_a_ranged_order_as_a_band():
    """600 to 1800 rpm, order 2: [20, 60] Hz, widened by 15 % to [17, 69] Hz (common practice,
    REFERENCES.md section 9). A mode at 16.9 Hz clears it, one at 17.1 or 68.9 Hz does not, one
    at 69.1 Hz does. Single masses on k = m (2 pi f)^2 (math); rtol 1e-9 on the band edges."""
    e = Excitation(id="vfd", type="speed", rpm_min=600.0, rpm_max=1800.0, orders=(2.0,))
    bands = solver.source_bands(Model(excitations=(e,), margin_percent=15.0))
    (sid, order, lo, hi, lo_w, hi_w), = bands
    assert (sid, order) == ("vfd", 2.0)
    assert (lo, hi, lo_w, hi_w) == pytest.approx((20.0, 60.0, 17.0, 69.0), rel=1e-12)
    freqs = (16.9, 17.1, 40.0, 68.9, 69.1)
    masses, anchors, springs = [], [], []
    for i, f in enumerate(freqs):
        masses.append(Mass(id=f"m{i}", x=float(i), y=1.0, mass=2.0))
        anchors.append(Anchor(id=f"g{i}", x=float(i), y=0.0))
        springs.append(Spring(id=f"s{i}", a=f"g{i}", b=f"m{i}", k=2.0 * (2 * math.pi * f) ** 2))
    model = Model(masses=tuple(masses), anchors=tuple(anchors), springs=tuple(springs),
                  excitations=(e,), margin_percent=15.0)
    modal = solver.modes(model)
    assert modal.frequencies_hz == pytest.approx(sorted(freqs), rel=1e-9)
    flagged = {round(c.frequency_hz, 6) for c in solver.margin_check(model, modal).conflicts}
    assert flagged == {17.1, 40.0, 68.9}


def test_compiled_schema_agrees_with_jsonschema_on_every_speed_form():
    """The fast schema check (solver.schema_check) accepts exactly what the jsonschema package
    (the reference implementation of JSON Schema 2020-12) accepts, for every combination of rpm,
    rpm_min and rpm_max being absent, valid, zero, negative, text or a boolean."""
    import itertools

    jsonschema = pytest.importorskip("jsonschema")
    from solver import schema_check

    schema = solver.schema()
    reference = jsonschema.Draft202012Validator(schema)
    check = schema_check.compile_schema(schema)
    values = (None, 1500, 2.5, 0, -1, "1500", True)
    compared = 0
    for rpm, lo, hi in itertools.product(values, repeat=3):
        e = {"id": "f", "type": "speed", "orders": [1, 2]}
        e.update({k: v for k, v in (("rpm", rpm), ("rpm_min", lo), ("rpm_max", hi))
                  if v is not None})
        data = _file(e)
        try:
            check(data)
            ours = True
        except schema_check.Invalid:
            ours = False
        assert ours == reference.is_valid(data), e
        compared += 1
    assert compared == 7 ** 3
