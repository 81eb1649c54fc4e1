"""The effects of each declared tolerance on the verdicts outside the tolerance model, by re-analysis
(coilstage.effects).

References beside each check: the closed-form RL decay through a constant clamp (energy and release
time are proportional to L at a fixed break current: Alexander & Sadiku, Fundamentals of Electric
Circuits, 5th ed., section 7.6), and the same drawing with the tolerance stated exact in its own text,
read and checked through the loader (an independent path from the module's own cut of the range).
"""

from __future__ import annotations

import dataclasses

import pytest

from coilstage import check
from coilstage.checks.base import Rule, Status, Verdict, WorstOf
from coilstage.drawing.load import parse_drawing
from coilstage.effects import MAX_STAGES, NEGLIGIBLE, cut, declared, with_effects

from .conftest import COACH, TRUCK, drawing_text


def _verdict(vs, rule: str, subject: str) -> Verdict:
    return next(v for v in vs if v.rule == rule and v.subject == subject)


@pytest.fixture(scope="module")
def coach():
    a, vs = check(parse_drawing(COACH.read_text(), str(COACH)))
    return a, with_effects(a, vs)


def _effect(v: Verdict, key_end: str):
    return next(s for s in v.worst.sensitivities if s.parameter.endswith(key_end))


def test_inductance_effect_on_energy_and_release_is_the_closed_form_ratio(coach):
    # At a fixed break current the clamp energy U0(τI0 − U0 t0/R) and the release time τ·ln(...) are both
    # proportional to L (τ = L/R, t0 = τ ln(1 + I0R/U0)): with the inductance held at nominal instead of
    # +20 %, each figure is 1/1.2 of the worst case's, so the margin changes by (1 − 1/1.2)·value/limit.
    _, vs = coach
    for rule, subject in (("suppressor.rating", "S1 energy"), ("stage.release_time", "S1")):
        v = _verdict(vs, rule, subject)
        e = _effect(v, "inductance_tolerance")
        assert e.change == pytest.approx(0.20)
        # rel 1e-9: the same figures in the same law, round-off only
        assert e.margin_change == pytest.approx(-(1 - 1 / 1.2) * v.value / v.limit, rel=1e-9)
        # largest effect first (the coldest ambient leads: the cold corner follows the ambient range)
        sizes = [abs(x.margin_change) for x in v.worst.sensitivities]
        assert e in v.worst.sensitivities and sizes == sorted(sizes, reverse=True)


def test_effect_equals_a_drawing_that_states_the_tolerance_exact(coach):
    # The coil resistance tolerance stated as "0 %" in the drawing's own [tolerances] section, read by
    # the loader: the verdict's margin there is the margin with that tolerance removed, so the decided
    # margin minus it is the effect the module reports.
    _, vs = coach
    text = COACH.read_text() + '\n[tolerances]\ncoil_resistance = "0 %"\n'
    _, exact = check(parse_drawing(text, "coach, exact coils"))
    for rule, subject in (("suppressor.rating", "S1 peak current"), ("field.saturation", "S1")):
        v = _verdict(vs, rule, subject)
        e = _effect(v, "resistance_tolerance")
        # rel 1e-9: the same analysis of the same network, round-off only
        assert e.margin_change == pytest.approx(v.margin - _verdict(exact, rule, subject).margin, rel=1e-9)
        assert e.change == pytest.approx(-0.05)  # the largest break takes the low end


def test_two_sided_tolerance_names_the_end_its_worst_case_used(coach):
    # Coil resistance ±5 %: the largest break takes the low end (more current), braking retained at the
    # lowest bus the high end (hot coils at +5 % draw less); each effect is stated over its own end.
    _, vs = coach
    assert _effect(_verdict(vs, "suppressor.rating", "S1 peak current"), "resistance_tolerance").change < 0
    braking = _verdict(vs, "field.braking_retained", "retarder")
    e = _effect(braking, "resistance_tolerance")
    assert e.change == pytest.approx(0.05) and e.margin_change < 0
    # an end that gives margin is said: its worst case is not the lowest in that parameter alone
    gives = [s for s in braking.worst.sensitivities if s.margin_change > 0]
    for s in gives:
        assert any(x.startswith(f"not the lowest in {s.words}") for x in braking.worst.deciding)


def test_every_effect_is_above_the_negligible_and_models_nothing_twice(coach):
    _, vs = coach
    from coilstage.analysis.params import RULES as MODELLED

    with_effects_ = [v for v in vs if v.worst is not None and v.rule not in MODELLED and v.worst.sensitivities]
    assert len(with_effects_) >= 20
    for v in with_effects_:
        keys = [s.parameter for s in v.worst.sensitivities]
        assert len(keys) == len(set(keys))
        assert all(abs(s.margin_change) > NEGLIGIBLE for s in v.worst.sensitivities)
        changes = [abs(s.margin_change) for s in v.worst.sensitivities]
        assert changes == sorted(changes, reverse=True)


def test_declared_includes_each_coil_types_inductance():
    d = parse_drawing(TRUCK.read_text(), str(TRUCK))
    keys = [p.key for p in declared(d)]
    assert any(k.startswith("coils.") and k.endswith(".inductance_tolerance") for k in keys)
    # the cut is a tolerance the drawing states, read by the analysis as the drawing's own row
    p = next(p for p in declared(d) if p.key.endswith("inductance_tolerance"))
    assert cut(d, p, 0.0, 0.0).tolerances[p.key].high == 0.0
    amb = next(p for p in declared(d) if p.key == "environment.ambient")
    assert cut(d, amb, 25.0, 25.0).environment.ambient_min == 25.0


def test_a_rule_that_reads_the_duty_simulation_is_left_out(monkeypatch, coach):
    # A rule whose verdict moves without the duty simulation cannot be re-analysed without it: its
    # verdicts say so instead of carrying an effect read off a figure the re-analysis did not make.
    import coilstage.effects as effects

    a, vs = coach

    def reads_descent(an) -> list[Verdict]:
        value = 1.0 if an.descent is not None else 2.0
        v = Verdict("test.reads_descent", "X", Status.PASS, value, 10.0, "A", (10.0 - value) / 10.0, "", "", "x")
        return [dataclasses.replace(v, worst=WorstOf(Status.PASS, value, 0.9, "x"))]

    rule = Rule("test.reads_descent", "reads the descent", "", reads_descent)
    monkeypatch.setattr(effects, "RULES", [*effects.RULES, rule])
    base = with_effects(a, [*vs, *reads_descent(a)])
    v = _verdict(base, "test.reads_descent", "X")
    assert not v.worst.sensitivities
    assert any(x.startswith("effects not computed: this rule reads the duty simulation") for x in v.worst.deciding)


def test_above_the_stage_cap_the_effects_are_left_out_and_said():
    d = parse_drawing(drawing_text(stages=MAX_STAGES + 1), "many stages")
    a, vs = check(d)
    out = with_effects(a, vs)
    noted = [v for v in out if v.worst is not None and any("left out above" in x for x in v.worst.deciding)]
    assert noted and all(not v.worst.sensitivities for v in noted if v.rule == "suppressor.rating")


@pytest.mark.parametrize("path", [COACH, TRUCK], ids=["coach", "truck"])
def test_no_rule_reads_the_transients(path):
    # The field's saturating switch-on and the stages' T0.95 are shown in the report and read by no
    # rule: every verdict is the same with and without them (the re-analyses of the effects and
    # sizing's screens leave them out on that ground).
    from coilstage.analysis.run import analyse
    from coilstage.checks import RULES

    d = parse_drawing(path.read_text(), str(path))
    full, light = analyse(d), analyse(d, transients=False)
    assert light.field.switch_on == []  # (the truck's coils have no magnetic circuit: empty in both)
    assert all(x.t95_alone is None for per in light.switching.stages.values() for x in per.values())
    got = [(v.rule, v.subject, v.status, v.value, v.margin, v.note) for r in RULES for v in r.evaluate(light)]
    want = [(v.rule, v.subject, v.status, v.value, v.margin, v.note) for r in RULES for v in r.evaluate(full)]
    assert got == want


def _no_alternator(text: str) -> str:
    """A drawing's text without its alternator: the battery alone holds the bus (no regulator
    tolerance to state, so every declared tolerance can be stated exact through the loader)."""
    import re

    return re.sub(r"\[supply.alternator\]\n(?:[a-z_]+ = .*\n)+", "", text)


def test_a_verdict_no_tolerance_enters_is_its_own_nominal(coach):
    # cable.temperature_class is decided at the stated zone against the class limit: no declared
    # tolerance enters it. The re-analyses show it (no effect), and the verdict says so with its own
    # figures as the nominal: its margin is unchanged and it carries no sensitivity.
    from coilstage.checks.base import UNMOVED

    _, vs = coach
    v = _verdict(vs, "cable.temperature_class", "W1")
    assert v.worst is not None and not v.worst.sensitivities
    assert any(x.startswith(UNMOVED) for x in v.worst.deciding)
    assert (v.worst.nominal_status, v.worst.nominal_value, v.worst.nominal_margin) == (v.status, v.value, v.margin)


def test_a_verdict_at_its_rules_own_conditions_gets_the_all_nominal_drawing_as_nominal():
    # fuse.coordination reads the design current at the largest-current case, and names no nominal: the
    # re-analyses give its effects, and its nominal is the drawing with every declared tolerance at
    # nominal. The reference is that drawing written out and read by the loader: the ambient range at
    # its nominal 25 °C (the cold corner follows it, as the loader's default), the coils exact.
    text = _no_alternator(drawing_text(stages=2).replace('rating = "300 A"', 'rating = "60 A"', 1))
    a, vs = check(parse_drawing(text, "generated, 60 A main fuse"))
    v = _verdict(with_effects(a, vs), "fuse.coordination", "FM")
    exact = text.replace(
        'ambient_min = "-30 degC"\nambient_max = "40 degC"', 'ambient_min = "25 degC"\nambient_max = "25 degC"'
    )
    assert exact != text
    exact += '\n[tolerances]\ncoil_resistance = "0 %"\n'
    _, vs_exact = check(parse_drawing(exact, "generated, every tolerance at nominal"))
    w = _verdict(vs_exact, "fuse.coordination", "FM")
    # rel 1e-9: the same analysis of the same network reached two ways (round-off only)
    assert v.worst.nominal_margin == pytest.approx(w.margin, rel=1e-9)
    assert v.worst.nominal_status is w.status is Status.PASS and v.status is Status.FAIL
    # the coldest ambient and the low coil ends take the margin (the design current rises)
    keys = {s.parameter: s for s in v.worst.sensitivities}
    assert keys["environment.ambient"].change == pytest.approx(-55.0) and keys["environment.ambient"].margin_change < 0
    assert v.note.startswith("pass nominally, FAIL at")


def test_ambient_cut_moves_what_the_loader_took_from_the_ambient():
    # The cold corner's ambient and a part placed in no zone come from the ambient range where the
    # drawing leaves them out: cutting the range moves them as reading the cut drawing would.
    text = drawing_text(stages=1)
    d = parse_drawing(text, "generated")
    amb = next(p for p in declared(d) if p.key == "environment.ambient")
    got = cut(d, amb, 25.0, 25.0)
    want = parse_drawing(
        text.replace(
            'ambient_min = "-30 degC"\nambient_max = "40 degC"', 'ambient_min = "25 degC"\nambient_max = "25 degC"'
        ),
        "generated",
    )
    assert got.corners == want.corners and got.environment == want.environment
    assert [getattr(e, "zone_temperature", None) for e in got.elements] == [
        getattr(e, "zone_temperature", None) for e in want.elements
    ]


@pytest.mark.parametrize("path", [COACH, TRUCK], ids=["coach", "truck"])
def test_duty_rules_are_the_rules_that_read_the_duty_simulation(path):
    # checks.DUTY_RULES (sizing's screens and the reports rely on it): exactly the rules whose verdicts
    # change when the analysis leaves the duty simulation out.
    from coilstage.analysis.run import analyse
    from coilstage.checks import DUTY_RULES, RULES

    d = parse_drawing(path.read_text(), str(path))
    full, light = analyse(d), analyse(d, heating=False)

    def figures(a):
        return {(v.rule, v.subject): (v.status, v.value, v.margin, v.note) for r in RULES for v in r.evaluate(a)}

    f, li = figures(full), figures(light)
    moved = {k[0] for k in f if f[k] != li.get(k)}
    assert moved <= set(DUTY_RULES)
    assert moved == set(DUTY_RULES) or path is TRUCK  # the coach reads every one of them
