"""Joint rules: a lug, stud, connector or fuse holder's current against its rating derated for its zone,
its I²R heat, a lug's conductor range against its cable. Before these rules a joint was a bare resistance
in the network and nothing judged it (every case below passed silently). Sources beside each figure."""

from __future__ import annotations

import math

import pytest

from coilstage import check
from coilstage.analysis.joints import joint_current
from coilstage.checks import Status
from coilstage.checks.joints import JOINT_CURRENT, JOINT_HEAT, JOINT_LUG
from coilstage.drawing.load import parse_drawing
from coilstage.drawing.schema import Joint

from .conftest import COACH

COACH_TEXT = COACH.read_text(encoding="utf-8")


def with_lug(**keys: str) -> str:
    """The coach with a lug J1 between W1 and S1 (W1 ends on it), keys overriding its defaults."""
    i = COACH_TEXT.index('id = "W1"')
    j = COACH_TEXT.index('to = "S1+"', i)
    text = COACH_TEXT[:j] + 'to = "J1A"' + COACH_TEXT[j + len('to = "S1+"') :]
    spec = {
        "joint": '"lug"',
        "resistance": '"0.2 mohm"',
        "rating": '"100 A"',
        "rated_ambient": '"25 degC"',
        "zone": '"retarder_box"',
        "conductor_range": '["16 mm^2", "16 mm^2"]',
        "cable": '"W1"',
    }
    spec.update(keys)
    body = "".join(f"{k} = {v}\n" for k, v in spec.items() if v)
    return text + f'\n[[harness]]\nid = "J1"\nkind = "joint"\nfrom = "J1A"\nto = "S1+"\n{body}'


def analysed(text: str):
    a, _ = check(parse_drawing(text, "case"))
    return a


def one(rule, a, subject="J1"):
    (v,) = [v for v in rule.evaluate(a) if v.subject == subject]
    return v


# ---------------------------------------------------------------- current against the derated rating


def test_joint_current_against_its_derated_rating():
    # No derating given: rise proportional to I^2 (Joule heating) up to a tin contact's 105 degC upper
    # limiting temperature (IEC 60512-5-2 Test 5b reading; the ULT from memory): 100 A at 25 degC holds
    # 100 x sqrt((105 - 70)/(105 - 25)) = 66.14 A in the 70 degC retarder box (hand-worked).
    a = analysed(with_lug())
    v = one(JOINT_CURRENT, a)
    assert v.limit == pytest.approx(100 * math.sqrt(35 / 80), rel=1e-12)
    assert v.limit == pytest.approx(66.14, abs=0.01)
    i = a.worst.largest_current["J1"]
    assert v.value == pytest.approx(i) and v.status is Status.PASS
    assert i == pytest.approx(a.worst.largest_current["W1"])  # in series with W1: the same current
    # boundary pins: the rating that puts the derated limit 0.1 % above / below the joint's current
    for k, want in ((1.001, Status.PASS), (0.999, Status.FAIL)):
        r = k * i / math.sqrt(35 / 80)
        assert one(JOINT_CURRENT, analysed(with_lug(rating=f'"{r:.5f} A"'))).status is want, k


def test_joint_current_with_the_makers_derating():
    # Maker's derating 80 % at 85 degC, linear from 25 degC: at 70 degC 1 - 0.2 x 45/60 = 0.85 (hand-worked).
    # A 60 A lug passed nothing before; now 51 A against the 59 A branch (S1 alone, largest current): FAIL.
    a = analysed(with_lug(rating='"60 A"', derating='"80 % @ 85 degC"'))
    v = one(JOINT_CURRENT, a)
    assert v.limit == pytest.approx(60 * 0.85, rel=1e-12)
    assert v.status is Status.FAIL and "derated linearly" in v.note


def test_joint_not_in_the_network_takes_its_cables_current():
    # A joint element that the network does not hold yet: its cable's current, and it says so.
    j = Joint(
        id="JX",
        kind="joint",
        a="X",
        b="Y",
        where="harness[99]",
        resistance=1e-4,
        joint_kind="lug",
        rating=100.0,
        rated_ambient=25.0,
        derated=None,
        zone="z",
        zone_temperature=70.0,
        cable="W1",
    )
    cur = joint_current(j, {"W1": 58.0}, {"W1": 61.0})
    assert (cur.nominal, cur.worst) == (58.0, 61.0)
    assert "the cable it terminates, W1" in cur.source
    assert joint_current(j, {}, None) is None


# ---------------------------------------------------------------- I²R heat


def test_joint_heat_by_hand_and_its_limits():
    # Joule's law P = I^2 R: (59 A)^2 x 0.2 mohm = 0.70 W, within 2 W (common practice, no source).
    a = analysed(with_lug())
    i = a.worst.largest_current["J1"]
    v = one(JOINT_HEAT, a)
    assert v.value == pytest.approx(i * i * 0.2e-3, rel=1e-12)
    assert v.status is Status.PASS and "common practice" in v.note
    # a degraded joint's figure is shown: 0.5 mohm ring lug on a stud (from memory)
    assert f"{i * i * 0.5e-3:.1f} W" in v.note
    # boundary pins at 2 W (pass/warn) and 5 W (warn/fail), 1 % either side (a larger joint resistance
    # lowers the branch current by under 0.2 %, so the pins hold)
    for watts, k, want in ((2.0, 0.99, Status.PASS), (2.0, 1.01, Status.WARN), (5.0, 0.99, Status.WARN)):
        r = k * watts / (i * i)
        assert one(JOINT_HEAT, analysed(with_lug(resistance=f'"{r * 1e3:.6f} mohm"'))).status is want
    r = 1.01 * 5.0 / (i * i)
    v = one(JOINT_HEAT, analysed(with_lug(resistance=f'"{r * 1e3:.6f} mohm"')))
    assert v.status is Status.FAIL


# ---------------------------------------------------------------- lug against its cable


@pytest.mark.parametrize(
    ("rng", "want", "words"),
    # DIN 46235 lugs are marked with the one cross-section they take (common practice): W1 is 16 mm².
    [
        ('["16 mm^2", "16 mm^2"]', Status.PASS, "within"),
        ('["10 mm^2", "16 mm^2"]', Status.PASS, "within"),
        ('["25 mm^2", "35 mm^2"]', Status.FAIL, "36% smaller"),  # 16/25 - 1 = -36 %
        ('["6 mm^2", "10 mm^2"]', Status.FAIL, "60% larger"),  # 16/10 - 1 = +60 %
        ('["16.2 mm^2", "25 mm^2"]', Status.FAIL, "loose"),  # just outside: 1 % above the conductor
    ],
)
def test_lug_range_against_its_cable(rng, want, words):
    v = one(JOINT_LUG, analysed(with_lug(conductor_range=rng)))
    assert v.status is want and words in v.note


def test_lug_without_a_range_is_not_checked():
    v = one(JOINT_LUG, analysed(with_lug(conductor_range="")))
    assert v.status is Status.NOT_CHECKED and "conductor_range" in v.note
