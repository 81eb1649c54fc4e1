"""The action list: what a fitter must change, built from the verdicts of a report document.

Failures first, grouped by the part they concern (in the order the report meets them); then the
warnings, grouped the same way; then what could not be checked for missing data, apart. Each item
keeps its verdict's rule, subject, figures, reason and clause, and a ``suggestion`` slot (text, or
None) that a later step may fill with what would pass.
"""

from __future__ import annotations

from typing import Any

GROUPS = (("fail", "failures"), ("warn", "warnings"), ("not checked", "missing"))


def part_of(subject: str) -> str:
    """The part a verdict concerns: ``"F2 → W2"`` -> ``"F2"``; ``"alternator (idle)"`` -> ``"alternator"``."""
    head = subject.split(" → ", 1)[0]
    return head.split(" (", 1)[0].strip() or subject


def build(doc: dict[str, Any]) -> dict[str, list[dict[str, Any]]]:
    """``{"failures": [...], "warnings": [...], "missing": [...]}``; each a list of
    ``{"part": id, "items": [verdict dict + "suggestion"]}`` in order of first appearance."""
    out: dict[str, list[dict[str, Any]]] = {}
    for status, name in GROUPS:
        groups: dict[str, dict[str, Any]] = {}
        for v in doc["verdicts"]:
            if v["status"] != status:
                continue
            p = part_of(v["subject"])
            g = groups.setdefault(p, {"part": p, "items": []})
            g["items"].append({**v, "suggestion": suggestion_of(v)})
        out[name] = list(groups.values())
    return out


def suggestion_of(v: dict[str, Any]) -> str | None:
    """The verdict's suggestion; where suggestions were asked for (the verdict carries ``suggested``)
    and no part answers a failing or warning verdict, what sizing cannot change says so instead:
    which part, that sizing does not change it, what would have to change
    (:func:`coilstage.sizing.cannot_change_text`)."""
    if v.get("suggestion") or "suggested" not in v:
        return v.get("suggestion")
    from coilstage.sizing import cannot_change_text

    def fig(q: Any) -> tuple[float | None, str | None]:
        return (q.get("value"), q.get("unit")) if isinstance(q, dict) else (q, v.get("unit"))

    (value, unit), (limit, _) = fig(v.get("value")), fig(v.get("limit"))
    return cannot_change_text(v["rule"], v["subject"], v["status"], value, limit, unit)


def count(actions: dict[str, list[dict[str, Any]]], name: str) -> int:
    return sum(len(g["items"]) for g in actions[name])
