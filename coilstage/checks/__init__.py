"""The rules, in the order the report lists them, and the function that runs them all."""

from __future__ import annotations

import dataclasses

import numpy as np

from coilstage.analysis.run import Analysis
from coilstage.analysis.sensitivities import VerdictSensitivity, analyse_sensitivities, corner_words
from coilstage.checks import (
    cables,
    coordination,
    cyclic,
    field,
    fuse_timing,
    ground,
    joints,
    overvoltage,
    protection,
    supply,
    switching,
    thermal,
)
from coilstage.checks.base import Rule, Sensitivity, Status, Verdict
from coilstage.errors import AnalysisError

#: relay.voltage_rating is judged in checks/switching.py (what the opening contact sees: the highest bus
#: or the load dump that applies, plus the suppressor's voltage), where relay.inductive_break reads
#: the same figure; the plain rating-against-bus form in checks/protection.py is not registered
_SUPERSEDED = {("protection", "relay.voltage_rating")}

RULES: list[Rule] = [
    *cables.RULES,
    *[r for r in protection.RULES if ("protection", r.id) not in _SUPERSEDED],
    *coordination.RULES,
    *fuse_timing.RULES,
    *cyclic.RULES,
    *switching.RULES,
    *switching.NEW_RULES,
    *joints.RULES,
    *ground.RULES,
    *thermal.RULES,
    *overvoltage.RULES,
    *field.RULES,
    *supply.RULES,
]


def _sensitivities(vs: VerdictSensitivity) -> tuple[Sensitivity, ...]:
    """The effects of one verdict's parameters, largest first, as the verdict carries them."""
    return tuple(
        Sensitivity(e.parameter.key, e.parameter.words, e.change, e.margin_change)
        for e in sorted(vs.effects, key=lambda e: -abs(e.margin_change))
    )


def _with_sensitivities(a: Analysis, verdicts: list[Verdict]) -> list[Verdict]:
    """Each verdict decided at its worst case, with the sensitivities of its margin to every declared
    parameter and the worst corner of the declared tolerances among its deciding inputs (for the rules
    :mod:`coilstage.analysis.params` models; the others keep theirs empty)."""
    keys = [(v.rule, v.subject) for v in verdicts if v.worst is not None and v.status is not Status.NOT_CHECKED]
    if not keys:
        return verdicts
    try:
        found = analyse_sensitivities(a.drawing, keys)
    except (np.linalg.LinAlgError, ValueError, KeyError, AnalysisError) as exc:
        why = f"sensitivities not computed: {exc}"
        return [
            dataclasses.replace(v, worst=dataclasses.replace(v.worst, deciding=(*v.worst.deciding, why)))
            if v.worst is not None
            else v
            for v in verdicts
        ]
    out = []
    for v in verdicts:
        vs = found.get((v.rule, v.subject)) if v.worst is not None else None
        if vs is None:
            out.append(v)
            continue
        worst = dataclasses.replace(
            v.worst, deciding=(*v.worst.deciding, *corner_words(vs)), sensitivities=_sensitivities(vs)
        )
        out.append(dataclasses.replace(v, worst=worst))
    return out


def run_checks(a: Analysis) -> list[Verdict]:
    """Every verdict of every rule on one analysed drawing; a verdict decided at its worst case carries
    the sensitivities of its margin to the declared parameters, largest first."""
    out: list[Verdict] = []
    for rule in RULES:
        out.extend(rule.evaluate(a))
    return _with_sensitivities(a, out)


__all__ = ["RULES", "Rule", "Status", "Verdict", "run_checks"]
