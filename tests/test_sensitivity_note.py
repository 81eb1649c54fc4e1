"""A verdict's empty sensitivities are never silent: the JSON report's ``sensitivity_note`` says whether
the rule is outside the tolerance model (analysis.params, which differentiates and searches only its
steady-state rules) or the model found no declared parameter that moves the margin."""

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
    outside = modelled_with = 0
    for v in doc["verdicts"]:
        note = v["sensitivity_note"]
        if v["status"] == "not checked" or v["sensitivities"]:
            assert note is None, (v["rule"], v["subject"])
            modelled_with += bool(v["sensitivities"])
            continue
        assert note, (v["rule"], v["subject"])
        if v["rule"] in MODELLED:  # none above a thousandth of a point, or no figure to vary
            assert note.startswith(("computed", "not computed: this verdict")), (v["rule"], v["subject"], note)
        else:
            assert note.startswith("not computed") and "outside the tolerance model" in note
            outside += 1
    # each demo has verdicts of both kinds: the modelled rules with sensitivities and the others
    assert outside > 0 and modelled_with > 0
    # a sensitivity is only ever given for a modelled rule
    assert all(v["rule"] in MODELLED for v in doc["verdicts"] if v["sensitivities"])
