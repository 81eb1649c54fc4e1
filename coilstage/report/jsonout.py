"""JSON report (schema: docs/report-schema.json).

The document passes :func:`coilstage.report.safe.guard` first: no NaN or inf can reach the file
(``allow_nan=False`` would refuse one anyway), and drawing text is kept exactly, with control,
bidirectional and format characters written as ``\\uXXXX`` escapes so that printing the file on a
terminal shows them rather than obeying them.

At the top level, beside the document's keys: ``actions`` (always: what to change, failures first,
grouped by part, from :mod:`coilstage.report.actions`), and where given ``record`` (the run's
traceability block, :mod:`coilstage.report.record`) and ``parts`` (every element as read,
:mod:`coilstage.report.parts`). Their addition is schema version 1.1.

Schema version 1.2: each verdict carries its ``suggestion`` (the one-line text of a checked part that
would clear it, or null; the same text as in ``actions``), ``suggested`` (that suggestion's details:
part, kind, today's value, the suggested value, the next smaller standard part and what it fails,
whether the full check confirmed it; or null) and ``sensitivities`` (the parameters that move a
worst-case verdict's margin most, largest first; empty where none were computed).

Schema version 1.4: each verdict's ``sensitivity_note`` says why its ``sensitivities`` are empty (the
rule is outside the tolerance model, or no declared parameter moves its margin), null otherwise.
"""

from __future__ import annotations

import json
from typing import Any

from coilstage.report import actions, safe

#: the version of the JSON report's layout (1.1: record, parts and actions at the top level; 1.2: the
#: suggestion and the sensitivities beside each verdict; 1.3: a verdict no sized part clears says what
#: would have to change; 1.4: each verdict's ``sensitivity_note`` says why it carries no sensitivities;
#: 1.5: the switching's per-stage figures also at the largest break, corner ``"largest current"``)
SCHEMA_VERSION = "1.5"


def render(doc: dict[str, Any], record: dict[str, Any] | None = None, parts: dict[str, Any] | None = None) -> str:
    """The report as JSON text: the result first, then the record, the actions, the evidence."""
    out: dict[str, Any] = {"schema_version": SCHEMA_VERSION, "summary": doc["summary"]}
    if record is not None:
        out["record"] = record
    out["actions"] = actions.build(doc)
    for k, v in doc.items():
        if k not in out and k != "schema_version":
            out[k] = v
    out["verdicts"] = [
        {
            **v,
            "sensitivities": v.get("sensitivities", []),
            "suggestion": actions.suggestion_of(v),
            "suggested": v.get("suggested"),
        }
        for v in doc["verdicts"]
    ]
    if parts is not None:
        out["parts"] = parts
    text = json.dumps(safe.guard(out, for_json=True), indent=2, ensure_ascii=False, allow_nan=False)
    return safe.json_safe(text) + "\n"
