"""Fleet mode: a batch of generated drawings, one bad and one failing among them."""

from __future__ import annotations

import argparse
import csv
import io
import json

import pytest

import coilstage
from coilstage import fleet
from coilstage.checks.base import Status
from coilstage.starter import starter_text

from .conftest import COACH


def variant(k: int, stages: int = 4, system: int = 24) -> str:
    """A starter drawing made a little different for each k (its base load)."""
    return starter_text(system, stages).replace('base_load = "40 A"', f'base_load = "{30 + k % 20} A"', 1)


#: the 24 V starter's branch cable, as coilstage init writes it
BRANCH = 'size = "25 mm^2"'


def _batch(folder, n_good=4, bad=True, failing=True):
    folder.mkdir(parents=True, exist_ok=True)
    paths = []
    for k in range(n_good):
        p = folder / f"good-{k:02d}.toml"
        p.write_text(variant(k, stages=1 + k % 4), encoding="utf-8")
        paths.append(p)
    if failing:  # 1.5 mm² branches cannot carry a stage's current
        p = folder / "failing.toml"
        text = variant(0, 2)
        assert BRANCH in text
        p.write_text(text.replace(BRANCH, 'size = "1.5 mm^2"'), encoding="utf-8")
        paths.append(p)
    if bad:  # a size no table lists: bad input
        p = folder / "bad.toml"
        p.write_text(variant(0, 2).replace(BRANCH, 'size = "7 mm^2"', 1), encoding="utf-8")
        paths.append(p)
    (folder / "harness.base.toml").write_text("# a wire-list base, not a drawing\n", encoding="utf-8")
    return paths


def _run(paths, **kw):
    out, err = io.StringIO(), io.StringIO()
    code = fleet.run_many([str(p) for p in paths], stdout=out, stderr=err, **kw)
    return code, out.getvalue(), err.getvalue()


def test_batch_with_a_bad_drawing(tmp_path):
    paths = _batch(tmp_path / "fleet")
    code, out, _err = _run([tmp_path / "fleet"], jobs=2, summary_format="json", progress=False)
    data = json.loads(out)
    rows = {r["drawing"].rsplit("/", 1)[-1]: r for r in data["drawings"]}
    assert set(rows) == {p.name for p in paths}  # the base was skipped
    assert code == 2 and data["exit_code"] == 2  # the worst: bad input
    assert rows["bad.toml"]["result"] == "bad input"
    assert any("7 mm^2" in p for p in rows["bad.toml"]["problems"])
    assert rows["good-00.toml"]["result"] == "pass"  # one stage: within the alternator
    assert rows["failing.toml"]["result"] == "fail" and rows["failing.toml"]["fails"] > 0
    # every figure of the summary equals what coilstage.check gives for that drawing in this process
    for p in paths:
        if p.name == "bad.toml":
            continue
        verdicts = coilstage.check(coilstage.load_drawing(p))[1]
        row = rows[p.name]
        assert row["fails"] == sum(v.status is Status.FAIL for v in verdicts)
        assert row["warns"] == sum(v.status is Status.WARN for v in verdicts)
        scored = [v for v in verdicts if v.margin is not None and v.status is not Status.NOT_CHECKED]
        tight = min(scored, key=lambda v: v.margin)
        # default rel 1e-6: the summary's margin is the verdict's own: round-off only
        assert row["margin"] == pytest.approx(tight.margin)
        assert (row["margin_rule"], row["margin_subject"]) == (tight.rule, tight.subject)
        assert row["result"] == ("fail" if row["fails"] else "warn" if row["warns"] else "pass")


def test_exit_code_is_the_worst(tmp_path):
    good = _batch(tmp_path / "a", n_good=2, bad=False, failing=False)
    assert _run(good, jobs=2, progress=False)[0] == 0
    with_fail = _batch(tmp_path / "b", n_good=2, bad=False, failing=True)
    assert _run(with_fail, jobs=2, progress=False)[0] == 1
    with_bad = _batch(tmp_path / "c", n_good=2, bad=True, failing=True)
    assert _run(with_bad, jobs=1, progress=False)[0] == 2


def test_text_and_csv_summaries_and_reports(tmp_path):
    paths = _batch(tmp_path / "fleet", n_good=2)
    out_dir = tmp_path / "reports"
    code, out, err = _run([tmp_path / "fleet" / "*.toml"], jobs=2, out_dir=str(out_dir), fmt="json")
    assert code == 2
    lines = out.splitlines()
    assert lines[0].split() == ["drawing", "result", "fails", "warns", "tightest", "margin", "rule", "subject"]
    assert any("BAD INPUT" in ln for ln in lines) and any("FAIL" in ln for ln in lines)
    assert "4 drawing(s): " in out and "1 bad input" in out
    # reports beside the summary, one per drawing that could be checked
    for p in paths:
        report = out_dir / f"{p.stem}.json"
        assert report.exists() == (p.name != "bad.toml")
    assert json.loads((out_dir / "good-00.json").read_text(encoding="utf-8"))["summary"]["result"] in ("pass", "warn")
    with (out_dir / "coilstage-summary.csv").open(encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f))
    # sorted by name: bad, failing, good-00 (one stage), good-01 (two stages: the alternator warns)
    assert [r["result"] for r in rows] == ["bad input", "fail", "pass", "warn"]
    assert json.loads((out_dir / "coilstage-summary.json").read_text(encoding="utf-8"))["exit_code"] == 2
    assert (out_dir / "coilstage-summary.txt").read_text(encoding="utf-8") == out
    assert "checked in" in err


def test_fleet_reports_carry_the_record_and_parts_blocks(tmp_path):
    """Each report a fleet run writes has what a single check writes: the record block (the
    drawing's SHA-256, the command, the tables) and, in JSON, the parts block; in text and Markdown
    the record. The SHA-256 is computed here with hashlib over the file's bytes."""
    import hashlib

    jsonschema = pytest.importorskip("jsonschema")
    from .conftest import ROOT

    paths = _batch(tmp_path / "fleet", n_good=2, bad=False)
    schema = json.loads((ROOT / "docs" / "report-schema.json").read_text())
    for fmt, ext in (("json", "json"), ("markdown", "md"), ("text", "txt")):
        out_dir = tmp_path / f"reports-{fmt}"
        code, _out, _err = _run(paths, jobs=2, out_dir=str(out_dir), fmt=fmt, progress=False)
        assert code == 1
        for p in paths:
            body = (out_dir / f"{p.stem}.{ext}").read_text(encoding="utf-8")
            digest = hashlib.sha256(p.read_bytes()).hexdigest()
            if fmt == "json":
                doc = json.loads(body)
                jsonschema.validate(doc, schema)
                assert doc["record"]["drawing"]["sha256"] == digest
                assert doc["record"]["tables"]
                assert {s.id for s in coilstage.load_drawing(p).stages} <= {x["id"] for x in doc["parts"]["parts"]}
            else:
                assert digest in "".join(body.split())  # a narrow terminal may fold the hash


def test_expand(tmp_path):
    _batch(tmp_path / "f", n_good=1, bad=False, failing=False)
    found, missing = fleet.expand([str(tmp_path / "f"), str(tmp_path / "f" / "good-00.toml"), str(tmp_path / "nope")])
    assert [p.name for p in found] == ["good-00.toml"]  # once, and without the base
    assert missing == [f"{tmp_path / 'nope'}: no such file or folder"]
    assert fleet.expand([str(tmp_path / "**" / "*.toml")])[0][0].name == "good-00.toml"
    assert _run([tmp_path / "nope"], progress=False)[0] == 2


def test_internal_error_stays_on_its_row(tmp_path, monkeypatch):
    paths = _batch(tmp_path / "f", n_good=2, bad=False, failing=False)

    def broken(drawing):
        if drawing.path.endswith("good-01.toml"):
            raise RuntimeError("boom")
        return real(drawing)

    real = coilstage.check
    monkeypatch.setattr(coilstage, "check", broken)
    code, out, _ = _run(paths, jobs=1, summary_format="csv", progress=False)  # in this process
    rows = {r["drawing"].rsplit("/", 1)[-1]: r for r in csv.DictReader(io.StringIO(out))}
    assert rows["good-01.toml"]["result"] == "internal error" and "boom" in rows["good-01.toml"]["problems"]
    assert rows["good-00.toml"]["result"] == "pass"
    assert code == 3


def test_reports_never_overwrite_a_drawing(tmp_path):
    d = tmp_path / "coach.txt"  # a drawing whose name is that of its own report
    d.write_text(COACH.read_text(encoding="utf-8"), encoding="utf-8")
    code, _out, err = _run([d], out_dir=str(tmp_path), fmt="text", progress=False)
    assert code == 2 and "overwrite a drawing" in err
    assert d.read_text(encoding="utf-8") == COACH.read_text(encoding="utf-8")


def test_command_module(tmp_path):
    _batch(tmp_path / "f", n_good=1, bad=False, failing=False)
    p = argparse.ArgumentParser()
    fleet.add_arguments(p)
    args = p.parse_args([str(tmp_path / "f"), "--summary", "-j", "1", "--summary-format", "csv"])
    assert fleet.run(args) == 0
    assert fleet.run(p.parse_args([str(tmp_path / "f"), "-j", "0"])) == 2
