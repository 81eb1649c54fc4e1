"""The rules, in the order the report lists them, and the function that runs them all."""

from __future__ import annotations

from coilstage.analysis.run import Analysis
from coilstage.checks import cables, field, fuse_timing, protection, supply, switching, thermal
from coilstage.checks.base import Rule, Status, Verdict

RULES: list[Rule] = [
    *cables.RULES,
    *protection.RULES,
    *fuse_timing.RULES,
    *switching.RULES,
    *thermal.RULES,
    *field.RULES,
    *supply.RULES,
]


def run_checks(a: Analysis) -> list[Verdict]:
    """Every verdict of every rule on one analysed drawing."""
    out: list[Verdict] = []
    for rule in RULES:
        out.extend(rule.evaluate(a))
    return out


__all__ = ["RULES", "Rule", "Status", "Verdict", "run_checks"]
