"""Every report opens with the result, the record and the action list; --brief stops there; nothing is
cut short at 80 columns or when piped; figures in the units a vehicle electrician uses.

Checks against outside references: the drawing's SHA-256 against :mod:`hashlib`; the unit
conversions are plain arithmetic (1 min = 60 s, 1 h = 3600 s; a fraction times 100 is a percentage;
a temperature headroom limit − value is in kelvin, ISO 80000-5 item 5-1).
"""

from __future__ import annotations

import hashlib
import io
import json
import subprocess
import sys

import pytest
from rich.console import Console

from coilstage import check, load_drawing
from coilstage.cli import main
from coilstage.report import document, fmt, markdown, record, text

from .conftest import COACH, FLAWED, ROOT, TRUCK


@pytest.fixture(scope="module")
def flawed_doc() -> dict:
    d = load_drawing(FLAWED)
    a, v = check(d)
    return document.build(a, v)


def _text(doc: dict, width: int, **kw) -> str:
    buf = io.StringIO()
    text.render(doc, Console(file=buf, width=width, color_system=None, force_terminal=False, markup=False), **kw)
    return buf.getvalue()


def test_fmt_units_a_practitioner_expects():
    assert fmt.duration(1800.0) == "30.0 min"  # 1800 s / 60
    assert fmt.duration(7200.0) == "2.00 h"  # 7200 s / 3600
    assert fmt.duration(0.0153) == "15.3 ms"
    assert fmt.duration(45.0) == "45 s"
    assert fmt.si(1800.0, "s") == "30.0 min"  # never "1.80 ks"
    assert fmt.si(0.9, "1") == "90.0 %"  # a state of charge of 0.9
    assert fmt.percent(0.031) == "3.1 %"
    assert fmt.turns({"value": 5649.4, "unit": "A"}) == "5649 A-turns"
    v = {"value": {"value": 165.2, "unit": "degC"}, "limit": {"value": 165.0, "unit": "degC"}, "margin": -0.0004}
    assert fmt.margin_text(v) == "-0.2 K"
    assert fmt.margin_text({"value": None, "limit": None, "margin": -0.2}) == "-20 %"


def test_text_opens_with_result_then_actions_then_evidence(flawed_doc):
    out = _text(flawed_doc, 120)
    lines = [x for x in out.splitlines() if x.strip()]
    assert lines[0].startswith("RESULT: FAIL")
    i_act, i_ev, i_corner = out.index("What to do"), out.index("Evidence"), out.index("COLD corner")
    assert i_act < i_ev < i_corner
    fails = [v for v in flawed_doc["verdicts"] if v["status"] == "fail"]
    assert f"Failures — change these before the vehicle goes into service ({len(fails)})" in out
    import re

    assert not re.search(r"\d ks\b", out)  # durations in s/min/h, never "1.80 ks"


def test_text_brief_is_only_the_first_part(flawed_doc):
    out = _text(flawed_doc, 120, brief=True)
    assert out.lstrip().startswith("RESULT: FAIL") and "What to do" in out
    assert "COLD corner" not in out and "Verdicts" not in out
    assert "CAUTION" in out.upper()  # the cautions stay (rule 4)


@pytest.mark.parametrize("width", [80, 140])
def test_no_id_or_name_is_cut_at_any_width(flawed_doc, width):
    out = _text(flawed_doc, width, details=True)
    assert "…" not in out
    flat = "".join(out.split())  # folded cells join again without their line breaks
    for v in flawed_doc["verdicts"]:
        assert "".join(v["rule"].split()) in flat
        assert "".join(v["subject"].split()) in flat
    if width == 80:
        assert max(len(x) for x in out.splitlines()) <= 80


def test_piped_report_keeps_every_rule_id():
    r = subprocess.run(
        [sys.executable, "-m", "coilstage", "check", str(FLAWED), "--details"],
        capture_output=True,
        text=True,
        cwd=ROOT,
    )
    assert r.returncode == 1
    assert "…" not in r.stdout
    for rid in ("cable.temperature_class", "cable.conductor_temperature", "winding.time_to_limit"):
        assert rid in r.stdout


def test_record_block_after_the_action_list_in_text_and_markdown(flawed_doc):
    rec = record.build(load_drawing(FLAWED), argv=["coilstage", "check", str(FLAWED)])
    digest = hashlib.sha256(FLAWED.read_bytes()).hexdigest()
    out = _text(flawed_doc, 80, record=rec)
    # 13.4: the result, then the action list, then the record; the evidence after them
    assert "".join(digest) in "".join(out.split())
    assert out.index("What to do") < out.index("SHA-256") < out.index("Evidence")
    md = markdown.render(flawed_doc, record=rec)
    assert md.index("**Result: FAIL**") < md.index("## What to do") < md.index("## Record") < md.index("# Evidence")
    assert digest in md
    brief = markdown.render(flawed_doc, record=rec, brief=True)
    assert "## Verdicts" not in brief and "## What to do" in brief and "## Cautions" in brief


def test_json_has_record_parts_and_actions(tmp_path):
    out = tmp_path / "r.json"
    assert main(["check", str(FLAWED), "-f", "json", "-o", str(out)]) == 1
    doc = json.loads(out.read_text())
    assert list(doc)[:3] == ["schema_version", "summary", "record"]
    assert doc["record"]["drawing"]["sha256"] == hashlib.sha256(FLAWED.read_bytes()).hexdigest()
    n_fail = sum(v["status"] == "fail" for v in doc["verdicts"])
    assert sum(len(g["items"]) for g in doc["actions"]["failures"]) == n_fail == doc["summary"]["fail"]
    n_nc = sum(v["status"] == "not checked" for v in doc["verdicts"])
    assert sum(len(g["items"]) for g in doc["actions"]["missing"]) == n_nc
    ids = {p["id"] for p in doc["parts"]["parts"]}
    drawing = load_drawing(FLAWED)
    assert {s.id for s in drawing.stages} <= ids


@pytest.mark.parametrize("drawing", [COACH, TRUCK])
def test_brief_through_the_command(drawing, tmp_path):
    out = tmp_path / "b.txt"
    assert main(["check", str(drawing), "--brief", "-o", str(out)]) == 0
    body = out.read_text()
    assert body.startswith("RESULT:") and "COLD corner" not in body


def test_suggest_fills_the_action_list_and_keeps_the_schema(tmp_path):
    jsonschema = pytest.importorskip("jsonschema")
    out = tmp_path / "r.json"
    assert main(["check", str(FLAWED), "--suggest", "-f", "json", "-o", str(out)]) == 1
    doc = json.loads(out.read_text())
    jsonschema.validate(doc, json.loads((ROOT / "docs" / "report-schema.json").read_text()))
    items = [v for g in doc["actions"]["failures"] for v in g["items"]]
    with_text = [v for v in items if v["suggestion"]]
    assert with_text and all(isinstance(v["suggestion"], str) for v in with_text)
    assert all("suggestion" not in v for v in doc["verdicts"])
