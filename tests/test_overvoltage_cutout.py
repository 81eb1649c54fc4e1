"""A retarder controller's overvoltage cut-out in the regulator-failure case (ISO 16750-2 4.3.1): the
stages see at most the cut-out voltage, and the winding is judged over the drawing's duty."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import pytest

import coilstage
from coilstage.analysis.run import analyse
from coilstage.checks import overvoltage
from coilstage.errors import DrawingError

COACH = Path(__file__).resolve().parent.parent / "configs" / "coach-24v-4stage.toml"


def _without_cutout(d):
    return dataclasses.replace(d, supply=dataclasses.replace(d.supply, overvoltage_cutout=None))


def _coil_verdicts(d):
    (rule,) = [r for r in overvoltage.RULES if r.id == "overvoltage.coil"]
    return {v.subject: v for v in rule.evaluate(analyse(d, switching=False, heating=False))}


def test_the_coach_states_its_cutout_and_passes_where_it_failed_without():
    d = coilstage.load_drawing(COACH)
    # default rel 1e-6: the drawing's 30 V as read: round-off only
    assert d.supply.overvoltage_cutout == pytest.approx(30.0)
    with_cut = _coil_verdicts(d)
    without = _coil_verdicts(_without_cutout(d))
    assert all(v.status.value == "fail" for v in without.values())  # 36 V: the class limit within the duty
    assert all(v.status.value == "pass" for v in with_cut.values())
    assert "30 V cut-out" in with_cut["S1"].note


def test_stage_currents_scale_with_the_bus_the_stages_see():
    # The bus is held (an ideal source), so each stage current scales as the bus voltage (Ohm's law on
    # the same resistances at the same temperatures): I(36 V) / I(30 V) = 36 / 30 = 1.2.
    d = coilstage.load_drawing(COACH)
    from coilstage.analysis.circuit import Circuit
    from coilstage.analysis.overvoltage import overvoltage_case

    cut = overvoltage_case(d, Circuit(d))
    full = overvoltage_case(_without_cutout(d), Circuit(d))
    # default rel 1e-6: the bus voltages as stated (cut-out 30 V, regulator failure 36 V): round-off only
    assert cut.bus == pytest.approx(30.0) and full.bus == pytest.approx(36.0)
    for s in d.stages:
        # rel 1e-9: the network is linear in the bus voltage: round-off only
        assert full.current[s.id] / cut.current[s.id] == pytest.approx(36.0 / 30.0, rel=1e-9)


def test_a_cutout_at_or_below_the_system_voltage_is_refused(tmp_path):
    text = COACH.read_text(encoding="utf-8").replace('overvoltage_cutout = "30 V"', 'overvoltage_cutout = "24 V"')
    p = tmp_path / "d.toml"
    p.write_text(text, encoding="utf-8")
    with pytest.raises(DrawingError) as exc:
        coilstage.load_drawing(p)
    assert "supply.overvoltage_cutout" in str(exc.value)
