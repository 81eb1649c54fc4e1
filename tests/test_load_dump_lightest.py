"""A relay's contact opening at the peak of a load dump, decided at the lightest load.

The ISO 16750-2 load-dump generator (U_s behind R_i) is loaded by the stage it feeds: the less current
the stage draws, the less the generator's voltage falls across R_i, so the bus peak is highest with
the coils hot at the high end of their resistance tolerance (the braking-retained state of
analysis.worst). The rule was read with the cold corner's load only, the least severe; it is now
decided at the lightest load, the cold corner's figure beside it as nominal. The figures are checked
against the voltage divider U_s·R/(R + R_i) written out here (Ohm's law) on the network's own solve
of that state, and the suppressor's stand-off voltage against its highest bus and clamped load dump.
"""

from __future__ import annotations

import pytest

from coilstage import check
from coilstage.analysis.conditions import LIGHTEST
from coilstage.checks import Status
from coilstage.drawing.load import parse_drawing

from .conftest import COACH

TEXT = COACH.read_text(encoding="utf-8")
#: ISO 16750-2:2012 4.6.4 Test A, 24 V system: U_s 151 V to 202 V behind R_i 1 ohm to 8 ohm (the
#: shipped data/load_dump_iso16750-2.toml, from memory); the low pairing gives the highest loaded peak
#: for a load of about an ohm: 151 R/(R + 1) against 202 R/(R + 8)
US_MIN, RI_MIN = 151.0, 1.0


def _verdict(vs, rule: str, subject: str):
    return next(v for v in vs if v.rule == rule and v.subject == subject)


@pytest.fixture(scope="module")
def coach():
    return check(parse_drawing(TEXT, "coach"))


def test_lightest_load_against_the_voltage_divider(coach):
    a, vs = coach
    b = a.worst.braking
    fig = a.contacts.relays["K1"]
    light = fig.dump_lightest
    # the state that loads the bus least: the braking-retained solve (hot coils at +5 %)
    r_load = b.bus_voltage / abs(b.solution.current["S1"])
    # rel 1e-12: the same two figures of the same solve, divided (round-off only)
    assert light.load_resistance == pytest.approx(r_load, rel=1e-12)
    assert light.load_resistance > fig.dump.load_resistance  # hot coils draw less than cold ones
    # the loaded peak by hand: the divider of U_s and R_i with the stage (no clamp under Test A)
    peak = US_MIN * r_load / (r_load + RI_MIN)
    # rel 1e-9: the same divider (round-off only)
    assert light.bus_peak == pytest.approx(peak, rel=1e-9)
    assert light.bus_peak > fig.dump.bus_peak
    v = _verdict(vs, "relay.voltage_rating", "K1 load dump")
    # the contact sees the bus peak plus the suppressor's clamp (the highest of the cases)
    assert v.limit == pytest.approx(peak + light.suppressor_voltage, rel=1e-9)
    assert v.corner == LIGHTEST
    # the nominal beside it: the same rating against the cold corner's load (margin rating/need - 1)
    assert v.worst is not None
    assert v.worst.nominal_margin == pytest.approx(110.0 / fig.dump.contact_voltage - 1, rel=1e-12)
    assert v.status is Status.PASS  # the coach's 110 V contactors


def test_a_rating_between_the_cold_load_and_the_lightest_fails(coach):
    # The coach as it was drawn before, with 80 V contactors: the cold corner's load (77.4 V across the
    # opening contact) passes, the lightest load (102 V) does not, so the verdict fails, saying so first.
    a, _ = coach
    fig = a.contacts.relays["K1"]
    cold, light = fig.dump.contact_voltage, fig.dump_lightest.contact_voltage
    assert cold < 80.0 < light
    _, vs = check(parse_drawing(TEXT.replace('voltage_rating = "110 V"', 'voltage_rating = "80 V"'), "80 V"))
    v = _verdict(vs, "relay.voltage_rating", "K1 load dump")
    assert v.status is Status.FAIL and v.worst.nominal_status is Status.PASS
    assert v.note.startswith("pass nominally, FAIL at the lightest load")
    # relay.inductive_break reads the same contact figures and never disagrees
    assert _verdict(vs, "relay.inductive_break", "K1").status is Status.FAIL


def test_suppressor_stand_off_decided_at_the_highest_bus(coach):
    # The stand-off (reverse) voltage a stage's suppressor must block: the larger of the clamped load
    # dump (58 V, ISO 16750-2 Test B, 24 V) and the bus; decided at the highest bus, the cold corner's
    # regulated bus as nominal (the clamped dump decides both on the coach: the same figure beside it).
    a, vs = coach
    v = _verdict(vs, "suppressor.rating", "S1 reverse voltage")
    assert v.corner == "highest voltage"
    assert v.limit == pytest.approx(max(58.0, a.contacts.highest_bus))
    assert v.worst.nominal_value == pytest.approx(v.value)  # the rating against the larger need
    assert v.worst.nominal_margin == pytest.approx(v.value / max(58.0, a.corners["cold"].bus_voltage) - 1)
