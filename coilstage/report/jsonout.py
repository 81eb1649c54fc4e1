"""JSON report (schema: docs/report-schema.json).

The document passes :func:`coilstage.report.safe.guard` first: no NaN or inf can reach the file
(``allow_nan=False`` would refuse one anyway), and drawing text is kept exactly, with control,
bidirectional and format characters written as ``\\uXXXX`` escapes so that printing the file on a
terminal shows them rather than obeying them.
"""

from __future__ import annotations

import json
from typing import Any

from coilstage.report import safe


def render(doc: dict[str, Any]) -> str:
    """The report as JSON text."""
    text = json.dumps(safe.guard(doc, for_json=True), indent=2, ensure_ascii=False, allow_nan=False)
    return safe.json_safe(text) + "\n"
