"""A verdict's empty sensitivities are never silent: the JSON report's ``sensitivity_note`` says whether
the rule is decided with no worst case to vary, or the tolerance model (analysis.params) or the
re-analysis (coilstage.effects) found no declared parameter that moves the margin, or why the
re-analysis was left out."""

from __future__ import annotations

import json

import pytest

from coilstage.analysis.params import RULES as MODELLED
from coilstage.cli import main

from .conftest import COACH, FLAWED, TRUCK


@pytest.mark.parametrize("path", [COACH, TRUCK, FLAWED], ids=["coach", "truck", "flawed"])
def test_every_empty_sensitivity_list_says_why(path, tmp_path):
    out = tmp_path / "r.json"
    main(["check", str(path), "--no-suggest", "-f", "json", "-o", str(out)])
    doc = json.loads(out.read_text(encoding="utf-8"))
    assert doc["schema_version"] == "1.5"
    outside = modelled_with = effects = 0
    for v in doc["verdicts"]:
        note = v["sensitivity_note"]
        if v["status"] == "not checked" or v["sensitivities"]:
            assert note is None, (v["rule"], v["subject"])
            modelled_with += bool(v["sensitivities"]) and v["rule"] in MODELLED
            effects += bool(v["sensitivities"]) and v["rule"] not in MODELLED
            continue
        assert note, (v["rule"], v["subject"])
        if v["rule"] in MODELLED:  # none above a thousandth of a point, or no figure to vary
            assert note.startswith(("computed", "not computed: this verdict")), (v["rule"], v["subject"], note)
        elif v["nominal"] is None:  # decided at the conditions its rule names, and not re-analysed
            assert note.startswith(
                ("not computed: this rule reads the simulation of the duty", "not computed: this verdict has no margin")
            ), note
            outside += 1
        else:  # decided at a worst case: the re-analysis found nothing, or says why it was left out
            assert note.startswith(
                ("computed by re-analysis", "not computed: this rule reads", "not computed: this verdict has no margin")
            ), note
    # each demo has verdicts of every kind: sensitivities from the model, effects by re-analysis, and
    # verdicts with no worst case
    assert outside > 0 and modelled_with > 0 and effects > 0
    # an effect outside the model is only ever given with the re-analysis named among the deciding lines
    for v in doc["verdicts"]:
        if v["sensitivities"] and v["rule"] not in MODELLED:
            assert any(x.startswith("effects: found by analysing again") for x in v["deciding"]), v["rule"]


def test_without_effects_the_note_says_how_to_get_them(tmp_path):
    out = tmp_path / "r.json"
    main(["check", str(COACH), "--no-suggest", "--no-effects", "-f", "json", "-o", str(out)])
    doc = json.loads(out.read_text(encoding="utf-8"))
    v = next(v for v in doc["verdicts"] if v["rule"] == "stage.release_time")
    assert not v["sensitivities"] and "outside the tolerance model" in v["sensitivity_note"]
    assert "--no-effects" in v["sensitivity_note"]
