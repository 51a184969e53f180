"""Writes the fixed corpus of nasty model files (run once; the files are kept in the repository).

Each case is a small file that once broke, or could break, the loader or the command line, with
what must happen to it: loaded, or refused with a message naming a JSON path (or a line and
column) and words saying what is wrong. The expectations are written here by hand from the rules of
DESIGN.md section 4 and the JSON grammar (RFC 8259), not taken from the program's output.

    python tests/corpus/make_corpus.py      # rewrites tests/corpus/*.json and expected.json
"""

from __future__ import annotations

import json
from pathlib import Path

HERE = Path(__file__).resolve().parent

BASE = {
    "format": "springwright-model", "version": 1, "name": "two masses", "kind": "line",
    "masses": [{"id": "m1", "x": 1.0, "y": 0.0, "mass": 2.0},
               {"id": "m2", "x": 2.0, "y": 0.0, "mass": 2.0}],
    "anchors": [{"id": "A", "x": 0.0, "y": 0.0}],
    "springs": [{"id": "s1", "a": "A", "b": "m1", "k": 800.0},
                {"id": "s2", "a": "m1", "b": "m2", "k": 800.0}],
}
TEXT = json.dumps(BASE, indent=2)


def with_text(old: str, new: str, count: int = 1) -> bytes:
    assert old in TEXT, old
    return TEXT.replace(old, new, count).encode("utf-8")


def changed(fn) -> bytes:
    data = json.loads(TEXT)
    fn(data)
    return json.dumps(data, indent=2, ensure_ascii=False).encode("utf-8", "surrogatepass")


def set_(path, value):
    def fn(d):
        for p in path[:-1]:
            d = d[p]
        d[path[-1]] = value
    return fn


def minimal(**extra) -> bytes:
    """One mass on one spring to an anchor (a valid model), with top-level keys added."""
    data = {"format": "springwright-model", "version": 1, "kind": "line",
            "masses": [{"id": "m", "x": 0, "y": 0, "mass": 1}],
            "anchors": [{"id": "g", "x": 0, "y": 0}],
            "springs": [{"id": "s", "a": "g", "b": "m", "k": 1}]}
    data.update(extra)
    return json.dumps(data, ensure_ascii=False).encode("utf-8")


# name: (bytes, expected) with expected "load", "solve" (loads, and `springwright solve`,
# `solve --json` and `report` all succeed on it) or (place, [words]) or (place, [words],
# [words that must not appear])
CASES = {
    # ---- numbers JSON cannot or Python will not hold
    "nan-literal": (with_text('"x": 1.0', '"x": NaN'), ("masses[0].x", ["NaN", "JSON has no NaN"])),
    "infinity-literal": (with_text('"k": 800.0', '"k": -Infinity'), ("springs[0].k", ["Infinity"])),
    "float-overflow": (with_text('"k": 800.0', '"k": 1e400'), ("springs[0].k", ["1e400", "double"])),
    "int-100k-digits": (with_text('"mass": 2.0', '"mass": 1' + "0" * 100_000),
                        ("masses[0].mass", ["characters", "double"])),
    "int-past-double": (with_text('"x": 2.0', '"x": -' + "9" * 320), ("masses[1].x", ["double"])),
    "int-past-solver-range": (with_text('"mass": 2.0', '"mass": 1' + "0" * 250),
                              ("masses[0].mass", ["outside the range", "1e+30"])),
    "stiffness-above-range": (with_text('"k": 800.0', '"k": 1e31'), ("springs[0].k", ["1e+30"])),
    "coordinate-above-range": (with_text('"x": 1.0', '"x": -2e30'), ("masses[0].x", ["1e+30"])),
    "bool-as-number": (with_text('"mass": 2.0', '"mass": true'), ("masses[0].mass", ["number", "true"])),
    "null-as-number": (with_text('"k": 800.0', '"k": null'), ("springs[0].k", ["number", "null"])),
    "string-as-number": (with_text('"k": 800.0', '"k": "800"'), ("springs[0].k", ["number", '"800"'])),
    "object-as-number": (with_text('"y": 0.0', '"y": {"value": 0}'), ("masses[0].y", ["number"])),
    "float-version": (with_text('"version": 1', '"version": 2.0'), ("version", ["newer", "up to 1"])),
    "huge-version": (with_text('"version": 1', '"version": 1e999'), ("version", ["double"])),
    # ---- wrong shapes
    "object-for-list": (changed(set_(["masses"], {})), ("masses", ["list"])),
    "list-for-object": (changed(set_(["damping"], [])), ("damping", ["object"])),
    "string-for-list": (changed(set_(["masses", 0], "m1")), ("masses[0]", ["object"])),
    "fixed-as-text": (changed(set_(["masses", 0, "fixed"], "x")), ("masses[0].fixed", ["list"])),
    "top-level-array": (b"[" + TEXT.encode() + b"]", ("top level", ["object"])),
    "top-level-null": (b"null", ("top level", ["object", "null"])),
    "top-level-nan": (b"NaN", ("top level", ["NaN"])),
    "orders-too-many": (changed(set_(["excitations"], [{"id": "e", "type": "speed", "rpm": 1500,
                                                        "orders": [1.0] * 101}])),
                        ("excitations[0].orders", ["101", "at most 100"])),
    "mode-ratio-key-newline": (changed(set_(["damping"], {"model": "modal", "ratio": 0.02,
                                                          "mode_ratios": {"1\n": 0.1}})),
                               ("damping.mode_ratios", ["key", "a mode number from 1 to 999999"])),
    "mode-ratio-key-huge": (changed(set_(["damping"], {"model": "modal", "ratio": 0.02,
                                                       "mode_ratios": {"9" * 5000: 0.1}})),
                            ("damping.mode_ratios", ["key"])),
    "deep-nesting": (b"[" * 20_000 + b"]" * 20_000, ("", ["nested too deeply"])),
    "deep-in-name": (with_text('"name": "two masses"', '"name": ' + "[" * 20_000 + "]" * 20_000),
                     ("", ["nested too deeply"])),
    "nested-500-in-name": (with_text('"name": "two masses"', '"name": ' + "[" * 500 + "]" * 500),
                           ("name", ["text"])),
    # ---- keys
    "duplicate-key": (with_text('"mass": 2.0', '"mass": 2.0, "mass": -1.0'),
                      ("masses[0]", ['"mass"', "more than once"])),
    "duplicate-top-key": (with_text('"kind": "line"', '"kind": "line", "kind": "planar"'),
                          ("top level", ['"kind"', "more than once"])),
    "unknown-key": (with_text('"k": 800.0', '"k": 800.0, "colour": "red"'),
                    ("springs[0]", ['unknown key "colour"', "allowed:"])),
    "mass-and-inertia": (with_text('"mass": 2.0', '"mass": 2.0, "inertia": 1.0'),
                         ("masses[0]", ['"inertia"', "not allowed", "torsion"])),
    "torsion-with-mass": (with_text('"kind": "line"', '"kind": "torsion"'),
                          ("masses[0]", ['"inertia" is required', "torsion"])),
    # ---- text
    "empty-id": (changed(set_(["masses", 0, "id"], "")), ("masses[0].id", ["empty"])),
    "blank-id": (changed(set_(["masses", 0, "id"], "   ")), ("masses[0].id", ["non-empty"])),
    "newline-in-id": (changed(set_(["springs", 0, "id"], "s\n1")), ("springs[0].id", ["printable"])),
    "lone-surrogate-label": (with_text('"id": "m2"', '"id": "m2", "label": "disc \\ud800"'),
                             ("masses[1].label", ["surrogate", "U+D800"])),
    "lone-surrogate-id": (with_text('"id": "s2"', '"id": "s\\udfff"'), ("springs[1].id", ["printable"])),
    "long-label": (changed(set_(["masses", 0, "label"], "x" * 5000)),
                   ("masses[0].label", ["5000", "at most 1000"])),
    "long-id": (changed(set_(["anchors", 0, "id"], "A" * 300)), ("anchors[0].id", ["300", "at most 200"])),
    "escape-in-name": (changed(set_(["name"], "\x1b[2J\x1b[31mred\u202e\u2028")), "load"),
    "newline-in-label": (changed(set_(["masses", 0, "label"], "upper\nlower")), "load"),
    # ---- references and geometry
    "id-collision": (changed(set_(["springs", 1, "id"], "m1")), ("springs[1].id", ["already used", "unique"])),
    "spring-to-itself": (changed(set_(["springs", 1, "b"], "m1")), ("springs[1].b", ["two different"])),
    "dangling-end": (changed(set_(["springs", 1, "b"], "m9")), ("springs[1].b", ['"m9"', "not a mass"])),
    "zero-length-planar": (changed(lambda d: (d.update(kind="planar"), d.pop("masses"),
                                              d.update(masses=[{"id": "m1", "x": 0.0, "y": 0.0,
                                                                "mass": 2.0},
                                                               {"id": "m2", "x": 2.0, "y": 0.0,
                                                                "mass": 2.0}]))),
                           ("springs[0]", ["same point", "length"])),
    "initial-on-anchor": (changed(set_(["initial"], {"A": {"x": 0.1}})), ('initial.A', ["anchor"])),
    "initial-wrong-direction": (changed(set_(["initial"], {"m1": {"theta": 0.1}})),
                                ("initial.m1.theta", ["allowed: x"])),
    # ---- bytes and text encodings
    "empty": (b"", ("", ["empty"])),
    "whitespace-only": (b" \n\t\r\n", ("", ["empty"])),
    "utf8-bom": (b"\xef\xbb\xbf" + TEXT.encode(), "load"),
    "utf16-bom": (TEXT.encode("utf-16"), ("", ["UTF-16", "UTF-8"])),
    "utf32": (TEXT.encode("utf-32"), ("", ["UTF-32"])),
    "latin1": (with_text('"two masses"', '"caf\u00e9"').decode().encode("latin-1"),
               ("line 4, column", ["0xe9", "not UTF-8"])),
    "encoded-surrogate": (TEXT.encode().replace(b"two masses", b"two \xed\xa0\x80"),
                          ("line 4, column", ["0xed", "not UTF-8"])),
    "nul-byte": (TEXT.encode().replace(b'"m1"', b'"m\x001"', 1), ("line", ["not valid JSON"])),
    "truncated": (TEXT.encode()[:100], ("line", ["not valid JSON"])),
    "trailing-garbage": (TEXT.encode() + b"\n}", ("line", ["extra text after the end"])),
    "comment": (b"// model\n" + TEXT.encode(), ("line 1, column 1", ["not valid JSON"])),
    "trailing-comma": (with_text('"k": 800.0\n', '"k": 800.0,\n'), ("line", ["not valid JSON"])),
    "single-quotes": (TEXT.encode().replace(b'"', b"'"), ("line 2, column 3", ["not valid JSON"])),
    "crlf-line-ends": (TEXT.encode().replace(b"\n", b"\r\n"), "load"),
    "negative-zero": (with_text('"y": 0.0', '"y": -0.0'), "load"),
    "subnormal-ratio": (changed(set_(["damping"], {"model": "modal", "ratio": 5e-324})), "load"),
    # ---- found by review: valid files that once crashed the command line or the report
    # (the smallest double, 5e-324, underflows 10**e and rpm/60 to 0)
    "band-from-subnormal": (minimal(excitations=[{"id": "e", "type": "band",
                                                  "f_min_hz": 5e-324, "f_max_hz": 1}]), "solve"),
    "speed-subnormal-rpm": (minimal(excitations=[{"id": "e", "type": "speed", "rpm": 5e-324}]),
                            "solve"),
    "speed-range-subnormal": (minimal(excitations=[{"id": "e", "type": "speed", "rpm_min": 5e-324,
                                                    "rpm_max": 1e-320, "orders": [1e-30]}]),
                              "solve"),
    "control-chars-in-names": (minimal(name="A\x1b[2J\x1b]0;owned\x07\nfake: line") .replace(
        b'"id": "m",', b'"id": "m", "label": "Mass\\rX",'), "solve"),
    # ---- found by review: messages
    "initial-key-long": (minimal(initial={"q" * 100_000: {"x": 1}}),
                         ('initial["qqqq', ["100000 characters", "at most 200"], ["q" * 100])),
    "initial-key-newline": (minimal(initial={"a\nb": {"x": 1}}),
                            ('initial["a\\nb"]: ', ["printable"], ["mass_id"])),
    "non-ascii-id": (minimal().replace(b'"id": "m"', '"id": "电机"'.encode())
                     .replace(b'"b": "m"', '"b": "电机"'.encode()).replace(b'"mass": 1', b'"mass": -1'),
                     ("masses[0].mass", ['"电机"'], ["\\u7535"])),
    "non-ascii-initial-key": (minimal(initial={"电机": {"x": 1}}),
                              ('initial["电机"]', ['"电机"', "not a mass"], ["\\u7535"])),
    "emoji-id": (minimal().replace(b'"id": "s"', '"id": "\U0001F600"'.encode()).replace(
        b'"k": 1', b'"k": -1'), ("springs[0].k", ["\U0001F600"], ["\\ud83d"])),
    "stiffness-below-range": (minimal().replace(b'"k": 1', b'"k": 1e-31'),
                              ("springs[0].k", ["1e-30 to 1e+30 N/m)"], ["or 0"])),
    "coordinate-just-above-range": (minimal().replace(b'"x": 0, "y": 0, "mass"',
                                                      b'"x": 1.0000001e30, "y": 0, "mass"'),
                                    ("masses[0].x", ["1.0000001e+30"], [])),
    "id-collision-anchor": (minimal().replace(b'"id": "s"', b'"id": "g"'),
                            ("springs[0].id", ["by an anchor"], ["a anchor"])),
    "mode-ratio-key-letters": (minimal(damping={"model": "modal", "ratio": 0.02,
                                                "mode_ratios": {"zzz": 0.1}}),
                               ("damping.mode_ratios", ['"zzz"', "a mode number from 1 to 999999"],
                                ["^[", "'"])),
    "torsion-unknown-key": (minimal(kind="torsion").replace(b'"mass": 1', b'"inertia": 1, "m": 2'),
                            ("masses[0]", ['unknown key "m"', "inertia"], [", mass,", "label, mass"])),
    "line-unknown-key": (minimal().replace(b'"mass": 1', b'"mass": 1, "m": 2'),
                         ("masses[0]", ['unknown key "m"', "mass"], ["inertia"])),
    "enum-json-notation": (minimal().replace(b'"kind": "line"', b'"kind": "beam"'),
                           ("kind", ['"beam"', '"line", "planar", "torsion"'], ["'"])),
    "null-kind": (minimal().replace(b'"kind": "line"', b'"kind": null'),
                  ("kind", ["null"], ["None"])),
    "version-300-digits": (minimal().replace(b'"version": 1', b'"version": 1' + b"0" * 299),
                           ("version", ["300 digits", "newer"], ["an integer of about"])),
    "double-bom": (b"\xef\xbb\xbf" * 2 + TEXT.encode(),
                   ("line 1, column 1", ["byte-order mark"], ["utf-8-sig"])),
    "nul-in-text": (TEXT.encode().replace(b'"m1"', b'"m\x001"', 1),
                    ("line", ["U+0000", "control character"], ["character at"])),
    # ---- load cases (the loads key)
    "loads-all-three": (minimal(loads={
        "direction": "x", "random": {"asd": [[10, 0.01], [100, 0.04], [1000, 0.01]]},
        "shock": {"shape": "trapezoid", "peak_g": 20, "duration_s": 0.01, "rise_s": 0.002,
                  "fall_s": 0.002},
        "spectrum": {"abscissa": "frequency", "points": [[0.1, 0.1], [1, 0.5], [30, 0.3]]}}),
        "solve"),
    "loads-asd-not-increasing": (minimal(loads={"random": {"asd": [[10, 0.01], [100, 0.04],
                                                                  [50, 0.01]]}}),
                                 ("loads.random.asd[2][0]", ["row 3", "frequency", "above",
                                                             "100 Hz"])),
    "loads-asd-zero-value": (minimal(loads={"random": {"asd": [[10, 0.0], [100, 0.04]]}}),
                             ("loads.random.asd[0][1]", ["> 0", "0"])),
    "loads-trapezoid-too-long-edges": (minimal(loads={"shock": {
        "shape": "trapezoid", "peak_g": 20, "duration_s": 0.01, "rise_s": 0.006,
        "fall_s": 0.006}}), ("loads.shock.rise_s", ["rise time", "fall time", "duration"])),
    "loads-rise-on-half-sine": (minimal(loads={"shock": {
        "shape": "half-sine", "peak_g": 20, "duration_s": 0.01, "rise_s": 0.001}}),
        ("loads.shock.rise_s", ["trapezoid only"])),
    "loads-spectrum-one-row": (minimal(loads={"spectrum": {"abscissa": "period",
                                                          "points": [[1, 0.5]]}}),
                               ("loads.spectrum.points", ["at least 2"])),
    "loads-unknown-key": (minimal(loads={"random": {"asd": [[1, 1], [2, 1]]}, "seismic": {}}),
                          ("loads", ['unknown key "seismic"', "spectrum"])),
    # ---- tolerances: percent strictly between 0 and 100, a known distribution
    "tolerance-ok": (changed(set_(["springs", 0, "tolerance"],
                                  {"percent": 20, "distribution": "normal"})), "solve"),
    "tolerance-100-percent": (changed(set_(["springs", 0, "tolerance"], {"percent": 100})),
                              ("springs[0].tolerance.percent", ['"s1"', "< 100"])),
    "tolerance-negative": (changed(set_(["masses", 1, "tolerance"], {"percent": -5})),
                           ("masses[1].tolerance.percent", ['"m2"', "> 0"])),
    "tolerance-unknown-distribution": (
        changed(set_(["springs", 1, "tolerance"], {"percent": 5, "distribution": "gauss"})),
        ("springs[1].tolerance.distribution", ['"gauss"', '"uniform", "normal", "triangular"'])),
    "tolerance-as-number": (changed(set_(["springs", 0, "tolerance"], 10)),
                            ("springs[0].tolerance", ["object"])),
}


def main():
    for old in HERE.glob("*.json"):
        old.unlink()
    expected = {}
    for name, (raw, outcome) in CASES.items():
        (HERE / f"{name}.json").write_bytes(raw)
        expected[f"{name}.json"] = outcome if outcome in ("load", "solve") else {
            "place": outcome[0], "words": outcome[1],
            **({"absent": outcome[2]} if len(outcome) > 2 else {})}
    (HERE / "expected.json").write_text(json.dumps(expected, indent=1, ensure_ascii=True) + "\n")


if __name__ == "__main__":
    main()
