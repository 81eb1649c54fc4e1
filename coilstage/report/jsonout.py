"""JSON report (schema: docs/report-schema.json)."""

from __future__ import annotations

import json
from typing import Any


def render(doc: dict[str, Any]) -> str:
    return json.dumps(doc, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
