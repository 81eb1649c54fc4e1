"""Steady-state verdicts decided at the worst corner of the declared tolerances where it is worse than
the rule's own worst case: the corner's figures against the scalar analysis of the drawing changed to
that corner (dataclasses.replace, the regulator worked by hand), and sizing's judgement at known corners
against the check's."""

from __future__ import annotations

import dataclasses

import pytest

from coilstage.analysis.params import evaluate, model
from coilstage.analysis.run import analyse
from coilstage.analysis.sensitivities import analyse_sensitivities
from coilstage.checks import RULES, run_checks, with_worst_corners
from coilstage.checks.base import Status
from coilstage.checks.tolerance_corner import CONDITIONS, corners_of
from coilstage.drawing.load import load_drawing
from tests.conftest import drawing_at_sample

COACH = "configs/coach-24v-4stage.toml"


@pytest.fixture(scope="module")
def coach():
    a = analyse(load_drawing(COACH), switching=False, heating=False)
    own = {(v.rule, v.subject): v for rule in RULES for v in rule.evaluate(a)}
    checked = {(v.rule, v.subject): v for v in run_checks(a)}
    return a, own, checked


def test_drop_of_the_last_stage_is_decided_at_the_corner(coach):
    """S4's drop passes at the rule's largest current and warns at the worst corner (coil resistance
    low, harness long, the regulator cold with its steepest compensation): the check says both."""
    _a, own, checked = coach
    before, after = own[("circuit.voltage_drop", "S4")], checked[("circuit.voltage_drop", "S4")]
    assert before.status is Status.PASS and after.status is Status.WARN
    assert after.margin < before.margin
    assert after.corner == CONDITIONS
    assert after.note.startswith(f"pass at the largest current, WARN at the {CONDITIONS}")
    assert after.worst.nominal_status is Status.PASS  # the nominal figure is kept beside it
    assert any(w.startswith(f"{CONDITIONS} (") for w in after.worst.deciding)


def test_the_corner_figure_equals_the_scalar_analysis_of_the_drawing_at_that_corner(coach):
    """The drawing changed to S4's worst corner by hand: each coil's reference resistance and each
    cable's length scaled by its tolerance end (R is proportional to both), coils and cables at the
    corner's ambient, the bus held at U = U_set (1 + tol) + g (θ_reg − 25 °C). Its cold-corner drop
    (analysis.corners through analyse, a scalar solve) against the verdict's value."""
    a, _own, checked = coach
    d = a.drawing
    found = analyse_sensitivities(d, [("circuit.voltage_drop", "S4")])
    col = corners_of(found)[("circuit.voltage_drop", "S4")]
    ps = model(d).params
    changed, _ = drawing_at_sample(d, ps, [col[p.key] for p in ps])
    alt = d.supply.alternator
    bus = alt.setpoint * (1 + col["supply.alternator.tolerance"]) + col["supply.alternator.compensation_24v"] * (
        col["supply.alternator.regulator_temperature"] - 25.0
    )
    at = dataclasses.replace(
        d,
        elements=changed.elements,
        corners=dataclasses.replace(d.corners, cold_ambient=col["environment.ambient"], cold_bus=bus),
        supply=dataclasses.replace(
            d.supply,
            alternator=dataclasses.replace(
                alt, limit_rated=alt.limit_rated * (1 + col["supply.alternator.cold_excess"])
            ),
        ),
    )
    b = analyse(at, switching=False, heating=False)
    drop = next(s.drop_fraction for s in b.corners["cold"].stages if s.id == "S4")
    v = checked[("circuit.voltage_drop", "S4")]
    assert v.value == pytest.approx(100 * drop, rel=1e-9)
    assert v.margin == pytest.approx((d.limits.drop_pass - drop) / d.limits.drop_pass, rel=1e-9)


def test_a_corner_no_worse_than_the_rules_case_leaves_the_verdict():
    """The flawed demo's branch fuse F2 is judged for breaking by its rule (the largest fault, or the
    nominal fault where that is the harsher, with the drawing's own battery resistance): the corner of
    the shipped tolerances finds a higher margin, and the verdict stays the rule's."""
    a = analyse(load_drawing("configs/flawed-retrofit-24v.toml"), switching=False, heating=False)
    own = {(v.rule, v.subject): v for rule in RULES for v in rule.evaluate(a)}
    checked = {(v.rule, v.subject): v for v in run_checks(a)}
    k = ("fuse.breaking_capacity", "F2")
    found = analyse_sensitivities(a.drawing, [k])
    assert found[k].corner.margin > own[k].margin
    assert checked[k].corner == own[k].corner != CONDITIONS
    assert (checked[k].status, checked[k].value, checked[k].margin) == (own[k].status, own[k].value, own[k].margin)


def test_every_decided_verdict_equals_the_model_at_its_corner(coach):
    """Every verdict decided at the corner carries the vectorised model's figures at that corner (one
    evaluation per verdict here, against the batched one of the check), and no verdict decided at
    the corner has a margin above its rule's own."""
    a, own, checked = coach
    found = analyse_sensitivities(a.drawing)
    decided = [k for k, v in checked.items() if v.corner == CONDITIONS]
    assert decided  # the coach has at least the drop above
    for k in decided:
        ev = evaluate(a.drawing, found[k].corner.x[None])[k]
        assert checked[k].margin == pytest.approx(float(ev.margin[0]), rel=1e-12)
        assert checked[k].margin < own[k].margin


def test_sizing_judges_a_candidate_at_known_corners_as_the_check_does(coach):
    """with_worst_corners given the corners found on the same drawing (what sizing does for its
    candidates) decides every steady-state verdict with the same status and margin as the check."""
    a, own, checked = coach
    corners = corners_of(analyse_sensitivities(a.drawing))
    again = {(v.rule, v.subject): v for v in with_worst_corners(a, list(own.values()), corners)}
    for k in corners:
        if k in checked:
            assert again[k].status is checked[k].status, k
            assert again[k].margin == pytest.approx(checked[k].margin, rel=1e-12, abs=1e-15), k
