"""The model file (DESIGN.md section 4) and the command line (section 5).

The format rules are the project's own design; the physics checked through the command line is
TD-3S (Rao, Mechanical Vibrations, ch. 5 (mem)).
"""

from __future__ import annotations

import copy
import json
import math
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

import solver
import solver.io
from solver import Mass, Model, ModelFileError

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = sorted((ROOT / "assets" / "examples").glob("*.json"))
CLI = ROOT / ".venv" / "bin" / "springwright"
# the installed command where `make` set it up, else the same entry point from this checkout
CLI_COMMAND = [str(CLI)] if CLI.exists() else [sys.executable, "-m", "app.cli"]

BASE = {
    "format": "springwright-model", "version": 1, "name": "TD-3S", "kind": "line", "axis": "x",
    "masses": [{"id": "m1", "x": 1.0, "y": 0.0, "mass": 2.0},
               {"id": "m2", "x": 2.0, "y": 0.0, "mass": 2.0}],
    "anchors": [{"id": "A", "x": 0.0, "y": 0.0}, {"id": "B", "x": 3.0, "y": 0.0}],
    "springs": [{"id": "s1", "a": "A", "b": "m1", "k": 800.0},
                {"id": "s2", "a": "m1", "b": "m2", "k": 800.0},
                {"id": "s3", "a": "m2", "b": "B", "k": 800.0}],
}


def _refused(mutate) -> str:
    data = copy.deepcopy(BASE)
    mutate(data)
    with pytest.raises(ModelFileError) as info:
        solver.model_from_dict(data)
    return str(info.value)


def test_base_file_is_valid_td3s():
    """TD-3S. Source: Rao, Mechanical Vibrations, ch. 5 (mem): the file used below is a valid model
    with w = 20 and 34.64102 rad/s."""
    r = solver.modes(solver.model_from_dict(copy.deepcopy(BASE)))
    np.testing.assert_allclose(r.omegas, [20.0, math.sqrt(3) * 20.0], rtol=1e-12)


@pytest.mark.parametrize("mutate, words", [
    (lambda d: d["masses"][1].__setitem__("mass", -1.5), ['mass "m2"', "mass", ">= 0", "-1.5"]),
    (lambda d: d["springs"][1].__setitem__("k", 0), ['spring "s2"', "k", "> 0"]),
    (lambda d: d["springs"][2].__setitem__("k", -800), ['spring "s3"', "k", "> 0", "-800"]),
    (lambda d: d["masses"][0].__setitem__("x", "1"), ['mass "m1"', "x", "number"]),
    (lambda d: d.__setitem__("margin_percent", 100), ["margin_percent", "< 100"]),
    (lambda d: d.__setitem__("damping", {"model": "modal", "ratio": -0.1}),
     ["damping", "ratio", ">= 0"]),
    (lambda d: d.__setitem__("damping", {"model": "rayleigh", "alpha": 1.0, "beta": -1e-3}),
     ["damping", "beta", ">= 0"]),
    (lambda d: d.__setitem__("damping", {"model": "viscous"}),
     ["damping", "viscous", '"none"', '"modal"', '"rayleigh"']),
    (lambda d: d.__setitem__("kind", "beam"), ["kind", "beam", '"line"', '"planar"', '"torsion"']),
    (lambda d: d.__setitem__("excitations", [{"id": "e1", "type": "band", "f_min_hz": -1,
                                              "f_max_hz": 5}]),
     ['excitation "e1"', "f_min_hz", ">= 0"]),
    (lambda d: d.__setitem__("excitations", [{"id": "e1", "type": "speed", "rpm": 0}]),
     ['excitation "e1"', "rpm", "> 0"]),
    (lambda d: d.__setitem__("excitations", [{"id": "e1", "type": "band", "f_min_hz": 10,
                                              "f_max_hz": 5}]),
     ['excitation "e1"', "f_max_hz", "f_min_hz"]),
    (lambda d: d["springs"][1].pop("k"), ['spring "s2"', '"k"', "required"]),
    (lambda d: d["springs"][1].__setitem__("b", "m9"), ['spring "s2"', "end b", '"m9"']),
    (lambda d: d["springs"][1].__setitem__("b", "m1"), ['spring "s2"', '"m1"', "two different"]),
    (lambda d: d.__setitem__("initial", {"A": {"x": 0.1}}), ['"A"', "anchor"]),
    (lambda d: d.__setitem__("initial", {"m1": {"theta": 0.1}}),
     ['"m1"', '"theta"', "allowed: x"]),
    (lambda d: d["masses"][0].__setitem__("inertia", 1.0), ['mass "m1"', "inertia", "mass"]),
])
def test_validation_messages_name_element_field_and_range(mutate, words):
    """DESIGN.md section 3: each error names the element, the field and what is allowed."""
    message = _refused(mutate)
    for w in words:
        assert w in message, (w, message)


@pytest.mark.parametrize("where", ["top", "mass", "spring", "anchor", "damping"])
def test_unknown_keys_refused(where):
    """DESIGN.md section 4: unknown keys are an error, not ignored; the message names the key and
    lists the allowed ones."""
    def mutate(d):
        target = {"top": d, "mass": d["masses"][0], "spring": d["springs"][0],
                  "anchor": d["anchors"][0]}.get(where)
        if where == "damping":
            d["damping"] = {"model": "none", "colour": "red"}
        else:
            target["colour"] = "red"
    message = _refused(mutate)
    assert 'unknown key "colour"' in message and "allowed:" in message


@pytest.mark.parametrize("version", [2, 7, 2.0])
def test_newer_version_refused(version, tmp_path):
    """DESIGN.md section 4: a newer version is refused with a clear message naming the versions."""
    data = copy.deepcopy(BASE)
    data["version"] = version
    path = tmp_path / "new.json"
    path.write_text(json.dumps(data), "utf-8")
    with pytest.raises(ModelFileError) as info:
        solver.load_model(path)
    text = str(info.value)
    assert str(path) in text and "newer" in text and "version" in text and "up to 1" in text


def test_older_or_bad_version_refused():
    """DESIGN.md section 4: version is a whole number from 1."""
    for bad in (0, -1, "1", None, 1.5, True):
        assert "version" in _refused(lambda d: d.__setitem__("version", bad))


def test_zero_length_planar_spring_refused():
    """DESIGN.md section 2: a planar spring acts along its drawn line, so it needs a length."""
    def mutate(d):
        d["kind"] = "planar"
        d.pop("axis")
        d["masses"][0]["x"] = 0.0  # on top of anchor A
    message = _refused(mutate)
    assert 'spring "s1"' in message and "same point" in message
    with pytest.raises(solver.ModelError):
        Model(kind="planar", masses=(Mass("m", 1.0, 2.0, 1.0),),
              anchors=(solver.Anchor("A", 1.0, 2.0),), springs=(solver.Spring("s", "A", "m", 1.0),))


@pytest.mark.parametrize("first, second", [(("masses", 1), ("masses", 0)),
                                           (("springs", 2), ("masses", 0)),
                                           (("anchors", 1), ("springs", 0))])
def test_duplicate_ids_refused(first, second):
    """DESIGN.md section 4: ids are unique across all elements; the message names the id."""
    def mutate(d):
        d[first[0]][first[1]]["id"] = d[second[0]][second[1]]["id"]
    message = _refused(mutate)
    assert "already used" in message and "unique" in message


def test_not_json_and_not_utf8(tmp_path):
    """DESIGN.md section 4: JSON in UTF-8; anything else is a ModelFileError naming the file."""
    for name, raw in (("trunc.json", json.dumps(BASE)[:40].encode()), ("bin.json", b"\x89PNG\r\n"),
                      ("latin.json", '{"name": "caf\u00e9"}'.encode("latin-1")),
                      ("deep.json", b"[" * 100000 + b"]" * 100000), ("empty.json", b"")):
        path = tmp_path / name
        path.write_bytes(raw)
        with pytest.raises(ModelFileError) as info:
            solver.load_model(path)
        assert str(path) in str(info.value)
    with pytest.raises(ModelFileError) as info:
        solver.load_model(tmp_path / "missing.json")
    assert "missing.json" in str(info.value)


# ------------------------------------------------------------------ atomic save
def _leftovers(folder: Path, keep: set) -> list:
    return sorted(p.name for p in folder.iterdir() if p.name not in keep)


@pytest.mark.parametrize("break_what", ["replace", "fsync", "write"])
def test_atomic_save_keeps_old_file(tmp_path, monkeypatch, break_what):
    """common practice (write to a temporary file, fsync, rename): a failure while saving leaves the
    old file intact and no temporary file behind."""
    path = tmp_path / "model.json"
    old = solver.model_from_dict(copy.deepcopy(BASE))
    solver.save_model(old, path)
    before = path.read_bytes()
    new = old.with_changes(name="changed")

    def boom(*args, **kwargs):
        raise OSError(28, "No space left on device")

    if break_what == "replace":
        monkeypatch.setattr(solver.io.os, "replace", boom)
    elif break_what == "fsync":
        monkeypatch.setattr(solver.io.os, "fsync", boom)
    else:
        real_fdopen = os.fdopen

        class Failing:
            def __init__(self, fh):
                self.fh = fh

            def __enter__(self):
                return self

            def __exit__(self, *exc):
                self.fh.close()
                return False

            def write(self, text):
                self.fh.write(text[: len(text) // 2])
                raise OSError(28, "No space left on device")

        monkeypatch.setattr(solver.io.os, "fdopen", lambda *a, **k: Failing(real_fdopen(*a, **k)))
    with pytest.raises(OSError):
        solver.save_model(new, path)
    assert path.read_bytes() == before
    assert solver.load_model(path) == old
    assert _leftovers(tmp_path, {"model.json"}) == []


def test_save_replaces_and_leaves_no_temp(tmp_path):
    """common practice: a successful save replaces the file and leaves nothing else."""
    path = tmp_path / "model.json"
    m = solver.model_from_dict(copy.deepcopy(BASE))
    solver.save_model(m, path)
    solver.save_model(m.with_changes(name="second"), path)
    assert solver.load_model(path).name == "second"
    assert _leftovers(tmp_path, {"model.json"}) == []
    assert path.read_text("utf-8").endswith("\n")


# ------------------------------------------------------------------ shipped examples
@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_shipped_examples_load_and_solve(path, tmp_path):
    """DESIGN.md section 4: every shipped example loads, round-trips and solves (math checks: real
    non-negative ascending frequencies, M-orthonormal shapes, effective masses summing to the mass
    free to move)."""
    model = solver.load_model(path)
    out = tmp_path / path.name
    solver.save_model(model, out)
    assert solver.load_model(out) == model
    a = solver.analyse(model)
    r = a.modal
    assert r.n_modes > 0 and not r.message
    assert np.all(np.isfinite(r.eigenvalues)) and np.all(np.diff(r.eigenvalues) >= 0)
    M = r.system.dense("M")
    np.testing.assert_allclose(r.shapes.T @ M @ r.shapes, np.eye(r.n_modes), atol=1e-9)
    if r.complete:
        for d, v in r.effective_mass.items():
            np.testing.assert_allclose(v.sum(), r.total_mass[d], rtol=1e-9)


def test_rod_chain_example_is_near_the_wave_equation():
    """Uniform rod (math; any vibration text): f_1 = c / (2L), c = sqrt(E/rho). The shipped steel
    rod example (1 m, fixed both ends, 40 masses of rho A L/(N + 1) on N + 1 springs of
    E A (N + 1)/L) is within 0.1 % of it for E = 200 GPa, rho = 7850 kg/m^3 (the lumping error
    of the first mode is about (pi/(N + 1))^2 / 24, 0.02 % at N = 40)."""
    path = ROOT / "assets" / "examples" / "rod_chain.json"
    if not path.exists():
        pytest.skip("rod_chain.json not shipped")
    r = solver.modes(solver.load_model(path))
    f1 = r.frequencies_hz[0]
    exact = math.sqrt(200e9 / 7850) / 2
    assert f1 == pytest.approx(exact, rel=1e-3)


# ------------------------------------------------------------------ command line
def _run(*args, cwd=None):
    env = {**os.environ, "QT_QPA_PLATFORM": "offscreen",
           "PYTHONPATH": os.pathsep.join([str(ROOT), os.environ.get("PYTHONPATH", "")])}
    return subprocess.run([*CLI_COMMAND, *map(str, args)], capture_output=True, text=True,
                          timeout=60, cwd=cwd, env=env)


@pytest.fixture(scope="module")
def td3s_file(tmp_path_factory):
    path = tmp_path_factory.mktemp("cli") / "td3s.json"
    path.write_text(json.dumps(BASE), "utf-8")
    return path


def test_cli_solve_table(td3s_file):
    """DESIGN.md section 5: `springwright solve FILE` prints the mode table, exit 0; TD-3S
    (Rao, Mechanical Vibrations, ch. 5 (mem)) at 3.183099 and 5.513289 Hz."""
    p = _run("solve", td3s_file)
    assert p.returncode == 0, p.stderr
    assert "3.1831" in p.stdout and "5.51329" in p.stdout
    assert "Traceback" not in p.stderr


def test_cli_solve_json_keys_and_values(td3s_file):
    """DESIGN.md section 5: `--json` gives model, dofs, modes[index, frequency_hz, omega_rad_s,
    zero_frequency, shape, effective_mass_kg], warnings. Values: TD-3S (Rao, Mechanical
    Vibrations, ch. 5 (mem)): w = 20 and 34.64102 rad/s, effective masses 4 and 0 kg."""
    p = _run("solve", td3s_file, "--json")
    assert p.returncode == 0, p.stderr
    out = json.loads(p.stdout)
    for key in ("model", "dofs", "modes", "warnings"):
        assert key in out
    assert out["model"] == "TD-3S"
    assert out["dofs"] == [["m1", "x"], ["m2", "x"]]
    assert isinstance(out["warnings"], list)
    assert [m["index"] for m in out["modes"]] == [1, 2]
    for m in out["modes"]:
        for key in ("index", "frequency_hz", "omega_rad_s", "zero_frequency", "shape",
                    "effective_mass_kg"):
            assert key in m
        assert m["zero_frequency"] is False
        assert len(m["shape"]) == 2 and set(m["effective_mass_kg"]) == {"x"}
    np.testing.assert_allclose([m["omega_rad_s"] for m in out["modes"]],
                               [20.0, math.sqrt(3) * 20.0], rtol=1e-12)
    np.testing.assert_allclose([m["frequency_hz"] for m in out["modes"]],
                               [20.0 / (2 * math.pi), math.sqrt(3) * 20.0 / (2 * math.pi)],
                               rtol=1e-12)
    np.testing.assert_allclose([m["effective_mass_kg"]["x"] for m in out["modes"]], [4.0, 0.0],
                               rtol=1e-12, atol=1e-12)


def test_cli_json_zero_mode(tmp_path):
    """DESIGN.md section 5 with TD-FREE (math): the rigid mode is reported as zero_frequency."""
    data = copy.deepcopy(BASE)
    data["anchors"] = []
    data["springs"] = [{"id": "s2", "a": "m1", "b": "m2", "k": 800.0}]
    path = tmp_path / "free.json"
    path.write_text(json.dumps(data), "utf-8")
    p = _run("solve", path, "--json")
    assert p.returncode == 0, p.stderr
    modes = json.loads(p.stdout)["modes"]
    assert [m["zero_frequency"] for m in modes] == [True, False]
    assert modes[0]["frequency_hz"] == 0.0
    np.testing.assert_allclose(modes[1]["omega_rad_s"], 28.28427, rtol=1e-6)


@pytest.mark.parametrize("content", [b"{not json", None, "negative-mass"],
                         ids=["not-json", "missing", "invalid"])
def test_cli_bad_file_exit_2_one_line(tmp_path, content):
    """DESIGN.md section 5: bad input is a one-line error naming the file, exit code 2, no
    traceback."""
    path = tmp_path / "bad model.json"
    if content == "negative-mass":
        data = copy.deepcopy(BASE)
        data["masses"][0]["mass"] = -2
        path.write_text(json.dumps(data), "utf-8")
    elif content is not None:
        path.write_bytes(content)
    p = _run("solve", path, "--json")
    assert p.returncode == 2
    assert p.stdout == ""
    lines = p.stderr.strip().splitlines()
    assert len(lines) == 1, p.stderr
    assert str(path) in lines[0]
    assert "Traceback" not in p.stderr
    if content == "negative-mass":
        assert 'mass "m1"' in lines[0]
