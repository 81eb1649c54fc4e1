r"""What each declared tolerance takes from the verdicts the tolerance model does not cover, found by
analysing the drawing again with that tolerance removed.

:mod:`coilstage.analysis.params` models nine steady-state rules as batched linear solves, so their
margins are differentiated on the network's factorisation and searched over the corners of the
declared tolerances (:mod:`coilstage.analysis.sensitivities`). The other rules decided at a named
worst case (the switching rules at the largest break, saturation and the ground offset at the largest
current, the nuisance and short-circuit rules at their faults, ...) take
their figures from the whole analysis: the switch-off decay, the field's magnetic circuit, the
windings' steady state. For those, each declared parameter's effect is measured one at a time on the
whole analysis:

* each parameter is held at its nominal value (its range cut to nominal–nominal), and the effect is
  the verdict's margin as decided minus its margin in that analysis
  (:math:`\Delta m_k = m(p) - m(p \text{ with } p_k \text{ at nominal})`, negative where the tolerance
  takes margin);
* that effect is stated over the move from nominal to the end the verdict's worst case used: the end
  that is not nominal where the range is one-sided (cable length 0 to +10 %, fault resistance 0 to
  5 mΩ); where the range reaches both sides of nominal (coil resistance ±5 %, the ambient -30 to
  40 °C) and the parameter moved some verdict, one more analysis with only its high end removed
  tells the verdicts that used the high end (they move) from those that used the low end.

This is the "one at a time" tolerance analysis of the vertex method, exact for each parameter alone
(no linearisation: every figure is the analysis' own), not a derivative; interactions between
parameters are not separated, and no corner search is made (the worst case stays the one the rule
names). An end that gives margin is said in the verdict's deciding lines.

The re-analyses leave out the duty simulation, the field's saturating switch-on and the stages'
switch-on times (``analyse(heating=False, transients=False)``): a rule whose verdicts change without
them is left out, its verdicts noted as not computed, so that no effect is read off a figure the
re-analysis did not make. With ``duty=True`` (``coilstage check --duty-effects``) every re-analysis
simulates the duty too, so the heating rules get their effects (each re-analysis then costs the
duty's simulation: seconds, not a fraction of one).

References
----------
.. [1] J. Vlach, K. Singhal, *Computer Methods for Circuit Analysis and Design*, 2nd ed., Van
   Nostrand Reinhold, 1994, chapter on sensitivity and tolerance analysis (one-at-a-time and vertex
   analysis).
"""

from __future__ import annotations

import dataclasses
from typing import Any

from coilstage.analysis.params import RULES as MODELLED
from coilstage.analysis.params import Parameter, coil_parameters, parameters
from coilstage.analysis.run import Analysis, analyse
from coilstage.checks import RULES
from coilstage.checks.base import UNMOVED, Sensitivity, Status, Verdict, WorstOf, decided_at_worst
from coilstage.drawing.schema import Drawing, Stage, ToleranceSpec
from coilstage.errors import AnalysisError

#: a margin change below this (a fraction: 1e-5 is a thousandth of a point) counts as no effect (as
#: coilstage.analysis.sensitivities.NEGLIGIBLE)
NEGLIGIBLE = 1e-5
#: how the effects were found, for the verdict's sensitivity note
METHOD = "found by analysing again with one tolerance removed at a time (no corner search)"
#: parameters screened together first (one analysis with all of them at nominal), since the named
#: worst cases that read them are those of the model's own rules (the largest fault's battery EMF,
#: resistance and alternator excess; the smallest fault's own resistance; the regulator's temperature
#: and its compensation, which the model alone varies: the named worst cases take the compensation's
#: nominal gradient). Only the speed rests on this: where that analysis moves any verdict,
#: each is analysed on its own. (Two effects cancelling to within a thousandth of a point on every
#: verdict they move would hide both; with independent laws behind them this is not expected.)
SCREEN = frozenset(
    {
        "tolerances.fault_resistance",
        "supply.battery.surface_charge_per_cell",
        "supply.battery.resistance_min_factor",
        "supply.alternator.cold_excess",
        "supply.alternator.regulator_temperature",
        "supply.alternator.compensation_12v",
        "supply.alternator.compensation_24v",
    }
)
#: above this many stages the re-analyses are left out (their cost grows with the drawing; the
#: benchmark benchmarks/bench_worst.py prints it)
MAX_STAGES = 16


def declared(d: Drawing) -> list[Parameter]:
    """The parameters whose effects are measured: the tolerance model's (:func:`parameters`) and each
    coil type's inductance tolerance, which only the switching figures read (the model has no use for
    it)."""
    extra = [p for p in coil_parameters(d, "coils.*.inductance_tolerance", "coil inductance") if p.high > p.low]
    return [*parameters(d), *extra]


def cut(d: Drawing, p: Parameter, low: float, high: float) -> Drawing:
    """The drawing with one parameter's range cut to ``low``–``high``: the environment's ambient range
    for ``environment.ambient``, else a tolerance row the drawing states (``[tolerances]`` takes the
    same key; the shipped row's nominal, source and unit stay)."""
    if p.key == "environment.ambient":
        return _ambient_cut(d, low, high)
    spec = ToleranceSpec(low, high, p.distribution, f"{p.key} (cut for the effects)")
    return dataclasses.replace(d, tolerances={**d.tolerances, p.key: spec})


def _targets(verdicts: list[Verdict]) -> list[Verdict]:
    return [
        v
        for v in verdicts
        if v.worst is not None
        and not v.worst.sensitivities
        and v.rule not in MODELLED
        and v.status is not Status.NOT_CHECKED
        and v.margin is not None
    ]


def _ambient_cut(d: Drawing, low: float, high: float) -> Drawing:
    """The drawing with its ambient range cut to ``low``–``high``, and what the loader took from that
    range where the drawing left it out moved with it: the cold corner at the lowest ambient, and a
    part (or coil) placed in no zone at the highest (``drawing.corners`` and ``drawing.environment``
    set those defaults; a value the drawing states itself stays)."""
    old = d.environment
    zones = dict(old.zones)
    if zones.get("ambient") == old.ambient_max:  # the loader's zone for parts placed in none
        zones["ambient"] = high
    env = dataclasses.replace(old, ambient_min=low, ambient_max=high, zones=zones)
    corners = d.corners
    if corners.cold_ambient == old.ambient_min:  # the lowest ambient, the cold corner's default
        corners = dataclasses.replace(corners, cold_ambient=low)

    def placed(x: Any) -> Any:
        if getattr(x, "zone", None) == "ambient" and getattr(x, "zone_temperature", None) == old.ambient_max:
            return dataclasses.replace(x, zone_temperature=high)
        return x

    coils = {name: placed(c) for name, c in d.coils.items()}
    elements = tuple(
        dataclasses.replace(placed(e), coil=placed(e.coil)) if isinstance(e, Stage) else placed(e) for e in d.elements
    )
    return dataclasses.replace(d, environment=env, corners=corners, coils=coils, elements=elements)


def _plain(verdicts: list[Verdict]) -> list[Verdict]:
    """The verdicts decided at the conditions their rule names, with no worst case built from the
    tolerances (no nominal beside them): their effects are measured too, and their nominal is the
    analysis with every declared tolerance at its nominal value."""
    return [
        v
        for v in verdicts
        if v.worst is None and v.rule not in MODELLED and v.status is not Status.NOT_CHECKED and v.margin is not None
    ]


def _rules(a: Analysis, ids: set[str]) -> list[Verdict]:
    return [v for r in RULES if r.id in ids for v in r.evaluate(a)]


def _margins(vs: list[Verdict]) -> dict[tuple[str, str], float | None]:
    return {(v.rule, v.subject): v.margin for v in vs}


def with_effects(a: Analysis, verdicts: list[Verdict], duty: bool = False) -> list[Verdict]:
    """The verdicts, each one decided at a named worst case outside the tolerance model carrying its
    parameters' effects (largest first) and a deciding line naming the method; the others as given.
    Where the drawing is too large, or a rule reads the duty simulation (unless ``duty``: then the
    re-analyses simulate it too), or a re-analysis cannot be made, the verdicts say so in their
    deciding lines instead."""
    unbounded = {
        (v.rule, v.subject)
        for v in verdicts
        if v.worst is not None and v.rule not in MODELLED and v.status is not Status.NOT_CHECKED and v.margin is None
    }
    verdicts = _note(
        verdicts,
        unbounded,
        "effects not computed: this verdict has no margin to move (its limit is missing or unbounded)",
    )
    plain = _plain(verdicts)
    targets = _targets(verdicts) + plain
    if not targets:
        return verdicts
    d = a.drawing
    if len(d.stages) > MAX_STAGES:
        why = f"effects not computed: re-analysis is left out above {MAX_STAGES} stages"
        return _note(verdicts, {(v.rule, v.subject) for v in targets}, why)
    ids = {v.rule for v in targets}
    # a rule whose verdicts move without the duty simulation, the field's switch-on or the stages'
    # T0.95 cannot be re-analysed without them
    light = dataclasses.replace(a, field=dataclasses.replace(a.field, switch_on=[]))
    if not duty:
        light = dataclasses.replace(light, descent=None, continuous=None)
    if a.switching is not None:
        stages = {
            c: {k: dataclasses.replace(x, t95_alone=None, t95_all=None) for k, x in per.items()}
            for c, per in a.switching.stages.items()
        }
        light = dataclasses.replace(light, switching=dataclasses.replace(a.switching, stages=stages))
    base = _margins(_rules(light, ids))
    heated = {v.rule for v in targets if base.get((v.rule, v.subject)) != v.margin}
    targeted = {(v.rule, v.subject) for v in targets}
    keys = {(v.rule, v.subject) for v in targets if v.rule not in heated}
    decided = {(v.rule, v.subject): v.margin for v in targets if (v.rule, v.subject) in keys}
    wanted = ids - heated
    found: dict[tuple[str, str], list[Sensitivity]] = {k: [] for k in keys}

    def moved(p: Parameter, low: float, high: float) -> dict[tuple[str, str], float]:
        """The verdicts whose margin moves with the parameter's range cut to ``low``–``high``: the
        margin as decided minus the margin so."""
        got = _margins(_rules(analyse(cut(d, p, low, high), heating=duty, transients=False), wanted))
        out = {}
        for k, m0 in decided.items():
            m = got.get(k)
            if m0 is not None and m is not None and abs(m0 - m) > NEGLIGIBLE:
                out[k] = m0 - m
        return out

    try:
        ps = declared(d)
        screened = _screened(d, ps, decided, wanted, duty)
        for p in ps:
            if p.key in screened:
                continue
            n = min(max(p.nominal, p.low), p.high)
            held = moved(p, n, n)  # the parameter at its nominal value
            if not held:
                continue
            # the end each verdict's worst case used: where the range reaches both sides of nominal, the
            # one whose removal moves the verdict (the high end first)
            no_high = moved(p, p.low, n) if p.low < n < p.high else {}
            for k, change in held.items():
                end = p.high if (p.high > n and (p.low == n or k in no_high)) else p.low
                found[k].append(Sensitivity(p.key, p.words, end - n, change))
        plain_keys = {(v.rule, v.subject) for v in plain} & keys
        nominal = _nominal(d, ps, {k[0] for k in plain_keys}, duty) if plain_keys else {}
    except (AnalysisError, ValueError, ArithmeticError) as exc:
        return _note(verdicts, keys, f"effects not computed: a re-analysis failed ({exc})")
    out = []
    for v in verdicts:
        k = (v.rule, v.subject)
        if v.worst is None and k in found:
            out.append(_with_nominal(v, nominal.get(k), found[k]))
        elif v.worst is not None and v.rule in heated and k in targeted:
            why = (
                "effects not computed: this rule reads the duty simulation or a switch-on transient, which the "
                "re-analyses leave out (coilstage check --duty-effects simulates the duty in each)"
            )
            out.append(dataclasses.replace(v, worst=dataclasses.replace(v.worst, deciding=(*v.worst.deciding, why))))
        elif k in found and v.worst is not None:
            effects = tuple(sorted(found[k], key=lambda e: -abs(e.margin_change)))
            lines = [f"effects: {METHOD}", *_not_lowest(effects)]
            worst = dataclasses.replace(v.worst, sensitivities=effects, deciding=(*v.worst.deciding, *lines))
            out.append(dataclasses.replace(v, worst=worst))
        else:
            out.append(v)
    return out


def _nominal(d: Drawing, ps: list[Parameter], ids: set[str], duty: bool = False) -> dict[tuple[str, str], Verdict]:
    """The verdicts of the rules ``ids`` with every declared parameter held at its nominal value (one
    analysis): the nominal beside a verdict its rule decides at conditions it names."""
    held = d
    for p in ps:
        n = min(max(p.nominal, p.low), p.high)
        held = cut(held, p, n, n)
    return {(v.rule, v.subject): v for v in _rules(analyse(held, heating=duty, transients=False), ids)}


#: what a verdict decided at its rule's own conditions carries as its nominal (WorstOf.conditions)
NOMINAL = "every declared tolerance at nominal"
#: the conditions such a verdict is decided at where its rule names none (its corner)
RULES_OWN = "conditions its rule names"


def _not_lowest(effects: list[Sensitivity] | tuple[Sensitivity, ...]) -> list[str]:
    """A deciding line for each tolerance end that gives margin: nearer its nominal value the margin is
    lower, so the verdict's case is not the lowest in that parameter alone (said, not searched)."""
    return [
        f"not the lowest in {e.words}: held at nominal it leaves {e.margin_change * 100:.2g} points less"
        for e in effects
        if e.margin_change > 0
    ]


def _with_nominal(v: Verdict, nominal: Verdict | None, effects: list[Sensitivity]) -> Verdict:
    """A verdict its rule decides at the conditions it names, with the tolerances' effects found: where
    none moves it, its own figures are its nominal (said); where some do, the nominal is the analysis
    with every tolerance at nominal, beside it as for a verdict decided at its worst case (the harsher
    of the two decides, :func:`coilstage.checks.base.decided_at_worst`), its effects listed."""
    effects = sorted(effects, key=lambda e: -abs(e.margin_change))
    lines = [f"effects: {METHOD}"]
    if not effects:
        lines.append(f"{UNMOVED}: its nominal is the case its rule names")
        tag = WorstOf(v.status, v.value, v.margin, NOMINAL, tuple(lines))
        return dataclasses.replace(v, worst=tag, corner=v.corner or RULES_OWN)
    if nominal is None or nominal.status is Status.NOT_CHECKED or nominal.unit != v.unit:
        return v
    lines.append("decided at the conditions its rule names (no worst case built from these tolerances)")
    lines += _not_lowest(effects)
    decided = decided_at_worst(v, nominal, v.corner or RULES_OWN, tuple(lines))
    tag = dataclasses.replace(decided.worst, conditions=NOMINAL, sensitivities=tuple(effects))
    return dataclasses.replace(decided, worst=tag)


def _screened(
    d: Drawing, ps: list[Parameter], decided: dict[tuple[str, str], float | None], wanted: set[str], duty: bool = False
) -> set[str]:
    """The keys of :data:`SCREEN` that move none of the verdicts ``decided``, found with one analysis
    holding all of them at nominal at once (empty where that analysis moves any verdict: each is then
    analysed on its own)."""
    group = [p for p in ps if p.key in SCREEN]
    if len(group) < 2:
        return set()
    held = d
    for p in group:
        n = min(max(p.nominal, p.low), p.high)
        held = cut(held, p, n, n)
    got = _margins(_rules(analyse(held, heating=duty, transients=False), wanted))
    for k, m0 in decided.items():
        m = got.get(k)
        if m0 is not None and (m is None or abs(m0 - m) > NEGLIGIBLE):
            return set()
    return {p.key for p in group}


def _note(verdicts: list[Verdict], keys: set[tuple[str, str]], why: str) -> list[Verdict]:
    return [
        dataclasses.replace(v, worst=dataclasses.replace(v.worst, deciding=(*v.worst.deciding, why)))
        if v.worst is not None and (v.rule, v.subject) in keys
        else v
        for v in verdicts
    ]
