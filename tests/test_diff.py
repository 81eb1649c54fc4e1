"""``coilstage diff`` on two revisions of the flawed demo: a copy in tmp_path with three hand-made
changes, and the list of what moved checked by hand against the rules' own statements."""

from __future__ import annotations

import argparse
import copy
import json
from html.parser import HTMLParser
from pathlib import Path

import pytest

from coilstage import load_drawing
from coilstage.report import diff, parts

from .conftest import FLAWED


def _revision_b(tmp_path: Path) -> Path:
    """Revision B of the flawed demo: F2 80 A -> 60 A; W1R 1.0 m -> 1.5 m; K1 gains a 24 V rating of 120 A."""
    t = FLAWED.read_text(encoding="utf-8")
    assert t.count('rating = "80 A"') == 1
    t = t.replace('rating = "80 A"', 'rating = "60 A"')
    i = t.index('id = "W1R"')
    j = t.index('length = "1.0 m"', i)
    t = t[:j] + 'length = "1.5 m"' + t[j + len('length = "1.0 m"') :]
    assert t.count('rating_12v = "70 A"') == 1
    t = t.replace('rating_12v = "70 A"', 'rating_12v = "70 A"\nrating_24v = "120 A"')
    p = tmp_path / "revision-b.toml"
    p.write_text(t, encoding="utf-8")
    return p


def _args(old, new, fmt="text", output=None, threshold="5 %"):
    p = argparse.ArgumentParser()
    diff.add_arguments(p)
    argv = [str(old), str(new), "-f", fmt, "--threshold", threshold] + (["-o", str(output)] if output else [])
    return p.parse_args(argv)


@pytest.fixture(scope="module")
def comparison(tmp_path_factory):
    new = _revision_b(tmp_path_factory.mktemp("rev"))
    o = diff.analyse_one(FLAWED)
    n = diff.analyse_one(new)
    return diff.build(o[0], n[0], o[1], n[1], o[2], n[2]), new


def test_part_changes_by_hand(comparison):
    d, _ = comparison
    p = d["parts"]
    assert p["added"] == [] and p["removed"] == []
    got = {(x["id"], c["label"], c["old"], c["new"]) for x in p["changed"] for c in x["changes"]}
    assert got == {
        ("F2", "rating", "80 A", "60 A"),
        ("W1R", "length", "1 m", "1.5 m"),
        ("K1", "contact rating, 24 V", "—", "120 A"),
    }


def test_verdicts_that_moved(comparison):
    d, _ = comparison
    v = d["verdicts"]
    # F2 at 60 A: 60 A x 0.940 rerating at 60 °C = 56.4 A, below the 57.1 A S2 draws alone, so the
    # continuous rule (pass <= 75 %, warn up to 100 % of the rerated rating) turns WARN -> FAIL.
    assert [(x["rule"], x["subject"]) for x in v["new_failures"]] == [("fuse.continuous", "F2")]
    assert v["new_failures"][0]["old"]["status"] == "warn"
    # K1 had only a 12 V rating (FAIL on a 24 V bus); 120 A at 24 V, derated to about 98 A at
    # 60 °C by its 70 % @ 85 °C line, carries its 62.7 A: the failure is fixed.
    assert ("relay.contact_rating", "K1") in {(x["rule"], x["subject"]) for x in v["fixed_failures"]}
    # W1R 50 % longer: more drop to S1 (its margin moves by more than 5 points)
    moved = {(x["rule"], x["subject"]) for x in v["margins_changed"]}
    assert ("circuit.voltage_drop", "S1") in moved and ("fuse.protects_cable", "F2") in moved
    for x in v["margins_changed"]:
        assert abs(x["new"]["margin"] - x["old"]["margin"]) > 0.05
    assert d["result"] == "new failures"


def test_threshold_and_identity(comparison):
    _d, new = comparison
    o = diff.analyse_one(FLAWED)
    same = diff.build(o[0], o[0], o[1], o[1], o[2], o[2])
    assert same["parts"] == {"added": [], "removed": [], "changed": []}
    assert all(not x for x in same["verdicts"].values())
    big = diff.compare_verdicts(o[0]["verdicts"], diff.analyse_one(new)[0]["verdicts"], threshold=1e9)
    assert big["margins_changed"] == []


def test_added_and_removed_parts():
    p = parts.build(load_drawing(FLAWED))
    q = copy.deepcopy(p)
    gone = q["parts"].pop(5)
    q["parts"].append({**copy.deepcopy(gone), "id": "NEW1"})
    c = diff.compare_parts(p, q)
    assert [x["id"] for x in c["removed"]] == [gone["id"]]
    assert [x["id"] for x in c["added"]] == ["NEW1"]


def test_run_exit_codes_and_formats(comparison, tmp_path, capsys):
    _, new = comparison
    assert diff.run(_args(FLAWED, new)) == 1
    out = capsys.readouterr().out
    assert "rating: 80 A → 60 A" in out and "fuse.continuous · F2" in out
    assert diff.run(_args(FLAWED, FLAWED)) == 0
    capsys.readouterr()
    assert diff.run(_args(FLAWED, new, "json")) == 1
    j = json.loads(capsys.readouterr().out)
    assert j["schema"] == diff.DIFF_SCHEMA and len(j["verdicts"]["new_failures"]) == 1
    assert diff.run(_args(FLAWED, new, "markdown")) == 1
    assert "| F2 | rating | 80 A | 60 A |" in capsys.readouterr().out
    out_html = tmp_path / "diff.html"
    assert diff.run(_args(FLAWED, new, "html", out_html)) == 1
    text = out_html.read_text(encoding="utf-8")
    HTMLParser().feed(text)
    assert "✗ NEW FAILURES" in text and "http://" not in text and "https://" not in text
    assert "<script" not in text


def test_bad_input_exit_2(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text(FLAWED.read_text(encoding="utf-8").replace("[supply]", "[supply]\nvoltage_typo = 1", 1))
    assert diff.run(_args(FLAWED, bad)) == 2
    err = capsys.readouterr().err
    assert "voltage_typo" in err
    assert diff.run(_args(FLAWED, FLAWED, threshold="lots")) == 2
    # never writes over one of the drawings
    before = FLAWED.read_bytes()
    from coilstage.outputs import OutputError

    with pytest.raises(OutputError):  # the CLI reports it with exit 2
        diff.run(_args(FLAWED, FLAWED, output=FLAWED))
    assert FLAWED.read_bytes() == before
