"""analysis.run.rerated: an analysis made again for a drawing that changes only ratings that enter no
network equals a fresh analysis of that drawing, verdict for verdict (the reference is the whole
``analyse`` of the changed drawing, an independent path through every phase)."""

from __future__ import annotations

import pytest

from coilstage.analysis.run import analyse, rerated
from coilstage.checks import RULES
from coilstage.drawing.load import parse_drawing
from coilstage.sizing import RATING_KEYS

from .conftest import COACH, TRUCK, set_key

TEXT = COACH.read_text(encoding="utf-8")
TRUCK_TEXT = TRUCK.read_text(encoding="utf-8")


def _verdicts(a):
    return {(v.rule, v.subject): v for r in RULES for v in r.evaluate(a)}


CASES = [
    (TRUCK_TEXT, "K1", "rating_12v", '"100 A"'),  # a 12 V system's relay contact rating
    *(
        (TEXT, *case)
        for case in [
            ("K1", "rating_24v", '"90 A"'),  # a relay's contact rating
            ("K1", "derating", '"60 % @ 85 degC"'),  # its derating
            ("K1", "voltage_rating", '"60 V"'),  # its switching voltage
            ("F1", "breaking_capacity", '"2 kA"'),  # a fuse's breaking capacity
            ("F1", "voltage_rating", '"24 V"'),  # its voltage rating
            ("F1", "rating", '"50 A"'),  # a fuse's rating (its resistance is stated apart)
            ("F-MAIN", "rating", '"200 A"'),  # the main fuse's rating
            ("F1", "type", '"single-bolt"'),  # a fuse's type (its melting curve)
        ]
    ),
]


def test_every_key_sizing_judges_on_an_analysis_made_is_held_here():
    # sizing judges a candidate that changes only these keys without solving it again
    # (sizing.Bench.rated): each must be one of the cases below
    kinds = {"K": "relay", "F": "fuse"}
    held = {(kinds[elem[0]], key) for _, elem, key, _ in CASES}
    assert {(kind, key) for kind, keys in RATING_KEYS.items() for key in keys} <= held


@pytest.mark.parametrize(("text", "elem", "key", "value"), CASES)
def test_rerated_equals_a_fresh_analysis(text, elem, key, value):
    base = analyse(parse_drawing(text, "demo"))
    d2 = parse_drawing(set_key(text, elem, key, value), "demo, one rating changed")
    got, want = _verdicts(rerated(base, d2)), _verdicts(analyse(d2))
    assert got.keys() == want.keys()
    before = _verdicts(base)
    changed = 0
    for k, w in want.items():
        g = got[k]
        assert (g.status, g.value, g.limit, g.margin, g.note) == (w.status, w.value, w.limit, w.margin, w.note), k
        changed += g != before.get(k)
    assert changed  # the edit moved some verdict: the test can tell a stale figure from a fresh one
