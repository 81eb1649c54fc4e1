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
    assert fmt.margin_text(v) == "0.2 K over"  # 165.0 - 165.2 = -0.2 K
    assert fmt.margin_text({"value": None, "limit": None, "margin": -0.2}) == "-20 %"


def test_temperature_margins_are_kelvin_of_headroom():
    """A temperature margin is the limit minus the value on the kelvin scale, never a percentage:
    165 - 135 = 30 K of headroom; 165 - 177 = -12 K, 12 K over."""
    ok = {"value": {"value": 135.0, "unit": "degC"}, "limit": {"value": 165.0, "unit": "degC"}, "margin": 0.0682}
    over = {"value": {"value": 177.0, "unit": "degC"}, "limit": {"value": 165.0, "unit": "degC"}, "margin": -0.0273}
    assert fmt.margin_text(ok) == "30 K of headroom"
    assert fmt.margin_text(over) == "12 K over"
    assert "%" not in fmt.margin_text(ok) + fmt.margin_text(over)


def test_a_margin_beyond_minus_1000_percent_is_far_beyond_the_limit():
    """-1866 % says nothing a fitter can use: the value and the limit are shown instead. A limit of
    zero (no ampacity left) has no margin at all and is shown the same way; -999 % is still a number."""
    v = {"status": "fail", "value": {"value": 196.6, "unit": "A"}, "limit": {"value": 10.0, "unit": "A"}}
    assert fmt.margin_text({**v, "margin": (10.0 - 196.6) / 10.0}) == "far beyond the limit (197 A against 10.0 A)"
    assert fmt.margin_text({**v, "margin": -9.99}) == "-999 %"
    zero = {"status": "fail", "value": {"value": 251.2, "unit": "A"}, "limit": {"value": 0.0, "unit": "A"}}
    assert fmt.margin_text({**zero, "margin": None}).startswith("far beyond the limit (251 A against 0")


def _worst_verdict(**kw) -> dict:
    v = {
        "rule": "fuse.continuous",
        "subject": "F-MAIN",
        "status": "pass",
        "value": {"value": 150.0, "unit": "A"},
        "limit": {"value": 158.0, "unit": "A"},
        "margin": 0.05,
        "clause": "ISO 8820 (test figure)",
        "note": "",
        "corner": "largest current",
        "nominal": {"status": "pass", "value": {"value": 137.0, "unit": "A"}, "margin": 0.13},
        "worst_conditions": "largest current",
        "deciding": ["coils -30 °C, resistance -7%"],
        "sensitivities": [
            {
                "parameter": "coils.*.resistance_tolerance",
                "words": "coil resistance",
                "change": -0.05,
                "unit": "1",
                "margin_change": -0.051,
            },
            {
                "parameter": "supply.alternator.compensation_24v",
                "words": "regulator compensation",
                "change": -0.015,
                "unit": "V/K",
                "margin_change": -0.03,
            },
        ],
    }
    return {**v, **kw}


def test_worst_case_lines_name_both_margins_the_conditions_and_the_effects():
    lines = fmt.worst_lines(_worst_verdict())
    assert lines[0] == "nominal: PASS, +13 %; at the largest current: PASS, +5 %"
    assert lines[1] == "decided by: coils -30 °C, resistance -7%"
    # margin_change -0.051 of a fraction = 5.1 points; -0.015 V/K = -15 mV/K
    assert lines[2] == (
        "largest effects: coil resistance −5 % takes 5.1 points; regulator compensation −15 mV/K takes 3.0 points"
    )
    assert len(fmt.worst_lines(_worst_verdict(sensitivities=[]))) == 2  # no sensitivities: none shown
    assert fmt.worst_lines(_worst_verdict(nominal=None)) == []  # read at one corner: nothing to compare


def test_worst_case_lines_in_text_markdown_and_html(flawed_doc):
    from coilstage.report import html, parts

    doc = dict(flawed_doc)
    doc["verdicts"] = [_worst_verdict(status="fail", margin=-0.05), *flawed_doc["verdicts"]]
    want = "coil resistance −5 % takes 5.1 points"
    assert want in " ".join(_text(doc, 200).split())
    assert want in markdown.render(doc)
    assert want in markdown.render(doc, brief=True)  # the action list keeps them
    d = load_drawing(FLAWED)
    assert want in html.render(doc, record.build(d, revision=None), parts.build(d))
    assert want in " ".join(_text(doc, 200, brief=True).split())


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
    # the result, then the action list, then the record; the evidence after them
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
    code = main(["check", str(drawing), "--brief", "-o", str(out)])
    body = out.read_text()
    assert code == (1 if body.startswith("RESULT: FAIL") else 0)  # the demos' results follow the rules
    assert body.startswith("RESULT:") and "COLD corner" not in body


def test_suggestions_by_default_beside_each_verdict_and_in_the_schema(tmp_path):
    """Without any option each failing or warning verdict carries what would pass, in the action list
    and beside the verdict (schema 1.2); --suggest is still accepted; --no-suggest leaves them out."""
    jsonschema = pytest.importorskip("jsonschema")
    schema = json.loads((ROOT / "docs" / "report-schema.json").read_text())
    out = tmp_path / "r.json"
    assert main(["check", str(FLAWED), "-f", "json", "-o", str(out)]) == 1
    doc = json.loads(out.read_text())
    jsonschema.validate(doc, schema)
    assert doc["schema_version"] == "1.5"
    items = [v for g in doc["actions"]["failures"] for v in g["items"]]
    with_text = [v for v in items if v["suggestion"]]
    assert with_text and all(isinstance(v["suggestion"], str) for v in with_text)
    by = {(v["rule"], v["subject"]): v for v in doc["verdicts"]}
    for v in with_text:  # the same text beside the verdict, with its details
        beside = by[(v["rule"], v["subject"])]
        assert beside["suggestion"] == v["suggestion"]
        if beside["suggested"] is None:  # no part answers it: the statement of what sizing cannot change
            assert "sizing does not change" in v["suggestion"]
        else:
            assert beside["suggested"]["text"] == v["suggestion"]
    assert all(v["suggestion"] is None for v in doc["verdicts"] if v["status"] == "pass")
    w2 = by[("cable.ampacity", "W2")]
    assert w2["suggested"]["part"] == "W2" and w2["suggested"]["checked"]
    assert w2["suggested"]["next_smaller_fails"]  # the next smaller size fails a rule, named
    assert main(["check", str(FLAWED), "--suggest", "-f", "json", "-o", str(out)]) == 1
    assert json.loads(out.read_text())["verdicts"] == doc["verdicts"]
    assert main(["check", str(FLAWED), "--no-suggest", "-f", "json", "-o", str(out)]) == 1
    plain = json.loads(out.read_text())
    jsonschema.validate(plain, schema)
    assert all(v["suggestion"] is None and v["suggested"] is None for v in plain["verdicts"])


def test_json_carries_the_worst_case_details_of_each_verdict(tmp_path):
    """Per verdict decided at its worst case: nominal status, value and margin, the conditions, what
    decided them and the sensitivities (each with its unit from the tolerance defaults)."""
    out = tmp_path / "r.json"
    assert main(["check", str(FLAWED), "--no-suggest", "-f", "json", "-o", str(out)]) == 1
    doc = json.loads(out.read_text())
    worst = [v for v in doc["verdicts"] if v["nominal"] is not None]
    assert worst and all(v["worst_conditions"] and v["deciding"] for v in worst)
    assert all(v["sensitivities"] == [] for v in doc["verdicts"] if v["nominal"] is None)
    sens = [s for v in worst for s in v["sensitivities"]]
    for s in sens:
        assert set(s) == {"parameter", "words", "change", "unit", "margin_change"}
    coil = [s for s in sens if s["parameter"].startswith("coils.") and s["parameter"].endswith("resistance_tolerance")]
    assert all(s["unit"] == "1" for s in coil)  # tolerance_defaults.toml: a fraction
