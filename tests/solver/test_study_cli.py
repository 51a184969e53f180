"""``springwright study FILE -n N`` (issue 15): the table and JSON, reproducible with a seed,
one-line refusals with exit code 2 like ``solve``."""

from __future__ import annotations

import io
import json
import math
from contextlib import redirect_stderr, redirect_stdout

import pytest

K, M = 4000.0, 1.0
F0 = math.sqrt(K / M) / (2 * math.pi)
MODEL = {"format": "springwright-model", "version": 1, "name": "Bench rig", "kind": "line",
         "masses": [{"id": "m1", "label": "Rig plate", "x": 1, "y": 0, "mass": M}],
         "anchors": [{"id": "g", "x": 0, "y": 0}],
         "springs": [{"id": "s1", "label": "Mount", "a": "g", "b": "m1", "k": K,
                      "tolerance": {"percent": 10}}],
         "excitations": [{"id": "e1", "label": "Fan", "type": "band", "f_min_hz": 11.5,
                          "f_max_hz": 12.5}]}


def _cli(*argv):
    from app import cli

    out, err = io.StringIO(), io.StringIO()
    with redirect_stdout(out), redirect_stderr(err):
        try:
            rc = cli.main([str(a) for a in argv])
        except SystemExit as exc:
            rc = exc.code
    return rc, out.getvalue(), err.getvalue()


@pytest.fixture
def model_file(tmp_path):
    path = tmp_path / "rig.json"
    path.write_text(json.dumps(MODEL), "utf-8")
    return path


def test_json_percentiles_follow_sqrt_k(model_file):
    """math: f = f0 sqrt(1 + 0.1 u), u uniform: the q-percentile is f0 sqrt(1 + 0.1 (2q - 1));
    50,000 samples, rtol 1e-3; the same seed gives the same output (reproducible)."""
    rc, out, err = _cli("study", model_file, "-n", 50000, "--seed", 4, "--json")
    assert rc == 0 and err == ""
    data = json.loads(out)
    mode = data["modes"][0]
    for q in ("5", "50", "95"):
        want = F0 * math.sqrt(1 + 0.1 * (2 * int(q) / 100 - 1))
        assert mode["percentiles_hz"][q] == pytest.approx(want, rel=1e-3)
    assert mode["worst_case"]["high_hz"] == pytest.approx(F0 * math.sqrt(1.1), rel=1e-12)
    # the fan band widened 15 %: (9.775, 14.375) Hz; f lies in [9.55, 10.55]: clear below 9.775
    p = (((9.775 / F0) ** 2 - 1) / 0.1 + 1) / 2
    assert mode["clear_probability"]["e1"] == pytest.approx(p, abs=4 * math.sqrt(p * (1 - p)
                                                                                 / 50000))
    assert data["tolerances"][0]["label"] == "Mount" and data["samples"] == 50000
    assert _cli("study", model_file, "-n", 50000, "--seed", 4, "--json")[1] == out


def test_table_names_labels_and_cautions(model_file):
    """The table names elements by label, states N and seed, and carries the caution."""
    rc, out, _ = _cli("study", model_file, "-n", 500, "--seed", 2)
    assert rc == 0
    assert "500 samples (seed 2" in out and "Mount: k +-10 % (uniform)" in out
    assert "clears Fan" in out and "Worst-case corners" in out
    assert "confirmed by test or detailed analysis" in out


@pytest.mark.parametrize("extra, words", [
    (["-n", "0"], "n (samples) must be a whole number from 1"),
    (["-n", "x"], "invalid int value"),
    (["--seed", "-3"], "seed must be"),
    (["--chunk", "0"], "chunk must be"),
])
def test_bad_arguments_one_line_exit_2(model_file, extra, words):
    """Like ``solve``: a one-line message on stderr, exit 2, no traceback."""
    rc, out, err = _cli("study", model_file, *extra)
    assert rc == 2 and words in err and err.count("\n") == 1 and "Traceback" not in err


def test_file_without_tolerances_and_bad_file(tmp_path):
    """A model without tolerances and a broken file are refused in one line, exit 2."""
    data = json.loads(json.dumps(MODEL))
    del data["springs"][0]["tolerance"]
    path = tmp_path / "plain.json"
    path.write_text(json.dumps(data), "utf-8")
    rc, _, err = _cli("study", path, "-n", 10)
    assert rc == 2 and "no spring, dashpot or mass has a tolerance" in err
    path.write_text("{", "utf-8")
    rc, _, err = _cli("study", path)
    assert rc == 2 and err.startswith("springwright: ") and err.count("\n") == 1


def test_scheduler_run_equals_local(model_file):
    """Issue 15: --scheduler ADDRESS on a local Dask cluster prints the same JSON as the local
    run with the same seed."""
    distributed = pytest.importorskip("distributed")
    local = _cli("study", model_file, "-n", 3000, "--seed", 9, "--chunk", 500, "--json")[1]
    with distributed.LocalCluster(n_workers=1, threads_per_worker=2, processes=False,
                                  dashboard_address=None) as cluster:
        rc, remote, err = _cli("study", model_file, "-n", 3000, "--seed", 9, "--chunk", 500,
                               "--json", "--scheduler", cluster.scheduler_address)
    assert rc == 0, err
    assert remote == local
