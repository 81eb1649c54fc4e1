"""analysis.run.rerated: an analysis made again for a drawing that changes only ratings that enter no
network equals a fresh analysis of that drawing, verdict for verdict (the reference is the whole
``analyse`` of the changed drawing, an independent path through every phase)."""

from __future__ import annotations

import pytest

from coilstage.analysis.run import analyse, rerated
from coilstage.checks import RULES
from coilstage.drawing.load import parse_drawing

from .conftest import COACH, set_key

TEXT = COACH.read_text(encoding="utf-8")


def _verdicts(a):
    return {(v.rule, v.subject): v for r in RULES for v in r.evaluate(a)}


@pytest.mark.parametrize(
    ("elem", "key", "value"),
    [
        ("K1", "rating_24v", '"90 A"'),  # a relay's contact rating
        ("K1", "derating", '"60 % @ 85 degC"'),  # its derating
        ("K1", "voltage_rating", '"60 V"'),  # its switching voltage
        ("F1", "breaking_capacity", '"2 kA"'),  # a fuse's breaking capacity
        ("F1", "voltage_rating", '"24 V"'),  # its voltage rating
    ],
)
def test_rerated_equals_a_fresh_analysis(elem, key, value):
    base = analyse(parse_drawing(TEXT, "coach"))
    d2 = parse_drawing(set_key(TEXT, elem, key, value), "coach, one rating changed")
    got, want = _verdicts(rerated(base, d2)), _verdicts(analyse(d2))
    assert got.keys() == want.keys()
    before = _verdicts(base)
    changed = 0
    for k, w in want.items():
        g = got[k]
        assert (g.status, g.value, g.limit, g.margin, g.note) == (w.status, w.value, w.limit, w.margin, w.note), k
        changed += g != before.get(k)
    assert changed  # the edit moved some verdict: the test can tell a stale figure from a fresh one
