"""The rules, in the order the report lists them, and the function that runs them all."""

from __future__ import annotations

import dataclasses

import numpy as np

from coilstage.analysis.params import evaluate
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
        out.append(_at_corner(a, dataclasses.replace(v, worst=worst), vs))
    return out


#: The rules whose verdict the corner search decides where its corner is worse: those whose model in
#: :mod:`coilstage.analysis.params` is the rule's own state of the vehicle (the duty network at the
#: regulator's high end for the drop, the low bus, the largest fault). Cable, fuse and relay duty are
#: judged in one consistent vehicle state swept over the ambient (zones following the ambient), which
#: the corner model does not hold; for them the corner's margin is a deciding input only.
CORNER_DECIDES = frozenset({"circuit.voltage_drop", "supply.bus_minimum", "fuse.breaking_capacity"})
#: the corner search's status codes (analysis.params.Evaluated.status)
_STATUS = {0: Status.PASS, 1: Status.WARN, 2: Status.FAIL}
_RANK = {Status.PASS: 0, Status.WARN: 1, Status.FAIL: 2}
#: where the corner's margin is lower than the view's by less than this and its status is the same, the
#: view's verdict stands (half a point: the report prints margins to the whole point, so a smaller
#: difference would move the words and not the figure); the corner's margin is among its deciding inputs
_SAME_MARGIN = 0.005


def _at_corner(a: Analysis, v: Verdict, vs: VerdictSensitivity) -> Verdict:
    """The verdict decided at the worst corner of the declared tolerances where that corner is worse
    than the worst-case view the rule read: a PASS must hold at every combination of the tolerances
    the drawing declares (or the shipped defaults stand for), so the lower margin decides, with the
    view's figure kept in the note."""
    c = vs.corner
    if v.rule not in CORNER_DECIDES:
        return v
    status = _STATUS[int(c.status)]
    if v.margin is None or _RANK[status] < _RANK.get(v.status, 0) or c.margin >= v.margin:
        return v
    if _RANK[status] == _RANK.get(v.status, 0) and c.margin >= v.margin - _SAME_MARGIN:
        return v
    ev = evaluate(a.drawing, c.x[None, :]).get((v.rule, v.subject))
    value, limit = v.value, v.limit
    if ev is not None and ev.unit == v.unit:
        value, limit = float(ev.value[0]), float(ev.limit)
    view = f"the {v.corner}" if v.corner else "the rule's own worst-case view"
    note = (
        f"{status.value.upper()} at the worst corner of the declared tolerances (margin {c.margin:.1%}; "
        f"{view} alone gives {v.margin:.1%}): {v.note}"
    )
    return dataclasses.replace(
        v,
        status=status,
        value=value,
        limit=limit,
        margin=float(c.margin),
        note=note,
        corner="worst corner of the declared tolerances",
    )


def run_checks(a: Analysis) -> list[Verdict]:
    """Every verdict of every rule on one analysed drawing; a verdict decided at its worst case carries
    the sensitivities of its margin to the declared parameters, largest first."""
    out: list[Verdict] = []
    for rule in RULES:
        out.extend(rule.evaluate(a))
    return _with_sensitivities(a, out)


__all__ = ["RULES", "Rule", "Status", "Verdict", "run_checks"]
