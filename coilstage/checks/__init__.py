"""The rules, in the order the report lists them, and the function that runs them all."""

from __future__ import annotations

import dataclasses

import numpy as np

from coilstage.analysis.duty import nominal_conditions
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
from coilstage.checks.base import Rule, Sensitivity, Status, Verdict, decided_at_worst
from coilstage.checks.tolerance_corner import corner_figures, decide_at_corner, figures_at
from coilstage.errors import AnalysisError

RULES: list[Rule] = [
    *cables.RULES,
    *protection.RULES,
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


#: the rules whose verdicts read the simulation of the duty profile or of continuous retardation
#: (``Analysis.descent``, ``Analysis.continuous``): an analysis made without it (sizing's screens, the
#: re-analyses of :mod:`coilstage.effects`) cannot judge them; tests/test_effects.py holds the list
#: equal to the rules whose verdicts change when the simulation is left out
DUTY_RULES: tuple[str, ...] = (
    "winding.temperature",
    "winding.time_to_limit",
    "cable.conductor_temperature",
    "battery.charge",
    "fuse.duty_thermal_state",
    "fuse.cyclic_duty",
)


def _sensitivities(vs: VerdictSensitivity) -> tuple[Sensitivity, ...]:
    """The effects of one verdict's parameters, largest first, as the verdict carries them."""
    return tuple(
        Sensitivity(e.parameter.key, e.parameter.words, e.change, e.margin_change)
        for e in sorted(vs.effects, key=lambda e: -abs(e.margin_change))
    )


def with_worst_corners(a: Analysis, verdicts: list[Verdict], corners: dict | None = None) -> list[Verdict]:
    """Each verdict decided at its worst case, with the sensitivities of its margin to every declared
    parameter and the worst corner of the declared tolerances among its deciding inputs (for the rules
    :mod:`coilstage.analysis.params` models; the others keep theirs empty); where that corner is worse
    than the rule's own worst case, the verdict is decided there (:mod:`.tolerance_corner`).

    With ``corners`` ((rule, subject) -> parameter key -> value, :func:`.tolerance_corner.corners_of`
    of another drawing's search) the verdicts are decided at those corners instead, without a search
    or sensitivities: how sizing judges a candidate part at the corners of the drawing it changes."""
    keys = [(v.rule, v.subject) for v in verdicts if v.worst is not None and v.status is not Status.NOT_CHECKED]
    if not keys:
        return verdicts
    if corners is not None:
        try:
            got = figures_at(a.drawing, {k: corners[k] for k in keys if k in corners})
        except (np.linalg.LinAlgError, ValueError, KeyError, AnalysisError):
            return verdicts
        return [decide_at_corner(v, got.get((v.rule, v.subject))) for v in verdicts]
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
    figures = corner_figures(a.drawing, found)
    out = []
    for v in verdicts:
        vs = found.get((v.rule, v.subject)) if v.worst is not None else None
        if vs is None:
            out.append(v)
            continue
        v = decide_at_corner(v, figures.get((v.rule, v.subject)))
        worst = dataclasses.replace(
            v.worst, deciding=(*v.worst.deciding, *corner_words(vs)), sensitivities=_sensitivities(vs)
        )
        out.append(dataclasses.replace(v, worst=worst))
    return out


#: where the heating rules are decided (:func:`coilstage.analysis.duty.duty_conditions`)
DUTY_WORST = "low end of the coils' resistance tolerance"


def with_duty_nominal(a: Analysis, verdicts: list[Verdict]) -> list[Verdict]:
    """The heating rules' verdicts (:data:`DUTY_RULES`, decided on the duty simulated with each coil at
    the low end of its resistance tolerance) with their nominal beside them: the same rules read off
    the analysis' nominal simulations (``Analysis.descent_nominal``, ``continuous_nominal``: the coils
    as stated). The verdicts as given where the analysis made no nominal simulation."""
    if a.descent_nominal is None or a.descent is None:
        return verdicts
    # a nominal made for another descent (an Analysis copied with a new one) is not this one's
    if a.descent_nominal.duty != a.descent.duty or a.descent_nominal.conditions != nominal_conditions(
        a.descent.conditions
    ):
        return verdicts
    nominal_a = dataclasses.replace(a, descent=a.descent_nominal, continuous=a.continuous_nominal or a.continuous)
    nominal = {(v.rule, v.subject): v for r in RULES if r.id in DUTY_RULES for v in r.evaluate(nominal_a)}
    coils = dict(a.descent.conditions.words).get("coils")
    deciding = (f"coils {coils}",) if coils else ()
    out = []
    for v in verdicts:
        n = nominal.get((v.rule, v.subject))
        if (
            v.rule in DUTY_RULES
            and v.worst is None
            and n is not None
            and Status.NOT_CHECKED not in (v.status, n.status)
            and n.unit == v.unit
        ):
            v = decided_at_worst(v, n, DUTY_WORST)  # the note names its conditions already
            if v.corner == DUTY_WORST:  # decided at the low end (not where the nominal is the harsher)
                v = dataclasses.replace(v, worst=dataclasses.replace(v.worst, deciding=deciding))
        out.append(v)
    return out


def run_checks(a: Analysis) -> list[Verdict]:
    """Every verdict of every rule on one analysed drawing; a verdict decided at its worst case carries
    the sensitivities of its margin to the declared parameters, largest first; the heating rules'
    carry their nominal (:func:`with_duty_nominal`)."""
    out: list[Verdict] = []
    for rule in RULES:
        out.extend(rule.evaluate(a))
    return with_worst_corners(a, with_duty_nominal(a, out))


__all__ = [
    "DUTY_RULES",
    "DUTY_WORST",
    "RULES",
    "Rule",
    "Status",
    "Verdict",
    "run_checks",
    "with_duty_nominal",
    "with_worst_corners",
]
